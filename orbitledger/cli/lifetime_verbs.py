"""Command-line verb ``lifetime``: years until re-entry of a case's orbit under drag.

``orbitledger lifetime CASE [--json] [--method orbit-averaged|numerical] [--max-years N]``

The drag inputs come from the case: the spacecraft's mass, drag area and drag coefficient (the
ballistic coefficient m / (Cd A)), ``force_model.density_model`` (NRLMSIS 2.1 by default, or the
exponential atmosphere) with ``force_model.flux_scenario`` (or the constant level named by
``force_model.solar_activity``), and ``budget.disposal.reentry_altitude_km`` (120 km when
absent). The orbit-averaged method also gives the lifetime under each constant activity level
(low, moderate, high) of the same model beside the case's scenario. The assumptions are printed
beside the number with the lifetime caution. A long numerical run shows a progress bar on stderr when
stderr is a terminal.
"""

from __future__ import annotations

import argparse
import json
import math
from collections.abc import Callable
from typing import Any

from ..progress import fraction_bar

__all__ = ["register", "lifetime_data", "run_lifetime"]

_DEFAULT_REENTRY_KM = 120.0  # the usual entry interface (common practice), as in the case model


def register(subparsers: argparse._SubParsersAction) -> None:
    verb = subparsers.add_parser(
        "lifetime",
        help="orbital lifetime of a case under atmospheric drag",
        description=(
            "Years until the perigee of CASE's orbit falls to the re-entry altitude, with the "
            "case's density model (NRLMSIS 2.1 by default) and flux scenario and the "
            "spacecraft's ballistic coefficient, and the value under each constant activity "
            "level beside it. Preliminary analysis: lifetime predictions carry large "
            "uncertainty and must not be the only basis of a disposal-compliance claim."
        ),
    )
    verb.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    verb.add_argument("--json", action="store_true", help="print JSON instead of a table")
    verb.add_argument(
        "--method",
        choices=("orbit-averaged", "numerical"),
        default="orbit-averaged",
        help="orbit-averaged decay (default, any span) or Cowell propagation (days to months)",
    )
    verb.add_argument(
        "--max-years",
        type=float,
        default=None,
        metavar="YEARS",
        help="longest span searched (default 200 orbit-averaged, 2 numerical)",
    )
    verb.set_defaults(run=run_lifetime)


def lifetime_data(
    case: Any,
    *,
    method: str = "orbit-averaged",
    max_years: float | None = None,
    progress: Callable[[float], None] | None = None,
) -> dict[str, Any]:
    """The lifetime of a validated ``Case`` as plain data (JSON-ready), assumptions included."""
    from ..analysis.case_terms import case_terms, reentry_or_orbit_field
    from ..analysis.flux_scenario import scenario_profiles
    from ..analysis.inputs import ballistic_coefficient_kg_m2
    from ..kernel.errors import InputError
    from ..kernel.lifetime import lifetime_years
    from ..kernel.timescales import utc_iso

    body = case.body_constants()
    if body.name.lower() != "earth":
        raise InputError("body.name", body.name, "lifetime uses the Earth's atmosphere model")
    craft = case.spacecraft
    if craft is None:
        raise InputError(
            "spacecraft",
            InputError.MISSING,  # type: ignore[attr-defined]
            "lifetime needs the spacecraft section (mass_kg, drag_area_m2, drag_coefficient)",
        )
    b = ballistic_coefficient_kg_m2(case)
    disposal = case.budget.disposal if case.budget is not None else None
    reentry_km = disposal.reentry_altitude_km if disposal is not None else _DEFAULT_REENTRY_KM
    elements = case.elements()
    profiles = scenario_profiles(case)
    path, value = reentry_or_orbit_field(case, elements, reentry_km, after_burns=False)
    with case_terms({"elements": (path, value, lambda err: err.reason)}):  # the case's words
        result = lifetime_years(
            elements,
            ballistic_coefficient_kg_m2=b,
            reentry_altitude_km=reentry_km,
            method=method,
            max_years=max_years,
            body=body,
            progress=progress,
            density=profiles[0][1],
        )
        scenarios = [_scenario_row("case", result)]
        if method == "orbit-averaged":
            for name, profile in profiles[1:]:
                other = lifetime_years(
                    elements, ballistic_coefficient_kg_m2=b, reentry_altitude_km=reentry_km,
                    max_years=result.max_years, body=body, density=profile,
                )  # fmt: skip
                scenarios.append(_scenario_row(name, other))
    jd1, jd2 = case.epoch_jd_utc()
    data: dict[str, Any] = {
        "title": case.meta.title,
        "epoch_utc": case.epoch_utc,
        "perigee_alt_km": float(result.perigee_alt_km[0]),
        "apogee_alt_km": float(result.apogee_alt_km[0]),
        "method": result.method,
        "reentered": result.reentered,
        "lifetime_years": result.years if result.reentered else None,
        "lifetime_days": result.days if result.reentered else None,
        "reentry_epoch_utc": (
            str(utc_iso(jd1, jd2 + result.days, 0)) if result.reentered else None
        ),
        "searched_years": result.max_years,
        "density_model": result.density_model,
        "flux_scenario": result.flux_scenario,
        "scenarios": scenarios,
        "assumptions": dict(result.assumptions),
        "caution": result.caution,
    }
    if disposal is not None:
        limit = disposal.lifetime_limit_years
        data["lifetime_limit_years"] = limit
        data["within_limit_preliminary"] = bool(result.reentered and result.years <= limit)
    return data


def _scenario_row(name: str, result: Any) -> dict[str, Any]:
    return {
        "scenario": name,
        "flux_scenario": result.flux_scenario,
        "lifetime_years": result.years if result.reentered else None,
    }


def _scenario_text(row: dict[str, Any], searched_years: float) -> str:
    years = row["lifetime_years"]
    value = f"{years:.2f} years" if years is not None else f"more than {searched_years:g} years"
    return f"{value}, {row['flux_scenario']}"


def _format_years(data: dict[str, Any]) -> str:
    if not data["reentered"]:
        return f"more than {data['searched_years']:g} years (no re-entry within the span searched)"
    years, days = data["lifetime_years"], data["lifetime_days"]
    return f"{years:.2f} years ({days:.1f} days), re-entry about {data['reentry_epoch_utc']}"


def _label(name: str) -> str:
    """``ballistic_coefficient_kg_m2`` -> ``ballistic coefficient (kg/m^2)``."""
    for suffix, unit in (("_kg_m2", "kg/m^2"), ("_km", "km")):
        if name.endswith(suffix):
            return f"{name[: -len(suffix)].replace('_', ' ')} ({unit})"
    return name.replace("_", " ")


def lifetime_table(data: dict[str, Any]) -> str:
    """The lifetime as aligned text lines for a terminal."""
    rows = [
        ("case", data["title"]),
        ("epoch (UTC)", data["epoch_utc"]),
        (
            "perigee / apogee height",
            f"{data['perigee_alt_km']:.1f} / {data['apogee_alt_km']:.1f} km above the "
            "reference radius",
        ),
        ("orbital lifetime", _format_years(data)),
    ]
    if "lifetime_limit_years" in data:
        verdict = "within" if data["within_limit_preliminary"] else "NOT within"
        rows.append(
            ("disposal limit", f"{data['lifetime_limit_years']:g} years: {verdict} (preliminary)")
        )
    for row in data.get("scenarios", [])[1:]:
        rows.append(
            (f"  at {row['scenario']} activity", _scenario_text(row, data["searched_years"]))
        )
    rows.extend((_label(name), text) for name, text in data["assumptions"].items())
    width = max(len(name) for name, _ in rows)
    lines = [f"{name:<{width}}  {text}" for name, text in rows]
    lines.append("")
    lines.append(f"Caution: {data['caution']}")
    return "\n".join(lines)


def run_lifetime(args: argparse.Namespace) -> int:
    from ..case import load_case
    from ..kernel.errors import InputError

    if args.max_years is not None and not (math.isfinite(args.max_years) and args.max_years > 0):
        raise InputError("--max-years", args.max_years, "must be a positive number of years")
    case = load_case(args.case)
    try:
        with fraction_bar("lifetime", args.method == "numerical") as progress:
            data = lifetime_data(
                case, method=args.method, max_years=args.max_years, progress=progress
            )
    except InputError as err:
        if err.file is not None:
            raise
        raise InputError(err.field, err.value, err.reason, file=str(args.case)) from None
    if args.json:
        print(json.dumps(data, indent=2, sort_keys=True, allow_nan=False))
    else:
        print(lifetime_table(data))
    return 0
