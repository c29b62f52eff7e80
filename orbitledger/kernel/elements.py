"""Classical orbital elements and their conversion to and from a Cartesian state.

Conventions for the singular orbits (documented here once, used everywhere):

- circular (e = 0): the argument of perigee is 0 and ``nu_deg`` is the argument of latitude,
  measured from the ascending node;
- equatorial (i = 0 or 180 deg): the RAAN is 0 and ``argp_deg`` is the longitude of periapsis,
  measured from the GCRF x axis;
- circular and equatorial: RAAN and argument of perigee are 0 and ``nu_deg`` is the true
  longitude, measured from the GCRF x axis.

Angles other than the inclination are normalised to [0, 360) deg; the inclination lies in
[0, 180] deg. Hyperbolic orbits carry a negative semi-major axis (a = -mu / v_inf^2).

Every in-plane angle (argument of perigee, true anomaly, argument of latitude, longitude of
periapsis, true longitude) is measured in the direction of motion. For a retrograde equatorial
orbit (i = 180 deg) this means clockwise seen from +z: the one rotation
R3(-RAAN) R1(-i) R3(-argp) then maps the perifocal frame to GCRF for every orbit, singular or
not, and ``elements_to_state`` needs no special case.

Where ``state_to_elements`` calls an orbit singular (robust tolerances, see below):

- circular when e < ``CIRCULAR_E_TOL`` = 1e-13: e is then reported as 0;
- equatorial when sin i < ``EQUATORIAL_SIN_I_TOL`` = 1e-13: i is then reported as exactly
  0 or 180 deg.

Why 1e-13: a state given to double precision fixes e and sin i only to a few times 1e-16
(rounding of r and v), so a state built as circular or equatorial comes out with e or sin i
of that size; 1e-13 catches such states with a margin of some hundreds, and adopting the
convention there moves the position by at most about 2e-13 r (1.4 micrometre in low Earth
orbit, 8 micrometre at geostationary radius). Above the thresholds the angles are kept as
computed: argp (or RAAN) then carries only about 1e-16 / e (or 1e-16 / sin i) of precision,
but the sums argp + nu and RAAN + argp stay accurate and so does the state.

A parabola cannot be written with a finite (a, e): the semi-latus rectum p = a (1 - e)(1 + e)
is carried through (1 - e)(1 + e), which is exact in floating point, so near-parabolic orbits
round-trip to the last digits of p. A state that comes out exactly parabolic (e == 1.0 in
floating point) is reported with e = 1 + 2^-52, the nearest hyperbola; its position differs by
less than 1e-15 relative.

Methods: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 9
(RV2COE) and Algorithm 10 (COE2RV); Curtis, Orbital Mechanics for Engineering Students,
3rd ed. (2014), Ch. 4, orbital elements from the state vector and back. The eccentricity vector
is formed as (v x h) / mu - r / |r|, and every angle as an atan2 of two projections, which keeps
full precision at 0 and 180 deg where an arccos would not.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .anomalies import true_to_mean_anomaly
from .constants import EARTH
from .errors import InputError

__all__ = [
    "Elements",
    "elements_to_state",
    "state_to_elements",
    "CIRCULAR_E_TOL",
    "EQUATORIAL_SIN_I_TOL",
]

# Tolerances for the singular conventions (reasons in the module docstring).
CIRCULAR_E_TOL = 1e-13
EQUATORIAL_SIN_I_TOL = 1e-13
_NEAREST_HYPERBOLA_E = float(np.nextafter(1.0, 2.0))


@dataclass(frozen=True)
class Elements:
    """Osculating classical elements; each field a float or an array (all broadcast together).

    a_km: semi-major axis, km (negative for e > 1)
    e: eccentricity
    i_deg: inclination, deg in [0, 180]
    raan_deg: right ascension of the ascending node, deg
    argp_deg: argument of periapsis, deg
    nu_deg: true anomaly, deg
    """

    a_km: ArrayLike
    e: ArrayLike
    i_deg: ArrayLike
    raan_deg: ArrayLike
    argp_deg: ArrayLike
    nu_deg: ArrayLike

    @property
    def p_km(self) -> np.ndarray:
        """Semi-latus rectum a (1 - e)(1 + e), km; finite and exact to rounding for every
        conic with finite a (the factored form keeps near-parabolic orbits exact)."""
        e = np.asarray(self.e, dtype=float)
        return np.asarray(self.a_km, dtype=float) * ((1.0 - e) * (1.0 + e))

    @property
    def mean_anomaly_deg(self) -> np.ndarray | float:
        """Mean anomaly, deg in [0, 360) for e < 1; signed for e > 1 (e sinh H - H).

        See ``anomalies.true_to_mean_anomaly`` for the conic's mean anomaly and motion.
        """
        M = np.degrees(true_to_mean_anomaly(np.radians(self.nu_deg), self.e))
        e = np.asarray(self.e, dtype=float)
        return np.where(e < 1.0, _deg_0_360(M), M)[()]


def _deg_0_360(angle_deg) -> np.ndarray:
    """Degrees into [0, 360); -1e-17 mod 360 would round to 360.0, so that maps to 0."""
    a = np.mod(angle_deg, 360.0)
    return np.where(a >= 360.0, 0.0, a)


def _check_mu(mu_km3_s2: float) -> float:
    mu = float(mu_km3_s2)
    if not (np.isfinite(mu) and mu > 0.0):
        raise InputError("mu_km3_s2", mu_km3_s2, "gravity parameter must be finite and > 0")
    return mu


def _first(values: np.ndarray, bad: np.ndarray) -> float:
    return float(np.broadcast_to(values, bad.shape)[bad].ravel()[0])


def _check_elements(a, e, i_deg, nu) -> None:
    for name, value in (("a_km", a), ("e", e), ("i_deg", i_deg), ("nu_deg", nu)):
        bad = ~np.isfinite(value)
        if bad.any():
            raise InputError(f"elements.{name}", _first(value, bad), "must be finite")
    checks = (
        ("e", e, e < 0.0, "eccentricity must be >= 0"),
        ("e", e, e == 1.0, "a parabola (e = 1) has no finite a; give e slightly off 1"),
        ("a_km", a, a == 0.0, "semi-major axis must not be 0"),
        ("a_km", a, (e < 1.0) & (a < 0.0), "must be > 0 for e < 1"),
        ("a_km", a, (e > 1.0) & (a > 0.0), "must be < 0 for e > 1 (hyperbola)"),
        ("i_deg", i_deg, (i_deg < 0.0) | (i_deg > 180.0), "inclination must lie in [0, 180]"),
    )
    for name, value, bad, reason in checks:
        if np.any(bad):
            raise InputError(f"elements.{name}", _first(value, bad), reason)
    beyond = (e > 1.0) & ~(1.0 + e * np.cos(nu) > 0.0)
    if np.any(beyond):
        raise InputError(
            "elements.nu_deg",
            np.degrees(_first(nu, beyond)),
            "lies beyond the asymptotes of the hyperbola (needs |nu| < arccos(-1/e))",
        )


def elements_to_state(
    elements: Elements, mu_km3_s2: float = EARTH.mu_km3_s2
) -> tuple[np.ndarray, np.ndarray]:
    """GCRF position and velocity from classical elements (any conic but the exact parabola).

    Given: elements (fields broadcast together; degrees and km); mu_km3_s2 of the central body.
    Returned: (r_km, v_km_s), arrays of shape broadcast(fields) + (3,).
    Method: perifocal position r = p / (1 + e cos nu) (cos nu, sin nu, 0) and velocity
    sqrt(mu/p) (-sin nu, e + cos nu, 0), rotated by R3(-RAAN) R1(-i) R3(-argp)
    (Vallado 4th ed., Algorithm 10; Curtis 3rd ed., Algorithm 4.5). The singular orbits need
    no special case under the conventions of this module.
    Raises InputError (field ``elements.<name>``) for non-finite values, e < 0, e == 1,
    a == 0, a sign that does not match e, i outside [0, 180] deg, or a hyperbolic true anomaly
    beyond the asymptotes.
    """
    mu = _check_mu(mu_km3_s2)
    a, e, i_deg, raan, argp, nu_deg = np.broadcast_arrays(
        *(
            np.asarray(getattr(elements, f), dtype=float)
            for f in ("a_km", "e", "i_deg", "raan_deg", "argp_deg", "nu_deg")
        )
    )
    nu = np.radians(nu_deg)
    _check_elements(a, e, i_deg, nu)
    p = a * ((1.0 - e) * (1.0 + e))
    inc, node, peri = np.radians(i_deg), np.radians(raan), np.radians(argp)
    ci, si = np.cos(inc), np.sin(inc)
    cO, sO = np.cos(node), np.sin(node)
    cw, sw = np.cos(peri), np.sin(peri)
    P = np.stack([cO * cw - sO * sw * ci, sO * cw + cO * sw * ci, sw * si], axis=-1)
    Q = np.stack([-cO * sw - sO * cw * ci, -sO * sw + cO * cw * ci, cw * si], axis=-1)
    cn, sn = np.cos(nu), np.sin(nu)
    r = p / (1.0 + e * cn)
    speed = np.sqrt(mu / p)
    r_km = (r * cn)[..., None] * P + (r * sn)[..., None] * Q
    v_km_s = (-speed * sn)[..., None] * P + (speed * (e + cn))[..., None] * Q
    return r_km, v_km_s


def _check_state(r: np.ndarray, v: np.ndarray) -> None:
    for name, value in (("r_km", r), ("v_km_s", v)):
        if value.shape[-1:] != (3,):
            raise InputError(name, value.shape, "must have shape (..., 3)")
        bad = ~np.isfinite(value)
        if bad.any():
            raise InputError(name, float(value[bad][0]), "must be finite")


def state_to_elements(
    r_km: ArrayLike, v_km_s: ArrayLike, mu_km3_s2: float = EARTH.mu_km3_s2
) -> Elements:
    """Classical elements from a GCRF position and velocity, singular orbits included.

    Given: r_km, v_km_s of shape (..., 3) (broadcast together); mu_km3_s2 of the central body.
    Returned: Elements whose fields have the broadcast shape without the last axis (numpy
    float64 scalars for a single (3,) state). Angles in degrees, normalised to [0, 360); i in
    [0, 180]; a < 0 for hyperbolic orbits; conventions and tolerances in the module docstring.
    Method: h = r x v, e_vec = (v x h)/mu - r/|r|, p = h^2/mu, a = p / ((1 - e)(1 + e)),
    i = atan2(|h_xy|, h_z), RAAN = atan2(h_x, -h_y), argp and nu as atan2 of projections on
    the node line and the in-plane normal to it (Vallado 4th ed., Algorithm 9).
    Raises InputError for non-finite values, r = 0, or a rectilinear state (r parallel to v,
    zero angular momentum), which has no classical elements.
    """
    mu = _check_mu(mu_km3_s2)
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    _check_state(r, v)
    r, v = np.broadcast_arrays(r, v)
    rmag = np.linalg.norm(r, axis=-1)
    h = np.cross(r, v)
    hmag = np.linalg.norm(h, axis=-1)
    if np.any(rmag == 0.0):
        raise InputError("r_km", 0.0, "position must not be the centre of the body")
    if np.any(~(hmag > 1e-15 * rmag * np.linalg.norm(v, axis=-1))):
        raise InputError(
            "v_km_s", "parallel to r_km", "a rectilinear state has no classical elements"
        )
    h_unit = h / hmag[..., None]
    e_vec = np.cross(v, h) / mu - r / rmag[..., None]
    e = np.linalg.norm(e_vec, axis=-1)
    circular = e < CIRCULAR_E_TOL
    e = np.where(circular, 0.0, np.where(e == 1.0, _NEAREST_HYPERBOLA_E, e))
    p = hmag * hmag / mu
    a = p / ((1.0 - e) * (1.0 + e))

    h_xy = np.hypot(h[..., 0], h[..., 1])
    equatorial = h_xy < EQUATORIAL_SIN_I_TOL * hmag
    inc = np.where(equatorial, np.where(h[..., 2] > 0.0, 0.0, np.pi), np.arctan2(h_xy, h[..., 2]))
    # Node unit vector: toward the ascending node, or the GCRF x axis for equatorial orbits.
    safe_xy = np.where(equatorial, 1.0, h_xy)
    n_unit = np.stack(
        [
            np.where(equatorial, 1.0, -h[..., 1] / safe_xy),
            np.where(equatorial, 0.0, h[..., 0] / safe_xy),
            np.zeros_like(h_xy),
        ],
        axis=-1,
    )
    m_unit = np.cross(h_unit, n_unit)  # in-plane, 90 deg ahead of the node in the motion
    raan = np.arctan2(n_unit[..., 1], n_unit[..., 0])
    u = np.arctan2(_dot(r, m_unit), _dot(r, n_unit))  # argument of latitude / true longitude
    argp = np.where(circular, 0.0, np.arctan2(_dot(e_vec, m_unit), _dot(e_vec, n_unit)))
    nu = np.where(circular, u, np.arctan2(_dot(r, np.cross(h_unit, e_vec)), _dot(r, e_vec)))
    return Elements(
        a_km=a[()],
        e=e[()],
        i_deg=np.degrees(inc)[()],
        raan_deg=_deg_0_360(np.degrees(raan))[()],
        argp_deg=_deg_0_360(np.degrees(argp))[()],
        nu_deg=_deg_0_360(np.degrees(nu))[()],
    )


def _dot(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.einsum("...i,...i->...", x, y)
