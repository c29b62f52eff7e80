"""A 7-day coverage grid of 1 deg over a 30 x 30 deg region (``region_coverage``): target
<= 5 s here.

Candidate: ``region_coverage`` of 961 grid points (30..60 deg N, 10 deg W..20 deg E, edges
included) over 7 days, a 30 deg off-nadir sensor with the Sun at least 10 deg up, for a 540 km
sun-synchronous orbit propagated with J2 secular drift (the propagation, frames and Sun are
part of the timed call). Shown beside it, for scale, the baseline of the other benchmarks:
``numpy.sin`` on an array of the grid-by-samples size the search covers (961 x 40 600 values),
and ``target_access`` to the 961 points as targets, the same geometry with every edge refined.
The target is on the candidate's own time (min of interleaved repeats), printed with the ratio.

Run: .venv/bin/python benchmarks/bench_coverage.py
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel.constants import EARTH  # noqa: E402
from orbitledger.kernel.coverage import coverage_grid, region_coverage  # noqa: E402
from orbitledger.kernel.elements import Elements  # noqa: E402
from orbitledger.kernel.j2 import sun_synchronous_inclination_deg  # noqa: E402
from orbitledger.kernel.propagation import trajectory  # noqa: E402
from orbitledger.kernel.targets import Sensor, Target, target_access  # noqa: E402

TARGET_S = 5.0
A_KM = EARTH.radius_km + 540.0
ELEMENTS = Elements(A_KM, 0.001, sun_synchronous_inclination_deg(A_KM, 0.001), 157.5, 90.0, 0.0)
DAYS = 7.0
SENSOR = Sensor(off_nadir_max_deg=30.0, min_sun_elevation_deg=10.0)


def _coverage(lat: np.ndarray, lon: np.ndarray):
    traj = trajectory("j2-mean", ELEMENTS, "2027-03-21T10:30:00Z", duration_s=DAYS * 86_400.0)
    return region_coverage(traj, lat, lon, SENSOR, DAYS * 86_400.0, step_deg=1.0)


def _targets(lat: np.ndarray, lon: np.ndarray):
    traj = trajectory("j2-mean", ELEMENTS, "2027-03-21T10:30:00Z", duration_s=DAYS * 86_400.0)
    points = [Target(f"p{k}", a, b) for k, (a, b) in enumerate(zip(lat, lon, strict=True))]
    return target_access(traj, points, SENSOR, DAYS * 86_400.0)


def main() -> int:
    warnings.simplefilter("ignore")
    lat, lon = coverage_grid(30.0, 60.0, -10.0, 20.0, 1.0)
    x = np.linspace(0.0, 10.0, lat.size * 40_600)
    best = min_times_s(
        {
            f"numpy.sin, {x.size:,} values": lambda: np.sin(x),
            f"region_coverage, {lat.size} points, 7 d": lambda: _coverage(lat, lon),
            f"target_access, {lat.size} targets, 7 d": lambda: _targets(lat, lon),
        },
        repeats=3,
    )
    report_ratios(best, f"numpy.sin, {x.size:,} values")
    seconds = best[f"region_coverage, {lat.size} points, 7 d"]
    met = seconds <= TARGET_S
    print(f"7-day 1 deg coverage of a 30 x 30 deg region: {seconds:.3f} s (target <= "
          f"{TARGET_S:g} s: {'met' if met else 'MISSED'})")  # fmt: skip
    return 0 if met else 1


if __name__ == "__main__":
    sys.exit(main())
