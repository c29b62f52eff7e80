"""Two-body (Keplerian) propagation of a Cartesian state, vectorised over many times.

Two methods, chosen per state:

- elliptic orbits with e < ``FAST_PATH_MAX_E`` (0.99): Kepler's equation by the solver of
  ``kepler.py`` (Markley 1995) and the Lagrange f and g functions written with the
  eccentric-anomaly difference dE (Battin, An Introduction to the Mathematics and Methods of
  Astrodynamics, rev. ed. (1999), Ch. 4, the f, g and radius in terms of dE):
      r = a + (r0 - a) cos dE + sigma0 sqrt(a) sin dE,       sigma0 = r0 . v0 / sqrt(mu)
      f = 1 - a/r0 (1 - cos dE),     g = a sigma0 / sqrt(mu) (1 - cos dE) + r0 sqrt(a/mu) sin dE
      fdot = -sqrt(mu a) sin dE / (r r0),     gdot = 1 - a/r (1 - cos dE)
  sin dE and cos dE come from the solver's sine and cosine and those of the initial E0, so no
  trigonometric call is spent beyond the solver's one sine. No expression subtracts dt from a
  quantity of its size, so many revolutions lose no digits beyond those of n dt itself.
- every other orbit (e >= 0.99, parabolic, hyperbolic): universal variables, Vallado,
  Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 8 (KEPLER), with
  the Stumpff functions c2, c3 and the Laguerre iteration of B. A. Conway, "An improved
  algorithm due to Laguerre for the solution of Kepler's equation", Celestial Mechanics
  39:199-211 (1986), which converges from any starting value. The start is chi = sqrt(|a|)
  (E - E0) or sqrt(|a|) (H - H0) from solve_kepler, so Laguerre only polishes (1-2 steps);
  within 1e-12 of parabolic, Vallado's starting values. Elliptic times are first reduced
  by whole periods. g is formed as (sigma0 chi^2 c2 + r0 chi (1 - z c3)) / sqrt(mu), which is
  equal to dt - chi^3 c3 / sqrt(mu) but free of cancellation.

Shapes: r_km and v_km_s of shape S + (3,), dt_s of shape T; S and T broadcast to B and the
result has shape B + (3,). One state (S = ()) and many times give dt.shape + (3,); N states
at one time each give (N, 3); N states at M common times need S = (N, 1) and T = (M,).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH
from .elements import _check_mu, _check_state
from .errors import InputError
from .kepler import CHUNK_SIZE, KeplerWorkspace, elliptic_sincos_into, solve_kepler
from .kepler_hyperbolic import hyperbolic_kepler_residual, x_minus_sin_x

__all__ = ["propagate_two_body", "stumpff_c2_c3", "FAST_PATH_MAX_E"]

FAST_PATH_MAX_E = 0.99
_LAGUERRE_N = 5.0
_MAX_LAGUERRE_STEPS = 60


def propagate_two_body(
    r_km: ArrayLike, v_km_s: ArrayLike, dt_s: ArrayLike, mu_km3_s2: float = EARTH.mu_km3_s2
) -> tuple[np.ndarray, np.ndarray]:
    """Position and velocity after dt_s of Keplerian motion about a point mass.

    Given: r_km (km), v_km_s (km/s) of shape S + (3,), in any inertial frame (GCRF in this
    project); dt_s (s), shape T, positive or negative; mu_km3_s2 of the central body.
    Returned: (r, v) in km and km/s, shape broadcast(S, T) + (3,); see the module docstring.
    Accuracy (tests/test_twobody.py): energy and angular momentum conserved to 1e-11 relative
    or better; a propagation forward then back returns the start to well under a millimetre.
    Raises InputError for a non-finite state or time, r = 0, or a rectilinear state.
    """
    mu = _check_mu(mu_km3_s2)
    r0v = np.asarray(r_km, dtype=float)
    v0v = np.asarray(v_km_s, dtype=float)
    _check_state(r0v, v0v)
    dt = np.asarray(dt_s, dtype=float)
    if not np.all(np.isfinite(dt)):
        raise InputError("dt_s", float(dt[~np.isfinite(dt)].ravel()[0]), "must be finite")
    r0v, v0v = np.broadcast_arrays(r0v, v0v)
    r0 = np.linalg.norm(r0v, axis=-1)
    if np.any(r0 == 0.0):
        raise InputError("r_km", 0.0, "position must not be the centre of the body")
    v0_sq = np.einsum("...i,...i->...", v0v, v0v)
    sqrt_mu = math.sqrt(mu)
    sigma0 = np.einsum("...i,...i->...", r0v, v0v) / sqrt_mu
    alpha = 2.0 / r0 - v0_sq / mu  # 1/a: > 0 ellipse, < 0 hyperbola
    h = np.linalg.norm(np.cross(r0v, v0v), axis=-1)
    if np.any(~(h > 1e-15 * r0 * np.sqrt(v0_sq))):
        raise InputError("v_km_s", "parallel to r_km", "rectilinear motion is not propagated")
    # e sin E0 = sigma0 sqrt(alpha), e cos E0 = 1 - r0 alpha (for alpha > 0)
    with np.errstate(invalid="ignore"):
        es0 = sigma0 * np.sqrt(alpha)
    ec0 = 1.0 - r0 * alpha
    e = np.sqrt(np.maximum(1.0 - h * h / mu * alpha, 0.0))
    fast = (alpha > 0.0) & (e < FAST_PATH_MAX_E)

    shape = np.broadcast_shapes(r0.shape, dt.shape)
    size = math.prod(shape)
    # Work on flat arrays of the broadcast size; results go to (3, size) buffers whose
    # transposed views carry the vector axis last (no strided writes).
    r_out = np.empty((3, size))
    v_out = np.empty((3, size))
    flat = [
        np.broadcast_to(x, shape).ravel() if x.ndim else x for x in (r0, sigma0, alpha, es0, ec0)
    ]
    dt_flat = np.broadcast_to(dt, shape).ravel()
    if r0.ndim == 0:
        r0v_flat, v0v_flat = r0v, v0v
    else:
        r0v_flat = np.broadcast_to(r0v, shape + (3,)).reshape(size, 3)
        v0v_flat = np.broadcast_to(v0v, shape + (3,)).reshape(size, 3)
    fast_flat = np.broadcast_to(fast, shape).ravel()
    methods: tuple[tuple[Callable[..., None], np.ndarray], ...] = (
        (_elliptic_fg, fast_flat),
        (_universal, ~fast_flat),
    )
    for fn, mask in methods:
        if not mask.any():
            continue
        if mask.all():
            fn(r0v_flat, v0v_flat, *flat, dt_flat, mu, r_out, v_out)
            continue
        idx = np.flatnonzero(mask)
        pick = [x[idx] if np.ndim(x) else x for x in flat]
        rv = [x[idx] if x.ndim == 2 else x for x in (r0v_flat, v0v_flat)]
        r_part = np.empty((3, idx.size))
        v_part = np.empty((3, idx.size))
        fn(*rv, *pick, dt_flat[idx], mu, r_part, v_part)
        r_out[:, idx] = r_part
        v_out[:, idx] = v_part
    r_out = np.moveaxis(r_out.reshape((3,) + shape), 0, -1)
    v_out = np.moveaxis(v_out.reshape((3,) + shape), 0, -1)
    return r_out, v_out


def _elliptic_fg(r0v, v0v, r0, sigma0, alpha, es0, ec0, dt, mu, r_out, v_out) -> None:
    """Kepler's equation and f, g in the eccentric-anomaly difference (module docstring).

    Per-state values are floats or flat arrays matching dt; r0v, v0v are (3,) or (K, 3);
    results are written to r_out, v_out of shape (3, K). Runs in cache-sized chunks with
    preallocated buffers (the reason is in kepler.py's module docstring).
    """
    e = np.hypot(es0, ec0)
    E0 = np.arctan2(es0, ec0)
    n = np.sqrt(mu * alpha) * alpha
    M0 = E0 - es0
    sE0, cE0 = np.sin(E0), np.cos(E0)
    a = 1.0 / alpha
    sqrt_a = np.sqrt(a)
    sqrt_mu = math.sqrt(mu)
    r0_minus_a = r0 - a
    k_r = sigma0 * sqrt_a
    k_f = -a / r0
    k_g1 = a * sigma0 / sqrt_mu
    k_g2 = r0 * sqrt_a / sqrt_mu
    k_fd = -sqrt_mu * sqrt_a / r0
    size = dt.shape[0]
    chunk = min(size, CHUNK_SIZE)
    ws = KeplerWorkspace(chunk)
    bufs = [np.empty(chunk) for _ in range(8)]
    for start in range(0, size, chunk):
        stop = min(start + chunk, size)
        sl = slice(start, stop)
        M, E, sin_dE, cos_dE, t1, t2, f, g = (b[: stop - start] for b in bufs)

        def part(x, sl=sl):
            return x if np.ndim(x) == 0 else x[sl]

        np.multiply(dt[sl], part(n), out=M)
        M += part(M0)
        elliptic_sincos_into(M, part(e), E, sin_dE, cos_dE, ws)
        np.multiply(cos_dE, part(sE0), out=t1)
        np.multiply(sin_dE, part(sE0), out=t2)
        sin_dE *= part(cE0)  # sin dE = sin E cos E0 - cos E sin E0
        sin_dE -= t1
        cos_dE *= part(cE0)  # cos dE = cos E cos E0 + sin E sin E0
        cos_dE += t2
        omc = t2
        np.subtract(1.0, cos_dE, out=omc)  # 1 - cos dE
        r = cos_dE  # r = a + (r0 - a) cos dE + sigma0 sqrt(a) sin dE
        r *= part(r0_minus_a)
        r += part(a)
        np.multiply(sin_dE, part(k_r), out=t1)
        r += t1
        np.multiply(omc, part(k_f), out=f)
        f += 1.0
        np.multiply(omc, part(k_g1), out=g)
        np.multiply(sin_dE, part(k_g2), out=t1)
        g += t1
        fdot = sin_dE
        fdot *= part(k_fd)
        fdot /= r
        gdot = omc
        gdot *= part(a)
        gdot /= r
        np.subtract(1.0, gdot, out=gdot)
        rv = r0v if r0v.ndim == 1 else r0v[sl]
        vv = v0v if v0v.ndim == 1 else v0v[sl]
        _combine(f, g, fdot, gdot, rv, vv, r_out[:, sl], v_out[:, sl], t1)


def _combine(f, g, fdot, gdot, r0v, v0v, r_out, v_out, tmp) -> None:
    """r = f r0 + g v0 and v = fdot r0 + gdot v0, written row by row into (3, K) buffers."""
    for k in range(3):
        r0k, v0k = r0v[..., k], v0v[..., k]
        np.multiply(f, r0k, out=r_out[k])
        np.multiply(g, v0k, out=tmp)
        r_out[k] += tmp
        np.multiply(fdot, r0k, out=v_out[k])
        np.multiply(gdot, v0k, out=tmp)
        v_out[k] += tmp


def stumpff_c2_c3(z: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Stumpff functions c2(z) = (1 - cos sqrt z)/z and c3(z) = (sqrt z - sin sqrt z)/sqrt z^3.

    Continued to z < 0 with cosh and sinh; Taylor series for |z| < 4 (exact to rounding, no
    cancellation); c2 by the half-angle form 2 sin^2(s/2)/z elsewhere (Vallado 4th ed.,
    Ch. 2, universal variables; Curtis 3rd ed., Ch. 3, Stumpff functions).
    """
    z = np.asarray(z, dtype=float)
    c2 = np.empty_like(z)
    c3 = np.empty_like(z)
    small = np.abs(z) < 4.0
    zs = z[small]
    c2s = np.ones_like(zs)
    c3s = np.ones_like(zs)
    for k in range(16, 0, -1):  # c2 = sum (-z)^k/(2k+2)!, c3 = sum (-z)^k/(2k+3)!
        c2s = 1.0 - c2s * zs / ((2 * k + 1) * (2 * k + 2))
        c3s = 1.0 - c3s * zs / ((2 * k + 2) * (2 * k + 3))
    c2[small] = 0.5 * c2s
    c3[small] = c3s / 6.0
    with np.errstate(over="ignore"):
        for mask, sin_like in ((~small & (z > 0.0), np.sin), (~small & (z < 0.0), np.sinh)):
            zz = z[mask]
            s = np.sqrt(np.abs(zz))
            sign = 1.0 if sin_like is np.sin else -1.0
            c2[mask] = sign * 2.0 * sin_like(0.5 * s) ** 2 / zz
            c3[mask] = sign * (s - sin_like(s)) / s**3
    return c2, c3


def _universal(r0v, v0v, r0, sigma0, alpha, es0, ec0, dt, mu, r_out, v_out) -> None:
    """Universal-variable Kepler equation by Laguerre-Conway iteration, then f and g."""
    del es0
    shape = np.broadcast_shapes(r0.shape, dt.shape)
    r0b, s0b, ab = (np.broadcast_to(x, shape).astype(float) for x in (r0, sigma0, alpha))
    sqrt_mu = math.sqrt(mu)
    dtb = np.broadcast_to(dt, shape).astype(float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        period = np.where(ab > 0.0, 2.0 * np.pi / (sqrt_mu * ab * np.sqrt(ab)), np.inf)
        dt_red = np.where(ab > 0.0, dtb - period * np.rint(dtb / period), dtb)
    chi = _initial_chi(r0b, s0b, ab, dt_red, sqrt_mu)
    _kepler_chi(chi, r0b, s0b, ab, np.broadcast_to(ec0, shape), dt_red, sqrt_mu)
    one_m_ar0 = 1.0 - ab * r0b
    target = sqrt_mu * dt_red
    active = np.flatnonzero(np.ones(shape, dtype=bool).ravel())
    chi_f = chi.ravel()
    r0f, s0f, af, om, tf = (x.ravel() for x in (r0b, s0b, ab, one_m_ar0, target))
    for _ in range(_MAX_LAGUERRE_STEPS):
        if active.size == 0:
            break
        x = chi_f[active]
        a_, r_, s_, o_ = af[active], r0f[active], s0f[active], om[active]
        z = a_ * x * x
        c2, c3 = stumpff_c2_c3(z)
        F = s_ * x * x * c2 + o_ * x**3 * c3 + r_ * x - tf[active]
        dF = x * x * c2 + s_ * x * (1.0 - z * c3) + r_ * (1.0 - z * c2)
        ddF = s_ * (1.0 - z * c2) + o_ * x * (1.0 - z * c3)
        n = _LAGUERRE_N
        root = np.sqrt(np.abs((n - 1.0) ** 2 * dF * dF - n * (n - 1.0) * F * ddF))
        step = n * F / (dF + np.copysign(root, dF))
        chi_f[active] = x - step
        converged = np.abs(step) <= 1e-15 * np.maximum(np.abs(x), 1e-300) + 1e-300
        active = active[~converged]
    chi = chi_f.reshape(shape)
    z = ab * chi * chi
    c2, c3 = stumpff_c2_c3(z)
    chi2c2 = chi * chi * c2
    one_m_zc3 = 1.0 - z * c3
    r = chi2c2 + s0b * chi * one_m_zc3 + r0b * (1.0 - z * c2)
    f = 1.0 - chi2c2 / r0b
    g = (s0b * chi2c2 + r0b * chi * one_m_zc3) / sqrt_mu
    fdot = -sqrt_mu * chi * one_m_zc3 / (r * r0b)
    gdot = 1.0 - chi2c2 / r
    _combine(f, g, fdot, gdot, r0v, v0v, r_out, v_out, np.empty(shape))


def _kepler_chi(chi, r0, sigma0, alpha, ec0, dt, sqrt_mu) -> None:
    """Replace the starting chi, in place, by the one from Kepler's equation where it applies.

    chi = sqrt(a) (E - E0) on ellipses and sqrt(-a) (H - H0) on hyperbolas, with E or H from
    solve_kepler; the Laguerre iteration then only polishes it (one or two steps instead of
    five to seven). Orbits within 1e-12 of parabolic keep the generic start.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        sa = np.sqrt(np.abs(alpha))
        es0 = sigma0 * sa  # e sin E0 or e sinh H0
        ell = alpha * r0 > 1e-12
        hyp = alpha * r0 < -1e-12
        for mask, sign in ((ell, 1.0), (hyp, -1.0)):
            idx = np.flatnonzero(mask)
            if idx.size == 0:
                continue
            s_, c_ = es0.ravel()[idx], ec0.ravel()[idx]
            e = np.sqrt(np.abs((c_ - s_) * (c_ + s_))) if sign < 0 else np.hypot(s_, c_)
            e = np.where(e == 1.0, np.nextafter(1.0, 2.0 if sign < 0 else 0.0), e)
            if sign > 0:
                x0 = np.arctan2(s_, c_)
                M0 = (1.0 - e) * np.sin(x0) + x_minus_sin_x(x0)
            else:
                x0 = np.arcsinh(s_ / e)
                M0 = hyperbolic_kepler_residual(x0, e, 0.0)
            n = sqrt_mu * sa.ravel()[idx] ** 3
            x = solve_kepler(M0 + n * dt.ravel()[idx], e)
            guess = (x - x0) / sa.ravel()[idx]
            ok = np.isfinite(guess)
            chi.ravel()[idx[ok]] = guess[ok]


def _initial_chi(r0, sigma0, alpha, dt, sqrt_mu):
    """Starting universal anomaly (Vallado 4th ed., Algorithm 8): sqrt(mu) dt alpha for
    ellipses; the logarithmic guess for hyperbolas; sqrt(mu) dt / r0 otherwise."""
    chi = sqrt_mu * dt / r0
    ell = alpha > 1e-12 / r0
    chi = np.where(ell, sqrt_mu * dt * alpha, chi)
    with np.errstate(divide="ignore", invalid="ignore"):
        a = 1.0 / alpha
        sgn = np.sign(dt)
        arg = (-2.0 * sqrt_mu**2 * alpha * dt) / (
            sigma0 * sqrt_mu + sgn * np.sqrt(-(sqrt_mu**2) * a) * (1.0 - r0 * alpha)
        )
        chi_h = sgn * np.sqrt(-a) * np.log(arg)
    use_h = (alpha < -1e-12 / r0) & np.isfinite(chi_h) & (arg > 1.0)
    return np.where(use_h, chi_h, chi)
