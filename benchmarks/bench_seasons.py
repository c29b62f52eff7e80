"""A year of beta angle and eclipse statistics (``mission_seasons``): target <= 1 s here.

Candidate: ``mission_seasons`` over 365 days, one orbit a day sampled at 720 points (262 800
positions, the conical shadow, the Sun from ERFA, the node's local time), for a 540 km
sun-synchronous orbit. Shown beside it, for scale, the baseline of the other benchmarks:
``numpy.sin`` on an array of the same size (262 800). The target is on the candidate's own
time (min of interleaved repeats), printed with the ratio.

Run: .venv/bin/python benchmarks/bench_seasons.py
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel.constants import EARTH  # noqa: E402
from orbitledger.kernel.elements import Elements  # noqa: E402
from orbitledger.kernel.j2 import sun_synchronous_inclination_deg  # noqa: E402
from orbitledger.kernel.seasons import mission_seasons  # noqa: E402

TARGET_S = 1.0
A_KM = EARTH.radius_km + 540.0
ELEMENTS = Elements(A_KM, 0.001, sun_synchronous_inclination_deg(A_KM, 0.001), 157.5, 90.0, 0.0)


def main() -> int:
    warnings.simplefilter("ignore")
    x = np.linspace(0.0, 10.0, 365 * 720)
    best = min_times_s(
        {
            "numpy.sin, 262 800 values": lambda: np.sin(x),
            "mission_seasons, 365 d (conical)": lambda: mission_seasons(
                ELEMENTS, "2027-03-21T10:30:00Z", 365.0
            ),
        },
        repeats=5,
    )
    report_ratios(best, "numpy.sin, 262 800 values")
    seconds = best["mission_seasons, 365 d (conical)"]
    met = seconds <= TARGET_S
    print(f"a year of beta/eclipse statistics: {seconds:.3f} s (target <= {TARGET_S:g} s: "
          f"{'met' if met else 'MISSED'})")  # fmt: skip
    return 0 if met else 1


if __name__ == "__main__":
    sys.exit(main())
