"""The results of a case: what an analyst reads off it, computed by the kernel.

One function serves every face of the product: the editor's results panel, the record's
standard results, ``orbitledger verify`` (which recomputes them from the inputs embedded in a
record and compares) and the trade studies. A result carries its unit, a description and the
tolerance within which a recomputation must agree: analytic results to a part in 1e9,
root-found event times to a second.

Results come in groups. ``FAST_GROUPS`` cost a millisecond or so and are what the editor
recomputes on every keystroke; the others propagate over the analysis window (or over years,
for the lifetime) and run in the background in the editor.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import asdict, dataclass
from typing import Any

import numpy as np

from .. import kernel
from ..kernel.errors import InputError
from .inputs import ballistic_coefficient_kg_m2, case_stations, case_trajectory

__all__ = [
    "ALL_GROUPS",
    "FAST_GROUPS",
    "Result",
    "case_results",
    "results_as_values",
]


@dataclass(frozen=True)
class Result:
    """One named, unit-carrying result of a case.

    ``rel_tol`` and ``abs_tol`` (in ``unit``) bound how far a recomputation may differ before
    ``verify`` reports it: ``math.isclose(a, b, rel_tol=rel_tol, abs_tol=abs_tol)``.
    ``caution``: the warning to show beside the value where it could feed a safety decision.
    """

    name: str
    value: float
    unit: str
    description: str
    group: str
    rel_tol: float = 1e-9
    abs_tol: float = 0.0
    caution: str = ""

    def agrees_with(self, other_value: float) -> bool:
        if math.isnan(self.value) and math.isnan(other_value):
            return True
        if math.isinf(self.value) or math.isinf(other_value):
            return self.value == other_value
        return math.isclose(self.value, other_value, rel_tol=self.rel_tol, abs_tol=self.abs_tol)

    def as_dict(self) -> dict[str, Any]:
        return asdict(self)


_Group = Callable[[Any], list[Result]]
_GROUPS: dict[str, _Group] = {}


def _group(name: str) -> Callable[[_Group], _Group]:
    def register(fn: _Group) -> _Group:
        _GROUPS[name] = fn
        return fn

    return register


def _scalar(x: Any) -> float:
    return float(np.asarray(x))


# --- orbit: the two-body picture ------------------------------------------------------------

# (summary key, unit, description); the order is the order of the results panel and the record.
_SUMMARY_ROWS = (
    ("period_s", "s", "Orbital period"),
    ("periapsis_alt_km", "km", "Periapsis altitude above the equatorial radius"),
    ("apoapsis_alt_km", "km", "Apoapsis altitude above the equatorial radius"),
    ("periapsis_radius_km", "km", "Periapsis radius"),
    ("apoapsis_radius_km", "km", "Apoapsis radius"),
    ("speed_periapsis_km_s", "km/s", "Speed at periapsis (vis-viva)"),
    ("speed_apoapsis_km_s", "km/s", "Speed at apoapsis (vis-viva)"),
    ("mean_motion_rad_s", "rad/s", "Mean motion"),
    ("specific_energy_km2_s2", "km^2/s^2", "Specific orbital energy"),
    ("specific_angular_momentum_km2_s", "km^2/s", "Specific angular momentum"),
    ("areal_velocity_km2_s", "km^2/s", "Areal velocity h/2 (equal areas in equal times)"),
    ("semi_latus_rectum_km", "km", "Semi-latus rectum"),
    ("radius_km", "km", "Radius at the epoch"),
    ("speed_km_s", "km/s", "Speed at the epoch"),
    ("flight_path_angle_deg", "deg", "Flight-path angle at the epoch"),
    ("escape_speed_km_s", "km/s", "Escape speed at the epoch radius"),
    ("c3_km2_s2", "km^2/s^2", "Characteristic energy C3 (hyperbolic orbits)"),
    ("v_inf_km_s", "km/s", "Hyperbolic excess speed (hyperbolic orbits)"),
)


_HYPERBOLIC_ONLY = ("c3_km2_s2", "v_inf_km_s")
_ELLIPTIC_ONLY = ("period_s", "apoapsis_alt_km", "apoapsis_radius_km", "speed_apoapsis_km_s")


@_group("orbit")
def _orbit_results(case: Any) -> list[Result]:
    elements = case.elements()
    body = case.body_constants()
    summary = kernel.orbit_summary(elements, body=body)
    rows = [
        Result("semi_major_axis_km", _scalar(elements.a_km), "km", "Semi-major axis", "orbit"),
        Result("eccentricity", _scalar(elements.e), "", "Eccentricity", "orbit", abs_tol=1e-12),
        Result("inclination_deg", _scalar(elements.i_deg), "deg", "Inclination", "orbit"),
    ]
    hyperbolic = _scalar(elements.e) >= 1.0
    for key, unit, text in _SUMMARY_ROWS:
        if key not in summary or key in (_ELLIPTIC_ONLY if hyperbolic else _HYPERBOLIC_ONLY):
            continue
        # An absolute floor as well, so that 1e-17 against 0 agrees in a recomputation.
        rows.append(Result(key, _scalar(summary[key]), unit, text, "orbit", abs_tol=1e-9))
    return rows


# --- j2: secular drift of the plane and the sun-synchronous condition ------------------------


@_group("j2")
def _j2_results(case: Any) -> list[Result]:
    elements = case.elements()
    if _scalar(elements.e) >= 1.0:
        return []
    body = case.body_constants()
    rates = kernel.j2_secular_rates(elements, body=body)
    rows = [
        Result(
            "raan_rate_deg_per_day",
            _scalar(rates["raan_deg_per_day"]),
            "deg/day",
            "RAAN drift under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
        Result(
            "argp_rate_deg_per_day",
            _scalar(rates["argp_deg_per_day"]),
            "deg/day",
            "Argument-of-periapsis drift under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
        Result(
            "mean_anomaly_rate_deg_per_day",
            _scalar(rates["mean_anomaly_deg_per_day"]),
            "deg/day",
            "Mean-anomaly rate under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
    ]
    try:
        i_sso = kernel.sun_synchronous_inclination_deg(
            _scalar(elements.a_km), _scalar(elements.e), body=body
        )
    except InputError:
        return rows  # no sun-synchronous inclination at this semi-major axis
    rows += [
        Result(
            "sun_synchronous_inclination_deg",
            _scalar(i_sso),
            "deg",
            "Sun-synchronous inclination for this a and e",
            "j2",
        ),
        Result(
            "sun_synchronous_offset_deg",
            _scalar(elements.i_deg) - _scalar(i_sso),
            "deg",
            "Inclination minus the sun-synchronous inclination",
            "j2",
            abs_tol=1e-9,
        ),
    ]
    return rows


# --- window groups: propagate over the case's analysis window --------------------------------

_DAY_S = 86_400.0


def _closed_orbit(case: Any) -> bool:
    return _scalar(case.elements().e) < 1.0


@_group("eclipses")
def _eclipse_results(case: Any) -> list[Result]:
    if not _closed_orbit(case):
        return []
    from ..kernel.eclipses import find_eclipses, node_local_times_h

    traj = case_trajectory(case)
    search = find_eclipses(traj, case.window.duration_s)
    orbits = [o for o in search.per_orbit if o.end_s - o.start_s >= 0.999 * traj.period_s]
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
                "Largest fraction of an orbit in shadow",
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


@_group("contacts")
def _contact_results(case: Any) -> list[Result]:
    if not case.stations or not _closed_orbit(case):
        return []
    from ..kernel.passes import ANY_STATION, station_passes

    traj = case_trajectory(case)
    duration = case.window.duration_s
    search = station_passes(traj, case_stations(case), duration, step_s=case.window.step_s)
    days = duration / _DAY_S
    network = [p for p in search.passes]
    contact_s = sum(_merged_length([(p.aos_s, p.los_s) for p in network]))
    rows = [
        Result(
            "passes_in_window",
            float(len(network)),
            "",
            "Station passes in the analysis window (all stations)",
            "contacts",
            abs_tol=0.0,
        ),
        Result(
            "passes_per_day",
            len(network) / days,
            "1/day",
            "Passes per day, all stations",
            "contacts",
            rel_tol=1e-9,
            abs_tol=1e-9,
        ),
        Result(
            "contact_min_per_day",
            contact_s / 60.0 / days,
            "min/day",
            "Minutes per day in contact with at least one station",
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
    return rows


def _merged_length(intervals: list[tuple[float, float]]) -> list[float]:
    out: list[list[float]] = []
    for lo, hi in sorted(intervals):
        if out and lo <= out[-1][1]:
            out[-1][1] = max(out[-1][1], hi)
        else:
            out.append([lo, hi])
    return [hi - lo for lo, hi in out]


@_group("lifetime")
def _lifetime_results(case: Any) -> list[Result]:
    if case.spacecraft is None or not _closed_orbit(case):
        return []
    from ..kernel.lifetime import lifetime_years

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
    )
    return [
        Result(
            "lifetime_years",
            float(life.years),
            "yr",
            f"Orbital lifetime to {reentry:g} km under drag ({life.method}, "
            f"{life.solar_activity} solar activity)",
            "lifetime",
            rel_tol=1e-6,
            caution=life.caution,
        ),
        Result(
            "ballistic_coefficient_kg_m2",
            ballistic_coefficient_kg_m2(case),
            "kg/m^2",
            "Ballistic coefficient m / (Cd A)",
            "lifetime",
        ),
    ]


FAST_GROUPS = ("orbit", "j2")


def _all_groups() -> tuple[str, ...]:
    return tuple(_GROUPS)


def case_results(case: Any, groups: Iterable[str] | None = None) -> dict[str, Result]:
    """The named results of ``case`` (an ``orbitledger.case.Case``), in panel order.

    ``groups`` picks result groups (default: all of them, see ``ALL_GROUPS``); a group that
    does not apply to the case (no stations, no spacecraft, a hyperbolic orbit) gives nothing.
    Raises ``InputError`` for an unknown group name.
    """
    chosen = _all_groups() if groups is None else tuple(groups)
    out: dict[str, Result] = {}
    for name in chosen:
        if name not in _GROUPS:
            raise InputError("groups", name, f"unknown result group; known: {', '.join(_GROUPS)}")
        for result in _GROUPS[name](case):
            out[result.name] = result
    return out


def results_as_values(results: Mapping[str, Result]) -> dict[str, float]:
    """``{name: value}``: the plain mapping the editor shows as ``editor.summary``."""
    return {name: r.value for name, r in results.items()}


ALL_GROUPS = _all_groups()
