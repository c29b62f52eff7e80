"""Numerical propagation: one day with J2 and drag at default tolerances, against a tight run.

Prints, measured side by side in one run (min of interleaved repeats, ``_timing``): the time
of one day of Cowell propagation with J2 and drag at the default tolerances (rtol 1e-10,
atol 1 mm / 1 um/s) and at rtol 1e-13, the same with the Sun and Moon added, and one
orbit-averaged lifetime, each as a ratio to the default run; the right-hand-side evaluations;
and the largest position difference between the default and the tight run over the day (the
default run's error; the issue asks < 1 m).

Run: ``/work/venv/bin/python benchmarks/bench_cowell.py``
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.kernel import EARTH, Elements  # noqa: E402
from orbitledger.kernel.cowell import propagate_cowell  # noqa: E402
from orbitledger.kernel.forces import ForceModel, ballistic_coefficient_kg_m2  # noqa: E402
from orbitledger.kernel.lifetime import lifetime_years  # noqa: E402

# The invented Kestrel-2 satellite: 540 km sun-synchronous, 48 kg, 0.12 m^2, Cd 2.2.
ALT_KM, INC_DEG = 540.0, 97.5
B_KG_M2 = float(ballistic_coefficient_kg_m2(48.0, 0.12, 2.2))
EPOCH_JD_TT = (2461486.0, 0.0)  # 2027-03-21, TT
BASELINE = "J2 + drag, default tolerances (rtol 1e-10)"


def _initial_state():
    r = EARTH.radius_km + ALT_KM
    v = math.sqrt(EARTH.mu_km3_s2 / r)
    c, s = math.cos(math.radians(INC_DEG)), math.sin(math.radians(INC_DEG))
    return np.array([r, 0.0, 0.0]), np.array([0.0, v * c, v * s])


def main() -> None:
    r0, v0 = _initial_state()
    t = np.linspace(0.0, 86_400.0, 1441)  # every minute
    model = ForceModel(zonal_degree=2, ballistic_coefficient_kg_m2=B_KG_M2)
    luni_solar = ForceModel(
        zonal_degree=2, ballistic_coefficient_kg_m2=B_KG_M2, third_bodies=("sun", "moon")
    )
    elements = Elements(EARTH.radius_km + ALT_KM, 0.001, INC_DEG, 0.0, 0.0, 0.0)

    def default_run():
        return propagate_cowell(r0, v0, t, force_model=model)

    def tight_run():
        return propagate_cowell(
            r0, v0, t, force_model=model, rtol=1e-13, atol_km=1e-9, atol_km_s=1e-12
        )

    def luni_solar_run():
        return propagate_cowell(r0, v0, t, force_model=luni_solar, epoch_jd_tt=EPOCH_JD_TT)

    def lifetime_run():
        return lifetime_years(elements, ballistic_coefficient_kg_m2=B_KG_M2)

    base, tight, life = default_run(), tight_run(), lifetime_run()
    err_m = float(np.max(np.linalg.norm(base.r_km - tight.r_km, axis=1))) * 1e3

    print(
        f"Cowell, 1 day, Kestrel-2 (540 km SSO, B = {B_KG_M2:.1f} kg/m^2), states every minute; "
        "min of 3 interleaved runs"
    )
    best = min_times_s(
        {
            BASELINE: default_run,
            "J2 + drag, tight tolerances (rtol 1e-13)": tight_run,
            "J2 + drag + Sun + Moon, default tolerances": luni_solar_run,
            "orbit-averaged lifetime, same satellite": lifetime_run,
        },
        repeats=3,
        warmup=0,
    )
    report_ratios(best, BASELINE)
    print(
        f"evaluations: default {base.nfev}, tight {tight.nfev}; "
        f"{best[BASELINE] / base.nfev * 1e6:.1f} us per evaluation (default)"
    )
    print(f"max position error of the default run: {err_m:.4f} m over the day (target < 1 m)")
    print(f"orbit-averaged lifetime: {life.years:.2f} years ({life.nfev} rate evaluations)")


if __name__ == "__main__":
    main()
