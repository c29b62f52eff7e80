"""Secular effect of the Earth's oblateness (J2) on the mean elements; sun-synchronous inclination.

First-order secular rates of the node, the argument of perigee and the mean anomaly under the
J2 zonal harmonic, after Vallado, *Fundamentals of Astrodynamics and Applications*, 4th ed.
(2013), Sec. 9.6, Eq. 9-41, and Curtis, *Orbital Mechanics for Engineering Students*, 3rd ed.
(2014), Sec. 4.7, Eqs. 4.52-4.53:

    dRAAN/dt = -3/2 n J2 (R/p)^2 cos i
    dargp/dt = +3/4 n J2 (R/p)^2 (5 cos^2 i - 1)
    dM/dt    = n [1 + 3/4 J2 (R/p)^2 sqrt(1 - e^2) (3 cos^2 i - 1)]

with n = sqrt(mu / a^3) and p = a (1 - e^2). The rates are of *mean* elements: short-period
terms (a few km in position for a low orbit) are left out, which is the accepted model for
ground tracks and station passes over weeks, not for precise orbit determination.

A sun-synchronous orbit turns its plane at the Sun's mean rate, 360 deg per tropical year.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
from numpy.typing import ArrayLike

from .anomalies import mean_to_true_anomaly, true_to_mean_anomaly
from .constants import EARTH, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .elements import Elements, elements_to_state
from .errors import InputError

__all__ = [
    "SUN_MEAN_RATE_RAD_S",
    "mean_element_states",
    "mean_semi_major_axis_km",
    "propagate_j2_mean",
    "j2_secular_rates",
    "j2_secular_rates_rad_s",
    "sun_synchronous_inclination_deg",
]

# The Sun's mean motion along the ecliptic: one revolution per tropical year (common practice;
# tropical year from the Explanatory Supplement to the Astronomical Almanac, 1992).
SUN_MEAN_RATE_RAD_S = 2.0 * math.pi / (TROPICAL_YEAR_DAYS * SECONDS_PER_DAY)

_DEG_PER_DAY = math.degrees(1.0) * SECONDS_PER_DAY  # (rad/s) -> (deg/day)


def _checked_conic(a_km: ArrayLike, e: ArrayLike, a_field: str, e_field: str):
    a = np.asarray(a_km, dtype=float)
    ecc = np.asarray(e, dtype=float)
    if not np.all(np.isfinite(a)) or np.any(a <= 0.0):
        raise InputError(a_field, a_km, "must be a finite semi-major axis > 0 km (elliptic orbit)")
    if not np.all(np.isfinite(ecc)) or np.any(ecc < 0.0) or np.any(ecc >= 1.0):
        raise InputError(e_field, e, "must be an eccentricity in [0, 1) (elliptic orbit)")
    return a, ecc


def j2_secular_rates_rad_s(
    a_km: ArrayLike, e: ArrayLike, i_rad: ArrayLike, body: Body = EARTH
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Secular J2 rates (dRAAN/dt, dargp/dt, dM/dt), rad/s, of mean elements (broadcast).

    Given a_km > 0, 0 <= e < 1, i_rad and a body with ``mu_km3_s2``, ``radius_km`` and ``j2``.
    dM/dt includes the Keplerian mean motion n. Vallado 4th ed., Eq. 9-41.
    """
    a, ecc = _checked_conic(a_km, e, "a_km", "e")
    inc = np.asarray(i_rad, dtype=float)
    n = np.sqrt(body.mu_km3_s2 / a**3)
    p = a * (1.0 - ecc**2)
    k = n * body.j2 * (body.radius_km / p) ** 2
    cos_i = np.cos(inc)
    raan_rate = -1.5 * k * cos_i
    argp_rate = 0.75 * k * (5.0 * cos_i**2 - 1.0)
    m_rate = n + 0.75 * k * np.sqrt(1.0 - ecc**2) * (3.0 * cos_i**2 - 1.0)
    return raan_rate, argp_rate, m_rate


def j2_secular_rates(elements: Elements, body: Body = EARTH) -> Mapping[str, np.ndarray | float]:
    """Secular J2 drift of the mean elements, in degrees per day.

    Given mean ``Elements`` (a_km > 0, 0 <= e < 1; fields may be arrays) and the central body.
    Returns a mapping with ``raan_deg_per_day`` (nodal regression, negative for prograde
    orbits), ``argp_deg_per_day`` (apsidal rotation; zero at the critical inclination
    63.43 deg) and ``mean_anomaly_deg_per_day`` (the perturbed mean motion: n plus its J2
    drift). Source: Vallado 4th ed., Sec. 9.6, Eq. 9-41; Curtis 3rd ed., Eqs. 4.52-4.53.
    """
    a, ecc = _checked_conic(elements.a_km, elements.e, "elements.a_km", "elements.e")
    i_rad = np.radians(np.asarray(elements.i_deg, dtype=float))
    rates = j2_secular_rates_rad_s(a, ecc, i_rad, body)
    names = ("raan_deg_per_day", "argp_deg_per_day", "mean_anomaly_deg_per_day")
    out: dict[str, np.ndarray | float] = {}
    for name, rate in zip(names, rates, strict=True):
        value = rate * _DEG_PER_DAY
        out[name] = float(value) if np.ndim(value) == 0 else value
    return out


def sun_synchronous_inclination_deg(
    a_km: ArrayLike, e: ArrayLike = 0.0, body: Body = EARTH
) -> np.ndarray | float:
    """Inclination, deg, at which J2 turns the node at the Sun's mean rate (360 deg / year).

    Solves -3/2 n J2 (R/p)^2 cos i = 2 pi / (tropical year) for i (Curtis 3rd ed., Sec. 4.7
    and Example 4.9; Vallado 4th ed., Eq. 9-41 set equal to the Sun's rate). Given a_km > 0 and 0 <= e < 1
    (broadcast). The result is retrograde (> 90 deg) for the Earth. Raises ``InputError`` when
    |cos i| would exceed 1: no sun-synchronous orbit exists at that size (for the Earth, a above
    about 12 350 km for a circular orbit).
    """
    a, ecc = _checked_conic(a_km, e, "a_km", "e")
    if body.j2 <= 0.0:
        raise InputError("body.j2", body.j2, "must be > 0 for the node to drift")
    n = np.sqrt(body.mu_km3_s2 / a**3)
    p = a * (1.0 - ecc**2)
    cos_i = -SUN_MEAN_RATE_RAD_S / (1.5 * n * body.j2 * (body.radius_km / p) ** 2)
    if np.any(np.abs(cos_i) > 1.0):
        raise InputError(
            "a_km",
            a_km,
            f"no sun-synchronous orbit exists around {body.name} at this size "
            "(the J2 nodal rate cannot reach 360 deg per year at any inclination)",
        )
    i_deg = np.degrees(np.arccos(cos_i))
    return float(i_deg) if np.ndim(i_deg) == 0 else i_deg


def mean_element_states(
    elements: Elements,
    dt_s: ArrayLike,
    raan_rate_rad_s: float,
    argp_rate_rad_s: float,
    m_rate_rad_s: float,
    mu_km3_s2: float,
) -> tuple[np.ndarray, np.ndarray]:
    """GCRF states of an ellipse whose RAAN, argument of perigee and mean anomaly advance at
    constant rates: the shared core of two-body (rates 0, 0, n) and J2 mean-element
    propagation. One scalar element set, dt_s any shape; returns dt_s.shape + (3,) arrays.

    The velocity is the exact time derivative of the position:
    v = v_conic (dM/dt) / n + dRAAN/dt (z x r) + dargp/dt (h_hat x r), with v_conic the
    two-body velocity on the instantaneous ellipse and n = sqrt(mu / a^3).
    """
    a, e = float(np.asarray(elements.a_km)), float(np.asarray(elements.e))
    t = np.asarray(dt_s, dtype=float)
    m0 = true_to_mean_anomaly(math.radians(float(np.asarray(elements.nu_deg))), e)
    nu = mean_to_true_anomaly(m0 + m_rate_rad_s * t, e)
    raan = float(np.asarray(elements.raan_deg)) + math.degrees(raan_rate_rad_s) * t
    argp = float(np.asarray(elements.argp_deg)) + math.degrees(argp_rate_rad_s) * t
    moving = Elements(a, e, float(np.asarray(elements.i_deg)), raan, argp, np.degrees(nu))
    r, v = elements_to_state(moving, mu_km3_s2)
    n = math.sqrt(mu_km3_s2 / a**3)
    v = v * (m_rate_rad_s / n)
    if raan_rate_rad_s or argp_rate_rad_s:
        h = np.cross(r, v)
        h_hat = h / np.linalg.norm(h, axis=-1, keepdims=True)
        z_cross_r = np.stack([-r[..., 1], r[..., 0], np.zeros_like(r[..., 2])], axis=-1)
        v = v + raan_rate_rad_s * z_cross_r + argp_rate_rad_s * np.cross(h_hat, r)
    return r, v


def propagate_j2_mean(
    elements: Elements, dt_s: ArrayLike, body: Body = EARTH
) -> tuple[np.ndarray, np.ndarray]:
    """Mean-element propagation under J2: GCRF position (km) and velocity (km/s) at dt_s.

    Given one set of mean elements (a_km > 0, 0 <= e < 1) at t = 0 and times dt_s (s, any
    shape; a million epochs cost a few vectorised passes). RAAN, argument of perigee and mean
    anomaly drift at the secular J2 rates of ``j2_secular_rates_rad_s`` (Vallado 4th ed.,
    Eq. 9-41); a, e and i stay fixed; positions are two-body positions on the drifting ellipse.
    Short-period J2 terms (about 10 km along track in low orbit) are left out, so this is the
    model for ground tracks, passes and eclipses over weeks, not for precise ephemerides.
    Osculating elements given as mean ones carry that short-period offset into the result.
    """
    a, e = _checked_conic(elements.a_km, elements.e, "elements.a_km", "elements.e")
    if a.ndim or e.ndim:
        raise InputError("elements", elements, "must be one element set (scalars)")
    rates = j2_secular_rates_rad_s(a, e, math.radians(float(np.asarray(elements.i_deg))), body)
    raan_rate, argp_rate, m_rate = (float(x) for x in rates)
    return mean_element_states(elements, dt_s, raan_rate, argp_rate, m_rate, body.mu_km3_s2)


def mean_semi_major_axis_km(elements: Elements, body: Body = EARTH) -> float:
    """Mean (orbit-averaged) semi-major axis, km, of osculating elements under J2.

    Removes the first-order short-period J2 term of the semi-major axis (Kozai, "The motion of
    a close Earth satellite", Astron. J. 64 (1959) 367, short-period part of a; the form is
    verified in tests/test_j2.py against a numerical J2 orbit, where a - da stays
    constant to about 10 m while the osculating a swings by +-10 km):

        da = (J2 R^2 / a) [(1 - 3/2 sin^2 i) ((a/r)^3 - (1 - e^2)^(-3/2))
                           + 3/2 sin^2 i (a/r)^3 cos(2 argp + 2 nu)]

    Using the osculating a as the mean one would drift the along-track position by up to
    about 1 000 km per day in low orbit; the other elements' short-period terms (bounded, a
    few km in position) are left in.
    """
    a, e = _checked_conic(elements.a_km, elements.e, "elements.a_km", "elements.e")
    a, e = float(a), float(e)
    nu = math.radians(float(np.asarray(elements.nu_deg)))
    s2 = math.sin(math.radians(float(np.asarray(elements.i_deg)))) ** 2
    r = a * (1.0 - e * e) / (1.0 + e * math.cos(nu))
    two_u = 2.0 * math.radians(float(np.asarray(elements.argp_deg))) + 2.0 * nu
    da = (body.j2 * body.radius_km**2 / a) * (
        (1.0 - 1.5 * s2) * ((a / r) ** 3 - (1.0 - e * e) ** -1.5)
        + 1.5 * s2 * (a / r) ** 3 * math.cos(two_u)
    )
    return a - da
