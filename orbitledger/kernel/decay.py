"""Orbit decay under drag, fast: the averaged Gauss equations with a as the variable, in batches.

Rates. For a tangential drag acceleration f_t = -(1/2) F rho v^2 / B, the Gauss equations
averaged over one revolution (King-Hele, *Satellite Orbits in an Atmosphere: Theory and
Applications*, Blackie 1987, Ch. 3-4, written with the eccentric anomaly E and evaluated by
quadrature instead of the book's Bessel-function series) are

    <da/dt> = -(1e3 F / B) (a^2 / mu) <rho v^3 (1 - e cos E)>_E
    <de/dt> = -(1e3 F / B) (1 - e^2)  <rho v cos E>_E

(rho in kg/m^3, B in kg/m^2, km and s otherwise) with r = a (1 - e cos E),
v^2 = (mu / a)(1 + e cos E) / (1 - e cos E), heights r - R above a reference radius R, and
King-Hele's atmospheric-rotation factor F = (1 - r_p w cos i / v_p)^2. The means over E are
the trapezoidal rule on N equally spaced values, folded onto [0, pi] by symmetry; N = 128 as in
the former time integration where the orbit is eccentric enough to need it, N = 64 or 32 where
the height swing ae is under 8 or 2 density scale heights at perigee (the rule's error for
exp(x cos E) falls as (x/2)^N / N!, well below 1e-9 there).

How it is solved, and why it is fast:

1. **a as the independent variable, the perigee radius q = a (1 - e) as the state.** Drag
   lowers a monotonically, so q is integrated over a from the initial a down to q = R + h
   (re-entry): dq/da = 1 - e - a de/da, de/da = <de/dt> / <da/dt>, in which F and B cancel.
   q varies smoothly and slowly (an eccentric orbit keeps its perigee while the apogee falls),
   so Dormand-Prince 5(4) (Dormand & Prince 1980, J. Comput. Appl. Math. 6, 19-26) takes 10-30
   steps, however many years the decay lasts. Error control (a componentwise tolerance
   scale, Hairer, Norsett & Wanner, *Solving ODEs I*, 2nd ed., Sec. II.4): 0.2 m on q at
   the start, growing as rho(q) / rho(q_start) (at most 1000x): a perigee error dq moves the
   lifetime by about dq / H times the share of it still ahead, and that share falls as
   1 / rho(q) (our scaling: every step's share of the lifetime error stays near the first's).
2. **Time by quadrature.** With q(a) known (cubic Hermite between the steps, from q and dq/da
   at each end), the time is t = int B mu / (1e3 F a^2 <rho v^3 (1 - e cos E)>) da, three
   Gauss-Legendre nodes on cells of at most 5 km, all nodes of all orbits in one array pass.
3. **Rates scale as 1/B.** q(a) does not depend on B and t is proportional to B, so for a
   density that does not change with time one integration serves every ballistic
   coefficient (``orbitledger.kernel.lifetime`` caches it and multiplies the times by B).
4. **Batches.** Many orbits (e.g. the candidate perigees of a disposal search) are integrated
   at once with array operations, each with its own step or (``shared_step``) one for all.

A time-varying density (a solar cycle, a flux table) couples t into the rates: then (q, t) are
integrated together over a (rtol 1e-8 on t), each orbit stopped at re-entry or at its time
limit ``t_stop_s``. A circular orbit in a density that does not change with time stays circular
(de/dt = 0 at e = 0), and its lifetime is one quadrature, ``circular_decay``, over the
profile's 1-km cells (``orbitledger.kernel.decay_circular``, re-exported here).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .constants import SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .decay_circular import _GL3_W, _GL3_X, circular_decay
from .density import DensityProfile

__all__ = ["DecayRun", "circular_decay", "decay_orbits", "eccentric_anomaly_nodes"]

_YEAR_S = TROPICAL_YEAR_DAYS * SECONDS_PER_DAY
# Dormand-Prince 5(4): c, a (rows), b (5th order) and b - b* (error estimate).
_C = (0.0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1.0)
_A = (
    (),
    (1 / 5,),
    (3 / 40, 9 / 40),
    (44 / 45, -56 / 15, 32 / 9),
    (19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729),
    (9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656),
)
_B = (35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84)
_E_ERR = (71 / 57600, 0.0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40)
_A_ROWS = tuple(np.array(row) for row in _A)
_B_ARR = np.array(_B)
_E_ARR = np.array(_E_ERR)
_Q_ATOL_KM = 2e-4
_T_RTOL = 1e-8
_T_ATOL_S = 1.0
_CELL_KM = 5.0


def eccentric_anomaly_nodes(n: int) -> tuple[np.ndarray, np.ndarray]:
    """cos E and weights of the n-point trapezoidal rule on [0, 2 pi), folded onto [0, pi]."""
    e_nodes = np.linspace(0.0, math.pi, n // 2 + 1)
    weights = np.full(e_nodes.size, 2.0 / n)
    weights[[0, -1]] = 1.0 / n
    return np.cos(e_nodes), weights


_RULES = {n: eccentric_anomaly_nodes(n) for n in (32, 64, 128)}


@dataclass(frozen=True)
class DecayRun:
    """Where each orbit of a batch ended. Arrays of shape (n,), one entry per orbit.

    reentered: the perigee reached the re-entry radius before ``t_stop_s``; t_end_s: the
    re-entry time, or the time the run stopped (``t_stop_s``; ``inf`` when the rates vanish);
    a_end_km, e_end: the elements there. history: per orbit, arrays (a_km, e, t_s) from the
    start to the end (empty tuple when not asked for). evaluations: orbit-averaged rate
    evaluations (one orbit at one a).
    """

    reentered: np.ndarray
    t_end_s: np.ndarray
    a_end_km: np.ndarray
    e_end: np.ndarray
    history: tuple
    evaluations: int


@dataclass(frozen=True)
class _Setup:
    b: float
    cos_i: float
    radius: float
    r_re: float
    profile: DensityProfile
    mu: float
    w: float
    rule: tuple[np.ndarray, np.ndarray]
    q_atol: float = _Q_ATOL_KM
    cell_km: float = _CELL_KM
    shared_step: bool = False


def _means(s: _Setup, a: np.ndarray, e: np.ndarray, t_s: np.ndarray | None):
    """<rho v^3 (1 - e cos E)> and <rho v cos E> for orbits (a, e) (any equal shapes)."""
    cos_e, weights = s.rule
    ec = e[..., None] * cos_e
    one_minus = 1.0 - ec
    v2 = (s.mu / a)[..., None] * (1.0 + ec) / one_minus
    h = a[..., None] * one_minus - s.radius
    if t_s is None or not s.profile.time_varying:
        log_rho = s.profile.log_density(h)
    else:
        log_rho = s.profile.log_density(h, (t_s / _YEAR_S)[..., None])
    rho_v = np.exp(log_rho) * np.sqrt(v2)
    return (rho_v * v2 * one_minus) @ weights, (rho_v * cos_e) @ weights


def _rotation(s: _Setup, a: np.ndarray, e: np.ndarray) -> np.ndarray:
    v_p = np.sqrt(s.mu / a * (1.0 + e) / (1.0 - e))
    return (1.0 - a * (1.0 - e) * s.w * s.cos_i / v_p) ** 2


def _eccentricity(a: np.ndarray, q: np.ndarray) -> np.ndarray:
    # np.clip's values, without its dispatch overhead (called for every rate evaluation)
    return np.minimum(np.maximum(1.0 - q / a, 0.0), 0.999)


def _rates(s: _Setup, a: np.ndarray, y: np.ndarray) -> np.ndarray:
    """d(q[, t])/da for orbits: y has columns q (km) and, for a time-varying density, t (s)."""
    a = np.maximum(a, 0.5 * s.r_re)
    e = _eccentricity(a, y[:, 0])
    timed = y.shape[1] == 2
    i_a, i_e = _means(s, a, e, y[:, 1] if timed else None)
    de_da = (1.0 - e * e) * s.mu * i_e / (a * a * i_a)
    dq_da = 1.0 - e - a * de_da
    if not timed:
        return dq_da[:, None]
    # da/dt = -(1e3 F / B) a^2 I_a / mu; dt/da is its inverse (negative: a falls as t grows).
    dt_da = -(s.mu * s.b) / (1e3 * _rotation(s, a, e) * a * a * i_a)
    return np.stack([dq_da, dt_da], axis=1)


def _scale(s: _Setup, y0: np.ndarray, y1: np.ndarray, ref: np.ndarray) -> np.ndarray:
    scale = np.empty(y0.shape)
    grow = np.exp(np.minimum(s.profile.log_density(y0[:, 0] - s.radius) - ref, 6.9))  # item 1
    scale[:, 0] = s.q_atol * np.maximum(grow, 1.0)
    if y0.shape[1] == 2:
        t_rtol = _T_RTOL * s.q_atol / _Q_ATOL_KM
        scale[:, 1] = _T_ATOL_S + t_rtol * np.maximum(np.abs(y0[:, 1]), np.abs(y1[:, 1]))
    return scale


def _step(s, f, a, y, h, k1, ref):
    """One Dormand-Prince step for each row: (y_new, k7, error norm)."""
    ks = np.empty((7, y.size))
    ks[0] = k1.ravel()
    hc = h[:, None]
    for stage in range(1, 6):
        dy = (_A_ROWS[stage] @ ks[:stage]).reshape(y.shape)
        ks[stage] = f(s, a + _C[stage] * h, y + hc * dy).ravel()
    y_new = y + hc * (_B_ARR @ ks[:6]).reshape(y.shape)
    ks[6] = f(s, a + h, y_new).ravel()
    err = hc * (_E_ARR @ ks).reshape(y.shape)
    with np.errstate(invalid="ignore"):
        norm = np.sqrt(np.mean((err / _scale(s, y, y_new, ref)) ** 2, axis=1))
    finite = np.isfinite(y_new).all(axis=1)
    return y_new, ks[6].reshape(y.shape), np.where(finite, norm, np.inf)


def _integrate(
    s: _Setup,
    a0: np.ndarray,
    y0: np.ndarray,
    t_stop_s: np.ndarray,
    f: Callable = _rates,
) -> tuple[list[tuple[np.ndarray, np.ndarray, np.ndarray]], np.ndarray, int]:
    """Integrate each row from a0 down to q = r_re (or, timed, to t = t_stop): per row the
    accepted points (a, y, dy/da) as arrays, whether it re-entered, and the evaluations."""
    n = a0.size
    timed = y0.shape[1] == 2
    a, y = a0.copy(), y0.copy()
    k1 = f(s, a, y)
    log = [(np.arange(n), a.copy(), y.copy(), k1.copy())]
    evaluations = n
    ref = s.profile.log_density(y[:, 0] - s.radius)
    reentered = y[:, 0] <= s.r_re
    # First step: 5 km, or a tenth of the way down to re-entry; the controller adapts it.
    h = -np.minimum(5.0, 0.1 * np.maximum(y[:, 0] - s.r_re, 1e-3))
    active = np.flatnonzero(np.isfinite(k1).all(axis=1) & ~reentered)
    if s.shared_step and active.size:  # one step for all rows (module docstring, item 4)
        h[:] = h[active].max()
    while active.size:
        aa, yy, hh, kk = a[active], y[active], h[active], k1[active]
        y_new, k7, norm = _step(s, f, aa, yy, hh, kk, ref[active])
        evaluations += 6 * active.size
        norm = np.full(norm.size, norm.max()) if s.shared_step else norm
        accept = norm <= 1.0
        factor = np.clip(0.9 * np.where(norm > 0.0, norm, 1e-10) ** -0.2, 0.2, 10.0)
        h[active] = hh * np.where(accept, factor, np.minimum(factor, 0.9))
        ended = np.zeros(active.size, bool)
        acc = np.flatnonzero(accept)
        rows = active[acc]
        a_new, y_acc, k_acc = aa[acc] + hh[acc], y_new[acc], k7[acc]
        cross = y_acc[:, 0] <= s.r_re
        if cross.any():  # re-entry inside the step: secant on q, then a final, shorter step
            j, ks = acc[cross], rows[cross]
            h_last = hh[j] * (yy[j, 0] - s.r_re) / (yy[j, 0] - y_acc[cross, 0])
            y_last, k_last, _ = _step(s, f, aa[j], yy[j], h_last, kk[j], ref[ks])
            evaluations += 6 * j.size
            y_last[:, 0] = s.r_re  # q is all but linear across the step: within 1e-6 km
            a_new[cross], y_acc[cross], k_acc[cross] = aa[j] + h_last, y_last, k_last
            reentered[ks] = y_last[:, 1] <= t_stop_s[ks] if timed else True
            ended[j] = True
        if timed:
            ended[acc[~cross & (y_acc[:, 1] >= t_stop_s[rows])]] = True
        log.append((rows, a_new, y_acc, k_acc))
        a[rows], y[rows], k1[rows] = a_new, y_acc, k_acc
        active = active[~ended]
    owner = np.concatenate([entry[0] for entry in log])
    order = np.argsort(owner, kind="stable")
    bounds = np.searchsorted(owner[order], np.arange(n + 1))
    a_all, y_all, k_all = (np.concatenate([entry[i] for entry in log])[order] for i in (1, 2, 3))
    points = [
        (a_all[lo:hi], y_all[lo:hi], k_all[lo:hi])
        for lo, hi in zip(bounds[:-1], bounds[1:], strict=True)
    ]
    return points, reentered, evaluations


def _hermite(points: list[tuple], x: np.ndarray, row: np.ndarray) -> np.ndarray:
    """q of orbit ``row`` at a = ``x``, by cubic Hermite between its accepted points (q and
    dq/da at each), for all orbits in one pass: each orbit's points, in increasing a, take
    keys row * span + a, so that one sorted search finds every interval."""
    size = np.array([p[0].size for p in points])
    first = np.concatenate(([0], np.cumsum(size)[:-1]))
    xs = np.concatenate([p[0][::-1] for p in points])
    qs = np.concatenate([p[1][::-1, 0] for p in points])
    ms = np.concatenate([p[2][::-1, 0] for p in points])
    low, span = xs.min(), xs.max() - xs.min() + 1.0
    owner = np.repeat(np.arange(size.size), size)
    k = np.searchsorted(owner * span + (xs - low), row * span + (x - low), side="right") - 1
    k = np.clip(k, first[row], first[row] + np.maximum(size[row] - 2, 0))
    k1 = np.minimum(k + 1, xs.size - 1)
    h = np.where(size[row] > 1, xs[k1] - xs[k], 1.0)
    t = np.where(size[row] > 1, (x - xs[k]) / h, 0.0)
    return (
        (2 * t**3 - 3 * t**2 + 1) * qs[k]
        + (t**3 - 2 * t**2 + t) * h * ms[k]
        + (-2 * t**3 + 3 * t**2) * qs[k1]
        + (t**3 - t**2) * h * ms[k1]
    )


def _times(s: _Setup, points: list[tuple]):
    """Time at the cell edges of every orbit by Gauss-Legendre quadrature of dt/da, all
    orbits in one array pass: per orbit (a_edges, e_edges, t_edges)."""
    n = len(points)
    a0 = np.array([p[0][0] for p in points])
    a1 = np.array([p[0][-1] for p in points])
    cells = np.maximum(1, np.ceil((a0 - a1) / s.cell_km).astype(np.intp))
    row_e, row_c = np.repeat(np.arange(n), cells + 1), np.repeat(np.arange(n), cells)
    first_e = np.concatenate(([0], np.cumsum(cells + 1)[:-1]))
    j = np.arange(row_e.size) - first_e[row_e]
    edges = a0[row_e] + (a1 - a0)[row_e] * (j / cells[row_e])
    left = np.flatnonzero(j < cells[row_e])  # each cell's edge at the larger a
    mid, half = 0.5 * (edges[left] + edges[left + 1]), 0.5 * (edges[left] - edges[left + 1])
    nodes = (mid[:, None] - half[:, None] * _GL3_X).ravel()
    q_nodes = _hermite(points, nodes, np.repeat(row_c, 3))
    e_edges = _eccentricity(edges, _hermite(points, edges, row_e))
    e = _eccentricity(nodes, q_nodes)
    i_a, _ = _means(s, nodes, e, None)
    with np.errstate(divide="ignore", over="ignore"):
        dt_da = s.mu * s.b / (1e3 * _rotation(s, nodes, e) * nodes * nodes * i_a)
    cum = np.cumsum((dt_da.reshape(-1, 3) @ _GL3_W) * half)
    before = np.concatenate(([0.0], cum))[np.concatenate(([0], np.cumsum(cells)))[row_c]]
    t = np.zeros(edges.size)
    t[left + 1] = cum - before
    return [
        (edges[lo:hi], e_edges[lo:hi], t[lo:hi])
        for lo, hi in zip(first_e, first_e + cells + 1, strict=True)
    ]


def decay_orbits(
    a0_km: np.ndarray,
    e0: np.ndarray,
    *,
    i_rad: float,
    ballistic_coefficient_kg_m2: float,
    profile: DensityProfile,
    radius_km: float,
    reentry_altitude_km: float,
    body: Body,
    t_stop_s: float | np.ndarray = math.inf,
    history: bool = False,
    q_atol_km: float = _Q_ATOL_KM,
    cell_km: float = _CELL_KM,
    shared_step: bool = False,
) -> DecayRun:
    """Integrate a batch of orbits down to re-entry (perigee height ``reentry_altitude_km``
    above ``radius_km``) or to ``t_stop_s``, whichever comes first. Method: module docstring.

    Given initial mean a (km) and e (arrays of one shape (n,), or scalars), inclination i
    (rad), B = m / (Cd A) (kg/m^2), the density profile (time origin at the start), the
    reference radius, the re-entry height, the body (mu, rotation rate) and the time limit (s;
    scalar or one per orbit). Orbits at or below the re-entry perigee re-enter at t = 0.
    ``q_atol_km`` (q's starting tolerance; t's scales with it) and ``cell_km`` (time cells)
    loosen a rough look; ``shared_step``: module docstring, item 4.
    """
    a0 = np.atleast_1d(np.asarray(a0_km, dtype=float))
    e_start = np.broadcast_to(np.asarray(e0, dtype=float), a0.shape)
    n = a0.size
    stop = np.broadcast_to(np.asarray(t_stop_s, dtype=float), (n,)).copy()
    r_re = radius_km + float(reentry_altitude_km)
    q0 = a0 * (1.0 - e_start)
    # Trapezoidal nodes in E by the height swing in perigee scale heights (module docstring).
    h_p = q0 - radius_km
    scale_km = 1.0 / np.maximum(profile.log_density(h_p) - profile.log_density(h_p + 1.0), 1e-6)
    swing = float(np.max(a0 * e_start / scale_km)) if n else 0.0
    rule = _RULES[32 if swing <= 2.0 else 64 if swing <= 8.0 else 128]
    s = _Setup(float(ballistic_coefficient_kg_m2), math.cos(i_rad), radius_km, r_re, profile,
               body.mu_km3_s2, body.rotation_rate_rad_s, rule, q_atol_km, cell_km,
               shared_step)  # fmt: skip
    timed = profile.time_varying
    y0 = np.stack([q0, np.zeros(n)], axis=1) if timed else q0[:, None]
    points, reentered, evaluations = _integrate(s, a0, y0, stop)
    if timed:
        runs = [(x, _eccentricity(x, y[:, 0]), y[:, 1]) for x, y, _ in points]
    else:
        runs = _times(s, points)
        evaluations += sum(r[0].size * 3 for r in runs)
        for k, (_, _, t) in enumerate(runs):
            if not reentered[k]:  # the rates vanish (no density): it never comes down
                t[-1] = math.inf
            elif t[-1] > stop[k]:
                reentered[k] = False
    t_end = np.array([min(r[2][-1], stop[k]) for k, r in enumerate(runs)])
    t_end[~np.isfinite(t_end)] = math.inf
    a_end = np.array([r[0][-1] for r in runs])
    e_end = np.array([r[1][-1] for r in runs])
    return DecayRun(reentered, t_end, a_end, e_end, tuple(runs) if history else (), evaluations)
