"""Command-line verbs for ground targets and the coverage of a region.

``orbitledger targets CASE [--json] [--start UTC] [--days N]``: every access of the case's
sensor to its targets over the window (start, end, duration, smallest off-nadir angle, ground
distance and Sun elevation at the best moment) and the revisit gaps per target.

``orbitledger coverage CASE [--json] [--start UTC] [--days N] [--figure FILE.html]``: the
fraction of the case's coverage region reached within each day of the window; ``--figure``
writes the coverage map as an offline HTML page.

Both propagate the case over its analysis window (``--start`` / ``--days`` change a copy of
the case, as for ``passes``).
"""

from __future__ import annotations

import argparse
import json
import math
from dataclasses import asdict
from typing import Any

from .environment_verbs import _compute, _hms, _preamble, _table
from .window_options import add_window_options

__all__ = ["coverage_data", "register", "targets_data"]


def register(subparsers: argparse._SubParsersAction) -> None:
    specs = [
        ("targets", "accesses of the sensor to the ground targets, and revisit gaps", run_targets),
        ("coverage", "fraction of the coverage region reached within each day", run_coverage),
    ]
    for name, text, run in specs:
        verb = subparsers.add_parser(
            name,
            help=text,
            description=(
                f"{text[0].upper()}{text[1:]} of CASE (its targets, sensor and coverage "
                "sections), propagated with its force_model.propagator over its analysis "
                "window. Preliminary analysis with the stated models."
            ),
        )
        verb.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
        verb.add_argument("--json", action="store_true", help="print JSON instead of a table")
        add_window_options(verb, min_elevation=False)
        if name == "coverage":
            verb.add_argument(
                "--figure",
                metavar="FILE.html",
                help="also write the coverage map as an offline HTML page",
            )
        verb.set_defaults(run=run)


def _sensor(case: Any) -> dict[str, Any]:
    return case.sensor.model_dump(mode="json") if case.sensor is not None else {}


def _finite(value: float) -> float | None:
    return value if math.isfinite(value) else None


def targets_data(case: Any, progress: Any = None) -> dict[str, Any]:
    """Every access to the case's targets in its window, with revisit gaps per target."""
    from ..analysis.environment_data import _header, case_trajectory, recorded_warnings
    from ..analysis.imaging import case_target_access

    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        found = case_target_access(case, traj)
    data = _header(case, traj, "targets")
    counts = {t.name: 0 for t in found.targets}
    for a in found.accesses:
        counts[a.target] += 1
    data.update(
        sensor=_sensor(case),
        targets=[
            asdict(t)
            | {
                "accesses": counts[t.name],
                "mean_gap_s": _finite(found.mean_gap_s[t.name]),
                "max_gap_s": found.max_gap_s[t.name],
            }
            for t in found.targets
        ],
        accesses=[asdict(a) | {"duration_s": a.duration_s} for a in found.accesses],
        search_step_s=found.search_step_s,
        tolerance_s=found.tolerance_s,
        conventions=list(found.notes),
        warnings=notes + list(case.warnings()),
    )
    return data


def coverage_data(case: Any, progress: Any = None) -> dict[str, Any]:
    """The coverage of the case's region in its window: fraction per day and per point."""
    from ..analysis.environment_data import _header, case_trajectory, recorded_warnings
    from ..analysis.imaging import case_coverage

    with recorded_warnings() as notes:
        traj = case_trajectory(case, progress)
        cov = case_coverage(case, traj)
    data = _header(case, traj, "coverage")
    data.update(
        sensor=_sensor(case),
        region=case.coverage.model_dump(mode="json"),
        points=int(cov.lat_deg.size),
        fraction_covered=cov.fraction_covered,
        fraction_by_day=list(cov.fraction_by_day),
        grid=[
            {
                "lat_deg": float(a),
                "lon_deg": float(b),
                "first_access_s": _finite(float(f)),
                "accesses": int(n),
            }
            for a, b, f, n in zip(
                cov.lat_deg, cov.lon_deg, cov.first_access_s, cov.access_count, strict=True
            )
        ],
        search_step_s=cov.search_step_s,
        warnings=notes + list(case.warnings()),
    )
    data["_coverage"] = cov
    return data


def _sensor_line(sensor: dict[str, Any]) -> str:
    reach = (
        f"off-nadir up to {sensor['off_nadir_max_deg']:g} deg"
        if sensor.get("off_nadir_max_deg") is not None
        else f"swath {sensor['swath_km']:g} km"
    )
    sun = sensor.get("min_sun_elevation_deg")
    return f"sensor      {reach}" + ("" if sun is None else f"; Sun at least {sun:g} deg up")


def _hours(value: float | None) -> str:
    return "-" if value is None else f"{value / 3600.0:.2f}"


def run_targets(args: argparse.Namespace) -> int:
    data = _compute(args, targets_data)
    if args.json:
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
        return 0
    rows = [
        [
            a["target"],
            _hms(a["start_utc"]) + ("*" if a["starts_open"] else ""),
            _hms(a["end_utc"]) + ("*" if a["ends_open"] else ""),
            f"{a['duration_s']:.1f}",
            f"{a['min_off_nadir_deg']:.2f}",
            f"{a['ground_distance_km']:.1f}",
            f"{a['elevation_deg']:.2f}",
            f"{a['sun_elevation_deg']:.2f}",
        ]
        for a in data["accesses"]
    ]
    heads = ["target", "start (UTC)", "end (UTC)", "duration (s)", "min off-nadir (deg)",
             "ground dist. (km)", "elevation (deg)", "Sun el. (deg)"]  # fmt: skip
    lines = _preamble(data) + [_sensor_line(data["sensor"]), ""]
    lines += _table(heads, rows) + [""]
    revisit = [
        [t["name"], str(t["accesses"]), _hours(t["mean_gap_s"]), _hours(t["max_gap_s"])]
        for t in data["targets"]
    ]
    lines += _table(["target", "accesses", "mean gap (h)", "longest gap (h)"], revisit)
    lines += [
        "",
        "mean gap: between consecutive accesses (end to next start); longest gap: the longest "
        "time without access, the window's edges included",
        f"times refined to {data['tolerance_s']:g} s (search step {data['search_step_s']:.1f} s); "
        "at the best moment (smallest off-nadir angle); * = cut at the window edge; "
        + "; ".join(data["conventions"]),
        "",
        f"Caution: {data['caution']}",
    ]
    print("\n".join(lines))
    return 0


def run_coverage(args: argparse.Namespace) -> int:
    data = _compute(args, coverage_data)
    cov = data.pop("_coverage")
    if args.figure:
        _write_figure(args, data, cov)
    if args.json:
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
        return 0
    region = data["region"]
    lines = _preamble(data) + [
        _sensor_line(data["sensor"]),
        f"region      lat {region['lat_min_deg']:g}..{region['lat_max_deg']:g} deg, lon "
        f"{region['lon_min_deg']:g}..{region['lon_max_deg']:g} deg, every "
        f"{region['step_deg']:g} deg: {data['points']} grid points",
        "",
    ]
    rows = [[str(k), f"{100.0 * f:.1f}"] for k, f in enumerate(data["fraction_by_day"], 1)]
    lines += _table(["within day", "covered (%)"], rows)
    lines += [
        "",
        f"covered in the window: {100.0 * data['fraction_covered']:.1f} % of the grid points "
        f"(first access to the search step, {data['search_step_s']:.1f} s)",
        "",
        f"Caution: {data['caution']}",
    ]
    print("\n".join(lines))
    return 0


def _write_figure(args: argparse.Namespace, data: dict[str, Any], cov: Any) -> None:
    from bokeh.embed import file_html
    from bokeh.resources import INLINE

    from ..case.io import atomic_write_text
    from ..figures.coverage import coverage_figure

    fig = coverage_figure(cov, title=f"Coverage: {data['title']}")
    html = file_html(fig, INLINE, title=f"Coverage of {data['record_id']}")
    atomic_write_text(args.figure, html)
