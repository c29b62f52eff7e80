"""A case's burn plan and delta-v budget as kernel inputs and results (one place for every face).

``burn_plan_for_case`` flies the case's burn plan from its epoch state; ``budget_for_case``
builds the delta-v budget from the case's budget section (lines in flight order: fixed
allowances, one line per burn, station-keeping, per-year allowances, disposal);
``budget_data`` is its JSON-ready form. Used by the ``budget`` verb, the figures, widgets and
records. Caution: preliminary analysis with the stated models (see the kernel's budget module).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..kernel.errors import InputError

__all__ = ["BudgetReport", "budget_data", "budget_for_case", "burn_plan_for_case", "json_ready"]

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
    from .case_terms import case_terms, reentry_or_orbit_field, refuse_far_disposal
    from .flux_scenario import case_density_profile
    from .inputs import ballistic_coefficient_kg_m2

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
    b = ballistic_coefficient_kg_m2(case)

    steps = burn_plan_for_case(case)
    operational = steps[-1].elements_after if steps else case.elements()
    profile = case_density_profile(case, float(np.asarray(operational.i_deg)))
    path, value = reentry_or_orbit_field(case, operational, reentry_km, after_burns=True)
    terms = {  # kernel argument -> case field (analysis.case_terms)
        "elements": (path, value, lambda err: f"the operational orbit: {err.reason}"),
        "isp_s": "spacecraft.isp_s",
        "propellant_mass_kg": "spacecraft.propellant_mass_kg",
        "margin_percent": "budget.margin_percent",
        "lifetime_limit_years": "budget.disposal.lifetime_limit_years",
        "initial_mass_kg": (
            "spacecraft.mass_kg",
            sc.mass_kg,
            lambda err: f"the budget's delta-v at Isp {sc.isp_s:g} s uses up the whole wet mass "
            "(the rocket equation leaves none for a later line): lower the delta-v or raise isp_s",
        ),
    }  # fmt: skip
    with case_terms(terms):
        return _budget_lines(case, sc, section, steps, operational, years, margin, allowances,
                             station_keeping, limit, reentry_km, body, profile, b,
                             refuse_far_disposal)  # fmt: skip


def _budget_lines(case, sc, section, steps, operational, years, margin, allowances,
                  station_keeping, limit, reentry_km, body, profile, b, refuse_far_disposal):  # fmt: skip
    from ..kernel.budget import (
        BudgetItem,
        delta_v_budget,
        disposal_perigee_lowering,
        drag_makeup_dv_km_s_per_year,
    )
    from .flux_scenario import profile_from

    activity = profile.scenario
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
        per_year = drag_makeup_dv_km_s_per_year(
            operational, b, body=body, density=profile.mean_over(0.0, years)
        )
        items.append(
            BudgetItem(
                "station keeping (drag make-up)",
                per_year * years,
                True,
                f"{per_year * 1000.0:.4g} m/s per year x {years:g} years, {activity}",
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
        apo_alt = float(operational.a_km) * (1.0 + float(operational.e)) - body.radius_km
        refuse_far_disposal(case, apo_alt)
        disposal = disposal_perigee_lowering(
            operational, limit, b, reentry_altitude_km=reentry_km, body=body,
            density=profile_from(profile, years),  # disposal starts at the mission's end
        )  # fmt: skip
        items.append(
            BudgetItem(
                "disposal (perigee lowering)",
                disposal.dv_km_s,
                True,
                f"perigee to {disposal.perigee_altitude_km:.1f} km above the ellipsoid: lifetime "
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
        "drag": f"B = m/(Cd A) = {b:.4g} kg/m^2; {profile.model}",
        "solar_activity": activity,
        "operational_orbit": "osculating elements after the last burn, taken as mean",
    }
    return BudgetReport(budget, steps, disposal, operational, assumptions)


def json_ready(x: Any) -> Any:
    if isinstance(x, np.ndarray):
        return json_ready(x.tolist())
    if isinstance(x, (np.floating, np.integer)):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, (list, tuple)):
        return [json_ready(v) for v in x]
    if isinstance(x, dict):
        return {str(k): json_ready(v) for k, v in x.items()}
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
    return json_ready(out)
