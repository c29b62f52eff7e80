"""Lambert solver and porkchop grid cost, measured side by side.

Targets (issue 6): a batch of 1e5 zero-revolution problems solved vectorised costs at most
100 x numpy.sin over an array of 1e5; a 200 x 200 porkchop grid (Earth to Mars) costs at most
2 x the Lambert solves it contains (ephemeris and bookkeeping add little).

Run: /work/venv/bin/python benchmarks/bench_lambert.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel import EARTH, SUN  # noqa: E402
from orbitledger.kernel.lambert import solve_lambert  # noqa: E402
from orbitledger.kernel.planets import planet_state  # noqa: E402
from orbitledger.kernel.porkchop import planetary_porkchop  # noqa: E402

N = 100_000


def main() -> int:
    rng = np.random.default_rng(2027)
    # Random geometries about the Earth: radii 6700-42000 km, any direction, 0.1-12 h.
    r1 = rng.normal(size=(N, 3))
    r1 *= (rng.uniform(6700.0, 42000.0, N) / np.linalg.norm(r1, axis=1))[:, None]
    r2 = rng.normal(size=(N, 3))
    r2 *= (rng.uniform(6700.0, 42000.0, N) / np.linalg.norm(r2, axis=1))[:, None]
    tof = rng.uniform(360.0, 43200.0, N)
    x = rng.uniform(-np.pi, np.pi, N)
    mu = EARTH.mu_km3_s2

    print(f"Lambert, {N} zero-revolution problems in one call vs numpy.sin on {N} values")
    best = min_times_s(
        {
            "numpy.sin (1e5)": lambda: np.sin(x),
            "solve_lambert (1e5, zero-rev)": lambda: solve_lambert(r1, r2, tof, mu),
        },
        repeats=7,
    )
    ok = report_ratios(best, "numpy.sin (1e5)", {"solve_lambert (1e5, zero-rev)": 100.0})

    jd0 = 2461284.5  # 2026-09-01 TDB
    dep = jd0 + np.linspace(0.0, 120.0, 200)
    arr = jd0 + np.linspace(150.0, 450.0, 200)
    # The same 40 000 Lambert problems, states computed once outside the timing.
    re, _ = planet_state("earth", dep)
    rm, _ = planet_state("mars", arr)
    tof_grid = ((arr[None, :] - dep[:, None]) * 86400.0).ravel()
    r1g = np.repeat(re, 200, axis=0)
    r2g = np.tile(rm, (200, 1))

    print("\nPorkchop, 200 x 200 Earth-Mars grid vs its 40 000 Lambert solves alone")
    best = min_times_s(
        {
            "Lambert solves of the grid (40 000)": lambda: solve_lambert(
                r1g, r2g, tof_grid, SUN.mu_km3_s2
            ),
            "planetary_porkchop 200 x 200": lambda: planetary_porkchop("earth", "mars", dep, arr),
        },
        repeats=7,
    )
    ok &= report_ratios(
        best, "Lambert solves of the grid (40 000)", {"planetary_porkchop 200 x 200": 2.0}
    )
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
