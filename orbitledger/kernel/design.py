"""Orbit design under J2: sun-synchronous, repeat ground track, frozen, synchronous and Molniya orbits.

The secular J2 rates are those of ``orbitledger.kernel.j2`` (Vallado 4th ed., Eq. 9-41); this
module only inverts and combines them. Mean elements throughout: a repeat-track or
sun-synchronous semi-major axis is a *mean* semi-major axis (the osculating one of a low orbit
swings by about 10 km around it over one revolution).

Repeat ground track (Vallado, *Fundamentals of Astrodynamics and Applications*, 4th ed. (2013),
Sec. 11.4.2; Wertz et al., *Space Mission Engineering: The New SMAD* (2011), Sec. 10.4): the
track repeats after k nodal periods when they equal m nodal days,

    k (omega_E - dRAAN/dt) = m (dM/dt + dargp/dt),

the nodal period being 2 pi / (dM/dt + dargp/dt) (the time between ascending-node crossings)
and the nodal day 2 pi / (omega_E - dRAAN/dt) (the Earth's turn relative to the drifting node).
The equation is solved for a by bisection on log(a), vectorised.

Frozen orbit (Vallado 4th ed., Sec. 11.4.3; Cook, G. E. (1966), Planet. Space Sci. 14, 433-444):
with J2 and J3 the long-period motion of (e, argp) stops at argp = 90 deg and

    e_frozen = -(J3 R sin i) / (2 J2 a)       (the classical first-order result).

The odd zonals beyond J3 (J5, J7, ...) add roughly 10 % at 700-800 km; that truncation is part
of the model stated here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH, SIDEREAL_DAY_S, Body
from .elements import Elements
from .errors import InputError
from .j2 import SUN_MEAN_RATE_RAD_S, j2_secular_rates, j2_secular_rates_rad_s
from .j2 import sun_synchronous_inclination_deg as _ss_incl

__all__ = [
    "CRITICAL_INCLINATION_DEG",
    "CRITICAL_INCLINATION_RETROGRADE_DEG",
    "FrozenOrbit",
    "MolniyaOrbit",
    "RepeatOrbit",
    "frozen_orbit",
    "geosynchronous_radius_km",
    "ltan_drift_h_per_day",
    "molniya_orbit",
    "repeat_ground_track_sma_km",
    "repeat_ground_track_solutions",
    "sun_synchronous_altitude_km",
    "sun_synchronous_repeat",
]

# Where 5 cos^2 i - 1 = 0 and J2 leaves the argument of perigee still (Vallado 4th ed.,
# Sec. 9.6; Curtis 3rd ed., Sec. 4.7): i = arccos(1/sqrt(5)).
CRITICAL_INCLINATION_DEG = math.degrees(math.acos(1.0 / math.sqrt(5.0)))  # 63.4349 deg
CRITICAL_INCLINATION_RETROGRADE_DEG = 180.0 - CRITICAL_INCLINATION_DEG  # 116.5651 deg

_BISECTIONS = 64


@dataclass(frozen=True)
class RepeatOrbit:
    """A repeat-ground-track solution: k revolutions in m nodal days (mean elements)."""

    revolutions: int
    days: int
    a_km: float
    altitude_km: float
    i_deg: float
    e: float


@dataclass(frozen=True)
class FrozenOrbit:
    """Mean eccentricity and argument of perigee that freeze (e, argp) under J2 and J3."""

    e: Any
    argp_deg: Any


@dataclass(frozen=True)
class MolniyaOrbit:
    """A critically inclined, highly eccentric orbit of half a sidereal day (mean elements)."""

    a_km: float
    e: float
    i_deg: float
    argp_deg: float
    period_s: float
    perigee_altitude_km: float
    apogee_altitude_km: float


def _bisect_log_a(fun, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Vectorised bisection on log(a) for a root of fun(a), fun(lo) < 0 < fun(hi)."""
    lo = np.log(lo)
    hi = np.log(hi)
    for _ in range(_BISECTIONS):
        mid = 0.5 * (lo + hi)
        up = fun(np.exp(mid)) > 0.0
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    return np.exp(0.5 * (lo + hi))


def _out(x: np.ndarray) -> Any:
    return float(x) if np.ndim(x) == 0 else x


def _check_e(e: ArrayLike) -> np.ndarray:
    ecc = np.asarray(e, dtype=float)
    if not np.all(np.isfinite(ecc)) or np.any(ecc < 0.0) or np.any(ecc >= 1.0):
        raise InputError("e", e, "must be an eccentricity in [0, 1)")
    return ecc


def sun_synchronous_altitude_km(i_deg: ArrayLike, e: ArrayLike = 0.0, body: Body = EARTH) -> Any:
    """Mean altitude a - R, km, of the sun-synchronous orbit with inclination i_deg (broadcast).

    The inverse of ``sun_synchronous_inclination_deg``: solves dRAAN/dt(a, e, i) = 360 deg per
    tropical year for a (Vallado 4th ed., Sec. 11.4.1, with Eq. 9-41). Given i_deg > 90 for a
    body with J2 > 0. Refused when no such orbit lies above the body's surface.
    """
    inc = np.asarray(i_deg, dtype=float)
    ecc = _check_e(e)
    if body.j2 <= 0.0:
        raise InputError("body.j2", body.j2, "must be > 0 for the node to drift")
    if not np.all(np.isfinite(inc)) or np.any(inc <= 90.0) or np.any(inc > 180.0):
        raise InputError("i_deg", i_deg, "a sun-synchronous orbit needs 90 < i <= 180 deg")
    i_rad = np.radians(inc)

    def excess(a: np.ndarray) -> np.ndarray:  # > 0 when the node turns slower than the Sun
        raan_rate, _, _ = j2_secular_rates_rad_s(a, ecc, i_rad, body)
        return SUN_MEAN_RATE_RAD_S - raan_rate

    lo = np.full(np.broadcast_shapes(inc.shape, ecc.shape), body.radius_km)
    if np.any(excess(lo) > 0.0):
        raise InputError(
            "i_deg", i_deg, "no sun-synchronous orbit above the surface at this inclination"
        )
    a = _bisect_log_a(excess, lo, 1e3 * lo)
    return _out(a - body.radius_km)


def ltan_drift_h_per_day(elements: Elements, body: Body = EARTH) -> Any:
    """Drift of the local time of the ascending (and descending) node, hours per day.

    The node's local solar time moves at (dRAAN/dt - n_sun) * 24 h / 360 deg, with dRAAN/dt
    from J2 (``j2_secular_rates``) and the Sun's mean rate 360 deg per tropical year (Vallado
    4th ed., Sec. 11.4.1). Positive: the LTAN gets later. Zero for an exactly sun-synchronous
    orbit; an inclination error of 0.01 deg near 98 deg at 700 km gives about 1.7 min per year.
    A polar orbit (fixed node) drifts by -24 h per year.
    """
    raan_rate = j2_secular_rates(elements, body)["raan_deg_per_day"]
    sun_deg_per_day = math.degrees(SUN_MEAN_RATE_RAD_S) * 86_400.0
    return _out((np.asarray(raan_rate) - sun_deg_per_day) * 24.0 / 360.0)


def _repeat_mismatch(k, m, e, body):
    """k (omega_E - dRAAN/dt) - m (dM/dt + dargp/dt), rad/s, as a function of (a, i_rad)."""

    def mismatch(a: np.ndarray, i_rad: np.ndarray) -> np.ndarray:
        raan_rate, argp_rate, m_rate = j2_secular_rates_rad_s(a, e, i_rad, body)
        return k * (body.rotation_rate_rad_s - raan_rate) - m * (m_rate + argp_rate)

    return mismatch


def _check_repeat(revolutions: ArrayLike, days: ArrayLike, body: Body):
    k = np.asarray(revolutions)
    m = np.asarray(days)
    for name, v, raw in (("revolutions", k, revolutions), ("days", m, days)):
        if not np.all(np.isfinite(v)) or np.any(v < 1) or np.any(np.round(v) != v):
            raise InputError(name, raw, "must be a whole number >= 1")
    if body.rotation_rate_rad_s <= 0.0:
        raise InputError("body.rotation_rate_rad_s", body.rotation_rate_rad_s, "must be > 0")
    return k.astype(float), m.astype(float)


def repeat_ground_track_sma_km(
    revolutions: ArrayLike,
    days: ArrayLike,
    i_deg: ArrayLike,
    e: ArrayLike = 0.0,
    body: Body = EARTH,
) -> Any:
    """Mean semi-major axis, km, whose ground track repeats after k revolutions in m days, J2.

    Given whole numbers ``revolutions`` (k) and ``days`` (m, nodal days), the inclination and
    eccentricity (mean elements; all broadcast) and the body (mu, R, J2, rotation rate).
    Solves k (omega_E - dRAAN/dt) = m (dM/dt + dargp/dt) (Vallado 4th ed., Sec. 11.4.2; New
    SMAD Sec. 10.4). Refused when the solution would lie inside the body (k/m too large).
    """
    k, m = _check_repeat(revolutions, days, body)
    ecc = _check_e(e)
    i_rad = np.radians(np.asarray(i_deg, dtype=float))
    mismatch = _repeat_mismatch(k, m, ecc, body)
    shape = np.broadcast_shapes(k.shape, m.shape, ecc.shape, i_rad.shape)
    lo = np.full(shape, body.radius_km)
    if np.any(mismatch(lo, i_rad) > 0.0):
        raise InputError(
            "revolutions",
            revolutions,
            "so many revolutions per day would need an orbit inside the body",
        )
    a = _bisect_log_a(lambda a: mismatch(a, i_rad), lo, 1e3 * lo)
    return _out(a)


def _sso_a_max_km(e: float, body: Body) -> float:
    """Largest a with a sun-synchronous solution (i = 180 deg)."""
    return float(sun_synchronous_altitude_km(180.0, e, body)) + body.radius_km


def sun_synchronous_repeat(
    revolutions: int, days: int, e: float = 0.0, body: Body = EARTH
) -> RepeatOrbit:
    """The sun-synchronous orbit whose track repeats after k revolutions in m days: a and i.

    Solves the repeat condition (``repeat_ground_track_sma_km``) with i = i_ss(a, e) from
    ``sun_synchronous_inclination_deg`` at every step (Vallado 4th ed., Secs. 11.4.1-11.4.2).
    """
    k, m = _check_repeat(revolutions, days, body)
    ecc = float(_check_e(e))
    mismatch = _repeat_mismatch(k, m, ecc, body)
    a_hi = _sso_a_max_km(ecc, body) * (1.0 - 1e-12)
    lo = np.asarray(body.radius_km)

    def fun(a: np.ndarray) -> np.ndarray:
        return mismatch(a, np.radians(_ss_incl(a, ecc, body)))

    if fun(lo) > 0.0 or fun(np.asarray(a_hi)) < 0.0:
        raise InputError(
            "revolutions",
            revolutions,
            f"no sun-synchronous orbit repeats {k:g} revolutions in {m:g} days",
        )
    a = float(_bisect_log_a(fun, lo, np.asarray(a_hi)))
    return RepeatOrbit(int(k), int(m), a, a - body.radius_km, float(_ss_incl(a, ecc, body)), ecc)


def repeat_ground_track_solutions(
    altitude_min_km: float,
    altitude_max_km: float,
    max_days: int,
    i_deg: float | None = None,
    e: float = 0.0,
    body: Body = EARTH,
) -> list[RepeatOrbit]:
    """Every repeat track of k revolutions in m days (k, m coprime, m <= max_days) in a band.

    ``i_deg=None`` asks for sun-synchronous solutions (a and i solved together); a number fixes
    the inclination. Sorted by altitude. Refused (``InputError``) when the band holds none.
    """
    if not (0.0 <= altitude_min_km < altitude_max_km) or not math.isfinite(altitude_max_km):
        raise InputError(
            "altitude_max_km",
            altitude_max_km,
            "the band needs 0 <= altitude_min_km < altitude_max_km",
        )
    if int(max_days) != max_days or max_days < 1:
        raise InputError("max_days", max_days, "must be a whole number >= 1")
    ecc = float(_check_e(e))
    edges = np.array([altitude_min_km, altitude_max_km]) + body.radius_km
    if i_deg is None:
        i_edges = np.radians(_ss_incl(edges, ecc, body))
    else:
        i_edges = np.radians(np.full(2, float(i_deg)))
    raan_rate, argp_rate, m_rate = j2_secular_rates_rad_s(edges, ecc, i_edges, body)
    revs_per_day = (m_rate + argp_rate) / (body.rotation_rate_rad_s - raan_rate)
    found: list[RepeatOrbit] = []
    for m in range(1, int(max_days) + 1):
        k_lo = math.floor(m * revs_per_day[1])
        k_hi = math.ceil(m * revs_per_day[0])
        for k in range(max(k_lo, 1), k_hi + 1):
            if math.gcd(k, m) != 1:
                continue
            if i_deg is None:
                sol = sun_synchronous_repeat(k, m, ecc, body)
            else:
                a = float(repeat_ground_track_sma_km(k, m, i_deg, ecc, body))
                sol = RepeatOrbit(k, m, a, a - body.radius_km, float(i_deg), ecc)
            if altitude_min_km <= sol.altitude_km <= altitude_max_km:
                found.append(sol)
    if not found:
        raise InputError(
            "altitude_min_km",
            altitude_min_km,
            f"no repeat ground track within {max_days} days in {altitude_min_km:g}-{altitude_max_km:g} km",
        )
    return sorted(found, key=lambda s: s.altitude_km)


def frozen_orbit(a_km: ArrayLike, i_deg: ArrayLike, body: Body = EARTH) -> FrozenOrbit:
    """Frozen mean eccentricity and argument of perigee under J2 and J3 (broadcast).

    e = -(J3 R sin i) / (2 J2 a) with argp = 90 deg (270 deg if that e comes out negative, as
    for a body with J3 > 0); Vallado 4th ed., Sec. 11.4.3; Cook (1966). For the Earth at
    700-800 km and i near 98 deg this gives e near 0.00104 (missions fly 0.0011-0.0012, the
    difference being the higher odd zonals). At the critical inclination J2 alone freezes argp
    for any e; the expression then still gives the J3 equilibrium of e.
    """
    a = np.asarray(a_km, dtype=float)
    if not np.all(np.isfinite(a)) or np.any(a <= body.radius_km):
        raise InputError("a_km", a_km, "must be a semi-major axis above the body's radius")
    if body.j2 <= 0.0:
        raise InputError("body.j2", body.j2, "must be > 0")
    i_rad = np.radians(np.asarray(i_deg, dtype=float))
    e = -body.j3 * body.radius_km * np.sin(i_rad) / (2.0 * body.j2 * a)
    argp = np.where(e >= 0.0, 90.0, 270.0)
    return FrozenOrbit(_out(np.abs(e)), _out(argp))


def geosynchronous_radius_km(body: Body = EARTH) -> float:
    """Radius, km, of the circular orbit whose period is the body's sidereal rotation.

    r = (mu / omega^2)^(1/3), Kepler's third law with the sidereal rotation rate (Curtis 3rd
    ed., Ch. 2, circular orbits and the geostationary radius; Vallado 4th ed., Sec. 2.2). For the Earth (WGS-84 mu, IERS rotation rate) 42 164.17 km; the geostationary
    orbit is the equatorial, circular geosynchronous orbit at this radius.
    """
    w = body.rotation_rate_rad_s
    if w <= 0.0:
        raise InputError("body.rotation_rate_rad_s", w, "must be > 0")
    return float(np.cbrt(body.mu_km3_s2 / w**2))


def molniya_orbit(
    perigee_altitude_km: float = 600.0,
    body: Body = EARTH,
    argp_deg: float = 270.0,
    repeat_track: bool = True,
) -> MolniyaOrbit:
    """Molniya-type orbit: critical inclination (63.43 deg), period of half a sidereal day.

    With ``repeat_track`` the mean a is the J2 repeat-ground-track solution of 2 revolutions
    per nodal day (``repeat_ground_track_sma_km(2, 1, i, e)``, iterated with e since the
    perigee altitude is held); otherwise the Keplerian a of period SIDEREAL_DAY_S / 2.
    argp 270 deg puts apogee over the northern hemisphere (common practice).
    """
    rp = body.radius_km + float(perigee_altitude_km)
    if not math.isfinite(rp) or perigee_altitude_km <= 0.0:
        raise InputError("perigee_altitude_km", perigee_altitude_km, "must be > 0 km")
    t = SIDEREAL_DAY_S / 2.0
    a = float(np.cbrt(body.mu_km3_s2 * (t / (2.0 * math.pi)) ** 2))
    if rp >= a:
        raise InputError(
            "perigee_altitude_km", perigee_altitude_km, "perigee above the semi-major axis"
        )
    if repeat_track:
        for _ in range(20):
            a = float(
                repeat_ground_track_sma_km(2, 1, CRITICAL_INCLINATION_DEG, 1.0 - rp / a, body)
            )
    e = 1.0 - rp / a
    return MolniyaOrbit(
        a_km=a,
        e=e,
        i_deg=CRITICAL_INCLINATION_DEG,
        argp_deg=float(argp_deg) % 360.0,
        period_s=2.0 * math.pi * math.sqrt(a**3 / body.mu_km3_s2),
        perigee_altitude_km=float(perigee_altitude_km),
        apogee_altitude_km=a * (1.0 + e) - body.radius_km,
    )
