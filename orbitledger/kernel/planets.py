"""Approximate heliocentric positions and velocities of the major planets from mean elements.

Source: E. M. Standish, "Keplerian Elements for Approximate Positions of the Major Planets",
JPL Solar System Dynamics (ssd.jpl.nasa.gov), Table 1: mean elements and their rates per
Julian century, referred to the mean ecliptic and equinox of J2000, fitted to JPL DE405 over
1800 AD - 2050 AD. Valid span: 1800-01-01 to 2050-12-31 (TDB); outside it this module refuses
(``InputError``): the table's second set (3000 BC - 3000 AD, with extra terms for the outer
planets) is not implemented. Accuracy over the span, as the table's own notes state it (Standish,
error table of the 1800-2050 set): heliocentric errors of order 15-40 arcsec and 1000-25 000 km for Mercury to Mars and
the Earth-Moon barycentre, up to about 600 arcsec and 600-1500 thousand km for Jupiter and
Saturn. Good for mission design surveys (porkchop grids), not for navigation: defer to an
authoritative ephemeris (JPL DE series) for anything that flies.

Method (Standish's own recipe): T = (JD_TDB - 2451545.0) / 36525; each element = value +
rate * T; argument of perihelion w = varpi - Omega, mean anomaly M = L - varpi; Kepler's
equation by ``orbitledger.kernel.kepler.solve_kepler``; position in the orbital plane rotated by
(w, I, Omega) into the J2000 ecliptic, then by the J2000 obliquity 23.43928 deg into the
equatorial frame (ICRF axes to within the 0.02 arcsec frame bias, negligible here). Velocity:
the derivative of the same Keplerian position with the mean motion dM/dt = dL/dt - dvarpi/dt
(the slow drift of the other elements is left out: below 1e-6 of the velocity).

"earth" is the Earth-Moon barycentre (the table's "EM Bary"), 4700 km from the Earth's centre
at most: inside the table's own error.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from types import MappingProxyType

import numpy as np
from numpy.typing import ArrayLike

from .constants import AU_KM, SECONDS_PER_DAY
from .errors import InputError
from .kepler import solve_kepler

__all__ = ["PLANETS", "STANDISH_TABLE_1", "VALID_JD_TDB", "planet_state"]

# Standish, Table 1 (1800 AD - 2050 AD). Per planet: (value, rate per Julian century) of
# a [au], e [-], I [deg], L [deg], long. of perihelion varpi [deg], long. of node Omega [deg].
STANDISH_TABLE_1: Mapping[str, tuple[tuple[float, float], ...]] = MappingProxyType(
    {
        "mercury": (
            (0.38709927, 0.00000037),
            (0.20563593, 0.00001906),
            (7.00497902, -0.00594749),
            (252.25032350, 149472.67411175),
            (77.45779628, 0.16047689),
            (48.33076593, -0.12534081),
        ),
        "venus": (
            (0.72333566, 0.00000390),
            (0.00677672, -0.00004107),
            (3.39467605, -0.00078890),
            (181.97909950, 58517.81538729),
            (131.60246718, 0.00268329),
            (76.67984255, -0.27769418),
        ),
        "earth-moon-barycenter": (
            (1.00000261, 0.00000562),
            (0.01671123, -0.00004392),
            (-0.00001531, -0.01294668),
            (100.46457166, 35999.37244981),
            (102.93768193, 0.32327364),
            (0.0, 0.0),
        ),
        "mars": (
            (1.52371034, 0.00001847),
            (0.09339410, 0.00007882),
            (1.84969142, -0.00813131),
            (-4.55343205, 19140.30268499),
            (-23.94362959, 0.44441088),
            (49.55953891, -0.29257343),
        ),
        "jupiter": (
            (5.20288700, -0.00011607),
            (0.04838624, -0.00013253),
            (1.30439695, -0.00183714),
            (34.39644051, 3034.74612775),
            (14.72847983, 0.21252668),
            (100.47390909, 0.20469106),
        ),
        "saturn": (
            (9.53667594, -0.00125060),
            (0.05386179, -0.00050991),
            (2.48599187, 0.00193609),
            (49.95424423, 1222.49362201),
            (92.59887831, -0.41897216),
            (113.66242448, -0.28867794),
        ),
        "uranus": (
            (19.18916464, -0.00196176),
            (0.04725744, -0.00004397),
            (0.77263783, -0.00242939),
            (313.23810451, 428.48202785),
            (170.95427630, 0.40805281),
            (74.01692503, 0.04240589),
        ),
        "neptune": (
            (30.06992276, 0.00026291),
            (0.00859048, 0.00005105),
            (1.77004347, 0.00035372),
            (-55.12002969, 218.45945325),
            (44.96476227, -0.32241464),
            (131.78422574, -0.00508664),
        ),
    }
)
_ALIASES = {"earth": "earth-moon-barycenter", "emb": "earth-moon-barycenter"}
PLANETS = tuple(STANDISH_TABLE_1) + tuple(_ALIASES)

# 1800-01-01 0h and 2051-01-01 0h TDB as Julian dates (the table's span, 1800-2050 AD inclusive).
VALID_JD_TDB = (2378496.5, 2470172.5)
_J2000 = 2451545.0
_DAYS_PER_CENTURY = 36525.0
# Standish's obliquity of the J2000 ecliptic, 23.43928 deg (84381.448 arcsec, IAU 1976).
_OBLIQUITY_RAD = math.radians(23.43928)


def _rotation_ecliptic_to_equatorial() -> np.ndarray:
    c, s = math.cos(_OBLIQUITY_RAD), math.sin(_OBLIQUITY_RAD)
    return np.array([[1.0, 0.0, 0.0], [0.0, c, -s], [0.0, s, c]])


_ECL_TO_EQ = _rotation_ecliptic_to_equatorial()


def planet_state(
    name: str, jd1_tdb: ArrayLike, jd2_tdb: ArrayLike = 0.0
) -> tuple[np.ndarray, np.ndarray]:
    """Heliocentric position (km) and velocity (km/s) of a planet, ICRF (J2000 equatorial) axes.

    Given a planet name (``PLANETS``: mercury ... neptune; "earth" is the Earth-Moon
    barycentre) and a two-part Julian date in TDB (any shape, broadcast). Returns two arrays
    of shape (..., 3). Refused outside 1800-2050 AD, the span of Standish's Table 1.
    """
    key = _ALIASES.get(str(name).lower(), str(name).lower())
    if key not in STANDISH_TABLE_1:
        raise InputError("name", name, f"not in the table; one of {', '.join(PLANETS)}")
    d1 = np.asarray(jd1_tdb, dtype=float)
    d2 = np.asarray(jd2_tdb, dtype=float)
    jd = d1 + d2
    if not np.all(np.isfinite(jd)) or np.any(jd < VALID_JD_TDB[0]) or np.any(jd >= VALID_JD_TDB[1]):
        raise InputError(
            "jd_tdb",
            float(np.min(jd)) if np.all(np.isfinite(jd)) else "nan",
            "outside 1800-2050 AD, the validity span of Standish's Table 1",
        )
    t = ((d1 - _J2000) + d2) / _DAYS_PER_CENTURY
    (a0, a1), (e0, e1), (i0, i1), (l0, l1), (w0, w1), (o0, o1) = STANDISH_TABLE_1[key]
    a = (a0 + a1 * t) * AU_KM
    e = e0 + e1 * t
    inc = np.radians(i0 + i1 * t)
    lon = l0 + l1 * t
    varpi = w0 + w1 * t
    node = np.radians(o0 + o1 * t)
    argp = np.radians(varpi) - node
    mean_anomaly = np.radians(np.mod(lon - varpi + 180.0, 360.0) - 180.0)
    n_rad_s = math.radians(l1 - w1) / (_DAYS_PER_CENTURY * SECONDS_PER_DAY)
    ecc_anom = np.asarray(solve_kepler(mean_anomaly, e))
    cos_e, sin_e = np.cos(ecc_anom), np.sin(ecc_anom)
    root = np.sqrt(1.0 - e * e)
    x_orb = a * (cos_e - e)
    y_orb = a * root * sin_e
    e_dot = n_rad_s / (1.0 - e * cos_e)
    vx_orb = -a * sin_e * e_dot
    vy_orb = a * root * cos_e * e_dot
    cw, sw = np.cos(argp), np.sin(argp)
    co, so = np.cos(node), np.sin(node)
    ci, si = np.cos(inc), np.sin(inc)
    # Columns P and Q of the rotation R3(-Omega) R1(-I) R3(-w) (Standish, eq. 8 of the recipe).
    p = np.stack([cw * co - sw * so * ci, cw * so + sw * co * ci, sw * si], axis=-1)
    q = np.stack([-sw * co - cw * so * ci, -sw * so + cw * co * ci, cw * si], axis=-1)
    r_ecl = x_orb[..., None] * p + y_orb[..., None] * q
    v_ecl = vx_orb[..., None] * p + vy_orb[..., None] * q
    return r_ecl @ _ECL_TO_EQ.T, v_ecl @ _ECL_TO_EQ.T
