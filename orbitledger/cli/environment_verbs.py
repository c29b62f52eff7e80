"""Command-line verbs for the Earth-orbit environment of a case.

``orbitledger passes CASE [--json]``, ``orbitledger eclipses CASE [--json] [--cylindrical]``,
``orbitledger groundtrack CASE [--csv]``, ``orbitledger ephemeris CASE [--csv]``.

Each propagates the case's orbit over its analysis window (``window``) with its propagator
(``force_model.propagator``: two-body, j2-mean or numerical) and Earth orientation, and prints
a table (or JSON / CSV). Kernel warnings (an extrapolated UTC - TAI, a step too coarse for the
pass search) are printed once each on stderr and kept in the JSON. A numerical run shows a
progress bar on stderr when stderr is a terminal.
"""

from __future__ import annotations

import argparse
import csv
import json
import sys
from collections.abc import Callable
from typing import Any

from ..progress import fraction_bar
from .window_options import add_window_options, case_with_options

__all__ = ["register"]


def register(subparsers: argparse._SubParsersAction) -> None:
    specs = [
        (
            "passes",
            "station passes (AOS, max elevation, LOS) and daily contact",
            "--json",
            run_passes,
        ),
        (
            "eclipses",
            "umbra/penumbra eclipses, shadow fraction per orbit, beta, LTAN",
            "--json",
            run_eclipses,
        ),
        (
            "groundtrack",
            "sub-satellite latitude, longitude and height over the window",
            "--csv",
            run_groundtrack,
        ),
        (
            "ephemeris",
            "GCRF and ITRF position and velocity over the window",
            "--csv",
            run_ephemeris,
        ),
    ]
    for name, text, flag, run in specs:
        verb = subparsers.add_parser(
            name,
            help=text,
            description=(
                f"{text[0].upper()}{text[1:]} of CASE, propagated with its force_model.propagator "
                "over its analysis window. Preliminary analysis with the stated models."
            ),
        )
        verb.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
        what = "JSON" if flag == "--json" else "CSV"
        verb.add_argument(flag, action="store_true", help=f"print {what} instead of a table")
        if name in ("passes", "eclipses"):
            add_window_options(verb, min_elevation=name == "passes")
        if name == "eclipses":
            verb.add_argument(
                "--cylindrical",
                action="store_true",
                help="cylindrical shadow instead of the conical one",
            )
        verb.set_defaults(run=run)


def _compute(
    args: argparse.Namespace, fn: Callable[..., dict[str, Any]], **kwargs: Any
) -> dict[str, Any]:
    from ..case import load_case
    from ..kernel.errors import InputError

    case = load_case(args.case)
    try:
        case = case_with_options(case, args)
        with fraction_bar(args.verb) as progress:
            data = fn(case, progress=progress, **kwargs)
    except InputError as err:
        if err.file is not None:
            raise
        raise InputError(err.field, err.value, err.reason, file=str(args.case)) from None
    eop_caution = (data.get("earth_orientation") or {}).get("caution")
    if eop_caution and "warnings" in data:
        data["warnings"].append(eop_caution)
    for line in data.get("warnings", []):
        print(f"orbitledger {args.verb}: warning: {line}", file=sys.stderr)
    return data


def _table(headers: list[str], rows: list[list[str]]) -> list[str]:
    widths = [
        max(len(h), *(len(r[k]) for r in rows)) if rows else len(h) for k, h in enumerate(headers)
    ]
    line = "  ".join(f"{h:<{w}}" for h, w in zip(headers, widths, strict=True))
    out = [line, "  ".join("-" * w for w in widths)]
    out += ["  ".join(f"{c:<{w}}" for c, w in zip(r, widths, strict=True)) for r in rows]
    return out


def _preamble(data: dict[str, Any]) -> list[str]:
    w = data["window"]
    lines = [
        f"case        {data['title']} ({data['record_id']})",
        f"window      {w['start_utc']} + {w['duration_s']:g} s, propagator {data['propagator']}",
    ]
    lines += [f"model       {note}" for note in data["model_notes"]]
    eop = data.get("earth_orientation") or {}
    if eop.get("source") == "iers":
        lines.append(
            f"EOP         {eop['table']}, observed to {eop['observed_until_utc']}; at the start "
            f'dUT1 {eop["dut1_s"]:.4f} s, xp {eop["xp_arcsec"]:.4f}", yp {eop["yp_arcsec"]:.4f}"'
        )
    if data["utc_tai_extrapolated"]:
        lines.append("time        UTC - TAI extrapolated beyond the leap-second table")
    return lines + [""]


def _hms(text: str) -> str:
    return text.replace("T", " ").rstrip("Z")


def run_passes(args: argparse.Namespace) -> int:
    from ..analysis.environment_data import passes_data

    data = _compute(args, passes_data)
    if args.json:
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
        return 0
    rows = [
        [
            p["station"],
            _hms(p["aos_utc"]) + ("*" if p["starts_in_view"] else ""),
            f"{p['aos_azimuth_deg']:.1f}",
            _hms(p["tmax_utc"]),
            f"{p['max_elevation_deg']:.2f}",
            _hms(p["los_utc"]) + ("*" if p["ends_in_view"] else ""),
            f"{p['los_azimuth_deg']:.1f}",
            f"{p['duration_s'] / 60.0:.2f}",
        ]
        + ([_mbit(p["data_volume_mbit"])] if data["data_volume"] else [])
        for p in data["passes"]
    ]
    heads = [
        "station",
        "AOS (UTC)",
        "az (deg)",
        "max elevation at",
        "max el (deg)",
        "LOS (UTC)",
        "az (deg)",
        "duration (min)",
    ] + (["data (Mbit)"] if data["data_volume"] else [])
    lines = _preamble(data) + _table(heads, rows) + [""]
    daily = [
        [
            d["station"],
            d["day_utc"],
            str(d["passes"]),
            f"{d['contact_min']:.1f}",
            f"{d['longest_gap_min']:.1f}",
        ]
        for d in data["daily"]
    ]
    lines += _table(["station", "day (UTC)", "passes", "contact (min)", "longest gap (min)"], daily)
    lines += _volume_lines(data)
    lines += [
        "any station: passes are every station's added (a pass seen by two stations counts "
        "twice); contact is the time with at least one station (overlaps counted once)",
        "",
        "longest gap in the window: "
        + ", ".join(f"{k} {v / 3600:.2f} h" for k, v in data["longest_gap_s"].items()),
    ]
    lines += [
        f"times refined to {data['tolerance_s']:g} s (search step {data['search_step_s']:.1f} s); "
        "* = cut at the window edge; " + "; ".join(data["conventions"]),
        "",
        f"Caution: {data['caution']}",
    ]
    print("\n".join(lines))
    return 0


def _mbit(value: float | None) -> str:
    return "-" if value is None else f"{value:.0f}"


def _volume_lines(data: dict[str, Any]) -> list[str]:
    lines = []
    if data["passes_below_min_duration"]:
        lines += ["", f"{data['passes_below_min_duration']} passes shorter than their station's "
                  "min_pass_duration_s left out"]  # fmt: skip
    volume = data["data_volume"]
    if volume:
        rows = [[d["station"], d["day_utc"], str(d["passes"]), f"{d['volume_mbit']:.0f}"]
                for d in volume["daily"]]  # fmt: skip
        lines += [""] + _table(["station", "day (UTC)", "passes", "data (Mbit)"], rows)
    return lines


def run_eclipses(args: argparse.Namespace) -> int:
    from ..analysis.environment_data import eclipses_data

    data = _compute(args, eclipses_data, model="cylindrical" if args.cylindrical else "conical")
    if args.json:
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
        return 0

    def opt(x: float | None, e: dict[str, Any]) -> str:
        return "-" if x is None else f"{x - e['entry_s']:.1f}"

    rows = [
        [
            _hms(e["entry_utc"]) + ("*" if e["starts_in_shadow"] else ""),
            _hms(e["exit_utc"]) + ("*" if e["ends_in_shadow"] else ""),
            f"{e['duration_s'] / 60.0:.2f}",
            f"{e['umbra_duration_s'] / 60.0:.2f}",
            opt(e["umbra_entry_s"], e),
        ]
        for e in data["eclipses"]
    ]
    s = data["summary"]
    lines = _preamble(data)
    lines += _table(
        [
            "shadow entry (UTC)",
            "shadow exit (UTC)",
            "shadow (min)",
            "umbra (min)",
            "penumbra in (s)",
        ],
        rows,
    )
    lines += [
        "",
        f"shadow model {data['shadow_model']}; {s['eclipses']} eclipses; "
        + (
            f"shadow fraction over {s['whole_orbits']} whole orbits: mean "
            f"{100 * s['mean_fraction']:.1f} %, largest {100 * s['max_fraction']:.1f} %"
            if s["whole_orbits"]
            else "no whole orbit in the window, so no shadow fraction per orbit"
        )
        + f"; longest eclipse {s['longest_eclipse_s'] / 60:.2f} min",
        f"beta angle {s['beta_min_deg']:.2f} to {s['beta_max_deg']:.2f} deg; LTAN {_clock(s['ltan_h_start'])} "
        f"(mean solar time) at the start, {_clock(s['ltan_h_end'])} at the end; LTDN {_clock(s['ltdn_h_start'])}",
        "* = cut at the window edge; " + "; ".join(data["conventions"]),
        "",
        f"Caution: {data['caution']}",
    ]
    print("\n".join(lines))
    return 0


def _clock(hours: float) -> str:
    minutes = int(round(hours * 60.0)) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def _print_columns(data: dict[str, Any], as_csv: bool, digits: dict[str, int]) -> None:
    cols = data["columns"]
    names = list(cols)
    n = len(cols[names[0]])

    def cell(name: str, k: int) -> str:
        value = cols[name][k]
        if isinstance(value, bool) or isinstance(value, str):
            return str(value).lower() if isinstance(value, bool) else value
        return f"{value:.{digits.get(name, 6)}f}"

    if as_csv:
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow(names)
        for k in range(n):
            writer.writerow([cell(name, k) for name in names])
        print(f"orbitledger {data['analysis']}: caution: {data['caution']}", file=sys.stderr)
        return
    rows = [[cell(name, k) for name in names] for k in range(n)]
    lines = _preamble(data) + _table(names, rows) + ["", f"Caution: {data['caution']}"]
    print("\n".join(lines))


def run_groundtrack(args: argparse.Namespace) -> int:
    from ..analysis.environment_data import groundtrack_data

    data = _compute(args, groundtrack_data)
    _print_columns(data, args.csv, {"offset_s": 3, "lat_deg": 5, "lon_deg": 5, "height_km": 3})
    return 0


def run_ephemeris(args: argparse.Namespace) -> int:
    from ..analysis.environment_data import ephemeris_data

    data = _compute(args, ephemeris_data)
    _print_columns(data, args.csv, {"offset_s": 3})
    return 0
