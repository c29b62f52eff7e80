"""Two-line element sets: parse and validate, propagate with SGP4, states in GCRF.

The two-line format (columns, checksums, ranges) is read by ``tle_format.parse_tle``,
re-exported here.

Propagation is the published SGP4/SDP4 model through the ``sgp4`` package (the C++ code of
Vallado et al. 2006, ``Satrec.twoline2rv`` and ``sgp4_array``) with the WGS-72 constants the
model was fitted with (AIAA 2006-6753, Sec. "Gravitational constants"). SGP4 returns TEME
states; ``kernel.teme`` rotates them to GCRF. Time since the TLE epoch is elapsed SI time (the
TLE epoch is UTC).

A TLE's elements are SGP4 mean elements (Kozai/Brouwer mean motion, TEME): they are not
osculating elements, and only SGP4 turns them into states.
"""

from __future__ import annotations

import functools
import math
import warnings
from typing import Any

import numpy as np
from numpy.typing import ArrayLike
from sgp4.api import WGS72, Satrec

from ..kernel.constants import EARTH, Body
from ..kernel.errors import InputError
from ..kernel.propagation import EarthOrientation, Trajectory
from ..kernel.teme import teme_to_gcrf
from ..kernel.timescales import EpochLike, TimeScales, time_scales
from .tle_format import TwoLineElements, parse_tle, tle_checksum

__all__ = [
    "SGP4_ERROR_WORDS",
    "TLE_AGE_LIMIT_DAYS",
    "TleEpochWarning",
    "TwoLineElements",
    "case_tle_trajectory",
    "epoch_age_days",
    "parse_tle",
    "tle_checksum",
    "tle_gcrf_states",
    "tle_teme_states",
    "tle_trajectory",
    "warn_if_far",
]

# SGP4 error codes in words (sgp4 package, sgp4.api.SGP4_ERRORS; Vallado et al. 2006 code).
SGP4_ERROR_WORDS = {
    1: "mean eccentricity is outside the range 0 to 1",
    2: "mean motion is negative",
    3: "perturbed eccentricity is outside the range 0 to 1",
    4: "semi-latus rectum is negative",
    5: "the satellite is underground (a code no longer used by SGP4)",
    6: "the orbit has decayed (radius below one Earth radius)",
}

TLE_AGE_LIMIT_DAYS = 3.0
"""Beyond this distance from the TLE epoch a warning is issued: SGP4's error grows with it
(errors of about a kilometre at epoch growing by kilometres per day in low orbit are common
practice)."""


class TleEpochWarning(UserWarning):
    """The requested epoch lies far from the TLE epoch: SGP4's accuracy degrades."""


@functools.lru_cache(maxsize=64)
def _satrec(line1: str, line2: str) -> Satrec:
    sat = Satrec.twoline2rv(line1, line2, WGS72)
    if sat.error:
        raise InputError(
            "TLE",
            f"SGP4 error {sat.error}",
            f"SGP4 refuses the element set at its epoch: {SGP4_ERROR_WORDS.get(sat.error, '?')}",
        )
    return sat


def tle_teme_states(tle: TwoLineElements, tsince_min: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """SGP4 TEME position (km) and velocity (km/s) at ``tsince_min`` minutes from the TLE epoch.

    Shapes tsince.shape + (3,). Raises ``InputError`` with the SGP4 error code in words (e.g.
    "the orbit has decayed") and the first time at which it occurred.
    """
    sat = _satrec(tle.line1, tle.line2)
    t = np.asarray(tsince_min, dtype=float)
    flat = t.ravel()
    jd = np.full(flat.shape, sat.jdsatepoch)
    err, r, v = sat.sgp4_array(jd, sat.jdsatepochF + flat / 1440.0)
    if np.any(err):
        k = int(np.flatnonzero(err)[0])
        code = int(err[k])
        raise InputError(
            "TLE",
            f"SGP4 error {code} at {flat[k]:.3f} min from the epoch {tle.epoch_utc}",
            SGP4_ERROR_WORDS.get(code, "unknown SGP4 error"),
        )
    return r.reshape(*t.shape, 3), v.reshape(*t.shape, 3)


def _epoch_scales(tle: TwoLineElements) -> TimeScales:
    return time_scales(tle.epoch_jd_utc)


def tle_gcrf_states(tle: TwoLineElements, epochs_utc: EpochLike) -> tuple[np.ndarray, np.ndarray]:
    """SGP4 states at UTC epochs (ISO strings, datetimes, a TimeScales...), rotated to GCRF."""
    ts = epochs_utc if isinstance(epochs_utc, TimeScales) else time_scales(epochs_utc)
    tsince = ts.seconds_since(_epoch_scales(tle)) / 60.0
    r, v = tle_teme_states(tle, tsince)
    r_g, v_g = teme_to_gcrf(r, v, ts)
    return r_g, v_g  # type: ignore[return-value]


def epoch_age_days(tle: TwoLineElements, epoch_utc: EpochLike) -> float:
    """Days from the TLE epoch to ``epoch_utc`` (negative before it)."""
    return float(time_scales(epoch_utc).seconds_since(_epoch_scales(tle))) / 86_400.0


def warn_if_far(tle: TwoLineElements, epoch_utc: EpochLike, what: str = "the epoch") -> float:
    """Warn (``TleEpochWarning``) when ``epoch_utc`` is more than 3 days from the TLE epoch."""
    age = epoch_age_days(tle, epoch_utc)
    if abs(age) > TLE_AGE_LIMIT_DAYS:
        warnings.warn(
            f"{what} is {abs(age):.1f} days {'after' if age > 0 else 'before'} the TLE epoch "
            f"{tle.epoch_utc}: SGP4's accuracy degrades with the time from the element set's "
            "epoch (kilometres per day in low orbit); use an element set closer to it",
            TleEpochWarning,
            stacklevel=3,
        )
    return age


def tle_trajectory(
    tle: TwoLineElements,
    start_utc: EpochLike | None = None,
    *,
    duration_s: float = math.inf,
    eop: EarthOrientation | None = None,
    body: Body = EARTH,
) -> Trajectory:
    """A kernel ``Trajectory`` from SGP4: GCRF states after ``start_utc`` (default the TLE epoch).

    For ground tracks, passes, eclipses and ephemerides: the environment code consumes it like
    any other propagator's. ``duration_s`` bounds the window (for the notes on the TLE's age).
    """
    eop = eop or EarthOrientation()
    start = time_scales(tle.epoch_jd_utc if start_utc is None else start_utc, dut1_s=eop.dut1_s)
    offset0 = float(start.seconds_since(_epoch_scales(tle)))

    def state_at(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        r, v = tle_teme_states(tle, (offset0 + t) / 60.0)
        ts = time_scales(start, offset_s=t, dut1_s=eop.dut1_s)
        r_g, v_g = teme_to_gcrf(r, v, ts)
        return r_g, v_g  # type: ignore[return-value]

    notes = [
        "SGP4 (sgp4 package, WGS-72, Vallado et al. 2006) from the TLE "
        f"{tle.catalog_number} of {tle.epoch_utc}; TEME rotated to GCRF (IAU 2006/2000A)",
    ]
    far = max(abs(offset0), abs(offset0 + duration_s) if math.isfinite(duration_s) else 0.0)
    if far > TLE_AGE_LIMIT_DAYS * 86_400.0:
        notes.append(
            f"the window reaches {far / 86_400.0:.1f} days from the TLE epoch: SGP4's accuracy "
            "degrades with the element set's age"
        )
    return Trajectory(start, state_at, tle.period_s, "sgp4", eop, body, notes=tuple(notes))


def case_tle_trajectory(
    case: Any, *, duration_s: float | None = None, eop: EarthOrientation | None = None
) -> Trajectory:
    """The SGP4 trajectory of a case whose ``force_model.propagator`` is ``"sgp4"``.

    From its ``source`` TLE, over its analysis window (start ``case.window_start_utc``), with
    its Earth orientation (``eop``, default the case's stated values). ``analysis.case_trajectory``
    calls this for SGP4 cases.
    """
    source = case.source
    if source is None or source.kind != "tle":
        raise InputError(
            "force_model.propagator",
            "sgp4",
            "SGP4 needs the case's TLE source (orbitledger import)",
        )
    tle = parse_tle("\n".join(source.lines))
    eo = case.earth_orientation
    return tle_trajectory(
        tle,
        case.window_start_utc,
        duration_s=case.window.duration_s if duration_s is None else duration_s,
        eop=eop or EarthOrientation(eo.dut1_s, eo.xp_arcsec, eo.yp_arcsec),
        body=case.body_constants(),
    )
