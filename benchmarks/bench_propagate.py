"""propagate_two_body of one state to 1e6 epochs against numpy.sin over the same 1e6 epochs.

Target (issue 2): at most 15 x numpy.sin on the dt array. The state is the invented Kestrel-2
low-Earth orbit (a = 7000 km, e = 0.001, i = 97.8 deg), epochs spread over three days.
Also shows a hyperbolic state (universal variables; no speed target).

Run: python benchmarks/bench_propagate.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel import Elements, elements_to_state, propagate_two_body  # noqa: E402

N = 1_000_000


def main() -> int:
    r0, v0 = elements_to_state(Elements(7000.0, 0.001, 97.8, 40.0, 50.0, 20.0))
    dt = np.linspace(0.0, 3 * 86400.0, N)
    sin_out = np.empty(N)
    label = "propagate_two_body, LEO, 1e6 epochs"
    best = min_times_s(
        {
            "numpy.sin(dt)": lambda: np.sin(dt, out=sin_out),
            label: lambda: propagate_two_body(r0, v0, dt),
        },
        repeats=10,
    )
    ok = report_ratios(best, "numpy.sin(dt)", {label: 15.0})
    r_h, v_h = elements_to_state(Elements(-20000.0, 1.5, 30.0, 10.0, 20.0, 0.0))
    dt_h = np.linspace(-86400.0, 86400.0, N)
    best_h = min_times_s(
        {
            "numpy.sin(dt)": lambda: np.sin(dt_h, out=sin_out),
            "propagate_two_body, hyperbolic, 1e6 epochs": lambda: propagate_two_body(
                r_h, v_h, dt_h
            ),
        },
        repeats=3,
    )
    print("hyperbolic (universal variables, no speed target)")
    report_ratios(best_h, "numpy.sin(dt)")
    return 0 if ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
