"""Kepler's equation, elliptic and hyperbolic, solved to machine precision over arrays.

Elliptic (0 <= e < 1): M = E - e sin E (E: eccentric anomaly); hyperbolic (e > 1):
M = e sinh H - H (H: hyperbolic anomaly).

Elliptic method: F. L. Markley, "Kepler Equation Solver", Celestial Mechanics and Dynamical
Astronomy 63:101-111 (1995): the paper's cubic (Pade-type) starter, whose error we measure
below 4e-4 rad for every e and M, then its single fifth-order correction (a Halley step d3,
then d4 and d5 from the quartic Taylor polynomial; equation numbers not quoted here). One
sine, one square root and one cube root per element, no iteration.

Hyperbolic method (module kepler_hyperbolic): the starter of J. M. A. Danby, Fundamentals of
Celestial Mechanics, 2nd ed. (1988), capped by a cubic upper bound, then Markley's
fifth-order correction repeated to convergence, with cancellation-free residuals near e = 1.

Numerical notes (why this meets 1e-13 rad at a few times the cost of one numpy.sin):
- numpy's float64 sine costs as much as 15-25 arithmetic ufunc passes, so the budget goes to
  arithmetic: every intermediate reuses one of a dozen preallocated buffers of 8192 elements
  (64 KiB, resident in cache) through ``out=`` and in-place operators. The Python loop runs
  over chunks, never over elements.
- cos E is sqrt(1 - sin^2 E) with the sign of pi/2 - E; within 0.1 rad of pi/2, where that
  loses digits, the series cos E = sin y (y = pi/2 - E, to y^9/9!, truncation < 3e-19)
  replaces it. (A cosine error dc enters E only as Markley's correction times dc.)
- M is reduced to [-pi, pi], the root found for |M|, then the sign and whole revolutions are
  put back, so E - e sin E = M holds for the M given. Where e > 0.99 and |E| < 1, two Newton
  steps with cancellation-free residual restore relative accuracy in tiny M.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .kepler_hyperbolic import solve_hyperbolic_kepler, x_minus_sin_x

__all__ = [
    "solve_kepler",
    "solve_kepler_elliptic_sincos",
    "KeplerWorkspace",
    "elliptic_sincos_into",
    "CHUNK_SIZE",
]

_PI = math.pi
_TWO_PI = 2.0 * math.pi
_INV_TWO_PI = 1.0 / _TWO_PI
_HALF_PI = 0.5 * math.pi
# Markley (1995): alpha = (3 pi^2 + 1.6 pi (pi - |M|) / (1 + e)) / (pi^2 - 6).
_ALPHA_0 = 3.0 * _PI**2 / (_PI**2 - 6.0)
_ALPHA_1 = 1.6 * _PI / (_PI**2 - 6.0)
# Below this distance from pi/2 the cosine comes from its series (truncation y^11/11! < 3e-19).
_COS_SERIES_BAND_RAD = 0.1
CHUNK_SIZE = 8192
_N_BUFFERS = 11


def solve_kepler(mean_anomaly_rad: ArrayLike, e: ArrayLike) -> np.ndarray | float:
    """Solve Kepler's equation for the eccentric (e < 1) or hyperbolic (e > 1) anomaly.

    Given: mean_anomaly_rad, M in rad, any real value (for e < 1 whole revolutions are kept:
    the E returned satisfies E - e sin E = M for the M given); e, eccentricity, >= 0 and != 1.
    The two broadcast together; e may mix elliptic and hyperbolic values per element.
    Returned: E in rad (e < 1, with E - e sin E = M) or H (e > 1, with e sinh H - H = M),
    an array of the broadcast shape, or a float for scalar inputs.
    Accuracy (benchmarks/bench_kepler.py, tests/test_kepler.py): elliptic residual
    |E - e sin E - M| <= 1e-14 rad for |M| <= pi and every e in [0, 1); hyperbolic residual
    <= 4e-15 |M| relative (evaluated in extended precision) for e in (1, 1e6].
    Raises InputError for e < 0, e == 1 (parabolic: see anomalies.parabolic_mean_to_true) or a
    non-finite e. A NaN mean anomaly gives NaN.
    Methods: Markley (1995) for e < 1; Danby (1988) starter and Markley's fifth-order
    correction for e > 1 (see the module docstring).
    """
    M = np.asarray(mean_anomaly_rad, dtype=float)
    ecc = np.asarray(e, dtype=float)
    _check_eccentricity(ecc)
    shape = np.broadcast_shapes(M.shape, ecc.shape)
    M_flat = np.ascontiguousarray(np.broadcast_to(M, shape)).ravel()
    if ecc.size == 1:
        e0 = float(ecc.reshape(()))
        if e0 < 1.0:
            out = _elliptic(M_flat, e0)[0]
        else:
            out = solve_hyperbolic_kepler(M_flat, np.full_like(M_flat, e0))
    else:
        e_flat = np.ascontiguousarray(np.broadcast_to(ecc, shape)).ravel()
        out = np.empty_like(M_flat)
        ell = e_flat < 1.0
        if ell.all():
            out = _elliptic(M_flat, e_flat)[0]
        elif not ell.any():
            out = solve_hyperbolic_kepler(M_flat, e_flat)
        else:
            out[ell] = _elliptic(np.ascontiguousarray(M_flat[ell]), e_flat[ell])[0]
            hyp = ~ell
            out[hyp] = solve_hyperbolic_kepler(M_flat[hyp], e_flat[hyp])
    out = out.reshape(shape)
    return float(out) if out.ndim == 0 else out


def solve_kepler_elliptic_sincos(
    mean_anomaly_rad: ArrayLike, e: ArrayLike
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Eccentric anomaly with its sine and cosine, for elliptic orbits only.

    Given: mean_anomaly_rad (rad) and e in [0, 1), broadcast together.
    Returned: (E, sin E, cos E), arrays of the broadcast shape. sin E and cos E come from the
    starter's sine rotated by the (small, < 4e-4 rad) correction with its Taylor series, so the
    propagator needs no further trigonometric call. Method: Markley (1995), as solve_kepler.
    """
    ecc = np.asarray(e, dtype=float)
    _check_eccentricity(ecc)
    if ecc.size and ecc.max() >= 1.0:
        raise InputError("e", float(ecc.max()), "the elliptic solver needs 0 <= e < 1")
    M = np.asarray(mean_anomaly_rad, dtype=float)
    shape = np.broadcast_shapes(M.shape, ecc.shape)
    M_flat = np.ascontiguousarray(np.broadcast_to(M, shape)).ravel()
    e_arg: float | np.ndarray = (
        float(ecc.reshape(()))
        if ecc.size == 1
        else np.ascontiguousarray(np.broadcast_to(ecc, shape)).ravel()
    )
    E, s, c = _elliptic(M_flat, e_arg, sincos=True)
    return E.reshape(shape), s.reshape(shape), c.reshape(shape)


def _check_eccentricity(ecc: np.ndarray) -> None:
    """Refuse e < 0, e == 1 and non-finite e, naming the first offending value."""
    if ecc.size == 0:
        return
    flat = ecc.ravel()
    bad = ~np.isfinite(flat)
    if bad.any():
        raise InputError("e", float(flat[bad][0]), "eccentricity must be finite")
    if flat.min() < 0.0:
        raise InputError("e", float(flat.min()), "eccentricity must be >= 0")
    if (flat == 1.0).any():
        raise InputError(
            "e", 1.0, "e = 1 is parabolic: use Barker's equation (parabolic_mean_to_true)"
        )


class KeplerWorkspace:
    """Scratch buffers for the elliptic solver on chunks of at most ``size`` elements.

    A caller that runs its own cache-sized chunk loop (the propagator) keeps one workspace
    and calls ``elliptic_sincos_into`` per chunk, so no buffer is allocated inside the loop.
    """

    def __init__(self, size: int = CHUNK_SIZE) -> None:
        self.size = int(size)
        self.buffers = [np.empty(self.size) for _ in range(_N_BUFFERS)]
        self.mask = np.empty(self.size, dtype=bool)

    def views(self, k: int):
        if k == self.size:
            return self.buffers, self.mask
        return [b[:k] for b in self.buffers], self.mask[:k]


def elliptic_sincos_into(M, e, E, sin_E, cos_E, workspace: KeplerWorkspace) -> None:
    """Markley's solver on one chunk (len(M) <= workspace.size), results written in place.

    M, E, sin_E, cos_E: flat float arrays of one length (sin_E, cos_E may be None); e: a float
    in [0, 1) or an array of that length (not validated here: solve_kepler validates).
    """
    bufs, mask = workspace.views(M.shape[0])
    _markley_chunk(M, e, E, bufs, mask, sin_E, cos_E)


def _elliptic(M: np.ndarray, e, sincos: bool = False):
    """Markley (1995) over a flat contiguous M; e a float or an array of M's length."""
    n = M.size
    E = np.empty(n)
    s_out = np.empty(n) if sincos else None
    c_out = np.empty(n) if sincos else None
    workspace = KeplerWorkspace(min(n, CHUNK_SIZE))
    scalar_e = np.ndim(e) == 0
    for start in range(0, n, CHUNK_SIZE):
        stop = min(start + CHUNK_SIZE, n)
        elliptic_sincos_into(
            M[start:stop],
            e if scalar_e else e[start:stop],
            E[start:stop],
            None if s_out is None else s_out[start:stop],
            None if c_out is None else c_out[start:stop],
            workspace,
        )
    if not sincos:  # the propagator takes e >= 0.99 by universal variables
        _refine_near_parabolic(M, e, E)
    return E, s_out, c_out


def _markley_chunk(M, e, E, bufs, mask, s_out, c_out) -> None:
    """One cache-sized chunk of Markley's solver; writes E (and sin E, cos E if asked)."""
    twopik, m, x, b3, b4, b5, b6, b7, b8, b9, s = bufs
    # Range reduction: m = M - 2 pi k in [-pi, pi]; solve for x = |m| in [0, pi].
    np.multiply(M, _INV_TWO_PI, out=twopik)
    np.rint(twopik, out=twopik)
    twopik *= _TWO_PI
    np.subtract(M, twopik, out=m)
    np.abs(m, out=x)
    # Markley's (1995) cubic starter:
    one_minus_e = b4
    np.subtract(1.0, e, out=one_minus_e)
    alpha = b5
    np.subtract(_PI, x, out=alpha)
    np.add(e, 1.0, out=b3)
    alpha /= b3
    alpha *= _ALPHA_1
    alpha += _ALPHA_0
    d = b6  # d = 3 (1 - e) + alpha e = 3 + e (alpha - 3)
    np.subtract(alpha, 3.0, out=d)
    d *= e
    d += 3.0
    alpha *= d  # now alpha * d
    x2 = b3
    np.multiply(x, x, out=x2)
    q = b7  # q = 2 alpha d (1 - e) - M^2
    np.multiply(alpha, one_minus_e, out=q)
    q *= 2.0
    q -= x2
    r = b4  # r = 3 alpha d (d - 1 + e) M + M^3
    np.subtract(d, one_minus_e, out=r)
    r *= alpha
    r *= 3.0
    r += x2
    r *= x
    q2 = b3
    np.multiply(q, q, out=q2)
    w = b5  # w = (|r| + sqrt(q^3 + r^2))^(2/3)
    np.multiply(q2, q, out=w)
    np.multiply(r, r, out=b8)
    w += b8
    np.sqrt(w, out=w)
    w += r
    np.cbrt(w, out=w)
    w *= w
    den = b8  # E1 = (2 r w / (w^2 + w q + q^2) + M) / d
    np.add(w, q, out=den)
    den *= w
    den += q2
    E1 = b4
    r *= w
    r *= 2.0
    r /= den
    r += x
    r /= d
    # sin and cos of the starter (one transcendental call).
    np.sin(E1, out=s)
    c = b3
    np.multiply(s, s, out=c)
    np.subtract(1.0, c, out=c)
    np.sqrt(c, out=c)
    y = b5  # y = pi/2 - E1: the sign of cos E1, and its argument near pi/2
    np.subtract(_HALF_PI, E1, out=y)
    np.copysign(c, y, out=c)
    np.abs(y, out=b8)
    np.less(b8, _COS_SERIES_BAND_RAD, out=mask)
    near = np.flatnonzero(mask)  # a few per cent of the elements: work on them alone
    if near.size:
        yn = y[near]  # cos E1 = sin y = y (1 - y^2/6 (1 - y^2/20 (1 - y^2/42 (1 - y^2/72))))
        y2 = yn * yn
        cs = y2 * (1.0 / 72.0)
        for divisor in (42.0, 20.0, 6.0):
            cs = (1.0 - cs) * y2 * (1.0 / divisor)
        c[near] = (1.0 - cs) * yn
    # Markley's (1995) fifth-order correction, written with D = -delta so that
    # E = E1 - D5. With f = E1 - e sin E1 - M: f1 = f', hs = f''/2, sc = f'''/6, and the
    # fourth derivative is -e sin E1 = -2 hs.
    hs = b5
    np.multiply(e, s, out=hs)
    f0 = b6
    np.subtract(E1, hs, out=f0)
    f0 -= x
    hs *= 0.5
    sc = b7
    np.multiply(e, c, out=sc)
    f1 = x  # |M| is not needed any more
    np.subtract(1.0, sc, out=f1)
    sc *= 1.0 / 6.0
    d3 = b8  # D3 = f / (f' - f hs / f')  (Halley)
    np.multiply(f0, hs, out=d3)
    d3 /= f1
    np.subtract(f1, d3, out=d3)
    np.divide(f0, d3, out=d3)
    d4 = b9  # D4 = f / (f' - D3 hs + D3^2 sc)
    np.multiply(d3, sc, out=d4)
    d4 -= hs
    d4 *= d3
    d4 += f1
    np.divide(f0, d4, out=d4)
    d5 = b8  # D5 = f / (f' - D4 hs + D4^2 sc + D4^3 hs / 12)
    np.multiply(d4, hs, out=d5)
    d5 *= 1.0 / 12.0
    d5 += sc
    d5 *= d4
    d5 -= hs
    d5 *= d4
    d5 += f1
    np.divide(f0, d5, out=d5)
    np.subtract(E1, d5, out=E)
    np.copysign(E, m, out=E)
    E += twopik
    if s_out is None:
        return
    # sin and cos of E = E1 - D5 by the angle-difference formulas; |D5| < 4e-4 rad, so
    # cos D = 1 - D^2/2 (1 - D^2/12) and sin D = D (1 - D^2/6) are exact to 1e-19.
    d2, cos_d, sin_d = b9, b6, b7
    np.multiply(d5, d5, out=d2)
    np.multiply(d2, 1.0 / 12.0, out=cos_d)
    np.subtract(1.0, cos_d, out=cos_d)
    cos_d *= d2
    cos_d *= 0.5
    np.subtract(1.0, cos_d, out=cos_d)
    np.multiply(d2, 1.0 / 6.0, out=sin_d)
    np.subtract(1.0, sin_d, out=sin_d)
    sin_d *= d5
    np.multiply(s, cos_d, out=s_out)
    np.multiply(c, sin_d, out=d2)
    s_out -= d2
    np.copysign(s_out, m, out=s_out)
    np.multiply(c, cos_d, out=c_out)
    np.multiply(s, sin_d, out=d2)
    c_out += d2


def _refine_near_parabolic(M: np.ndarray, e, E: np.ndarray) -> None:
    """Restore relative accuracy where e > 0.99 and |E| < 1 (in place).

    There M = (1 - e) sin E + (E - sin E) is tiny and Markley's residual, formed as
    E - e sin E - M, loses digits relative to M (not in absolute terms: the 1e-13 rad
    target holds regardless). Two Newton steps with the residual and the derivative
    f' = (1 - e) + 2 e sin^2(E/2) evaluated without cancellation make the result good to a
    few ulp of E.
    """
    near = e > 0.99
    if not np.any(near):
        return
    idx = np.arange(M.size) if np.ndim(e) == 0 else np.flatnonzero(near)
    twopik = _TWO_PI * np.rint(M[idx] * _INV_TWO_PI)
    Er = E[idx] - twopik
    idx_small = np.abs(Er) < 1.0
    if not idx_small.any():
        return
    idx, twopik, Er = idx[idx_small], twopik[idx_small], Er[idx_small]
    ee = e if np.ndim(e) == 0 else e[idx]
    m = M[idx] - twopik
    for _ in range(2):
        sE = np.sin(Er)
        f0 = (1.0 - ee) * sE + x_minus_sin_x(Er) - m
        f1 = (1.0 - ee) + 2.0 * ee * np.sin(0.5 * Er) ** 2
        Er = Er - f0 / f1
    E[idx] = Er + twopik
