"""Accelerations on an Earth satellite in the GCRF, km/s^2: gravity, zonal harmonics, drag, Sun, Moon.

Every function broadcasts: positions and velocities are ``(..., 3)`` arrays in km and km/s and
the result has the same shape. ``ForceModel`` chooses which terms act; ``acceleration_km_s2``
sums them.

Approximations, each safe for preliminary orbit analysis:

- zonal harmonics act about the GCRF z axis (the Earth's pole is taken as the GCRF pole; the
  true pole is off it by precession-nutation, < 0.5 deg over 2000-2050, a relative error in
  the J2 acceleration below 1e-2);
- the atmosphere co-rotates with the Earth about the GCRF z axis at the body's rotation rate;
- the drag height is above the reference ellipsoid at the geocentric latitude,
  h = r - R_eq (1 - f sin^2(phi')): within about 20 m of the geodetic height in LEO;
- the Sun (ERFA epv00) and the Moon (ERFA moon98) are geometric GCRS positions, TDB taken
  equal to TT (they differ by < 2 ms).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .atmosphere import SolarActivityLevel, density_kg_m3, solar_activity_level
from .constants import AU_KM, EARTH, MOON, SUN, TROPICAL_YEAR_DAYS, Body
from .density import DensityProfile
from .errors import InputError
from .sun import sun_position_from_tt_km

__all__ = [
    "ForceModel",
    "THIRD_BODIES",
    "ballistic_coefficient_kg_m2",
    "two_body_acceleration_km_s2",
    "zonal_acceleration_km_s2",
    "ellipsoidal_height_km",
    "drag_acceleration_km_s2",
    "third_body_acceleration_km_s2",
    "sun_moon_positions_gcrf_km",
    "acceleration_km_s2",
]

THIRD_BODIES = ("sun", "moon")
_SECONDS_PER_DAY = 86_400.0
_YEAR_S = TROPICAL_YEAR_DAYS * _SECONDS_PER_DAY
# omega x r = w (-y, x, 0) for omega = (0, 0, w): r[..., _YXZ] * _CROSS_SIGN * w
_YXZ = [1, 0, 2]
_CROSS_SIGN = np.array([-1.0, 1.0, 0.0])


def ballistic_coefficient_kg_m2(
    mass_kg: ArrayLike, drag_area_m2: ArrayLike, drag_coefficient: ArrayLike
) -> np.ndarray:
    """Ballistic coefficient B = m / (Cd A), kg/m^2 (the larger B, the less drag)."""
    return np.asarray(mass_kg, dtype=float) / (
        np.asarray(drag_coefficient, dtype=float) * np.asarray(drag_area_m2, dtype=float)
    )


def two_body_acceleration_km_s2(r_km: ArrayLike, mu_km3_s2: float) -> np.ndarray:
    """Point-mass gravity -mu r / |r|^3, km/s^2 (Newton)."""
    r = np.asarray(r_km, dtype=float)
    r2 = (r * r).sum(axis=-1, keepdims=True)
    return (-mu_km3_s2 / (r2 * np.sqrt(r2))) * r


def zonal_acceleration_km_s2(r_km: ArrayLike, body: Body = EARTH, degree: int = 2) -> np.ndarray:
    """Acceleration of the zonal harmonics J2..J``degree`` (``degree`` 2, 3 or 4), km/s^2.

    The gradient of the zonal part of the geopotential, with the sign convention
    U = (mu/r) [1 - sum_n Jn (R/r)^n Pn(z/r)] for the potential whose gradient is the
    acceleration (Montenbruck & Gill, Satellite Orbits (2000), Sec. 3.2, with Cn0 = -Jn),
    written in Cartesian form, point-mass term excluded.
    The tests check every degree against the gradient of that potential built from scipy's
    Legendre polynomials, and J2 against its closed form at the equator and the pole.
    """
    if degree not in (2, 3, 4):
        raise InputError("zonal_degree", degree, "must be 2, 3 or 4")
    r = np.asarray(r_km, dtype=float)
    x, y, z = r[..., 0], r[..., 1], r[..., 2]
    r2 = x * x + y * y + z * z
    rn = np.sqrt(r2)
    s2 = z * z / r2  # sin^2 of the geocentric latitude
    mu, big_r = body.mu_km3_s2, body.radius_km

    k2 = -1.5 * body.j2 * mu * big_r**2 / (r2 * r2 * rn)
    ax = k2 * x * (1.0 - 5.0 * s2)
    ay = k2 * y * (1.0 - 5.0 * s2)
    az = k2 * z * (3.0 - 5.0 * s2)
    if degree >= 3:
        k3 = -2.5 * body.j3 * mu * big_r**3 / (r2 * r2 * r2 * rn)
        common = 3.0 * z - 7.0 * z * s2
        ax = ax + k3 * x * common
        ay = ay + k3 * y * common
        az = az + k3 * (6.0 * z * z - 7.0 * z * z * s2 - 0.6 * r2)
    if degree >= 4:
        k4 = 1.875 * body.j4 * mu * big_r**4 / (r2 * r2 * r2 * rn)
        common = 1.0 - 14.0 * s2 + 21.0 * s2 * s2
        ax = ax + k4 * x * common
        ay = ay + k4 * y * common
        az = az + k4 * z * (5.0 - 70.0 / 3.0 * s2 + 21.0 * s2 * s2)
    out = np.empty(r.shape)
    out[..., 0], out[..., 1], out[..., 2] = ax, ay, az
    return out


def ellipsoidal_height_km(r_km: ArrayLike, body: Body = EARTH) -> np.ndarray:
    """Height above the reference ellipsoid at the geocentric latitude, km (approximate).

    h = |r| - R_eq (1 - f sin^2 phi'), the ellipsoid radius to first order in the flattening
    (common practice); within about 20 m of the geodetic height for LEO, ample for a density
    model. Use the frames module for geodetic coordinates where they matter.
    """
    r = np.asarray(r_km, dtype=float)
    r2 = (r * r).sum(axis=-1)
    return np.sqrt(r2) - body.radius_km * (1.0 - body.flattening * r[..., 2] ** 2 / r2)


def drag_acceleration_km_s2(
    r_km: ArrayLike,
    v_km_s: ArrayLike,
    ballistic_coefficient_kg_m2: float,
    solar_activity: str | SolarActivityLevel = "moderate",
    body: Body = EARTH,
    density: Callable[[np.ndarray], np.ndarray] | None = None,
) -> np.ndarray:
    """Drag acceleration -(1/2) rho |v_rel| v_rel / B, km/s^2, in a co-rotating atmosphere.

    v_rel = v - omega x r with omega along z at ``body.rotation_rate_rad_s`` (Montenbruck &
    Gill, Satellite Orbits (2000), Sec. 3.5, atmospheric drag).
    B = m / (Cd A), kg/m^2. The density is ``density(h_km)`` if given, else the exponential
    model of ``orbitledger.kernel.atmosphere`` at ``solar_activity``.
    """
    if not np.all(np.asarray(ballistic_coefficient_kg_m2) > 0.0):
        raise InputError(
            "ballistic_coefficient_kg_m2", ballistic_coefficient_kg_m2, "must be positive"
        )
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    w = body.rotation_rate_rad_s
    v_rel = v - (w * r[..., _YXZ]) * _CROSS_SIGN  # v - omega x r, omega = (0, 0, w)
    h = ellipsoidal_height_km(r, body)
    rho = density(h) if density is not None else density_kg_m3(h, solar_activity)
    speed = np.sqrt((v_rel * v_rel).sum(axis=-1, keepdims=True))
    # rho [kg/m^3] / B [kg/m^2] -> 1/m; |v| v in km^2/s^2 -> factor 1e3 gives km/s^2.
    scale = -0.5e3 * np.asarray(rho)[..., None] / ballistic_coefficient_kg_m2
    return scale * speed * v_rel


def third_body_acceleration_km_s2(
    r_km: ArrayLike, r_body_km: ArrayLike, mu_body_km3_s2: float
) -> np.ndarray:
    """Perturbing acceleration of a third body on a geocentric satellite, km/s^2.

    mu_b [ (s - r)/|s - r|^3 - s/|s|^3 ], s the body's geocentric position (Montenbruck &
    Gill, Satellite Orbits (2000), Sec. 3.3, Sun and Moon as point masses). In
    double precision the difference loses under 1e-9 relative accuracy for an Earth
    satellite, far below the model's own error.
    """
    r = np.asarray(r_km, dtype=float)
    s = np.asarray(r_body_km, dtype=float)
    d = s - r
    d2 = (d * d).sum(axis=-1, keepdims=True)
    s2 = (s * s).sum(axis=-1, keepdims=True)
    return mu_body_km3_s2 * (d / (d2 * np.sqrt(d2)) - s / (s2 * np.sqrt(s2)))


def sun_moon_positions_gcrf_km(
    jd_tt1: ArrayLike, jd_tt2: ArrayLike
) -> tuple[np.ndarray, np.ndarray]:
    """Geocentric GCRS positions of the Sun and the Moon, km, at TT Julian dates jd_tt1 + jd_tt2.

    Sun: ``orbitledger.kernel.sun.sun_position_from_tt_km`` (ERFA epv00, error below 12 km). Moon: ERFA moon98 (Meeus, Astronomical Algorithms, 2nd
    ed., ch. 47, truncated ELP-2000/82; about 10 arcsec / a few hundred km at worst). Geometric
    positions, no light time; shapes ``(..., 3)``.
    """
    r_sun = sun_position_from_tt_km(np.asarray(jd_tt1, float), np.asarray(jd_tt2, float))
    r_moon = np.asarray(erfa.moon98(jd_tt1, jd_tt2)["p"]) * AU_KM
    return r_sun, r_moon


@dataclass(frozen=True)
class ForceModel:
    """Which accelerations act on the satellite.

    zonal_degree: 0 (point mass only), 2, 3 or 4 (J2 up to J``zonal_degree``).
    ballistic_coefficient_kg_m2: m / (Cd A); drag acts when set (None: no drag).
    solar_activity: atmosphere level ("low", "moderate", "high"), used only with drag.
    third_bodies: any of "sun", "moon".
    body: the central body (its mu, radius, flattening, J2..J4, rotation rate).
    density: a ``DensityProfile`` (``orbitledger.kernel.density``; time origin at the
    propagation's t = 0) for the drag instead of the exponential model at ``solar_activity``.
    """

    zonal_degree: int = 0
    ballistic_coefficient_kg_m2: float | None = None
    solar_activity: str = "moderate"
    third_bodies: tuple[str, ...] = ()
    body: Body = EARTH
    density: DensityProfile | None = None

    def __post_init__(self) -> None:
        if self.zonal_degree not in (0, 2, 3, 4):
            raise InputError("force_model.zonal_degree", self.zonal_degree, "must be 0, 2, 3 or 4")
        b = self.ballistic_coefficient_kg_m2
        if b is not None and not (np.isfinite(b) and b > 0.0):
            raise InputError(
                "force_model.ballistic_coefficient_kg_m2", b, "must be a positive number"
            )
        solar_activity_level(self.solar_activity)  # refuse an unknown level now, not mid-run
        bodies = tuple(str(name).lower() for name in self.third_bodies)
        for name in bodies:
            if name not in THIRD_BODIES:
                raise InputError(
                    "force_model.third_body", name, f"must be any of {', '.join(THIRD_BODIES)}"
                )
        object.__setattr__(self, "third_bodies", bodies)

    @property
    def drag(self) -> bool:
        return self.ballistic_coefficient_kg_m2 is not None

    @property
    def description(self) -> str:
        """One line naming the terms that act, for records."""
        terms = ["point mass"]
        if self.zonal_degree:
            terms.append(f"zonal J2..J{self.zonal_degree}")
        if self.drag:
            level = (
                f"{self.solar_activity} solar activity"
                if self.density is None
                else self.density.scenario
            )
            terms.append(f"drag (B = {self.ballistic_coefficient_kg_m2:.4g} kg/m^2, {level})")
        terms.extend(f"{name} third body" for name in self.third_bodies)
        return ", ".join(terms)


def acceleration_km_s2(
    model: ForceModel,
    r_km: ArrayLike,
    v_km_s: ArrayLike,
    jd_tt: tuple[ArrayLike, ArrayLike] | None = None,
    *,
    sun_moon_km: tuple[ArrayLike, ArrayLike] | None = None,
    t_s: float = 0.0,
) -> np.ndarray:
    """Total acceleration of ``model`` at positions/velocities ``(..., 3)``, km/s^2, GCRF.

    When third bodies act, either ``jd_tt`` (two-part TT Julian date, broadcasting with the
    leading shape) or ``sun_moon_km``, the geocentric Sun and Moon positions already known
    (e.g. interpolated by a propagator), is needed. ``t_s``: seconds from the start, where
    the model's density profile changes with time.
    """
    r = np.asarray(r_km, dtype=float)
    body = model.body
    acc = two_body_acceleration_km_s2(r, body.mu_km3_s2)
    if model.zonal_degree:
        acc = acc + zonal_acceleration_km_s2(r, body, model.zonal_degree)
    if model.ballistic_coefficient_kg_m2 is not None:
        profile = model.density
        acc = acc + drag_acceleration_km_s2(
            r,
            v_km_s,
            model.ballistic_coefficient_kg_m2,
            model.solar_activity,
            body,
            None if profile is None else lambda h: profile.density_kg_m3(h, t_s / _YEAR_S),
        )
    if model.third_bodies:
        if sun_moon_km is not None:
            r_sun, r_moon = sun_moon_km
        elif jd_tt is not None:
            r_sun, r_moon = sun_moon_positions_gcrf_km(*jd_tt)
        else:
            raise InputError("jd_tt", None, "an epoch is needed for third-body accelerations")
        if "sun" in model.third_bodies:
            acc = acc + third_body_acceleration_km_s2(r, r_sun, SUN.mu_km3_s2)
        if "moon" in model.third_bodies:
            acc = acc + third_body_acceleration_km_s2(r, r_moon, MOON.mu_km3_s2)
    return acc
