"""Orbit summary: the derived quantities an analyst checks first, and the cautions they raise.

Formulas (Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Ch. 1-2;
Curtis, Orbital Mechanics for Engineering Students, 3rd ed. (2014), Ch. 2):

    p = a (1 - e)(1 + e)              r = p / (1 + e cos nu)         h = sqrt(mu p)
    v^2 = mu (2/r - 1/a)   (vis-viva)  energy = -mu / (2a)            T = 2 pi sqrt(a^3 / mu)
    r_p = p / (1 + e), r_a = p / (1 - e)                               n = sqrt(mu / |a|^3)
    tan(gamma) = e sin nu / (1 + e cos nu)   (flight-path angle from the local horizontal)
    v_esc = sqrt(2 mu / r),  dA/dt = h / 2 (Kepler's second law),  C3 = v_inf^2 = -mu / a

Hyperbolic orbits (e > 1): ``period_s``, ``apoapsis_radius_km`` and ``apoapsis_alt_km`` are
+inf (the orbit never returns), ``speed_apoapsis_km_s`` is NaN; ``mean_motion_rad_s`` is the
hyperbolic mean motion sqrt(mu / (-a)^3) that advances e sinh H - H. ``c3_km2_s2`` = -mu/a is
given for every orbit (negative: bound, as the trade uses it); ``v_inf_km_s`` is NaN for e < 1.
Altitudes are above a sphere of the body's equatorial radius (``body.radius_km``).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .constants import EARTH, Body
from .elements import Elements, _check_elements

__all__ = ["orbit_summary", "orbit_cautions", "ATMOSPHERE_ALT_KM", "SAFETY_CAUTION"]

# Conventional edge of the atmosphere for re-entry purposes, 100 km (the Karman line; common
# practice). A periapsis below it means the spacecraft re-enters within about a revolution.
ATMOSPHERE_ALT_KM = 100.0
SAFETY_CAUTION = (
    "Preliminary analysis with the stated models (two-body, spherical body); for re-entry, "
    "collision-avoidance, disposal or launch decisions defer to authoritative ephemerides and "
    "data, the licensing authority and licensed practice."
)


def _arrays(elements: Elements):
    a, e, i_deg, nu_deg = np.broadcast_arrays(
        *(np.asarray(getattr(elements, f), dtype=float) for f in ("a_km", "e", "i_deg", "nu_deg"))
    )
    nu = np.radians(nu_deg)
    _check_elements(a, e, i_deg, nu)
    return a, e, nu


def orbit_summary(elements: Elements, body: Body = EARTH) -> dict[str, Any]:
    """Derived quantities of an orbit about ``body`` (formulas in the module docstring).

    Given: elements (Elements; fields floats or arrays, broadcast together); body (Body: uses
    mu_km3_s2 and radius_km).
    Returned: a dict of floats (arrays when the elements hold arrays), keys with units:
    period_s, mean_motion_rad_s, semi_latus_rectum_km, periapsis_radius_km,
    apoapsis_radius_km, periapsis_alt_km, apoapsis_alt_km, speed_periapsis_km_s,
    speed_apoapsis_km_s, specific_energy_km2_s2, specific_angular_momentum_km2_s,
    radius_km, speed_km_s, flight_path_angle_deg (at the current true anomaly),
    escape_speed_km_s (at the current radius), areal_velocity_km2_s, c3_km2_s2, v_inf_km_s.
    Raises InputError for elements refused by ``elements_to_state``.
    """
    mu = float(body.mu_km3_s2)
    a, e, nu = _arrays(elements)
    cn, sn = np.cos(nu), np.sin(nu)
    p = a * ((1.0 - e) * (1.0 + e))
    bound = e < 1.0
    with np.errstate(divide="ignore", invalid="ignore"):
        r_p = p / (1.0 + e)
        r_a = np.where(bound, p / (1.0 - e), np.inf)
        r = p / (1.0 + e * cn)
        period = np.where(bound, 2.0 * np.pi * np.sqrt(np.abs(a) ** 3 / mu), np.inf)
        v_a = np.where(bound, np.sqrt(mu * (2.0 / r_a - 1.0 / a)), np.nan)
        v_inf = np.where(bound, np.nan, np.sqrt(-mu / a))
    h = np.sqrt(mu * p)
    values = {
        "period_s": period,
        "mean_motion_rad_s": np.sqrt(mu / np.abs(a) ** 3),
        "semi_latus_rectum_km": p,
        "periapsis_radius_km": r_p,
        "apoapsis_radius_km": r_a,
        "periapsis_alt_km": r_p - body.radius_km,
        "apoapsis_alt_km": r_a - body.radius_km,
        "speed_periapsis_km_s": np.sqrt(mu * (2.0 / r_p - 1.0 / a)),
        "speed_apoapsis_km_s": v_a,
        "specific_energy_km2_s2": -mu / (2.0 * a),
        "specific_angular_momentum_km2_s": h,
        "radius_km": r,
        "speed_km_s": np.sqrt(mu * (2.0 / r - 1.0 / a)),
        "flight_path_angle_deg": np.degrees(np.arctan2(e * sn, 1.0 + e * cn)),
        "escape_speed_km_s": np.sqrt(2.0 * mu / r),
        "areal_velocity_km2_s": 0.5 * h,
        "c3_km2_s2": -mu / a,
        "v_inf_km_s": v_inf,
    }
    return {k: (float(v) if np.ndim(v) == 0 else v) for k, v in values.items()}


def orbit_cautions(elements: Elements, body: Body = EARTH) -> list[str]:
    """Human-readable warnings for an orbit that is accepted but must not pass silently.

    Given: elements and body as for ``orbit_summary``.
    Returned: a list of one-line messages (empty when there is nothing to say):
    periapsis inside the body (impact); periapsis below ATMOSPHERE_ALT_KM (re-entry within
    about one revolution); a hyperbolic orbit (escape). Messages about re-entry or impact end
    with SAFETY_CAUTION. For arrays, each message counts the orbits it concerns.
    """
    a, e, _ = _arrays(elements)
    p = a * ((1.0 - e) * (1.0 + e))
    alt_p = np.atleast_1d(p / (1.0 + e) - body.radius_km)
    hyperbolic = np.atleast_1d(e > 1.0)
    count = alt_p.size
    notes: list[str] = []

    def which(mask: np.ndarray, single: str) -> str:
        return single if count == 1 else f"{int(mask.sum())} of {count} orbits: {single}"

    inside = alt_p < 0.0
    if inside.any():
        worst = float(alt_p[inside].min())
        notes.append(
            which(
                inside,
                f"periapsis lies {-worst:.3f} km inside {body.name} (radius "
                f"{body.radius_km:.3f} km): the trajectory meets the surface (impact or "
                f"re-entry). {SAFETY_CAUTION}",
            )
        )
    low = (alt_p >= 0.0) & (alt_p < ATMOSPHERE_ALT_KM)
    if low.any():
        worst = float(alt_p[low].min())
        notes.append(
            which(
                low,
                f"periapsis altitude {worst:.3f} km is below {ATMOSPHERE_ALT_KM:.0f} km, inside "
                f"the sensible atmosphere: re-entry within about one revolution. "
                f"{SAFETY_CAUTION}",
            )
        )
    if hyperbolic.any():
        c3 = float(np.atleast_1d(-float(body.mu_km3_s2) / a)[hyperbolic].min())
        notes.append(
            which(
                hyperbolic,
                f"the orbit is hyperbolic (C3 = {c3:.4f} km^2/s^2): the spacecraft escapes "
                f"{body.name} and does not return",
            )
        )
    return notes
