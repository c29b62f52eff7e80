"""The reference ODE path of the orbit-averaged lifetime, kept to check the fast kernel.

Until orbitledger 0.x the orbit-averaged lifetime integrated the averaged Gauss equations for
(a, e) in time with scipy's RK45 (rtol 1e-7; 0.1 m in a, 1e-8 in e), one right-hand side per
call with the 128-node trapezoidal mean over the eccentric anomaly, and the disposal search
bisected the perigee height to 0.1 km with one such integration per trial, each run to
max(10 x limit, 50) years. ``orbitledger.kernel.decay`` now does the same physics with a as the
variable, in batches; the tests compare the two to 1e-4 relative and the benchmark
(``benchmarks/bench_lifetime.py``) times them side by side. The equations and sources are in
``orbitledger.kernel.decay``'s docstring (King-Hele, *Satellite Orbits in an Atmosphere*, 1987).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from scipy.integrate import solve_ivp

from .constants import EARTH, SECONDS_PER_DAY, TROPICAL_YEAR_DAYS, Body
from .density import DensityProfile

__all__ = ["disposal_bisection_ode", "orbit_averaged_ode"]

_YEAR_S = TROPICAL_YEAR_DAYS * SECONDS_PER_DAY
_COS_E = np.cos(np.linspace(0.0, 2.0 * math.pi, 128, endpoint=False))


def _averaged_rates(
    b_kg_m2: float, cos_i: float, radius_km: float, profile: DensityProfile, body: Body
) -> Callable[[float, np.ndarray], np.ndarray]:
    mu, w = body.mu_km3_s2, body.rotation_rate_rad_s

    def rates(t: float, y: np.ndarray) -> np.ndarray:
        a, e = max(y[0], radius_km), min(max(y[1], 0.0), 0.999)
        one_minus = 1.0 - e * _COS_E
        r = a * one_minus
        v = np.sqrt(mu / a * (1.0 + e * _COS_E) / one_minus)
        rho = profile.density_kg_m3(r - radius_km, t / _YEAR_S)
        v_p = math.sqrt(mu / a * (1.0 + e) / (1.0 - e))
        rotation = (1.0 - a * (1.0 - e) * w * cos_i / v_p) ** 2
        k = 1e3 * rotation / b_kg_m2
        da = -k * a * a / mu * np.mean(rho * v**3 * one_minus)
        de = -k * (1.0 - e * e) * np.mean(rho * v * _COS_E) if e > 0.0 else 0.0
        return np.array([da, de])

    return rates


def orbit_averaged_ode(
    a_km: float,
    e: float,
    i_rad: float,
    b_kg_m2: float,
    profile: DensityProfile,
    radius_km: float,
    reentry_altitude_km: float,
    max_years: float,
    body: Body = EARTH,
) -> tuple[float, bool, int]:
    """(years, reentered, nfev) of the reference integration in time (module docstring)."""

    def perigee_down(_t: float, y: np.ndarray) -> float:
        return y[0] * (1.0 - max(y[1], 0.0)) - radius_km - reentry_altitude_km

    perigee_down.terminal = True  # type: ignore[attr-defined]
    perigee_down.direction = -1.0  # type: ignore[attr-defined]
    sol = solve_ivp(
        _averaged_rates(b_kg_m2, math.cos(i_rad), radius_km, profile, body),
        (0.0, max_years * _YEAR_S),
        [a_km, e],
        method="RK45",
        rtol=1e-7,
        atol=[1e-4, 1e-8],
        events=perigee_down,
    )
    reentered = bool(sol.status == 1)
    t_end = float(sol.t_events[0][0]) if reentered else float(sol.t[-1])
    return t_end / _YEAR_S, reentered, int(sol.nfev)


def disposal_bisection_ode(
    a_km: float,
    e: float,
    i_rad: float,
    b_kg_m2: float,
    profile: DensityProfile,
    radius_km: float,
    reentry_altitude_km: float,
    limit_years: float,
    body: Body = EARTH,
) -> tuple[float, float]:
    """(new perigee radius km, its lifetime years) by the reference bisection to 0.1 km."""
    r_a, r_p = a_km * (1.0 + e), a_km * (1.0 - e)

    def life(rp: float) -> float:
        years, reentered, _ = orbit_averaged_ode(
            0.5 * (r_a + rp), (r_a - rp) / (r_a + rp), i_rad, b_kg_m2, profile, radius_km,
            reentry_altitude_km, max(10.0 * limit_years, 50.0), body,
        )  # fmt: skip
        return years if reentered else math.inf

    lo, hi = radius_km + reentry_altitude_km + 1.0, r_p
    while hi - lo > 0.1:
        mid = 0.5 * (lo + hi)
        if life(mid) > limit_years:
            hi = mid
        else:
            lo = mid
    return lo, life(lo)
