"""Hyperbolic Kepler's equation e sinh H - H = M, and cancellation-free residuals near e = 1.

Starter: H0 = ln(2|M|/e + 1.8) of J. M. A. Danby, Fundamentals of Celestial Mechanics,
2nd ed. (1988), the hyperbolic Kepler equation, capped by the root of the cubic
(e - 1) H + e H^3 / 6 = |M|, an upper bound of the root since sinh H >= H + H^3/6 (Cardano's
root written without cancellation). Correction: the fifth-order step of F. L. Markley,
Celestial Mechanics and Dynamical Astronomy 63:101 (1995), repeated until it is below a few
ulp (two or three passes), with f' = (e - 1) + 2 e sinh^2(H/2) and the residual
(e - 1) sinh H + (sinh H - H), a Taylor series giving sinh H - H for |H| < 2. The public entry
point is ``kepler.solve_kepler``.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "solve_hyperbolic_kepler",
    "hyperbolic_kepler_residual",
    "sinh_minus_x",
    "x_minus_sin_x",
]


def _x_minus_sin_or_sinh_x(x: np.ndarray, sign: float) -> np.ndarray:
    """x - sin x (sign = -1) or sinh x - x (sign = +1) by the Taylor series, |x| < 2.

    Sum of sign^k x^(2k+3) / (2k+3)!, Horner from the top term; truncation < 1e-19 |x|^3.
    """
    x2 = x * x
    series = np.ones_like(x)
    for k in range(12, 0, -1):
        series = 1.0 + sign * series * x2 / ((2 * k + 2) * (2 * k + 3))
    return series * x * x2 / 6.0


def _by_size(x: ArrayLike, sign: float, direct) -> np.ndarray:
    """Series where |x| < 2, ``direct`` elsewhere; each evaluated only where it is used."""
    x = np.asarray(x, dtype=float)
    out = np.empty_like(x)
    small = np.abs(x) < 2.0
    out[small] = _x_minus_sin_or_sinh_x(x[small], sign)
    big = ~small
    with np.errstate(over="ignore"):
        out[big] = direct(x[big])
    return out


def sinh_minus_x(H: ArrayLike) -> np.ndarray:
    """sinh H - H without cancellation: series for |H| < 2, direct beyond."""
    return _by_size(H, 1.0, lambda h: np.sinh(h) - h)


def x_minus_sin_x(E: ArrayLike) -> np.ndarray:
    """E - sin E without cancellation (rad): series for |E| < 2, direct beyond."""
    return _by_size(E, -1.0, lambda x: x - np.sin(x))


def hyperbolic_kepler_residual(H: ArrayLike, e: ArrayLike, mean_anomaly_rad: ArrayLike):
    """e sinh H - H - M evaluated without cancellation near H = 0 (rad).

    Written as (e - 1) sinh H + (sinh H - H) - M, with a series for sinh H - H when |H| < 2.
    """
    H = np.asarray(H, dtype=float)
    e = np.asarray(e, dtype=float)
    return (e - 1.0) * np.sinh(H) + sinh_minus_x(H) - mean_anomaly_rad


def solve_hyperbolic_kepler(M: np.ndarray, e: np.ndarray, max_steps: int = 12) -> np.ndarray:
    """H with e sinh H - H = M (rad) for flat float arrays M and e, every e > 1 (not validated
    here: solve_kepler validates). Method in the module docstring."""
    x = np.abs(M)
    em1 = e - 1.0
    # Cubic upper bound: (e - 1) H + e H^3 / 6 = x, i.e. H^3 + p H = q with p, q >= 0;
    # Cardano's root written without cancellation: H = q / (w^2 + p/3 + (p / 3w)^2).
    p = 6.0 * em1 / e
    q = 6.0 * x / e
    w = np.cbrt(0.5 * q + np.sqrt(0.25 * q * q + p**3 / 27.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        h_cubic = q / (w * w + p / 3.0 + (p / (3.0 * w)) ** 2)
    h_cubic = np.where(x == 0.0, 0.0, h_cubic)
    H = np.minimum(h_cubic, np.log(2.0 * x / e + 1.8))  # Danby (1988) starter
    active = np.arange(x.size)
    for _ in range(max_steps):
        if active.size == 0:
            break
        h, ee, xx, em = H[active], e[active], x[active], em1[active]
        with np.errstate(over="ignore", invalid="ignore"):
            sh = np.sinh(h)
            f0 = em * sh + sinh_minus_x(h) - xx
            hs = 0.5 * ee * sh  # f''/2 = e sinh H / 2
            f1 = em + 2.0 * ee * np.sinh(0.5 * h) ** 2  # f' = e cosh H - 1, no cancellation
            sc = (f1 + 1.0) / 6.0  # f'''/6 = e cosh H / 6
            d3 = f0 / (f1 - f0 * hs / f1)
            d4 = f0 / (f1 + d3 * (d3 * sc - hs))
            d5 = f0 / (f1 + d4 * (d4 * (sc - d4 * hs / 12.0) - hs))
        H[active] = h - d5
        done = ~(np.abs(d5) > 4.0 * np.finfo(float).eps * np.maximum(h, 1e-300))
        active = active[~done]
    return np.copysign(H, M)
