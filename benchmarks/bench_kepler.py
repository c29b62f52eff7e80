"""solve_kepler on 1e6 random (M, e) pairs against numpy.sin on the same array.

Target (issue 2): at most 6 x the time of numpy.sin on the M array, and a maximum residual
|E - e sin E - M| of at most 1e-13 rad, for M uniform in [-pi, pi) and e uniform in
[0, 0.999). Also prints the hyperbolic case (no speed target) and its relative residual.

Run: python benchmarks/bench_kepler.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel import solve_kepler  # noqa: E402
from orbitledger.kernel.kepler_hyperbolic import hyperbolic_kepler_residual  # noqa: E402

N = 1_000_000


def main() -> int:
    rng = np.random.default_rng(2024)
    M = rng.uniform(-np.pi, np.pi, N)
    e = rng.uniform(0.0, 0.999, N)
    sin_out = np.empty(N)
    best = min_times_s(
        {
            "numpy.sin(M)": lambda: np.sin(M, out=sin_out),
            "solve_kepler(M, e), 0 <= e < 0.999": lambda: solve_kepler(M, e),
        }
    )
    print(f"elliptic, {N:.0e} random pairs")
    ok = report_ratios(best, "numpy.sin(M)", {"solve_kepler(M, e), 0 <= e < 0.999": 6.0})
    E = solve_kepler(M, e)
    residual = float(np.max(np.abs(E - e * np.sin(E) - M)))
    print(f"max |E - e sin E - M| = {residual:.2e} rad (target <= 1e-13)")
    ok &= residual <= 1e-13

    e_h = np.exp(rng.uniform(np.log(1.0 + 1e-9), np.log(100.0), N))
    M_h = rng.choice([-1.0, 1.0], N) * np.exp(rng.uniform(np.log(1e-6), np.log(1e3), N))
    best_h = min_times_s(
        {
            "numpy.sin(M)": lambda: np.sin(M_h, out=sin_out),
            "solve_kepler(M, e), 1 < e < 100": lambda: solve_kepler(M_h, e_h),
        },
        repeats=5,
    )
    print("hyperbolic (no speed target)")
    report_ratios(best_h, "numpy.sin(M)")
    H = solve_kepler(M_h, e_h)
    rel = float(np.max(np.abs(hyperbolic_kepler_residual(H, e_h, M_h)) / np.abs(M_h)))
    print(f"max |e sinh H - H - M| / |M| = {rel:.2e}")
    return 0 if ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
