"""Lambert's problem: the conic from r1 to r2 in a given time, zero and multi-revolution, vectorised.

Method: Izzo, D. (2015), "Revisiting Lambert's problem", Celestial Mechanics and Dynamical
Astronomy 121(1), 1-15. The problem is reduced to one non-dimensional unknown x (Eqs. 1-9,
lambda = +-sqrt(1 - c/s), T = sqrt(2 mu / s^3) tof); the time of flight T(x) is evaluated by
Lancaster-Blanchard's form (Eq. 18), by Lagrange's form (Eq. 9) for 0.2 > |x - 1| > 0.01 and
by Battin's hypergeometric series (Eq. 20) within 0.01 of the parabola; Householder's
third-order iteration (Eq. 22 derivatives) from the paper's initial guesses (Eqs. 30-31) finds
x. Everything runs on whole arrays: a fixed small number of iterations (at most 12; typically
3-4 are needed) with convergence masks, never a Python loop per problem.

Conventions
- ``prograde=True``: the transfer's angular momentum has a positive z component (counter-
  clockwise seen from +z); ``prograde=False``: negative z. The transfer angle follows from it.
- Multi-revolution (``revolutions`` = N >= 1) problems have two solutions when the time of flight
  exceeds the minimum T_min(N): ``branch="low"`` is the LOW-ENERGY one (smaller semi-major axis),
  ``branch="high"`` the HIGH-ENERGY one (larger semi-major axis), as in the low/high-energy
  naming of Vallado 4th ed., Sec. 7.6 (Algorithm 58). For N = 0 there is one solution and the
  branch is ignored.
- Near a 180-deg transfer the plane of r1 and r2 is ill-defined (r1 x r2 -> 0): within
  ``PLANE_TOLERANCE`` (|sin(transfer angle)| < 1e-9) the solver picks the plane that contains
  r1 and whose normal is closest to +z (to +x if r1 lies along z), solves in it, flags the
  problem in ``LambertSolution.plane_ill_defined`` and ``lambert`` issues a
  ``LambertPlaneWarning``. Any plane through the line of r1 and r2 is then a valid answer; the
  caller must state the intended one (e.g. by nudging r2 off the line).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH
from .errors import InputError
from .lambert_tof import householder, t_min

__all__ = [
    "LambertPlaneWarning",
    "LambertSolution",
    "PLANE_TOLERANCE",
    "lambert",
    "solve_lambert",
]

PLANE_TOLERANCE = 1e-9  # |sin(transfer angle)| below which the transfer plane is ill-defined


class LambertPlaneWarning(UserWarning):
    """A transfer angle so close to 0 or 180 deg that r1 and r2 do not fix the plane."""


@dataclass(frozen=True)
class LambertSolution:
    """Velocities at r1 and r2 (km/s, (..., 3)), the conic's semi-major axis (km, negative for a
    hyperbola), Izzo's x, the transfer angle (rad, in [0, 2 pi)), and the masks for problems
    with no solution (NaN velocities) and for an ill-defined plane."""

    v1_km_s: np.ndarray
    v2_km_s: np.ndarray
    a_km: np.ndarray
    x: np.ndarray
    transfer_angle_rad: np.ndarray
    infeasible: np.ndarray
    plane_ill_defined: np.ndarray
    tof_min_s: np.ndarray | None


def _as_vectors(name: str, value: ArrayLike) -> np.ndarray:
    v = np.asarray(value, dtype=float)
    if v.shape[-1:] != (3,) or not np.all(np.isfinite(v)):
        raise InputError(name, value, "must be finite position vectors of shape (..., 3), km")
    return v


def solve_lambert(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    tof_s: ArrayLike,
    mu_km3_s2: float = EARTH.mu_km3_s2,
    prograde: ArrayLike = True,
    revolutions: int = 0,
    branch: str = "low",
) -> LambertSolution:
    """Solve a batch of Lambert problems; no-solution cells come back NaN and flagged.

    Given r1_km, r2_km (..., 3) and tof_s (...) broadcast together, mu in km^3/s^2, the
    direction of motion (``prograde``, bool or array), ``revolutions`` N >= 0 (whole
    revolutions completed before arrival) and ``branch`` ("low"/"high", used for N >= 1;
    see the module notes). Returns a ``LambertSolution``; for N >= 1 it also carries the
    minimum time of flight, s, of each problem (``tof_min_s``).
    """
    r1 = _as_vectors("r1_km", r1_km)
    r2 = _as_vectors("r2_km", r2_km)
    tof = np.asarray(tof_s, dtype=float)
    if not np.all(np.isfinite(tof)) or np.any(tof <= 0.0):
        raise InputError("tof_s", tof_s, "must be a finite time of flight > 0 s")
    mu = float(mu_km3_s2)
    if not math.isfinite(mu) or mu <= 0.0:
        raise InputError("mu_km3_s2", mu_km3_s2, "must be a finite gravity parameter > 0")
    n_rev = int(revolutions)
    if n_rev != revolutions or n_rev < 0:
        raise InputError("revolutions", revolutions, "must be a whole number >= 0")
    if branch not in ("low", "high"):
        raise InputError("branch", branch, 'must be "low" or "high"')
    shape = np.broadcast_shapes(r1.shape[:-1], r2.shape[:-1], tof.shape, np.shape(prograde))
    # The solver works on flat component arrays (3, n): one problem per column.
    a1 = np.ascontiguousarray(np.broadcast_to(r1, shape + (3,)).reshape(-1, 3).T)
    a2 = np.ascontiguousarray(np.broadcast_to(r2, shape + (3,)).reshape(-1, 3).T)
    t_flat = np.broadcast_to(tof, shape).reshape(-1)
    pro = np.broadcast_to(np.asarray(prograde, dtype=bool), shape).reshape(-1)
    out = _solve_flat(a1, a2, t_flat, pro, mu, n_rev, branch)

    def back(x: np.ndarray) -> np.ndarray:
        return x.reshape(shape)

    def back_vec(x: np.ndarray) -> np.ndarray:
        return x.T.reshape(shape + (3,))

    return LambertSolution(
        v1_km_s=back_vec(out["v1"]),
        v2_km_s=back_vec(out["v2"]),
        a_km=back(out["a"]),
        x=back(out["x"]),
        transfer_angle_rad=back(out["theta"]),
        infeasible=back(out["infeasible"]),
        plane_ill_defined=back(out["ill"]),
        tof_min_s=None if out["tof_min"] is None else back(out["tof_min"]),
    )


def _cross(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Cross product of (3, n) component arrays."""
    return np.stack(
        [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]
    )


def _norm(a: np.ndarray) -> np.ndarray:
    return np.sqrt(a[0] * a[0] + a[1] * a[1] + a[2] * a[2])


def _solve_flat(
    r1: np.ndarray,
    r2: np.ndarray,
    tof: np.ndarray,
    pro: np.ndarray,
    mu: float,
    n_rev: int,
    branch: str,
) -> dict:
    """Izzo (2015), Algorithm 1, on (3, n) positions and (n,) times of flight."""
    r1n = _norm(r1)
    r2n = _norm(r2)
    if np.any(r1n == 0.0) or np.any(r2n == 0.0):
        raise InputError("r1_km/r2_km", "0", "a position at the centre of the body")
    c = _norm(r2 - r1)
    s = 0.5 * (r1n + r2n + c)
    ir1 = r1 / r1n
    ir2 = r2 / r2n
    h = _cross(ir1, ir2)
    hn = _norm(h)
    ill = hn < PLANE_TOLERANCE
    cos_theta = np.clip(ir1[0] * ir2[0] + ir1[1] * ir2[1] + ir1[2] * ir2[2], -1.0, 1.0)
    sense = np.where(pro, 1.0, -1.0)
    # Orbit normal: along +-h, the sign chosen so that its z component has the asked sense.
    flip = np.where(sense * h[2] < 0.0, -1.0, 1.0)
    ih = h * (flip / np.where(hn > 0.0, hn, 1.0))
    long_way = flip < 0.0
    if np.any(ill):
        # Fallback plane: normal closest to +z among those perpendicular to r1 (+x if r1 is
        # along z), oriented by the asked sense; r2 along r1 is a full turn, else 180 deg.
        k = np.flatnonzero(ill)
        u = ir1[:, k]
        ref = np.where(np.abs(u[2]) > 1.0 - 1e-12, [[1.0], [0.0], [0.0]], [[0.0], [0.0], [1.0]])
        fb = ref - np.sum(ref * u, axis=0) * u
        ih[:, k] = sense[k] * fb / _norm(fb)
        long_way[k] = cos_theta[k] > 0.0
    lam = np.sqrt(np.clip(1.0 - c / s, 0.0, 1.0))
    lam = np.where(long_way, -lam, lam)
    it1 = _cross(ih, ir1)
    it2 = _cross(ih, ir2)
    theta = np.arccos(cos_theta)
    theta = np.where(long_way, 2.0 * math.pi - theta, theta)

    t_nd = np.sqrt(2.0 * mu / s**3) * tof
    lam2 = lam * lam
    lam3 = lam2 * lam
    tof_min_s = None
    if n_rev == 0:
        t00 = np.arccos(lam) + lam * np.sqrt(1.0 - lam2)
        t1 = 2.0 / 3.0 * (1.0 - lam3)
        # Izzo (2015), Eq. 30: the initial guess in three regimes of T.
        x0 = -(t_nd - t00) / (t_nd - t00 + 4.0)
        low = np.flatnonzero(t_nd <= t1)
        mid = np.flatnonzero((t_nd > t1) & (t_nd < t00))
        with np.errstate(invalid="ignore", divide="ignore"):
            tl, ll = t_nd[low], lam[low]
            x0[low] = t1[low] * (t1[low] - tl) / (0.4 * (1.0 - ll**5) * tl) + 1.0
            tm = t_nd[mid]
            x0[mid] = (tm / t00[mid]) ** (math.log(2.0) / np.log(t1[mid] / t00[mid])) - 1.0
        x = householder(x0, t_nd, lam, 0)
        infeasible = ~np.isfinite(x)
    else:
        _, t_least = t_min(lam, n_rev)
        tof_min_s = t_least / np.sqrt(2.0 * mu / s**3)
        infeasible = t_nd < t_least
        with np.errstate(invalid="ignore", divide="ignore"):
            tmp = ((n_rev * math.pi + math.pi) / (8.0 * t_nd)) ** (2.0 / 3.0)
            x_left0 = (tmp - 1.0) / (tmp + 1.0)
            tmp = ((8.0 * t_nd) / (n_rev * math.pi)) ** (2.0 / 3.0)
            x_right0 = (tmp - 1.0) / (tmp + 1.0)
        x_left = householder(np.where(infeasible, np.nan, x_left0), t_nd, lam, n_rev)
        x_right = householder(np.where(infeasible, np.nan, x_right0), t_nd, lam, n_rev)
        # a = a_min / (1 - x^2): the low-energy solution has the smaller |x|.
        left_is_low = np.abs(x_left) <= np.abs(x_right)
        want_low = branch == "low"
        x = np.where(left_is_low == want_low, x_left, x_right)
        x = np.where(infeasible, np.nan, x)

    # Velocities from x (Izzo 2015, Algorithm 1, lines 17-27).
    gamma = np.sqrt(mu * s / 2.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        rho = np.where(c > 0.0, (r1n - r2n) / c, 0.0)
        sigma = np.sqrt(np.clip(1.0 - rho * rho, 0.0, 1.0))
        y = np.sqrt(1.0 - lam2 + lam2 * x * x)
        ly = lam * y
        vr1 = gamma * ((ly - x) - rho * (ly + x)) / r1n
        vr2 = -gamma * ((ly - x) + rho * (ly + x)) / r2n
        vt = gamma * sigma * (y + lam * x)
        a = (s / 2.0) / (1.0 - x * x)
    v1 = vr1 * ir1 + (vt / r1n) * it1
    v2 = vr2 * ir2 + (vt / r2n) * it2
    return {
        "v1": v1,
        "v2": v2,
        "a": a,
        "x": x,
        "theta": theta,
        "infeasible": infeasible,
        "ill": ill,
        "tof_min": tof_min_s,
    }


def lambert(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    tof_s: ArrayLike,
    mu_km3_s2: float = EARTH.mu_km3_s2,
    prograde: ArrayLike = True,
    revolutions: int = 0,
    branch: str = "low",
) -> tuple[np.ndarray, np.ndarray]:
    """Velocities (v1_km_s, v2_km_s), (..., 3), of the conic from r1 to r2 in tof_s.

    Given r1_km, r2_km (..., 3) km and tof_s (...) s (broadcast), mu km^3/s^2, the direction
    of motion (``prograde``: angular momentum along +z), the number of complete
    ``revolutions`` N >= 0 and, for N >= 1, the ``branch``: "low" (low energy, smaller
    semi-major axis) or "high" (high energy). Izzo (2015), CMDA 121(1):1-15, vectorised.

    Raises ``InputError`` when some time of flight is shorter than the minimum with N
    revolutions (the message gives that minimum); warns with ``LambertPlaneWarning`` when the
    transfer angle is within 1e-9 (in sine) of 0 or 180 deg, where the plane is ill-defined
    (see the module notes for the plane chosen).
    """
    sol = solve_lambert(r1_km, r2_km, tof_s, mu_km3_s2, prograde, revolutions, branch)
    if np.any(sol.infeasible):
        tmin = sol.tof_min_s
        if tmin is not None:
            worst = np.unravel_index(np.argmax(np.where(sol.infeasible, tmin, -np.inf)), tmin.shape)
            tof = np.broadcast_to(np.asarray(tof_s, dtype=float), tmin.shape)
            raise InputError(
                "tof_s",
                float(tof[worst]),
                f"no {int(revolutions)}-revolution solution: the minimum time of flight with "
                f"{int(revolutions)} revolution(s) for this geometry is {float(tmin[worst]):.3f} s",
            )
        raise InputError("tof_s", tof_s, "the solver found no solution")
    if np.any(sol.plane_ill_defined):
        warnings.warn(
            "transfer angle within 1e-9 (sine) of 0/180 deg: the transfer plane is ill-defined; "
            "solved in the plane containing r1 with normal closest to +z",
            LambertPlaneWarning,
            stacklevel=2,
        )
    return sol.v1_km_s, sol.v2_km_s
