"""Result groups of the orbit itself: the two-body picture and the J2 secular drift.

Each group is a function ``case -> list[Result]``; ``results.case_results`` runs them.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .. import kernel
from ..kernel.errors import InputError
from .result import Result


def scalar(x: Any) -> float:
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


def orbit_results(case: Any) -> list[Result]:
    elements = case.elements()
    body = case.body_constants()
    summary = kernel.orbit_summary(elements, body=body)
    rows = [
        Result("semi_major_axis_km", scalar(elements.a_km), "km", "Semi-major axis", "orbit"),
        Result("eccentricity", scalar(elements.e), "", "Eccentricity", "orbit", abs_tol=1e-12),
        Result("inclination_deg", scalar(elements.i_deg), "deg", "Inclination", "orbit"),
    ]
    hyperbolic = scalar(elements.e) >= 1.0
    for key, unit, text in _SUMMARY_ROWS:
        if key not in summary or key in (_ELLIPTIC_ONLY if hyperbolic else _HYPERBOLIC_ONLY):
            continue
        # An absolute floor as well, so that 1e-17 against 0 agrees in a recomputation.
        rows.append(Result(key, scalar(summary[key]), unit, text, "orbit", abs_tol=1e-9))
    return rows


# --- j2: secular drift of the plane and the sun-synchronous condition ------------------------


def j2_results(case: Any) -> list[Result]:
    elements = case.elements()
    if scalar(elements.e) >= 1.0:
        return []
    body = case.body_constants()
    rates = kernel.j2_secular_rates(elements, body=body)
    rows = [
        Result(
            "raan_rate_deg_per_day",
            scalar(rates["raan_deg_per_day"]),
            "deg/day",
            "RAAN drift under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
        Result(
            "argp_rate_deg_per_day",
            scalar(rates["argp_deg_per_day"]),
            "deg/day",
            "Argument-of-periapsis drift under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
        Result(
            "mean_anomaly_rate_deg_per_day",
            scalar(rates["mean_anomaly_deg_per_day"]),
            "deg/day",
            "Mean-anomaly rate under J2 (secular)",
            "j2",
            abs_tol=1e-12,
        ),
    ]
    try:
        i_sso = kernel.sun_synchronous_inclination_deg(
            scalar(elements.a_km), scalar(elements.e), body=body
        )
    except InputError:
        return rows  # no sun-synchronous inclination at this semi-major axis
    rows += [
        Result(
            "sun_synchronous_inclination_deg",
            scalar(i_sso),
            "deg",
            "Sun-synchronous inclination for this a and e",
            "j2",
        ),
        Result(
            "sun_synchronous_offset_deg",
            scalar(elements.i_deg) - scalar(i_sso),
            "deg",
            "Inclination minus the sun-synchronous inclination",
            "j2",
            abs_tol=1e-9,
        ),
    ]
    return rows
