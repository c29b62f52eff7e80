"""Command-line verbs for case files: ``new``, ``summary``, ``schema``.

A refused input (a bad case file, an existing file for ``new``) raises CaseError; the frame in
:mod:`orbitledger.cli.main` prints its one line and exits 2.
"""

from __future__ import annotations

import argparse
import json
import math
from collections.abc import Mapping
from typing import Any

from .one_line import one_line

__all__ = ["register", "summary_data", "summary_table"]

CAUTION = (
    "Preliminary analysis with the stated models (two-body, constants as listed). For "
    "re-entry, disposal compliance, collision avoidance or launch decisions, defer to "
    "authoritative ephemerides and data, the licensing authority and licensed practice."
)

_ELEMENT_LABELS = {
    "a_km": "semi-major axis a",
    "e": "eccentricity e",
    "i_deg": "inclination i",
    "raan_deg": "RAAN",
    "argp_deg": "argument of periapsis",
    "nu_deg": "true anomaly",
}

# Summary quantities that hold at the epoch rather than for the whole orbit.
_AT_EPOCH = {"radius_km", "speed_km_s", "flight_path_angle_deg"}


def register(subparsers: argparse._SubParsersAction) -> None:
    new = subparsers.add_parser(
        "new",
        help="write a starter case file",
        description=(
            "Write a valid starter case (the invented Kestrel-2 mission of the Fenwick Orbital "
            "Lab, classical-elements form) to CASE, with its own title, record id, altitude "
            "and, with --sso-ltdn, the sun-synchronous inclination and the RAAN of that local "
            "time of the descending node at the epoch. An existing file is never overwritten."
        ),
    )
    new.add_argument(
        "case", metavar="CASE", help="path of the new case file, e.g. candidate-a.case.json"
    )
    new.add_argument("--title", metavar="T", help="meta.title")
    new.add_argument("--record-id", metavar="ID", help="meta.record_id (default KES2-ORB-001)")
    new.add_argument("--altitude-km", type=float, metavar="H", help="orbit altitude, km")
    new.add_argument(
        "--sso-ltdn",
        metavar="HH:MM",
        help="sun-synchronous: inclination for the altitude, RAAN for this local mean solar "
        "time of the descending node at the epoch",
    )
    new.set_defaults(run=run_new)

    summary = subparsers.add_parser(
        "summary",
        help="print the orbit summary of a case file",
        description=(
            "Validate CASE and print its osculating elements at the epoch and the two-body "
            "orbit summary (period, apsides, speeds, energy...) with units, and any warnings."
        ),
    )
    summary.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    summary.add_argument("--json", action="store_true", help="print JSON instead of a table")
    summary.set_defaults(run=run_summary)

    schema = subparsers.add_parser(
        "schema",
        help="print the JSON Schema of case files",
        description="Print the JSON Schema (draft 2020-12) of orbitledger.case/1 files.",
    )
    schema.set_defaults(run=run_schema)


def run_new(args: argparse.Namespace) -> int:
    from ..case import write_new_case
    from ..case.new_case import new_case

    case = new_case(
        title=args.title,
        record_id=args.record_id,
        altitude_km=args.altitude_km,
        sso_ltdn=args.sso_ltdn,
    )
    write_new_case(args.case, case)
    print(f"wrote {args.case}: {case.meta.title} (fingerprint {case.fingerprint[:16]}...)")
    if args.sso_ltdn is not None:
        print(
            f"sun-synchronous: i {case.orbit.i_deg:.4f} deg, RAAN {case.orbit.raan_deg:.4f} deg "
            f"(descending node at {args.sso_ltdn} local mean solar time at {case.epoch_utc})"
        )
    return 0


def run_schema(args: argparse.Namespace) -> int:
    from ..case import case_json_schema

    print(json.dumps(case_json_schema(), indent=2, ensure_ascii=False))
    return 0


def run_summary(args: argparse.Namespace) -> int:
    from ..case import load_case

    case = load_case(args.case)
    data = summary_data(case, file=args.case)
    if args.json:
        print(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False))
    else:
        print(summary_table(data))
    return 0


def _number(value: Any) -> Any:
    """A JSON-safe number: floats from numpy, None for NaN or infinity."""
    if hasattr(value, "item") and callable(value.item):
        try:
            value = value.item()
        except ValueError:  # an array of several values
            return [_number(v) for v in value.tolist()]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def summary_data(case, *, file: str | None = None) -> dict[str, Any]:
    """The summary of a case as JSON-ready data (non-finite values as null)."""
    from ..kernel.summary import orbit_summary

    body = case.body_constants()
    elements = case.elements()
    summary: Mapping[str, Any] = orbit_summary(elements, body)
    return {
        "file": file,
        "record_id": case.meta.record_id,
        "title": case.meta.title,
        "fingerprint": case.fingerprint,
        "epoch_utc": case.epoch_utc,
        "body": {
            "name": body.name,
            "mu_km3_s2": body.mu_km3_s2,
            "radius_km": body.radius_km,
            "sources": {k: body.sources.get(k, "") for k in ("mu_km3_s2", "radius_km")},
        },
        "orbit_form": case.orbit.form,
        "elements": {k: _number(getattr(elements, k)) for k in _ELEMENT_LABELS},
        "summary": {str(k): _number(v) for k, v in summary.items()},
        "warnings": case.warnings(),
        "caution": CAUTION,
    }


def _split_unit(key: str) -> tuple[str, str]:
    from ..case.units import split_unit

    name, unit = split_unit(key)
    return name.replace("_", " "), unit


def _format(value: Any) -> str:
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.10g}"
    if isinstance(value, list):
        return "[" + ", ".join(_format(v) for v in value) + "]"
    return str(value)


def summary_table(data: Mapping[str, Any]) -> str:
    """The summary as a plain-text table: label, value, unit; then warnings and the caution."""
    body = data["body"]
    rows: list[tuple[str, str, str]] = []
    head = [
        f"case         {data['record_id']}: {data['title']}",
        f"file         {one_line(str(data['file']))}",  # a newline in a path stays one line
        f"fingerprint  {data['fingerprint']}",
        f"epoch        {data['epoch_utc']} (UTC)",
        f"body         {body['name']}: mu {_format(body['mu_km3_s2'])} km^3/s^2, "
        f"equatorial radius {_format(body['radius_km'])} km",
        f"orbit given  {data['orbit_form']} form",
    ]
    for key, label in _ELEMENT_LABELS.items():
        rows.append((label, _format(data["elements"][key]), _split_unit(key)[1]))
    rows.append(("", "", ""))
    for key, value in data["summary"].items():
        label, unit = _split_unit(key)
        if key in _AT_EPOCH:
            label += " at the epoch"
        if key.endswith("_alt_km"):  # the summary's heights: radius minus the equatorial radius
            label = label.replace(" alt", " altitude") + " (above the equatorial radius)"
        if key == "period_s" and isinstance(value, float):
            unit += f"  ({value / 60.0:.4f} min)"
        rows.append((label, _format(value), unit))
    label_width = max(len(r[0]) for r in rows)
    value_width = max(len(r[1]) for r in rows)
    lines = head + ["", "Osculating elements at the epoch, then the two-body summary:"]
    for label, value, unit in rows:
        text = f"  {label:<{label_width}}  {value:>{value_width}} {unit}" if label else ""
        lines.append(text.rstrip())
    lines.append("")
    lines += [f"warning: {note}" for note in data["warnings"]]
    lines.append(f"caution: {data['caution']}")
    return "\n".join(lines)
