"""Station passes over 30 days on the J2 mean-element model vs the propagation they need.

Baseline: propagating the same satellite (J2 mean elements, ``propagate_j2_mean``) to the same
30 days at 10 s steps (259 200 epochs). Candidate: ``station_passes`` for 10 stations over the
same 30 days (search step P / 60, every AOS, LOS and maximum refined to 0.01 s), including its
own propagation, GCRF-to-ITRF rotation, elevations and root finding. Target: at most 20 x.
Also shown: ``find_eclipses`` over the same 30 days, for scale.

Run: /work/venv/bin/python benchmarks/bench_passes.py
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel.constants import EARTH  # noqa: E402
from orbitledger.kernel.eclipses import find_eclipses  # noqa: E402
from orbitledger.kernel.elements import Elements  # noqa: E402
from orbitledger.kernel.j2 import propagate_j2_mean, sun_synchronous_inclination_deg  # noqa: E402
from orbitledger.kernel.passes import Station, station_passes  # noqa: E402
from orbitledger.kernel.propagation import trajectory  # noqa: E402

DAYS = 30.0
A_KM = EARTH.radius_km + 540.0
ELEMENTS = Elements(A_KM, 0.001, sun_synchronous_inclination_deg(A_KM, 0.001), 157.5, 90.0, 0.0)
# Ten invented ground stations of the Fenwick Orbital Lab network and its partners.
STATIONS = [
    Station("Harrow Fell", 60.2, -1.3, 0.08, 5.0),
    Station("Saltmarsh Point", 52.95, 0.85, 0.01, 10.0),
    Station("Kuru Ridge", -23.7, 133.9, 0.6, 5.0),
    Station("Brannock Sound", 64.8, -147.7, 0.2, 5.0),
    Station("Iselmere", 78.2, 15.4, 0.5, 5.0),
    Station("Cape Wendle", -33.9, 18.5, 0.1, 7.0),
    Station("Tallis Plain", 35.0, -106.6, 1.6, 5.0),
    Station("Orrin Bay", -45.9, 170.5, 0.05, 5.0),
    Station("Mirefield", 13.0, 77.6, 0.9, 10.0),
    Station("Sedge Hollow", -12.0, -77.0, 0.1, 5.0),
]


def main() -> int:
    warnings.simplefilter("ignore")
    duration = DAYS * 86400.0
    traj = trajectory("j2-mean", ELEMENTS, "2027-03-21T10:30:00Z", duration_s=duration)
    t10 = np.arange(0.0, duration + 1.0, 10.0)
    result = station_passes(traj, STATIONS, duration)
    best = min_times_s(
        {
            "propagate_j2_mean, 30 d at 10 s": lambda: propagate_j2_mean(ELEMENTS, t10),
            "station_passes, 10 stations, 30 d": lambda: station_passes(traj, STATIONS, duration),
            "find_eclipses, 30 d (conical)": lambda: find_eclipses(traj, duration),
        },
        repeats=5,
    )
    print(
        f"{len(result.passes)} passes found, search step {result.search_step_s:.1f} s, "
        f"{result.short_passes_found} found by the peak check"
    )
    ok = report_ratios(
        best, "propagate_j2_mean, 30 d at 10 s", {"station_passes, 10 stations, 30 d": 20.0}
    )
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
