"""Result groups over the analysis window (and over years, for the lifetime and budget).

These propagate the case, so the editor runs them in the background. Event times are
root-found to well under a second, so their tolerances in ``verify`` are a second or so.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .estimates import check_window
from .inputs import ballistic_coefficient_kg_m2, case_trajectory
from .orbit_groups import scalar
from .result import Result

_DAY_S = 86_400.0


def _closed_orbit(case: Any) -> bool:
    return scalar(case.elements().e) < 1.0


def eclipse_results(case: Any, trajectory: Any = None) -> list[Result]:
    """``trajectory``: the case's ``case_trajectory`` when the caller has it already."""
    if not _closed_orbit(case):
        return []
    from ..kernel.eclipses import find_eclipses, node_local_times_h, whole_orbits

    check_window(case, "eclipses")
    traj = case_trajectory(case) if trajectory is None else trajectory
    search = find_eclipses(traj, case.window.duration_s)
    orbits = whole_orbits(search, traj.period_s)
    rows = [
        Result(
            "eclipses_in_window",
            float(len(search.eclipses)),
            "",
            "Eclipses (penumbra or umbra) that begin or end in the analysis window",
            "eclipses",
            abs_tol=0.0,
        ),
        Result(
            "longest_eclipse_s",
            max((e.duration_s for e in search.eclipses), default=0.0),
            "s",
            "Longest eclipse in the window (penumbra entry to exit)",
            "eclipses",
            abs_tol=1.0,
        ),
    ]
    if orbits:
        rows += [
            Result(
                "eclipse_fraction_mean",
                float(np.mean([o.fraction for o in orbits])),
                "",
                "Mean fraction of an orbit in shadow (whole orbits of the window)",
                "eclipses",
                abs_tol=1e-4,
            ),
            Result(
                "eclipse_fraction_max",
                float(max(o.fraction for o in orbits)),
                "",
                "Largest fraction of an orbit in shadow (whole orbits of the window)",
                "eclipses",
                abs_tol=1e-4,
            ),
        ]
    lt = node_local_times_h(traj, 0.0)
    beta = search.per_orbit[0].beta_deg if search.per_orbit else float("nan")
    rows += [
        Result(
            "beta_angle_deg",
            float(beta),
            "deg",
            "Beta angle (Sun above the orbit plane) at the window start",
            "eclipses",
            abs_tol=1e-6,
        ),
        Result(
            "ltan_h",
            float(lt["ltan_h"]),
            "h",
            "Local mean solar time of the ascending node at the window start",
            "eclipses",
            abs_tol=1e-6,
        ),
    ]
    return rows


def contact_results(case: Any, trajectory: Any = None) -> list[Result]:
    """``trajectory``: the case's ``case_trajectory`` when the caller has it already."""
    if not case.stations or not _closed_orbit(case):
        return []
    from ..kernel.passes import ANY_STATION
    from .contacts import case_site_passes, volume_results

    check_window(case, "passes")
    traj = case_trajectory(case) if trajectory is None else trajectory
    duration = case.window.duration_s
    sites = case_site_passes(case, traj)
    search = sites.search
    days = duration / _DAY_S
    network = [p for p in search.passes]
    contact_s = sum(_merged_length([(p.aos_s, p.los_s) for p in network]))
    rows = [
        Result(
            "passes_in_window",
            float(len(network)),
            "",
            "Station passes in the analysis window, every station's added (a pass seen by "
            "two stations at once counts twice)",
            "contacts",
            abs_tol=0.0,
        ),
        Result(
            "passes_per_day",
            len(network) / days,
            "1/day",
            "Passes per day, every station's added",
            "contacts",
            rel_tol=1e-9,
            abs_tol=1e-9,
        ),
        Result(
            "contact_min_per_day",
            contact_s / 60.0 / days,
            "min/day",
            "Minutes per day in contact with at least one station (overlapping passes "
            "counted once)",
            "contacts",
            abs_tol=0.05,
        ),
        Result(
            "longest_gap_min",
            search.longest_gap_s[ANY_STATION] / 60.0,
            "min",
            "Longest interval of the window without contact",
            "contacts",
            abs_tol=0.05,
        ),
        Result(
            "max_elevation_deg",
            max((p.max_elevation_deg for p in network), default=float("nan")),
            "deg",
            "Highest elevation of any pass in the window",
            "contacts",
            abs_tol=1e-3,
        ),
    ]
    return rows + volume_results(case, sites)


def _merged_length(intervals: list[tuple[float, float]]) -> list[float]:
    out: list[list[float]] = []
    for lo, hi in sorted(intervals):
        if out and lo <= out[-1][1]:
            out[-1][1] = max(out[-1][1], hi)
        else:
            out.append([lo, hi])
    return [hi - lo for lo, hi in out]


def lifetime_results(case: Any) -> list[Result]:
    if case.spacecraft is None or not _closed_orbit(case):
        return []
    from ..kernel.lifetime import lifetime_years
    from .flux_scenario import case_density_profile, level_density_profile

    elements = case.elements()
    reentry = (
        120.0
        if case.budget is None or case.budget.disposal is None
        else (case.budget.disposal.reentry_altitude_km)
    )
    life = lifetime_years(
        elements,
        ballistic_coefficient_kg_m2=ballistic_coefficient_kg_m2(case),
        solar_activity=case.force_model.solar_activity,
        reentry_altitude_km=reentry,
        body=case.body_constants(),
        density=case_density_profile(case),
    )
    return [
        Result(
            "lifetime_years",
            float(life.years),
            "yr",
            f"Orbital lifetime until the perigee is {reentry:g} km above the ellipsoid "
            f"(at the orbit's mean latitude) under drag ({life.method}, "
            f"{life.density_model}; {life.flux_scenario})",
            "lifetime",
            rel_tol=1e-6,
            caution=life.caution,
        ),
        *(
            Result(
                f"lifetime_{level}_activity_years",
                float(other.years),
                "yr",
                f"Orbital lifetime to the same re-entry height at {other.flux_scenario}, "
                "same density model (the spread with solar activity)",
                "lifetime",
                rel_tol=1e-6,
                caution=other.caution,
            )
            for level in ("low", "high")
            for other in [
                lifetime_years(
                    elements,
                    ballistic_coefficient_kg_m2=ballistic_coefficient_kg_m2(case),
                    reentry_altitude_km=reentry,
                    body=case.body_constants(),
                    density=level_density_profile(case, level),
                )
            ]
        ),
        Result(
            "ballistic_coefficient_kg_m2",
            ballistic_coefficient_kg_m2(case),
            "kg/m^2",
            "Ballistic coefficient m / (Cd A)",
            "lifetime",
        ),
    ]


def budget_results(case: Any, report: Any = None) -> list[Result]:
    """The delta-v budget's totals, when the case has a budget section and a propulsion Isp.
    ``report``: the case's ``budget_for_case`` when the caller has it already (the editor
    shares one with the budget chart)."""
    if case.budget is None or case.spacecraft is None or case.spacecraft.isp_s is None:
        return []
    if not _closed_orbit(case):
        return []
    if report is None:
        from .manoeuvres import budget_for_case

        report = budget_for_case(case)
    b = report.budget
    rows = [
        Result(
            "dv_total_km_s",
            b.total_dv_km_s,
            "km/s",
            f"Total delta-v with a {b.margin_percent:g} % margin on computed lines",
            "budget",
            rel_tol=1e-6,
            abs_tol=1e-9,
            caution=b.caution,
        ),
        Result(
            "propellant_total_kg",
            b.total_propellant_kg,
            "kg",
            f"Propellant by the rocket equation (Isp {b.isp_s:g} s, g0 9.80665 m/s^2)",
            "budget",
            rel_tol=1e-6,
            abs_tol=1e-9,
        ),
        Result(
            "final_mass_kg",
            b.final_mass_kg,
            "kg",
            "Mass after the last budget line",
            "budget",
            rel_tol=1e-6,
        ),
    ]
    if b.propellant_available_kg is not None:
        rows.append(
            Result(
                "propellant_margin_kg",
                b.propellant_available_kg - b.total_propellant_kg,
                "kg",
                "Propellant on board minus the budget's total",
                "budget",
                rel_tol=1e-6,
                abs_tol=1e-6,
            )
        )
    if report.disposal is not None:
        d = report.disposal
        rows += [
            Result(
                "disposal_perigee_alt_km",
                d.perigee_altitude_km,
                "km",
                "Perigee height after the disposal burn, above the ellipsoid at the orbit's "
                f"mean latitude: lifetime under {d.lifetime_limit_years:g} yr",
                "budget",
                rel_tol=1e-5,
                abs_tol=0.05,
                caution=d.caution,
            ),
            Result(
                "disposal_dv_km_s",
                d.dv_km_s,
                "km/s",
                "Disposal burn (perigee lowering)",
                "budget",
                rel_tol=1e-5,
                abs_tol=1e-6,
                caution=d.caution,
            ),
        ]
    return rows
