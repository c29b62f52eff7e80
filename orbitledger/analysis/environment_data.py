"""A case's environment results as plain data: passes, eclipses, ground track, ephemeris.

Maps a validated ``Case`` onto the kernel (trajectory by the case's propagator over its
analysis window, stations, Earth orientation) and returns JSON-ready dicts. Used by the CLI
verbs; the results panel and the records may call the same functions.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import asdict
from typing import Any

import numpy as np

__all__ = [
    "CAUTION",
    "case_trajectory",
    "eclipses_data",
    "ephemeris_data",
    "groundtrack_data",
    "passes_data",
    "recorded_warnings",
]

CAUTION = (
    "Preliminary analysis with the stated models (propagator, Earth orientation, shadow and "
    "station geometry as listed). For collision avoidance, re-entry, disposal compliance or "
    "launch decisions, defer to authoritative ephemerides and data, the licensing authority "
    "and licensed practice."
)


@contextmanager
def recorded_warnings() -> Iterator[list[str]]:
    """Collect the kernel's warnings (each once) as text lines instead of printing them."""
    lines: list[str] = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        yield lines
    for w in caught:
        text = str(w.message)
        if text not in lines:
            lines.append(text)


def check_window(case: Any, analysis: str) -> None:
    """Refuse the analysis over a work limit before any work (``analysis.estimates``)."""
    from ..analysis.estimates import check_window as check

    check(case, analysis)


def case_trajectory(case: Any, progress: Callable[[float], None] | None = None):
    """The kernel ``Trajectory`` of a case over its analysis window (``analysis.inputs``),
    refused for a central body other than the Earth (these analyses need the Earth's
    rotation, shape and shadow)."""
    from ..kernel.errors import InputError
    from .inputs import case_trajectory as shared_case_trajectory

    body = case.body_constants()
    if body.name.lower() != "earth":
        raise InputError(
            "body.name", body.name, "station, eclipse and ground-track analyses are for the Earth"
        )
    return shared_case_trajectory(case, progress=progress)


def _header(case: Any, traj: Any, kind: str) -> dict[str, Any]:
    from ..kernel.timescales import utc_iso
    from .earth_orientation import earth_orientation_summary

    return {
        "analysis": kind,
        "title": case.meta.title,
        "record_id": case.meta.record_id,
        "case_fingerprint": case.fingerprint,
        "epoch_utc": case.epoch_utc,
        "window": {
            "start_utc": str(utc_iso(traj.start.utc1, traj.start.utc2, 3)),
            "duration_s": case.window.duration_s,
            "step_s": case.window.step_s,
        },
        "propagator": traj.propagator,
        "earth_orientation": earth_orientation_summary(case, traj.eop),
        "model_notes": list(traj.notes),
        "utc_tai_extrapolated": bool(traj.start.utc_tai_extrapolated),
        "caution": CAUTION,
    }


def passes_data(case: Any, progress: Callable[[float], None] | None = None) -> dict[str, Any]:
    """Every pass over the case's stations in its window, with daily statistics."""
    from ..kernel.errors import InputError
    from .contacts import case_site_passes, has_downlink
    from .inputs import case_stations

    if not case.stations:
        raise InputError("stations", [], "the case has no stations: add one to compute passes")
    stations = case_stations(case)
    check_window(case, "passes")  # estimates before work (analysis.estimates)
    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        sites = case_site_passes(case, traj)
    found = sites.search
    with_downlink = {s.name for s in case.stations if s.downlink}
    data = _header(case, traj, "passes")
    data.update(
        stations=[
            asdict(k)
            | s.model_dump(mode="json", include={"terrain_mask", "min_pass_duration_s", "downlink"})
            for k, s in zip(stations, case.stations, strict=True)
        ],
        passes=[
            asdict(p)
            | {
                "duration_s": p.duration_s,
                "data_volume_mbit": v if p.station in with_downlink else None,
            }
            for p, v in zip(found.passes, sites.volumes_mbit, strict=True)
        ],
        daily=[asdict(d) for d in found.daily],
        data_volume=(
            {
                "daily": [asdict(d) for d in sites.daily_volume],
                "unit": "Mbit",
                "total_mbit": sum(sites.volumes_mbit),
            }
            if has_downlink(case)
            else None
        ),
        passes_below_min_duration=sites.dropped_short,
        longest_gap_s=dict(found.longest_gap_s),
        search_step_s=found.search_step_s,
        tolerance_s=found.tolerance_s,
        short_passes_found=found.short_passes_found,
        utc_tai_extrapolated=found.utc_tai_extrapolated,
        conventions=list(found.notes),
        warnings=notes + list(case.warnings()),
    )
    return data


def eclipses_data(
    case: Any, model: str = "conical", progress: Callable[[float], None] | None = None
) -> dict[str, Any]:
    """Eclipses in the case's window, per-orbit shadow budget, beta angle and node local times."""
    from ..kernel.eclipses import beta_angle_deg, find_eclipses, node_local_times_h, whole_orbits
    from ..kernel.sun import sun_position_from_tt_km

    check_window(case, "eclipses")  # estimates before work (analysis.estimates)
    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        duration = min(case.window.duration_s, traj.end_s)
        found = find_eclipses(traj, duration, model=model)
        t = np.linspace(0.0, duration, max(2, min(2001, int(duration // 600) + 2)))
        r, v = traj.gcrf(t)
        ts = traj.times(t)
        beta = beta_angle_deg(r, v, sun_position_from_tt_km(ts.tt1, ts.tt2))
        node = node_local_times_h(traj, t[[0, -1]])
    whole = whole_orbits(found, traj.period_s)
    orbits = [asdict(o) | {"whole": o in whole} for o in found.per_orbit]
    data = _header(case, traj, "eclipses")
    data.update(
        shadow_model=found.model,
        eclipses=[
            asdict(e) | {"duration_s": e.duration_s, "umbra_duration_s": e.umbra_duration_s}
            for e in found.eclipses
        ],
        per_orbit=orbits,
        summary={
            "eclipses": len(found.eclipses),
            # Over whole orbits only (a trailing partial orbit left out), as in the records.
            "whole_orbits": len(whole),
            "mean_fraction": float(np.mean([o.fraction for o in whole])) if whole else None,
            "max_fraction": max((o.fraction for o in whole), default=None),
            "longest_eclipse_s": max((e.duration_s for e in found.eclipses), default=0.0),
            "beta_min_deg": float(np.min(beta)),
            "beta_max_deg": float(np.max(beta)),
            "ltan_h_start": float(node["ltan_h"][0]),
            "ltan_h_end": float(node["ltan_h"][-1]),
            "ltdn_h_start": float(node["ltdn_h"][0]),
            "ltan_true_h_start": float(node["ltan_true_h"][0]),
        },
        beta_series={"offset_s": t.tolist(), "beta_deg": beta.tolist()},
        search_step_s=found.search_step_s,
        tolerance_s=found.tolerance_s,
        conventions=list(found.notes),
        warnings=notes + list(case.warnings()),
    )
    return data


def _window_offsets(case: Any, traj: Any) -> np.ndarray:
    duration = min(case.window.duration_s, traj.end_s)
    t = np.arange(0.0, duration, case.window.step_s)
    return np.append(t, duration) if t[-1] < duration else t


def groundtrack_data(case: Any, progress: Callable[[float], None] | None = None) -> dict[str, Any]:
    """Sub-satellite latitude/longitude/height at the window's steps, with eclipse flags."""
    from ..kernel.eclipses import PENUMBRA, UMBRA, shadow_state
    from ..kernel.groundtrack import ground_track
    from ..kernel.sun import sun_position_from_tt_km
    from ..kernel.timescales import utc_iso

    check_window(case, "groundtrack")  # estimates before work (analysis.estimates)
    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        t = _window_offsets(case, traj)
        r, _ = traj.gcrf(t)
        ts = traj.times(t)
        state = shadow_state(r, sun_position_from_tt_km(ts.tt1, ts.tt2))
        gt = ground_track(traj, t, in_eclipse=np.isin(state, (UMBRA, PENUMBRA)))
    data = _header(case, traj, "groundtrack")
    data.update(
        columns={
            "time_utc": list(utc_iso(ts.utc1, ts.utc2, 3)),
            "offset_s": t.tolist(),
            "lat_deg": gt.lat_deg.tolist(),
            "lon_deg": gt.lon_deg.tolist(),
            "height_km": gt.height_km.tolist(),
            "in_eclipse": gt.in_eclipse.tolist(),
        },
        antimeridian_segments=[[s.start, s.stop] for s in gt.segments()],
        warnings=notes + list(case.warnings()),
    )
    return data


def ephemeris_data(case: Any, progress: Callable[[float], None] | None = None) -> dict[str, Any]:
    """GCRF and ITRF position and velocity at the window's steps."""
    from ..kernel.timescales import utc_iso

    check_window(case, "ephemeris")  # estimates before work (analysis.estimates)
    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        t = _window_offsets(case, traj)
        r, v = traj.gcrf(t)
        r_itrf, v_itrf = traj.itrf(t, velocity=True)
        ts = traj.times(t)
    cols: dict[str, Any] = {"time_utc": list(utc_iso(ts.utc1, ts.utc2, 3)), "offset_s": t.tolist()}
    for frame, pos, vel in (("gcrf", r, v), ("itrf", r_itrf, v_itrf)):
        for k, axis in enumerate("xyz"):
            cols[f"{axis}_{frame}_km"] = pos[:, k].tolist()
        for k, axis in enumerate("xyz"):
            cols[f"v{axis}_{frame}_km_s"] = vel[:, k].tolist()
    data = _header(case, traj, "ephemeris")
    data.update(columns=cols, warnings=notes + list(case.warnings()))
    return data
