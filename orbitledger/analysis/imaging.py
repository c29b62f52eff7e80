"""A case's ground targets, sensor and coverage region: the one translation into
``kernel.targets`` / ``kernel.coverage``, and the results the record lists and ``verify``
recomputes (group ``targets``).

Results: for the case as a whole, the accesses in the window, the targets reached, the worst
revisit (longest time without access of any target) and the mean revisit gap; for each of the
first ``PER_TARGET_ROWS`` targets, its accesses and its mean and longest gap; for a coverage
region, the fraction of its grid points reached within 1, 2, ... days (up to
``COVERAGE_DAY_ROWS`` days) and within the whole window.
"""

from __future__ import annotations

import math
from typing import Any

from .result import Result

__all__ = [
    "case_coverage",
    "case_sensor",
    "case_target_access",
    "case_targets",
    "imaging_results",
]

PER_TARGET_ROWS = 20
COVERAGE_DAY_ROWS = 14
_GROUP = "targets"


def case_targets(case: Any) -> tuple[Any, ...]:
    from ..kernel.targets import Target

    return tuple(Target(t.name, t.lat_deg, t.lon_deg, t.height_km) for t in case.targets)


def case_sensor(case: Any) -> Any:
    """The kernel ``Sensor`` of the case (InputError naming ``sensor`` when it has none)."""
    from ..kernel.errors import InputError
    from ..kernel.targets import Sensor

    s = case.sensor
    if s is None:
        raise InputError("sensor", None, "this analysis needs the case's sensor section")
    return Sensor(s.off_nadir_max_deg, s.swath_km, s.min_sun_elevation_deg)


def _earth_trajectory(case: Any, traj: Any) -> Any:
    from ..kernel.errors import InputError
    from .inputs import case_trajectory

    if case.body.name != "Earth":
        raise InputError(
            "body.name", case.body.name, "target and coverage analyses are for the Earth"
        )
    return case_trajectory(case) if traj is None else traj


def case_target_access(case: Any, traj: Any = None) -> Any:
    """Accesses to the case's targets over its window (``kernel.targets.target_access``)."""
    from ..kernel.errors import InputError
    from ..kernel.targets import target_access

    if not case.targets:
        raise InputError("targets", [], "the case lists no targets")
    traj = _earth_trajectory(case, traj)
    return target_access(traj, case_targets(case), case_sensor(case), case.window.duration_s)


def case_coverage(case: Any, traj: Any = None) -> Any:
    """Coverage of the case's region over its window (``kernel.coverage.region_coverage``)."""
    from ..kernel.coverage import coverage_grid, region_coverage
    from ..kernel.errors import InputError

    region = case.coverage
    if region is None:
        raise InputError("coverage", None, "the case states no coverage region")
    lat, lon = coverage_grid(
        region.lat_min_deg, region.lat_max_deg, region.lon_min_deg, region.lon_max_deg,
        region.step_deg,
    )  # fmt: skip
    traj = _earth_trajectory(case, traj)
    return region_coverage(
        traj, lat, lon, case_sensor(case), case.window.duration_s, step_deg=region.step_deg
    )


def _hours(seconds: float) -> float:
    return seconds / 3600.0


def _target_rows(case: Any, found: Any) -> list[Result]:
    gap_tol = 2.0 / 3600.0  # h: two root-found edges, each good to well under a second
    counts = {t.name: 0 for t in found.targets}
    for a in found.accesses:
        counts[a.target] += 1
    means = [v for v in found.mean_gap_s.values() if math.isfinite(v)]
    rows = [
        Result("target_accesses_in_window", float(len(found.accesses)), "",
               "Accesses to the targets in the analysis window, every target's added",
               _GROUP, abs_tol=0.0),
        Result("targets_reached", float(sum(1 for n in counts.values() if n)), "",
               f"Targets with at least one access in the window (of {len(found.targets)})",
               _GROUP, abs_tol=0.0),
        Result("revisit_max_gap_h", _hours(max(found.max_gap_s.values())), "h",
               "Longest time without access of any target (window edges included)",
               _GROUP, rel_tol=1e-6, abs_tol=gap_tol),
        Result("revisit_mean_gap_h", _hours(sum(means) / len(means)) if means else math.nan,
               "h", "Mean time between consecutive accesses, averaged over the targets",
               _GROUP, rel_tol=1e-6, abs_tol=gap_tol),
    ]  # fmt: skip
    for k, t in enumerate(found.targets[:PER_TARGET_ROWS], start=1):
        rows += [
            Result(f"target_{k}_accesses", float(counts[t.name]), "",
                   f"{t.name}: accesses in the window", _GROUP, abs_tol=0.0),
            Result(f"target_{k}_mean_gap_h", _hours(found.mean_gap_s[t.name]), "h",
                   f"{t.name}: mean time between consecutive accesses",
                   _GROUP, rel_tol=1e-6, abs_tol=gap_tol),
            Result(f"target_{k}_max_gap_h", _hours(found.max_gap_s[t.name]), "h",
                   f"{t.name}: longest time without access (window edges included)",
                   _GROUP, rel_tol=1e-6, abs_tol=gap_tol),
        ]  # fmt: skip
    return rows


def _coverage_rows(cov: Any) -> list[Result]:
    n = cov.lat_deg.size
    tol = 1.5 / n  # one grid point whose first access sits on a sampling boundary
    box = f"{n} grid points every {cov.step_deg:g} deg"
    rows = [
        Result("coverage_fraction", cov.fraction_covered, "",
               f"Fraction of the coverage region reached in the window ({box})",
               _GROUP, abs_tol=tol),
    ]  # fmt: skip
    for day, fraction in enumerate(cov.fraction_by_day[:COVERAGE_DAY_ROWS], start=1):
        rows.append(
            Result(f"coverage_fraction_{day}d", fraction, "",
                   f"Fraction of the coverage region reached within {day} day(s)",
                   _GROUP, abs_tol=tol)
        )  # fmt: skip
    return rows


def imaging_results(case: Any, trajectory: Any = None) -> list[Result]:
    """The ``targets`` result group: nothing for a case without targets or a region, or
    whose orbit is not a closed Earth orbit."""
    if not case.targets and case.coverage is None:
        return []
    if case.body.name != "Earth" or float(case.elements().e) >= 1.0:
        return []
    traj = _earth_trajectory(case, trajectory)
    rows = _target_rows(case, case_target_access(case, traj)) if case.targets else []
    if case.coverage is not None:
        rows += _coverage_rows(case_coverage(case, traj))
    return rows


def imaging_rows(case_data: dict[str, Any]) -> list[dict[str, str]]:
    """The record's rows on the sensor and the coverage region, from the case's data; none
    when the case has neither targets nor a region."""
    sensor = case_data.get("sensor")
    if not sensor or not (case_data.get("targets") or case_data.get("coverage")):
        return []
    if sensor.get("off_nadir_max_deg") is not None:
        reach = (
            f"off-nadir angle up to {sensor['off_nadir_max_deg']:g} deg from the geocentric nadir"
        )
    else:
        reach = (
            f"swath {sensor['swath_km']:g} km: targets within {sensor['swath_km'] / 2:g} km "
            "of the sub-satellite point (Earth central angle, sphere of the equatorial radius)"
        )
    sun = sensor.get("min_sun_elevation_deg")
    light = (
        "no lighting condition"
        if sun is None
        else f"Sun at least {sun:g} deg above the target's horizon"
    )
    rows = [
        {
            "topic": "Target access",
            "value": f"{reach}; satellite above the target's horizon; {light}; geometric, no "
            "refraction; revisit gaps between consecutive accesses (longest gap with the "
            "window's edges)",
        }
    ]
    region = case_data.get("coverage")
    if region:
        rows.append(
            {
                "topic": "Coverage region",
                "value": f"lat {region['lat_min_deg']:g}..{region['lat_max_deg']:g} deg, lon "
                f"{region['lon_min_deg']:g}..{region['lon_max_deg']:g} deg, grid every "
                f"{region.get('step_deg', 1.0):g} deg (edges included); a point counts from "
                "the first sample inside an access (good to one search step)",
            }
        )
    return rows
