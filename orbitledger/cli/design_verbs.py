"""Command-line verbs for manoeuvre design: ``budget`` (a case's delta-v budget) and
``transfer`` (quick what-ifs: hohmann, bielliptic, plane-change, phasing, lambert).

``budget_for_case`` and ``burn_plan_for_case`` are the one place where a case's burn plan and
budget section become kernel inputs; the figures, widgets and records call them too.
"""

from __future__ import annotations

import argparse
import json
import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..kernel.errors import InputError

__all__ = [
    "BudgetReport",
    "budget_for_case",
    "burn_plan_for_case",
    "register",
]

_MISSING = InputError.MISSING  # type: ignore[attr-defined]


def burn_plan_for_case(case) -> tuple:
    """The case's burn plan flown from its epoch state: a tuple of kernel ``BurnStep``."""
    from ..case.plan import AtApsis, AtEpoch
    from ..case.utc import utc_seconds_between
    from ..kernel.burns import BurnSpec, apply_burn_plan

    body = case.body_constants()
    specs = []
    for burn in case.burns:
        at = burn.at
        if isinstance(at, AtEpoch):
            kw: dict[str, Any] = {
                "at": "epoch",
                "t_s": utc_seconds_between(case.epoch_utc, at.epoch_utc),
            }
        elif isinstance(at, AtApsis):
            kw = {"at": at.apsis}
        else:
            kw = {"at": at.node}
        if burn.dv_rtn_km_s is not None:
            kw["dv_rtn_km_s"] = tuple(float(x) for x in burn.dv_rtn_km_s)
        elif burn.transfer.kind == "circular":
            kw["circular_radius_km"] = body.radius_km + float(burn.transfer.altitude_km)
        else:
            kw["i_deg"] = float(burn.transfer.i_deg)
        specs.append(BurnSpec(name=burn.name, **kw))
    r0, v0 = case.state()
    return apply_burn_plan(r0, v0, specs, body.mu_km3_s2)


@dataclass(frozen=True)
class BudgetReport:
    """A case's budget: the kernel ``DeltaVBudget``, the burn steps, the disposal plan (or
    None), the operational elements the drag lines used, and the assumptions."""

    budget: Any
    steps: tuple
    disposal: Any
    operational_elements: Any
    assumptions: dict[str, str]


def budget_for_case(
    case,
    *,
    mission_years: float | None = None,
    margin_percent: float | None = None,
    lifetime_limit_years: float | None = None,
) -> BudgetReport:
    """Build the delta-v budget of a case (its ``budget`` section; keywords override it or stand
    in for a missing one). Lines in flight order: fixed allowances, one line per burn of the
    plan, station-keeping (drag make-up x mission years), per-year allowances x mission years,
    disposal. Refused without the spacecraft's mass and Isp."""
    from ..kernel.atmosphere import DENSITY_MODEL_NAME
    from ..kernel.budget import (
        BudgetItem,
        delta_v_budget,
        disposal_perigee_lowering,
        drag_makeup_dv_km_s_per_year,
    )
    from ..kernel.forces import ballistic_coefficient_kg_m2

    sc = case.spacecraft
    if sc is None:
        raise InputError(
            "spacecraft", _MISSING, "the budget needs the spacecraft's mass_kg and isp_s"
        )
    if sc.isp_s is None:
        raise InputError("spacecraft.isp_s", _MISSING, "the budget needs the propulsion's Isp")
    section = case.budget
    years = (
        mission_years if mission_years is not None else (section.mission_years if section else None)
    )
    if years is None:
        raise InputError(
            "budget.mission_years",
            _MISSING,
            "the case has no budget section: add one or pass --mission-years",
        )
    if not (math.isfinite(years) and years > 0.0):
        raise InputError("budget.mission_years", years, "must be > 0 years")
    margin = (
        margin_percent
        if margin_percent is not None
        else (section.margin_percent if section else 0.0)
    )
    allowances = list(section.allowances) if section else []
    station_keeping = section.station_keeping if section else True
    limit = lifetime_limit_years
    reentry_km = 120.0
    if section and section.disposal:
        limit = limit if limit is not None else section.disposal.lifetime_limit_years
        reentry_km = section.disposal.reentry_altitude_km
    body = case.body_constants()
    activity = case.force_model.solar_activity
    b = float(ballistic_coefficient_kg_m2(sc.mass_kg, sc.drag_area_m2, sc.drag_coefficient))

    steps = burn_plan_for_case(case)
    operational = steps[-1].elements_after if steps else case.elements()
    items: list[BudgetItem] = []
    for a in allowances:
        if not a.per_year:
            items.append(BudgetItem(a.name, a.dv_km_s, a.margin, "allowance as given"))
    for burn in case.burns:
        dv = sum(
            s.dv_magnitude_km_s
            for s in steps
            if s.name == burn.name or s.name.startswith(burn.name + " (")
        )
        items.append(
            BudgetItem(burn.name, dv, True, "burn plan, impulsive, two-body between burns")
        )
    if station_keeping:
        per_year = drag_makeup_dv_km_s_per_year(operational, b, activity, body)
        items.append(
            BudgetItem(
                "station keeping (drag make-up)",
                per_year * years,
                True,
                f"{per_year * 1000.0:.4g} m/s per year x {years:g} years, {activity} solar activity",
            )
        )
    for a in allowances:
        if a.per_year:
            items.append(
                BudgetItem(
                    a.name,
                    a.dv_km_s * years,
                    a.margin,
                    f"{a.dv_km_s * 1000.0:g} m/s per year x {years:g} years",
                )
            )
    disposal = None
    if limit is not None:
        disposal = disposal_perigee_lowering(operational, limit, b, activity, reentry_km, body)
        items.append(
            BudgetItem(
                "disposal (perigee lowering)",
                disposal.dv_km_s,
                True,
                f"perigee to {disposal.perigee_altitude_km:.1f} km: lifetime "
                f"{disposal.lifetime_after_years:.2f} y <= {limit:g} y",
            )
        )
    budget = delta_v_budget(
        items,
        isp_s=sc.isp_s,
        initial_mass_kg=sc.mass_kg,
        margin_percent=margin,
        propellant_available_kg=sc.propellant_mass_kg,
    )
    assumptions = {
        "propulsion": f"Isp {sc.isp_s:g} s, g0 9.80665 m/s^2, wet mass {sc.mass_kg:g} kg",
        "margin_policy": f"{margin:g} % added to computed lines; allowances only where marked",
        "drag": f"B = m/(Cd A) = {b:.4g} kg/m^2; {DENSITY_MODEL_NAME}",
        "solar_activity": f"{activity}, held constant",
        "operational_orbit": "osculating elements after the last burn, taken as mean",
    }
    return BudgetReport(budget, steps, disposal, operational, assumptions)


def _num(x: Any) -> Any:
    if isinstance(x, np.ndarray):
        return _num(x.tolist())
    if isinstance(x, (np.floating, np.integer)):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, (list, tuple)):
        return [_num(v) for v in x]
    if isinstance(x, dict):
        return {str(k): _num(v) for k, v in x.items()}
    return x


def budget_data(report: BudgetReport, *, file: str | None = None) -> dict[str, Any]:
    """The budget report as JSON-ready data."""
    out = report.budget.as_dict()
    out["file"] = file
    out["burns"] = [
        {
            "name": s.name,
            "t_s": s.t_s,
            "dv_rtn_km_s": s.dv_rtn_km_s,
            "dv_km_s": s.dv_magnitude_km_s,
            "elements_after": {
                k: getattr(s.elements_after, k)
                for k in ("a_km", "e", "i_deg", "raan_deg", "argp_deg", "nu_deg")
            },
        }
        for s in report.steps
    ]
    if report.disposal is not None:
        d = report.disposal
        out["disposal"] = {
            "dv_km_s": d.dv_km_s,
            "perigee_altitude_km": d.perigee_altitude_km,
            "apogee_altitude_km": d.apogee_altitude_km,
            "lifetime_before_years": d.lifetime_before_years,
            "lifetime_after_years": d.lifetime_after_years,
            "lifetime_limit_years": d.lifetime_limit_years,
            "assumptions": dict(d.assumptions),
            "caution": d.caution,
        }
    out["assumptions"] = report.assumptions
    return _num(out)


def budget_table(data: dict[str, Any]) -> str:
    """Plain-text table of the budget lines with totals, assumptions and the caution."""
    head = f"  {'line':<34} {'dv m/s':>9} {'margin':>8} {'total':>9} {'prop. kg':>9} {'mass kg':>9}"
    rows = [head, "  " + "-" * (len(head) - 2)]
    for ln in data["lines"]:
        rows.append(
            f"  {ln['name'][:34]:<34} {ln['dv_km_s'] * 1e3:9.2f} {ln['margin_km_s'] * 1e3:8.2f} "
            f"{ln['dv_with_margin_km_s'] * 1e3:9.2f} {ln['propellant_kg']:9.4f} {ln['mass_after_kg']:9.3f}"
        )
        if ln["basis"]:
            rows.append(f"      {ln['basis']}")
    rows.append("  " + "-" * (len(head) - 2))
    rows.append(
        f"  {'total':<34} {'':>9} {'':>8} {data['total_dv_km_s'] * 1e3:9.2f} {data['total_propellant_kg']:9.4f} {data['final_mass_kg']:9.3f}"
    )
    if data["propellant_available_kg"] is not None:
        verdict = "covers" if data["sufficient"] else "does NOT cover"
        rows.append(
            f"  propellant on board {data['propellant_available_kg']:g} kg {verdict} the budget"
        )
    lines = [
        f"delta-v budget: {data['file']}",
        f"margin policy {data['margin_percent']:g} %, Isp {data['isp_s']:g} s, wet mass {data['initial_mass_kg']:g} kg",
        "",
    ]
    lines += rows + [""]
    lines += [f"assumption: {k}: {v}" for k, v in data["assumptions"].items()]
    lines.append(f"caution: {data['caution']}")
    return "\n".join(lines)


def run_budget(args: argparse.Namespace) -> int:
    from ..case import load_case

    case = load_case(args.case)
    report = budget_for_case(
        case,
        mission_years=args.mission_years,
        margin_percent=args.margin_percent,
        lifetime_limit_years=args.lifetime_limit_years,
    )
    data = budget_data(report, file=args.case)
    print(json.dumps(data, indent=2, allow_nan=False) if args.json else budget_table(data))
    return 0


def _body(name: str):
    from ..kernel.constants import BODIES

    try:
        return BODIES[name.lower()]
    except KeyError:
        raise InputError("--body", name, f"one of {', '.join(BODIES)}") from None


def _result_dict(res: Any) -> dict[str, Any]:
    return {k: _num(res[k]) for k in res.keys()}


_OPTION_OF = {
    "r1_km": "--from-alt-km",
    "r2_km": "--to-alt-km",
    "rb_km": "--via-alt-km",
    "r_km": "--alt-km",
    "di_deg": "--di-deg",
    "along_track_offset_km": "--offset-km",
    "revolutions": "--revolutions",
    "tof_s": "--tof-s",
    "branch": "--branch",
}


def run_transfer(args: argparse.Namespace) -> int:
    """The ``transfer`` verb; a refused value is reported under its command-line option."""
    try:
        return _transfer(args)
    except InputError as err:
        option = _OPTION_OF.get(err.field)
        if args.kind == "lambert" and err.field in ("r1_km", "r2_km"):
            option = "--" + err.field.replace("_", "-")
        if option is None:
            raise
        what = (
            "radius "
            if err.field in ("r1_km", "r2_km", "rb_km", "r_km") and args.kind != "lambert"
            else ""
        )
        raise InputError(f"{option} ({what}{err.field})", err.value, err.reason) from None


def _transfer(args: argparse.Namespace) -> int:
    from ..kernel import transfers
    from ..kernel.lambert import lambert, solve_lambert

    body = _body(args.body)
    mu, radius = body.mu_km3_s2, body.radius_km
    kind = args.kind
    if kind == "hohmann":
        res = _result_dict(
            transfers.hohmann(radius + args.from_alt_km, radius + args.to_alt_km, mu)
        )
    elif kind == "bielliptic":
        res = _result_dict(
            transfers.bielliptic(
                radius + args.from_alt_km, radius + args.to_alt_km, radius + args.via_alt_km, mu
            )
        )
    elif kind == "plane-change":
        if args.to_alt_km is None or args.to_alt_km == args.alt_km:
            v = math.sqrt(mu / (radius + args.alt_km))
            res = {"dv_km_s": transfers.plane_change_dv_km_s(v, args.di_deg), "v_km_s": v}
        else:
            res = _result_dict(
                transfers.combined_plane_change(
                    radius + args.alt_km, radius + args.to_alt_km, args.di_deg, mu
                )
            )
    elif kind == "phasing":
        res = _result_dict(
            transfers.phasing(radius + args.alt_km, args.offset_km, args.revolutions, mu)
        )
    else:
        given = (
            args.r1_km,
            args.r2_km,
            args.tof_s,
            mu,
            not args.retrograde,
            args.revolutions,
            args.branch,
        )
        sol = solve_lambert(*given)
        if bool(sol.infeasible):
            lambert(*given)  # raises InputError naming the minimum time of flight
        res = {
            "v1_km_s": _num(sol.v1_km_s),
            "v2_km_s": _num(sol.v2_km_s),
            "a_km": _num(sol.a_km),
            "transfer_angle_deg": math.degrees(float(sol.transfer_angle_rad)),
            "plane_ill_defined": bool(sol.plane_ill_defined),
        }
    res = {k: _num(v) for k, v in res.items()}
    if args.json:
        print(json.dumps({"transfer": kind, "body": body.name, **res}, indent=2, allow_nan=False))
        return 0
    print(f"{kind} about {body.name} (mu {mu:g} km^3/s^2)")
    for k, v in res.items():
        shown, unit = v, ""
        if k.endswith("_km_s"):
            shown, unit = (v * 1e3, " m/s") if isinstance(v, float) else (v, " km/s")
        elif k.endswith("_km"):
            unit = " km"
        elif k.endswith("_deg"):
            unit = " deg"
        elif k.endswith("_s"):
            unit = " s"
        if isinstance(shown, float):
            shown = f"{shown:.6f}"
        elif isinstance(shown, list):
            shown = "[" + ", ".join(f"{x:.6f}" for x in shown) + "]"
        label = k
        for suffix in ("_km_s", "_km", "_deg", "_s"):
            if label.endswith(suffix):
                label = label[: -len(suffix)]
                break
        label = label.replace("_", " ")
        print(f"  {label:<22} {shown}{unit}")
    print("caution: preliminary analysis, impulsive two-body model; defer to licensed practice.")
    return 0


def register(subparsers: argparse._SubParsersAction) -> None:
    budget = subparsers.add_parser(
        "budget",
        help="print the delta-v and propellant budget of a case",
        description=(
            "Fly CASE's burn plan and print its delta-v budget line by line (allowances, burns, "
            "station-keeping, disposal) with the margin policy, propellant by the rocket equation "
            "and the mass after each line. Options stand in for (or override) the budget section."
        ),
    )
    budget.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    budget.add_argument("--json", action="store_true", help="print JSON instead of a table")
    budget.add_argument("--mission-years", type=float, default=None)
    budget.add_argument("--margin-percent", type=float, default=None)
    budget.add_argument("--lifetime-limit-years", type=float, default=None, help="disposal limit")
    budget.set_defaults(run=run_budget)

    transfer = subparsers.add_parser(
        "transfer",
        help="quick what-if transfers (hohmann, bielliptic, plane-change, phasing, lambert)",
        description="Size an impulsive transfer about a body from the command line.",
    )
    kinds = transfer.add_subparsers(
        dest="kind", metavar="KIND", required=True, parser_class=type(transfer)
    )

    def common(p: argparse.ArgumentParser) -> None:
        p.add_argument("--body", default="earth", help="central body (earth, moon, mars, sun)")
        p.add_argument("--json", action="store_true", help="print JSON")
        p.set_defaults(run=run_transfer)

    p = kinds.add_parser("hohmann", help="between circular orbits")
    p.add_argument("--from-alt-km", type=float, required=True)
    p.add_argument("--to-alt-km", type=float, required=True)
    common(p)
    p = kinds.add_parser(
        "bielliptic", help="between circular orbits through an intermediate apoapsis"
    )
    p.add_argument("--from-alt-km", type=float, required=True)
    p.add_argument("--to-alt-km", type=float, required=True)
    p.add_argument("--via-alt-km", type=float, required=True)
    common(p)
    p = kinds.add_parser("plane-change", help="pure, or combined with a Hohmann (optimal split)")
    p.add_argument("--alt-km", type=float, required=True)
    p.add_argument("--di-deg", type=float, required=True)
    p.add_argument("--to-alt-km", type=float, default=None)
    common(p)
    p = kinds.add_parser("phasing", help="close an along-track offset on a circular orbit")
    p.add_argument("--alt-km", type=float, required=True)
    p.add_argument("--offset-km", type=float, required=True, help="target ahead (+) or behind (-)")
    p.add_argument("--revolutions", type=int, default=1)
    common(p)
    p = kinds.add_parser("lambert", help="the conic from r1 to r2 in a time of flight")
    p.add_argument("--r1-km", type=float, nargs=3, required=True, metavar=("X", "Y", "Z"))
    p.add_argument("--r2-km", type=float, nargs=3, required=True, metavar=("X", "Y", "Z"))
    p.add_argument("--tof-s", type=float, required=True)
    p.add_argument("--revolutions", type=int, default=0)
    p.add_argument("--branch", choices=("low", "high"), default="low")
    p.add_argument("--retrograde", action="store_true")
    common(p)
