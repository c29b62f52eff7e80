"""Evaluate a slowly varying function of time on a coarse grid and interpolate it.

Costly series (IAU 2000A nutation, the VSOP2000-based Earth ephemeris) vary on time scales of
days; for thousands of epochs it is cheaper, and no less accurate at the level stated by each
caller, to evaluate them at grid nodes and interpolate with a cubic spline (the interpolation
error of a sinusoid of period P with node spacing h is about A (2 pi h / P)^4 / 384; de Boor,
A Practical Guide to Splines, rev. ed. 2001, Ch. V).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from scipy.interpolate import CubicSpline

__all__ = ["on_time_grid"]


def on_time_grid(
    fn: Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, ...] | np.ndarray],
    jd1: np.ndarray,
    jd2: np.ndarray,
    step_days: float,
) -> tuple[np.ndarray, ...] | np.ndarray:
    """``fn(jd1, jd2)`` at the epochs jd1 + jd2, interpolated from nodes ``step_days`` apart.

    ``fn`` returns an array (..., k) or a tuple of arrays whose leading axes follow the epochs.
    Evaluated directly when the grid would not be smaller than the set of epochs.
    """
    jd1, jd2 = np.broadcast_arrays(np.asarray(jd1, dtype=float), np.asarray(jd2, dtype=float))
    if jd2.size == 0:
        return fn(jd1, jd2)
    ref = float(np.floor(jd1.flat[0] + jd2.flat[0]))
    days = (jd1 - ref) + jd2
    lo = math.floor(days.min() / step_days) - 2
    hi = math.ceil(days.max() / step_days) + 2
    if hi - lo + 1 >= jd2.size:
        return fn(jd1, jd2)
    nodes = np.arange(lo, hi + 1) * step_days
    values = fn(np.full_like(nodes, ref), nodes)
    if isinstance(values, tuple):
        return tuple(CubicSpline(nodes, v, axis=0)(days) for v in values)
    return CubicSpline(nodes, values, axis=0)(days)
