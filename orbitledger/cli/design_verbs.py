"""Command-line verbs for manoeuvre design: ``budget`` (a case's delta-v budget) and
``transfer`` (quick what-ifs: hohmann, bielliptic, plane-change, phasing, lambert).

The case-to-kernel work of ``budget`` lives in ``orbitledger.analysis.manoeuvres``.
"""

from __future__ import annotations

import argparse
import json
import math
from typing import Any

__all__ = ["budget_table", "register"]


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
    from ..analysis.manoeuvres import budget_data, budget_for_case
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
    from ..kernel.errors import InputError

    try:
        return BODIES[name.lower()]
    except KeyError:
        raise InputError("--body", name, f"one of {', '.join(BODIES)}") from None


def _result_dict(res: Any) -> dict[str, Any]:
    from ..analysis.manoeuvres import json_ready

    return {k: json_ready(res[k]) for k in res.keys()}


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
    from ..kernel.errors import InputError

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
    from ..analysis.manoeuvres import json_ready
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
            "v1_km_s": json_ready(sol.v1_km_s),
            "v2_km_s": json_ready(sol.v2_km_s),
            "a_km": json_ready(sol.a_km),
            "transfer_angle_deg": math.degrees(float(sol.transfer_angle_rad)),
            "plane_ill_defined": bool(sol.plane_ill_defined),
        }
    res = {k: json_ready(v) for k, v in res.items()}
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
