"""Numerical propagation: one day with J2 and drag at default tolerances, against a tight run.

Prints, measured side by side in one run: time (min of N repeats) and right-hand-side
evaluations at the default tolerances (rtol 1e-10, atol 1 mm / 1 um/s) and at rtol 1e-13; the
largest position difference between the two over the day (the default run's error, the issue
asks < 1 m); the time ratio; and the cost of one orbit-averaged lifetime.

Run: ``/work/venv/bin/python benchmarks/bench_cowell.py``
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
try:  # the shared timing helper, where it exists
    from _timing import min_time_s  # type: ignore[import-not-found]
except ImportError:  # pragma: no cover - fallback with the same meaning

    def min_time_s(fn, repeats=5):
        best = math.inf
        for _ in range(repeats):
            start = time.perf_counter()
            fn()
            best = min(best, time.perf_counter() - start)
        return best


from orbitledger.kernel import EARTH, Elements  # noqa: E402
from orbitledger.kernel.cowell import propagate_cowell  # noqa: E402
from orbitledger.kernel.forces import ForceModel, ballistic_coefficient_kg_m2  # noqa: E402
from orbitledger.kernel.lifetime import lifetime_years  # noqa: E402

# The invented Kestrel-2 satellite: 540 km sun-synchronous, 48 kg, 0.12 m^2, Cd 2.2.
ALT_KM, INC_DEG = 540.0, 97.5
B_KG_M2 = float(ballistic_coefficient_kg_m2(48.0, 0.12, 2.2))


def _initial_state():
    r = EARTH.radius_km + ALT_KM
    v = math.sqrt(EARTH.mu_km3_s2 / r)
    c, s = math.cos(math.radians(INC_DEG)), math.sin(math.radians(INC_DEG))
    return np.array([r, 0.0, 0.0]), np.array([0.0, v * c, v * s])


def main() -> None:
    r0, v0 = _initial_state()
    model = ForceModel(zonal_degree=2, ballistic_coefficient_kg_m2=B_KG_M2)
    t = np.linspace(0.0, 86_400.0, 1441)  # every minute

    def default_run():
        return propagate_cowell(r0, v0, t, force_model=model)

    def tight_run():
        return propagate_cowell(
            r0, v0, t, force_model=model, rtol=1e-13, atol_km=1e-9, atol_km_s=1e-12
        )

    base, tight = default_run(), tight_run()
    t_base = min_time_s(default_run, repeats=3)
    t_tight = min_time_s(tight_run, repeats=2)
    err_m = float(np.max(np.linalg.norm(base.r_km - tight.r_km, axis=1))) * 1e3

    elements = Elements(EARTH.radius_km + ALT_KM, 0.001, INC_DEG, 0.0, 0.0, 0.0)
    t_life = min_time_s(
        lambda: lifetime_years(elements, ballistic_coefficient_kg_m2=B_KG_M2), repeats=5
    )
    life = lifetime_years(elements, ballistic_coefficient_kg_m2=B_KG_M2)

    print(f"Cowell, 1 day, J2 + drag (Kestrel-2, 540 km SSO, B = {B_KG_M2:.1f} kg/m^2)")
    print(f"  default tolerances (rtol 1e-10):  {t_base:7.3f} s  {base.nfev:6d} evaluations")
    print(f"  tight tolerances   (rtol 1e-13):  {t_tight:7.3f} s  {tight.nfev:6d} evaluations")
    print(f"  time ratio tight / default:        {t_tight / t_base:7.2f}")
    print(f"  max position error of default run: {err_m:9.4f} m over the day (target < 1 m)")
    print(f"  time per evaluation (default):     {t_base / base.nfev * 1e6:7.1f} us")
    print(
        f"Orbit-averaged lifetime, same satellite: {life.years:.2f} years "
        f"in {t_life * 1e3:.1f} ms ({life.nfev} rate evaluations)"
    )


if __name__ == "__main__":
    main()
