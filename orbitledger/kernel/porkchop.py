"""Transfer grids over departure and arrival times ("porkchop" arrays of delta-v and C3).

Every cell is one Lambert problem (``orbitledger.kernel.lambert.solve_lambert``, Izzo 2015),
all cells solved in one vectorised call. Two kinds of grid:

- heliocentric, between planets: planetary states from Standish's Table 1
  (``orbitledger.kernel.planets``, 1800-2050 AD), the Sun's mu; departure C3 = |v1 - v_dep|^2
  and arrival v_inf = |v2 - v_arr| (patched conics: the hyperbolic excess speeds, not the
  burns in a parking orbit);
- Earth-orbit rendezvous: two states (chaser, target) propagated two-body to the departure
  and arrival times; delta-v = |v1 - v_chaser(t_dep)| + |v_target(t_arr) - v2|.

Cells with arrival not after departure are NaN and marked ``valid = False``. The grid is
indexed [departure, arrival]. Approximate planetary positions: for design surveys only.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .constants import EARTH, SECONDS_PER_DAY, SUN
from .errors import InputError
from .lambert import solve_lambert
from .planets import planet_state
from .twobody import propagate_two_body

__all__ = ["TransferGrid", "planetary_porkchop", "rendezvous_porkchop", "transfer_grid"]


@dataclass(frozen=True)
class TransferGrid:
    """Delta-v over a departure x arrival grid (arrays of shape (n_departure, n_arrival)).

    departure, arrival: the axes as given (JD TDB for planets, seconds for rendezvous).
    tof_s: time of flight. dv_departure_km_s, dv_arrival_km_s: the two velocity changes
    (for planets, the hyperbolic excess speeds); dv_total_km_s their sum; c3_km2_s2 the
    departure characteristic energy (dv_departure squared). valid: arrival after departure
    and a solution found. plane_ill_defined: transfer angle within 1e-9 (sine) of 180 deg.
    """

    departure: np.ndarray
    arrival: np.ndarray
    tof_s: np.ndarray
    dv_departure_km_s: np.ndarray
    dv_arrival_km_s: np.ndarray
    dv_total_km_s: np.ndarray
    c3_km2_s2: np.ndarray
    valid: np.ndarray
    plane_ill_defined: np.ndarray
    revolutions: int
    prograde: bool


def transfer_grid(
    r_dep_km: ArrayLike,
    v_dep_km_s: ArrayLike,
    r_arr_km: ArrayLike,
    v_arr_km_s: ArrayLike,
    departure: ArrayLike,
    arrival: ArrayLike,
    tof_s: ArrayLike,
    mu_km3_s2: float,
    prograde: bool = True,
    revolutions: int = 0,
    branch: str = "low",
) -> TransferGrid:
    """The grid from states already known: departure states (n, 3), arrival states (m, 3) and
    the (n, m) times of flight; Lambert over all cells with tof > 0 in one call."""
    r1 = np.asarray(r_dep_km, dtype=float)
    v1b = np.asarray(v_dep_km_s, dtype=float)
    r2 = np.asarray(r_arr_km, dtype=float)
    v2b = np.asarray(v_arr_km_s, dtype=float)
    tof = np.asarray(tof_s, dtype=float)
    n, m = r1.shape[0], r2.shape[0]
    if tof.shape != (n, m):
        raise InputError("tof_s", tof.shape, f"must have shape ({n}, {m})")
    valid = tof > 0.0
    ii, jj = np.nonzero(valid)
    shape = (n, m)
    dv1 = np.full(shape, np.nan)
    dv2 = np.full(shape, np.nan)
    ill = np.zeros(shape, dtype=bool)
    if ii.size:
        sol = solve_lambert(r1[ii], r2[jj], tof[ii, jj], mu_km3_s2, prograde, revolutions, branch)
        dv1[ii, jj] = np.linalg.norm(sol.v1_km_s - v1b[ii], axis=-1)
        dv2[ii, jj] = np.linalg.norm(v2b[jj] - sol.v2_km_s, axis=-1)
        ill[ii, jj] = sol.plane_ill_defined
        valid[ii, jj] = ~sol.infeasible
    return TransferGrid(
        departure=np.asarray(departure, dtype=float),
        arrival=np.asarray(arrival, dtype=float),
        tof_s=tof,
        dv_departure_km_s=dv1,
        dv_arrival_km_s=dv2,
        dv_total_km_s=dv1 + dv2,
        c3_km2_s2=dv1 * dv1,
        valid=valid,
        plane_ill_defined=ill,
        revolutions=int(revolutions),
        prograde=bool(prograde),
    )


def _axis(name: str, value: ArrayLike) -> np.ndarray:
    x = np.asarray(value, dtype=float)
    if x.ndim != 1 or x.size == 0 or not np.all(np.isfinite(x)):
        raise InputError(name, value, "must be a non-empty 1-d array of finite values")
    return x


def planetary_porkchop(
    departure_body: str,
    arrival_body: str,
    departure_jd_tdb: ArrayLike,
    arrival_jd_tdb: ArrayLike,
    prograde: bool = True,
    revolutions: int = 0,
    branch: str = "low",
) -> TransferGrid:
    """Heliocentric transfer grid between two planets over departure x arrival dates (JD TDB).

    Planet states from Standish's Table 1 (refused outside 1800-2050 AD); the Sun's mu
    (IAU 2009). ``c3_km2_s2`` is the launch energy; ``dv_arrival_km_s`` the arrival v_inf.
    """
    dep = _axis("departure_jd_tdb", departure_jd_tdb)
    arr = _axis("arrival_jd_tdb", arrival_jd_tdb)
    r1, v1 = planet_state(departure_body, dep)
    r2, v2 = planet_state(arrival_body, arr)
    tof = (arr[None, :] - dep[:, None]) * SECONDS_PER_DAY
    return transfer_grid(
        r1, v1, r2, v2, dep, arr, tof, SUN.mu_km3_s2, prograde, revolutions, branch
    )


def rendezvous_porkchop(
    r_chaser_km: ArrayLike,
    v_chaser_km_s: ArrayLike,
    r_target_km: ArrayLike,
    v_target_km_s: ArrayLike,
    departure_s: ArrayLike,
    arrival_s: ArrayLike,
    mu_km3_s2: float = EARTH.mu_km3_s2,
    prograde: bool = True,
    revolutions: int = 0,
    branch: str = "low",
) -> TransferGrid:
    """Two-impulse rendezvous grid in orbit: chaser and target states at t = 0, propagated
    two-body to the departure and arrival times (s after t = 0); delta-v of both burns."""
    dep = _axis("departure_s", departure_s)
    arr = _axis("arrival_s", arrival_s)
    r1, v1 = propagate_two_body(r_chaser_km, v_chaser_km_s, dep, mu_km3_s2=mu_km3_s2)
    r2, v2 = propagate_two_body(r_target_km, v_target_km_s, arr, mu_km3_s2=mu_km3_s2)
    tof = arr[None, :] - dep[:, None]
    return transfer_grid(
        np.reshape(r1, (-1, 3)),
        np.reshape(v1, (-1, 3)),
        np.reshape(r2, (-1, 3)),
        np.reshape(v2, (-1, 3)),
        dep,
        arr,
        tof,
        mu_km3_s2,
        prograde,
        revolutions,
        branch,
    )
