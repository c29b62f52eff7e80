"""Izzo's time-of-flight function T(x) of Lambert's problem, its derivatives, and the solvers
of T(x) = T on arrays (the numerical core of ``orbitledger.kernel.lambert``).

Izzo, D. (2015), "Revisiting Lambert's problem", Celestial Mechanics and Dynamical Astronomy
121(1), 1-15: T(x) by Lancaster-Blanchard's form (Eq. 18), Lagrange's form (Eq. 9) for
0.01 <= |x - 1| < 0.2 and Battin's hypergeometric series (Eq. 20) within 0.01 of the
parabola; derivatives Eq. 22; Householder iterations for T(x) = T and Halley iterations for
the minimum time of flight of a multi-revolution transfer (Sec. 3).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["householder", "t_min", "tof_nondimensional"]

_MAX_ITERATIONS = 12
# Householder stops once a step is below this (zero-rev, multi-rev): with third-order
# convergence the error left after a step of 1e-5 is of order 1e-15 (tests check 1 m landings).
_X_TOL = (1e-5, 1e-8)


def _hyp2f1_series(z: np.ndarray) -> np.ndarray:
    """2F1(3, 1; 5/2; z) by its power series, |z| small (Izzo 2015, Eq. 20); 25 terms."""
    term = np.ones_like(z)
    total = np.ones_like(z)
    for j in range(25):
        term = term * (3.0 + j) * (1.0 + j) / (2.5 + j) * z / (j + 1.0)
        total = total + term
    return total


def _tof_lagrange(x: np.ndarray, lam: np.ndarray, n_rev: int) -> np.ndarray:
    """Lagrange's form of T(x) (Izzo 2015, Eq. 9), used for 0.01 <= |x - 1| < 0.2."""
    lam2 = lam * lam
    with np.errstate(invalid="ignore", divide="ignore"):
        a = 1.0 / (1.0 - x * x)
        sa = np.sqrt(np.abs(a))
        sign = np.where(lam < 0.0, -1.0, 1.0)
        ratio = np.sqrt(np.abs(lam2 / a))
        alfa_e = 2.0 * np.arccos(np.clip(x, -1.0, 1.0))
        beta_e = sign * 2.0 * np.arcsin(np.clip(ratio, 0.0, 1.0))
        t_ell = (
            a
            * sa
            * ((alfa_e - np.sin(alfa_e)) - (beta_e - np.sin(beta_e)) + 2.0 * math.pi * n_rev)
            / 2.0
        )
        alfa_h = 2.0 * np.arccosh(np.maximum(x, 1.0))
        beta_h = sign * 2.0 * np.arcsinh(ratio)
        t_hyp = -a * sa * ((beta_h - np.sinh(beta_h)) - (alfa_h - np.sinh(alfa_h))) / 2.0
    return np.where(a > 0.0, t_ell, t_hyp)


def _tof_battin(x: np.ndarray, lam: np.ndarray, n_rev: int) -> np.ndarray:
    """Battin's hypergeometric form of T(x) (Izzo 2015, Eq. 20), for |x - 1| < 0.01."""
    e = x * x - 1.0
    z = np.sqrt(1.0 + lam * lam * e)
    eta = z - lam * x
    s1 = 0.5 * (1.0 - lam - x * eta)
    q = 4.0 / 3.0 * _hyp2f1_series(s1)
    t = (eta**3 * q + 4.0 * lam * eta) / 2.0
    if n_rev:
        with np.errstate(divide="ignore"):
            t = t + n_rev * math.pi / np.abs(e) ** 1.5
    return t


def tof_nondimensional(x: np.ndarray, lam: np.ndarray, n_rev: int) -> np.ndarray:
    """Non-dimensional time of flight T(x) (Izzo 2015, Eqs. 9, 18, 20).

    Lancaster-Blanchard's form everywhere, then Lagrange's and Battin's forms computed only
    on the (few) elements near the parabola x = 1 where Lancaster's loses digits.
    """
    lam2 = lam * lam
    e = x * x - 1.0
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.sqrt(1.0 + lam2 * e)
        y = np.sqrt(np.abs(e))
        g = x * z - lam * e
        ell = e < 0.0
        d = np.where(
            ell,
            n_rev * math.pi + np.arccos(np.clip(g, -1.0, 1.0)),
            np.log(np.maximum(y * (z - lam * x) + g, 1e-300)),
        )
        out = (x - lam * z - d / y) / e
    dist = np.abs(x - 1.0)
    near = np.flatnonzero(dist < 0.2)
    if near.size:
        xs, ls = x[near], lam[near]
        t_near = _tof_lagrange(xs, ls, n_rev)
        closest = dist[near] < 0.01
        if np.any(closest):
            t_near[closest] = _tof_battin(xs[closest], ls[closest], n_rev)
        out[near] = t_near
    return out


def _derivatives(x: np.ndarray, t: np.ndarray, lam: np.ndarray):
    """dT/dx, d2T/dx2, d3T/dx3 (Izzo 2015, Eq. 22)."""
    lam2 = lam * lam
    lam3 = lam2 * lam
    with np.errstate(invalid="ignore", divide="ignore"):
        umx2 = 1.0 - x * x
        y = np.sqrt(1.0 - lam2 * umx2)
        y2 = y * y
        y3 = y2 * y
        dt = (3.0 * t * x - 2.0 + 2.0 * lam3 * x / y) / umx2
        ddt = (3.0 * t + 5.0 * x * dt + 2.0 * (1.0 - lam2) * lam3 / y3) / umx2
        dddt = (7.0 * x * ddt + 8.0 * dt - 6.0 * (1.0 - lam2) * lam2 * lam3 * x / (y3 * y2)) / umx2
    return dt, ddt, dddt


def householder(x0: np.ndarray, t_target: np.ndarray, lam: np.ndarray, n_rev: int) -> np.ndarray:
    """Solve T(x) = T by Householder's method on arrays; each iteration works only on the
    problems not yet converged (index compression, so late iterations cost little)."""
    x = x0.copy()
    idx = np.flatnonzero(np.isfinite(x))
    for _ in range(_MAX_ITERATIONS):
        if idx.size == 0:
            break
        xa, la = x[idx], lam[idx]
        t = tof_nondimensional(xa, la, n_rev)
        delta = t - t_target[idx]
        dt, ddt, dddt = _derivatives(xa, t, la)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            step = (
                delta
                * (dt * dt - delta * ddt / 2.0)
                / (dt * (dt * dt - delta * ddt) + dddt * delta * delta / 6.0)
            )
        ok = np.isfinite(step)
        x_new = np.clip(xa - np.where(ok, step, 0.0), -1.0 + 1e-15, np.inf)
        moved = np.abs(x_new - xa) > _X_TOL[1 if n_rev else 0]
        x[idx] = x_new
        idx = idx[ok & moved]
    return x


def t_min(lam: np.ndarray, n_rev: int) -> tuple[np.ndarray, np.ndarray]:
    """x and T of the minimum time of flight with N >= 1 revolutions (Halley, Izzo 2015 Sec. 3)."""
    x = np.zeros_like(lam)
    t = tof_nondimensional(x, lam, n_rev)
    for _ in range(_MAX_ITERATIONS):
        dt, ddt, dddt = _derivatives(x, t, lam)
        with np.errstate(invalid="ignore", divide="ignore"):
            step = dt * ddt / (ddt * ddt - dt * dddt / 2.0)
        step = np.where(np.isfinite(step), step, 0.0)
        x = np.clip(x - step, -0.999999, 0.999999)
        t = tof_nondimensional(x, lam, n_rev)
        if np.all(np.abs(step) < 1e-13):
            break
    return x, t
