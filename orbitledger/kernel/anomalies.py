"""Anomalies of a conic orbit: true, eccentric, hyperbolic, parabolic and mean, both ways.

All angles in radians; every function broadcasts its arguments (numpy arrays or floats).

Relations (Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Ch. 2,
the anomaly conversions; Curtis, Orbital Mechanics for Engineering Students, 3rd ed.
(2014), Ch. 3, elliptical, parabolic and hyperbolic trajectories):

- ellipse (0 <= e < 1): tan(E/2) = sqrt((1-e)/(1+e)) tan(nu/2), M = E - e sin E;
- hyperbola (e > 1): tanh(H/2) = sqrt((e-1)/(e+1)) tan(nu/2), M = e sinh H - H;
- parabola (e = 1): Barker's equation with D = tan(nu/2), M = D + D^3/3.

Each conic's mean anomaly advances at its own mean motion: n = sqrt(mu / |a|^3) for the
ellipse and the hyperbola, n_p = 2 sqrt(mu / p^3) for the parabola (Vallado 4th ed.,
Ch. 2, Barker's equation B + B^3/3 = n_p (t - T)), so that M = n (t - T) in every case.

The half-angle tangents are evaluated as atan2 of sines and cosines (no tangent blows up at
nu = pi). On the ellipse whole revolutions are kept: nu, E and M of one point differ by less
than pi, and E - nu, M - E are reduced to (-pi, pi], so nu + 2 pi k maps to E + 2 pi k. On the
hyperbola and the parabola nu is reduced to (-pi, pi] first; a true anomaly beyond the
asymptotes (1 + e cos nu <= 0) is refused.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .kepler import solve_kepler
from .kepler_hyperbolic import hyperbolic_kepler_residual, x_minus_sin_x

__all__ = [
    "true_to_eccentric_anomaly",
    "eccentric_to_true_anomaly",
    "eccentric_to_mean_anomaly",
    "mean_to_eccentric_anomaly",
    "true_to_hyperbolic_anomaly",
    "hyperbolic_to_true_anomaly",
    "hyperbolic_to_mean_anomaly",
    "mean_to_hyperbolic_anomaly",
    "true_to_parabolic_anomaly",
    "parabolic_to_true_anomaly",
    "parabolic_true_to_mean",
    "parabolic_mean_to_true",
    "true_to_mean_anomaly",
    "mean_to_true_anomaly",
    "wrap_pi",
]

_TWO_PI = 2.0 * np.pi


def wrap_pi(angle_rad: ArrayLike) -> np.ndarray:
    """The angle reduced to [-pi, pi] (rad), by subtracting the nearest whole revolution."""
    a = np.asarray(angle_rad, dtype=float)
    return a - _TWO_PI * np.rint(a / _TWO_PI)


def _out(x: np.ndarray):
    return float(x) if np.ndim(x) == 0 else x


def _elliptic_e(e: ArrayLike, name: str = "e") -> np.ndarray:
    ecc = np.asarray(e, dtype=float)
    if ecc.size and not (np.all(np.isfinite(ecc)) and ecc.min() >= 0.0 and ecc.max() < 1.0):
        bad = ecc[~((ecc >= 0.0) & (ecc < 1.0))].ravel()[0]
        raise InputError(name, float(bad), "an elliptic anomaly needs 0 <= e < 1")
    return ecc


def _hyperbolic_e(e: ArrayLike, name: str = "e") -> np.ndarray:
    ecc = np.asarray(e, dtype=float)
    if ecc.size and not (np.all(np.isfinite(ecc)) and ecc.min() > 1.0):
        bad = ecc[~((ecc > 1.0) & np.isfinite(ecc))].ravel()[0]
        raise InputError(name, float(bad), "a hyperbolic anomaly needs a finite e > 1")
    return ecc


# --- ellipse -------------------------------------------------------------------------------


def true_to_eccentric_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Eccentric anomaly E (rad) from the true anomaly nu (rad), 0 <= e < 1.

    E = atan2(sqrt(1 - e^2) sin nu, e + cos nu) (Vallado 4th ed., Algorithm 5), unwrapped to
    the revolution of nu.
    """
    ecc = _elliptic_e(e)
    nu = np.asarray(nu_rad, dtype=float)
    # e + cos nu = (e - 1) + 2 cos^2(nu/2): no cancellation near nu = pi when e -> 1.
    E = np.arctan2(
        np.sqrt((1.0 - ecc) * (1.0 + ecc)) * np.sin(nu), (ecc - 1.0) + 2.0 * np.cos(0.5 * nu) ** 2
    )
    return _out(nu + wrap_pi(E - nu))


def eccentric_to_true_anomaly(E_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """True anomaly nu (rad) from the eccentric anomaly E (rad), 0 <= e < 1.

    nu = atan2(sqrt(1 - e^2) sin E, cos E - e) (Vallado 4th ed., Algorithm 6), unwrapped to
    the revolution of E.
    """
    ecc = _elliptic_e(e)
    E = np.asarray(E_rad, dtype=float)
    # cos E - e = (1 - e) - 2 sin^2(E/2): no cancellation near E = 0 when e -> 1.
    nu = np.arctan2(
        np.sqrt((1.0 - ecc) * (1.0 + ecc)) * np.sin(E), (1.0 - ecc) - 2.0 * np.sin(0.5 * E) ** 2
    )
    return _out(E + wrap_pi(nu - E))


def eccentric_to_mean_anomaly(E_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Mean anomaly M = E - e sin E (rad), Kepler's equation, 0 <= e < 1.

    Formed as (1 - e) sin E + (E - sin E), with a series for E - sin E, so that near-parabolic
    orbits keep relative accuracy in M near periapsis.
    """
    ecc = _elliptic_e(e)
    E = np.asarray(E_rad, dtype=float)
    return _out((1.0 - ecc) * np.sin(E) + x_minus_sin_x(E))


def mean_to_eccentric_anomaly(M_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Eccentric anomaly E (rad) from the mean anomaly M (rad), 0 <= e < 1 (solve_kepler)."""
    return solve_kepler(M_rad, _elliptic_e(e))


# --- hyperbola -----------------------------------------------------------------------------


def _check_within_asymptotes(nu: np.ndarray, ecc: np.ndarray) -> None:
    beyond = ~(1.0 + ecc * np.cos(nu) > 0.0)
    if np.any(beyond):
        bad = np.broadcast_to(nu, beyond.shape)[beyond].ravel()[0]
        raise InputError(
            "nu_rad",
            float(bad),
            "lies beyond the asymptotes of the hyperbola (needs |nu| < arccos(-1/e))",
        )


def true_to_hyperbolic_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Hyperbolic anomaly H (rad) from the true anomaly nu (rad), e > 1.

    sinh H = sqrt(e^2 - 1) sin nu / (1 + e cos nu) (Vallado 4th ed., Algorithm 5); nu is taken
    modulo 2 pi into (-pi, pi] and must lie strictly inside the asymptotes.
    """
    ecc = _hyperbolic_e(e)
    nu = wrap_pi(nu_rad)
    _check_within_asymptotes(nu, ecc)
    return _out(
        np.arcsinh(np.sqrt((ecc - 1.0) * (ecc + 1.0)) * np.sin(nu) / (1.0 + ecc * np.cos(nu)))
    )


def hyperbolic_to_true_anomaly(H_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """True anomaly nu (rad, in (-pi, pi)) from the hyperbolic anomaly H (rad), e > 1.

    nu = atan2(sqrt(e^2 - 1) sinh H, e - cosh H) (Vallado 4th ed., Algorithm 6).
    """
    ecc = _hyperbolic_e(e)
    H = np.asarray(H_rad, dtype=float)
    with np.errstate(over="ignore"):
        # e - cosh H = (e - 1) - 2 sinh^2(H/2): no cancellation near H = 0 when e -> 1.
        return _out(
            np.arctan2(
                np.sqrt((ecc - 1.0) * (ecc + 1.0)) * np.sinh(H),
                (ecc - 1.0) - 2.0 * np.sinh(0.5 * H) ** 2,
            )
        )


def hyperbolic_to_mean_anomaly(H_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Hyperbolic mean anomaly M = e sinh H - H (rad), e > 1, without cancellation near H = 0."""
    ecc = _hyperbolic_e(e)
    return _out(np.asarray(hyperbolic_kepler_residual(H_rad, ecc, 0.0)))


def mean_to_hyperbolic_anomaly(M_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Hyperbolic anomaly H (rad) from the hyperbolic mean anomaly M (rad), e > 1."""
    return solve_kepler(M_rad, _hyperbolic_e(e))


# --- parabola: Barker's equation -----------------------------------------------------------


def true_to_parabolic_anomaly(nu_rad: ArrayLike) -> np.ndarray | float:
    """Parabolic anomaly D = tan(nu/2) (dimensionless; Vallado's B), |nu| < pi."""
    nu = wrap_pi(nu_rad)
    if np.any(np.abs(nu) >= np.pi):
        raise InputError("nu_rad", float(np.pi), "a parabola never reaches nu = 180 deg")
    return _out(np.sin(nu) / (1.0 + np.cos(nu)))


def parabolic_to_true_anomaly(D: ArrayLike) -> np.ndarray | float:
    """True anomaly nu = 2 atan(D) (rad) from the parabolic anomaly D."""
    return _out(2.0 * np.arctan(np.asarray(D, dtype=float)))


def parabolic_true_to_mean(nu_rad: ArrayLike) -> np.ndarray | float:
    """Parabolic mean anomaly M = D + D^3/3 with D = tan(nu/2), |nu| < pi (Barker's equation,
    written as in Vallado 4th ed., Ch. 2: B + B^3/3 = n_p (t - T), n_p = 2 sqrt(mu / p^3))."""
    D = np.asarray(true_to_parabolic_anomaly(nu_rad))
    return _out(D + D**3 / 3.0)


def parabolic_mean_to_true(M_rad: ArrayLike) -> np.ndarray | float:
    """True anomaly (rad) from the parabolic mean anomaly M = D + D^3/3.

    The cubic D^3 + 3 D - 3 M = 0 has the one real root D = 2 sinh(asinh(3M/2) / 3)
    (the trigonometric-hyperbolic form of Cardano's solution for a cubic with one real root;
    Vallado 4th ed., Algorithm 3 gives the equivalent cot/tan form).
    """
    M = np.asarray(M_rad, dtype=float)
    D = 2.0 * np.sinh(np.arcsinh(1.5 * M) / 3.0)
    return _out(2.0 * np.arctan(D))


# --- any conic: dispatch per element on e --------------------------------------------------


def _per_conic(x: ArrayLike, e: ArrayLike, elliptic, parabolic, hyperbolic):
    xa = np.asarray(x, dtype=float)
    ea = np.asarray(e, dtype=float)
    if ea.size and not (np.all(np.isfinite(ea)) and ea.min() >= 0.0):
        bad = ea[~((ea >= 0.0) & np.isfinite(ea))].ravel()[0]
        raise InputError("e", float(bad), "eccentricity must be finite and >= 0")
    shape = np.broadcast_shapes(xa.shape, ea.shape)
    xb = np.broadcast_to(xa, shape)
    eb = np.broadcast_to(ea, shape)
    ell, par = eb < 1.0, eb == 1.0
    hyp = ~(ell | par)
    if ell.all():
        return elliptic(xa, ea)
    out = np.empty(shape)
    for mask, fn in ((ell, elliptic), (hyp, hyperbolic)):
        if mask.any():
            out[mask] = fn(xb[mask], eb[mask])
    if par.any():
        out[par] = parabolic(xb[par])
    return _out(out)


def true_to_mean_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Mean anomaly (rad) of any conic from the true anomaly (rad); e broadcasts per element.

    e < 1: E - e sin E; e == 1: D + D^3/3; e > 1: e sinh H - H (see the module docstring
    for the matching mean motions).
    """
    return _per_conic(
        nu_rad,
        e,
        lambda nu, ecc: eccentric_to_mean_anomaly(true_to_eccentric_anomaly(nu, ecc), ecc),
        parabolic_true_to_mean,
        lambda nu, ecc: hyperbolic_to_mean_anomaly(true_to_hyperbolic_anomaly(nu, ecc), ecc),
    )


def mean_to_true_anomaly(M_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """True anomaly (rad) of any conic from its mean anomaly (rad); e broadcasts per element.

    Elliptic results keep the revolution of M (|nu - M| < pi); hyperbolic and parabolic ones
    lie in (-pi, pi).
    """

    def elliptic(M, ecc):
        return eccentric_to_true_anomaly(solve_kepler(M, ecc), ecc)

    def hyperbolic(M, ecc):
        return hyperbolic_to_true_anomaly(solve_kepler(M, ecc), ecc)

    return _per_conic(M_rad, e, elliptic, parabolic_mean_to_true, hyperbolic)
