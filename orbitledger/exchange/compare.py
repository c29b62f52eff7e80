"""An imported ephemeris (CCSDS OEM) against our own propagation of a case.

The OEM's states are rotated to GCRF (``ccsds.state_to_gcrf``), the case is propagated to the
same epochs with its own propagator (``analysis.case_trajectory`` over a window spanning the
segment), and the position differences are given in GCRF and in the radial / transverse /
normal axes of our state (Vallado 4th ed., Sec. 3.3.3: R along r, N along r x v, T = N x R),
where an along-track timing error shows as T and a wrong altitude as R.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..kernel.burns import rtn_basis
from ..kernel.errors import InputError
from ..kernel.timescales import time_scales
from .ccsds import state_to_gcrf, utc_scales, where
from .oem import Oem, OemSegment

__all__ = ["EphemerisDifference", "ephemeris_difference"]


@dataclass(frozen=True)
class EphemerisDifference:
    """Theirs minus ours at the OEM's epochs.

    times_utc: ISO UTC epochs (n,); offset_s: seconds after the first; dr_gcrf_km (n, 3);
    dr_rtn_km (n, 3): radial, transverse (along-track), normal (cross-track); distance_km (n,);
    propagator: ours; label: what was compared (object, frame, originator).
    """

    times_utc: tuple[str, ...]
    offset_s: np.ndarray
    dr_gcrf_km: np.ndarray
    dr_rtn_km: np.ndarray
    distance_km: np.ndarray
    propagator: str
    label: str

    @property
    def max_distance_km(self) -> float:
        return float(np.max(self.distance_km))

    @property
    def rms_distance_km(self) -> float:
        return float(np.sqrt(np.mean(self.distance_km**2)))


def _segment_gcrf(seg: OemSegment) -> tuple[np.ndarray, np.ndarray]:
    center = seg.metadata["CENTER_NAME"]
    if center.upper() != "EARTH":
        raise InputError(
            where(seg.meta_line, "CENTER_NAME"), center, "only Earth-centred OEMs can be compared"
        )
    ts = utc_scales(list(seg.epochs_utc), "epoch")
    frame_ts = None
    if "REF_FRAME_EPOCH" in seg.metadata:
        frame_ts = utc_scales(seg.metadata["REF_FRAME_EPOCH"], "REF_FRAME_EPOCH")
    return state_to_gcrf(
        seg.metadata["REF_FRAME"], seg.r_km, seg.v_km_s, ts, frame_ts, seg.meta_line
    )


def ephemeris_difference(oem: Oem, case: Any, *, segment: int = 0) -> EphemerisDifference:
    """Position differences between one OEM segment and the case propagated to its epochs.

    The case keeps its epoch and orbit; only its window is set to span the segment (a span
    starting before the epoch propagates backwards, as the case model allows with a warning).
    Returned, never judged: how large a difference is acceptable depends on the models.
    """
    from ..analysis import case_trajectory

    if not 0 <= segment < len(oem.segments):
        raise InputError("segment", segment, f"the OEM has {len(oem.segments)} segment(s)")
    seg = oem.segments[segment]
    r_theirs, _ = _segment_gcrf(seg)
    first = seg.epochs_utc[0]
    span = float(time_scales(seg.epochs_utc[-1]).seconds_since(time_scales(first)))
    span = max(span, 1e-3)
    window = {
        "window.start_utc": first,
        "window.duration_s": span,
        "window.step_s": min(case.window.step_s, span),
    }
    traj = case_trajectory(case.with_changes(window))
    t = utc_scales(list(seg.epochs_utc), "epoch").seconds_since(traj.start)
    t = np.clip(t, 0.0, span)  # epochs to the microsecond: clip the rounding at the ends
    r_ours, v_ours = traj.gcrf(t)
    dr = np.asarray(r_theirs) - r_ours
    basis = rtn_basis(r_ours, v_ours)
    label = (
        f"{seg.metadata['OBJECT_NAME']} ({seg.metadata['REF_FRAME']}, {oem.originator}) "
        f"minus {case.meta.record_id} ({traj.propagator})"
    )
    return EphemerisDifference(
        times_utc=seg.epochs_utc,
        offset_s=np.asarray(t, dtype=float),
        dr_gcrf_km=dr,
        dr_rtn_km=np.einsum("...ij,...j->...i", basis, dr),
        distance_km=np.linalg.norm(dr, axis=-1),
        propagator=traj.propagator,
        label=label,
    )
