"""Lifetime kernel: the fast path against the former ODE path, side by side in one run.

Prints (min of interleaved repeats, ``_timing``): one circular ``lifetime_years`` (cache
cleared before each call, so every call integrates), the same for an eccentric orbit, and the
disposal perigee-lowering search, each beside the former path (scipy RK45 in time, kept in
``orbitledger.kernel.lifetime_ode``; bisection with one integration per trial), with the
ratios and the issue's absolute targets (circular <= 2 ms, disposal search <= 40 ms), and the
relative difference of the results. Then the circular lifetime with the NRLMSIS 2.1 table
(moderate ECSS level, built once and timed apart) beside the exponential model, with the
issue's target (NRLMSIS <= 2x the exponential model's time).

Run: ``.venv/bin/python benchmarks/bench_lifetime.py``
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel import EARTH, Elements  # noqa: E402
from orbitledger.kernel import lifetime as lifetime_module  # noqa: E402
from orbitledger.kernel.budget import disposal_perigee_lowering  # noqa: E402
from orbitledger.kernel.density import exponential_profile  # noqa: E402
from orbitledger.kernel.forces import ballistic_coefficient_kg_m2  # noqa: E402
from orbitledger.kernel.lifetime import _mean_radius_km, lifetime_years  # noqa: E402
from orbitledger.kernel.lifetime_ode import (  # noqa: E402
    disposal_bisection_ode,
    orbit_averaged_ode,
)

# The invented Kestrel-2 satellite: 540 km sun-synchronous, 48 kg, 0.12 m^2, Cd 2.2.
ALT_KM, INC_DEG, LIMIT_YEARS = 540.0, 97.5, 25.0
B = float(ballistic_coefficient_kg_m2(48.0, 0.12, 2.2))
I_RAD = math.radians(INC_DEG)
RADIUS = _mean_radius_km(I_RAD, EARTH)
PROFILE = exponential_profile("moderate")
CIRCULAR = Elements(EARTH.radius_km + ALT_KM, 0.0, INC_DEG, 0.0, 0.0, 0.0)
_RP, _RA = EARTH.radius_km + 480.0, EARTH.radius_km + 760.0
ECCENTRIC = Elements(0.5 * (_RP + _RA), (_RA - _RP) / (_RA + _RP), INC_DEG, 0.0, 0.0, 0.0)
DISPOSAL_START = Elements(EARTH.radius_km + 700.0, 0.0, INC_DEG, 0.0, 0.0, 0.0)


def _cold_lifetime(elements: Elements) -> float:
    lifetime_module._CACHE.clear()  # time the integration, not the cache
    return lifetime_years(elements, ballistic_coefficient_kg_m2=B).years


def _ode_lifetime(elements: Elements) -> float:
    return orbit_averaged_ode(
        float(elements.a_km), float(elements.e), I_RAD, B, PROFILE, RADIUS, 120.0, 200.0
    )[0]


def _cold_disposal() -> float:
    lifetime_module._CACHE.clear()
    return disposal_perigee_lowering(DISPOSAL_START, LIMIT_YEARS, B).perigee_altitude_km


def _ode_disposal() -> float:
    a = float(DISPOSAL_START.a_km)
    return disposal_bisection_ode(a, 0.0, I_RAD, B, PROFILE, RADIUS, 120.0, LIMIT_YEARS)[0] - RADIUS


def main() -> int:
    ok = True
    groups = [
        ("circular lifetime_years", lambda: _cold_lifetime(CIRCULAR),
         lambda: _ode_lifetime(CIRCULAR), 2e-3, 15),
        ("eccentric lifetime_years", lambda: _cold_lifetime(ECCENTRIC),
         lambda: _ode_lifetime(ECCENTRIC), None, 7),
        ("disposal search (700 km, 25 y)", _cold_disposal, _ode_disposal, 40e-3, 3),
    ]  # fmt: skip
    for name, fast, ode, target_s, repeats in groups:
        base = f"{name}, former ODE path"
        best = min_times_s({base: ode, f"{name}, fast kernel": fast}, repeats=repeats)
        report_ratios(best, base)
        f, o = fast(), ode()
        diff = (
            f"|diff| {abs(f - o):.3g} km"
            if "disposal" in name
            else f"rel diff {abs(f / o - 1):.2e}"
        )
        print(f"  fast {f:.6g}, ODE {o:.6g}: {diff}")
        if target_s is not None:
            met = best[f"{name}, fast kernel"] <= target_s
            ok &= met
            print(f"  target <= {target_s * 1e3:g} ms: {'met' if met else 'MISSED'}")
    ok &= _nrlmsis_beside_exponential()
    return 0 if ok else 1


def _nrlmsis_beside_exponential() -> bool:
    import time

    from orbitledger.kernel.flux import level_flux
    from orbitledger.kernel.nrlmsis import nrlmsis_profile

    start = time.perf_counter()
    msis = nrlmsis_profile(level_flux("moderate"), INC_DEG)
    print(
        f"NRLMSIS 2.1 table (moderate, once per process)  {(time.perf_counter() - start) * 1e3:9.2f} ms"
    )

    def cold(density):
        lifetime_module._CACHE.clear()
        return lifetime_years(CIRCULAR, ballistic_coefficient_kg_m2=B, density=density).years

    base = "circular lifetime_years, exponential"
    name = "circular lifetime_years, NRLMSIS table"
    best = min_times_s({base: lambda: cold(PROFILE), name: lambda: cold(msis)}, repeats=15)
    met = report_ratios(best, base, {name: 2.0})
    print(f"  NRLMSIS {cold(msis):.4g} y, exponential {cold(PROFILE):.4g} y (same case)")
    return met


if __name__ == "__main__":
    raise SystemExit(main())
