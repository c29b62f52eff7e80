"""Estimates before work against what the work holds: ratio of estimate to traced peak.

For the starter case at 1 s over a few hours (the window the per-epoch sizes of
``orbitledger.analysis.estimates`` were taken from, scaled down to run in seconds), each
window analysis is run under ``tracemalloc`` and its peak compared with the estimate made from
the inputs alone, side by side in one run. A ratio of 1 or more means the estimate bounds the
work from above (what a refusal needs); far above 2 would refuse too early.

    python benchmarks/bench_estimates.py [HOURS]
"""

from __future__ import annotations

import sys
import tracemalloc

from orbitledger.analysis.estimates import window_estimate
from orbitledger.case.model import case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli import environment_data as ed

RUNS = {
    "passes": ed.passes_data,
    "groundtrack": ed.groundtrack_data,
    "ephemeris": ed.ephemeris_data,
    "eclipses": ed.eclipses_data,
}


def main(hours: float = 6.0) -> None:
    data = dict(STARTER_DATA, window={"duration_s": hours * 3600.0, "step_s": 1.0})
    case = case_from_data(data)
    print(f"starter case, {hours:g} h at 1 s")
    print(f"{'analysis':<12} {'estimate MB':>12} {'traced MB':>10} {'ratio':>6}")
    for name, run in RUNS.items():
        estimate = window_estimate(case, name).bytes
        tracemalloc.start()
        run(case)
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        print(f"{name:<12} {estimate / 1e6:12.1f} {peak / 1e6:10.1f} {estimate / peak:6.2f}")


if __name__ == "__main__":
    main(float(sys.argv[1]) if len(sys.argv) > 1 else 6.0)
