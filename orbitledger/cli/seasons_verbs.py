"""``orbitledger seasons CASE``: beta angle, eclipse seasons and LTAN over the mission.

Prints the statistics over the mission (``budget.mission_years``, else one year, or
``--years``): the beta-angle range, the longest shadow and the largest shadow fraction, the
eclipse seasons (runs of days with shadow), the LTAN at the start and the end and its drift,
and a month-by-month table. ``--json`` prints the statistics and the day-by-day series;
``--html FILE`` writes the two figures (beta history with the eclipse-season bands, and the
node's local time) into one offline HTML page (BokehJS inlined), never over an existing file.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

__all__ = ["register"]


def register(subparsers: argparse._SubParsersAction) -> None:
    verb = subparsers.add_parser(
        "seasons",
        help="beta angle, eclipse seasons and LTAN drift over the mission",
        description=(
            "Beta angle, eclipse statistics (longest shadow, shadow fraction per day) and the "
            "local time of the node over the mission, from J2 mean elements and the Sun. "
            "Preliminary analysis with the stated models."
        ),
    )
    verb.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    verb.add_argument(
        "--years", type=float, help="span in years (default: budget.mission_years, else 1)"
    )
    verb.add_argument(
        "--step-days", type=float, default=1.0, help="days between orbits sampled (default 1)"
    )
    verb.add_argument("--start", metavar="UTC", help="start (default: the window start)")
    verb.add_argument(
        "--cylindrical", action="store_true", help="cylindrical shadow instead of conical"
    )
    verb.add_argument(
        "--json", action="store_true", help="print JSON (statistics and daily series)"
    )
    verb.add_argument(
        "--html", metavar="FILE", help="write the two figures to a new offline HTML file"
    )
    verb.set_defaults(run=run_seasons)


def _clock(hours: float) -> str:
    minutes = int(round(hours * 60.0)) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def _rate(hours_per_year: float) -> str:
    if abs(hours_per_year) < 2.0:
        return f"{60.0 * hours_per_year:+.1f} min/yr"
    return f"{hours_per_year:+.1f} h/yr"


def _monthly(series: Any) -> list[list[str]]:
    rows: dict[str, list[int]] = {}
    for k, day in enumerate(series.day_utc):
        rows.setdefault(day[:7], []).append(k)
    out = []
    for month, ks in rows.items():
        beta = series.beta_deg[ks]
        out.append(
            [
                month,
                f"{beta.min():.1f} to {beta.max():.1f}",
                f"{series.max_shadow_s[ks].max() / 60.0:.2f}",
                f"{100.0 * series.shadow_fraction[ks].max():.1f}",
                str(int((series.shadow_fraction[ks] > 0).sum())),
                _clock(float(series.ltan_h[ks[0]])),
            ]
        )
    return out


def _write_html(path: str, case: Any, series: Any) -> None:
    from bokeh.embed import file_html
    from bokeh.layouts import column
    from bokeh.resources import INLINE

    from ..case import atomic_write_text
    from ..figures.seasons import beta_history_figure, node_time_figure
    from ..kernel.errors import InputError

    page = file_html(
        column(beta_history_figure(series), node_time_figure(series)),
        INLINE,
        title=f"Seasons: {case.meta.title}",
    )
    try:
        atomic_write_text(Path(path), page, exclusive=True)
    except FileExistsError:
        raise InputError("--html", path, "already exists; not overwritten") from None
    except OSError as err:
        raise InputError("--html", path, f"cannot be written: {err.strerror}") from None


def run_seasons(args: argparse.Namespace) -> int:
    from ..analysis.environment_data import CAUTION, recorded_warnings
    from ..analysis.seasons import case_seasons, seasons_summary
    from ..case import load_case
    from ..kernel.errors import InputError
    from .environment_verbs import _table
    from .window_options import case_with_options

    case = case_with_options(load_case(args.case), args)
    try:
        with recorded_warnings() as notes:
            series = case_seasons(
                case,
                years=args.years,
                step_days=args.step_days,
                model="cylindrical" if args.cylindrical else "conical",
            )
    except InputError as err:
        if err.file is not None:
            raise
        raise InputError(err.field, err.value, err.reason, file=str(args.case)) from None
    summary = seasons_summary(case, series)
    if args.html:
        _write_html(args.html, case, series)
    if args.json:
        data = {
            "analysis": "seasons",
            "title": case.meta.title,
            "record_id": case.meta.record_id,
            "case_fingerprint": case.fingerprint,
            "start_utc": series.day_utc[0],
            "shadow_model": series.model,
            "summary": summary,
            "daily": {
                "day_utc": list(series.day_utc),
                "beta_deg": series.beta_deg.tolist(),
                "shadow_fraction": series.shadow_fraction.tolist(),
                "max_shadow_s": series.max_shadow_s.tolist(),
                "ltan_h": series.ltan_h.tolist(),
                "ltan_true_h": series.ltan_true_h.tolist(),
            },
            "model_notes": list(series.notes),
            "warnings": notes,
            "caution": CAUTION,
        }
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
        return 0
    for line in notes:
        print(f"orbitledger seasons: warning: {line}", file=sys.stderr)
    s = summary
    lines = [
        f"case        {case.meta.title} ({case.meta.record_id})",
        f"span        {series.day_utc[0]} to {series.day_utc[-1]} ({s['days']} orbits, one every "
        f"{args.step_days:g} day{'' if args.step_days == 1 else 's'}), {series.model} shadow",
    ]
    lines += [f"model       {note}" for note in series.notes]
    lines += [
        "",
        f"beta angle  {s['beta_min_deg']:.2f} to {s['beta_max_deg']:.2f} deg",
        f"shadow      longest {s['max_shadow_s'] / 60.0:.2f} min; up to {100 * s['max_shadow_fraction']:.1f} % "
        f"of an orbit (mean {100 * s['mean_shadow_fraction']:.1f} %); {s['days_with_shadow']} of the "
        f"{s['days']} orbits sampled with shadow",
        f"LTAN        {_clock(s['ltan_h_start'])} at the start, {_clock(s['ltan_h_end'])} at the end "
        f"(mean solar time); drift {_rate(s['ltan_drift_h_per_year'])} "
        f"(J2 rate minus the Sun's mean motion: {_rate(s['ltan_drift_h_per_year_j2_formula'])})",
        "",
    ]
    seasons = [
        [e["first_utc"] + ("*" if e["cut_at_start"] else ""), e["last_utc"] + ("*" if e["cut_at_end"] else ""),
         str(e["samples"]), f"{e['max_shadow_s'] / 60.0:.2f}"]
        for e in s["eclipse_seasons"]
    ]  # fmt: skip
    lines += _table(
        ["eclipse season from", "to", "orbits sampled", "longest shadow (min)"], seasons
    )
    lines += [""] + _table(
        [
            "month",
            "beta (deg)",
            "longest shadow (min)",
            "max shadow (%)",
            "orbits with shadow",
            "LTAN",
        ],
        _monthly(series),
    )
    lines += ["", "* = cut at the span's edge", "", f"Caution: {CAUTION}"]
    if args.html:
        lines.append(f"figures written to {args.html}")
    print("\n".join(lines))
    return 0
