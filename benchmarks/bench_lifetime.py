"""Lifetime kernel: the fast path against the former ODE path, side by side in one run.

Prints (min of interleaved repeats, ``_timing``): one circular ``lifetime_years`` (cache
cleared before each call, so every call integrates), the same for an eccentric orbit, and the
disposal perigee-lowering search, each beside the former path (scipy RK45 in time, kept in
``orbitledger.kernel.lifetime_ode``; bisection with one integration per trial), with the
ratios and the issue's absolute targets (circular <= 2 ms, disposal search <= 40 ms), and the
relative difference of the results. Then the disposal search of the starter case from
``orbitledger new`` (its burn plan, budget and disposal: NRLMSIS 2.1 at the case's flux,
5-year limit) beside the former ODE bisection, with the 40 ms target. Then the circular
lifetime with the NRLMSIS 2.1 table (moderate ECSS level, built once and timed apart) beside
the exponential model, with the issue's target (NRLMSIS <= 2x the exponential model's time).

``--before REV`` also times the kernel of git revision REV (``orbitledger/kernel`` extracted
from the repository into a temporary package) in the same interleaved loops, for a
before/after comparison in one run.

Run: ``.venv/bin/python benchmarks/bench_lifetime.py [--before REV]``
"""

from __future__ import annotations

import argparse
import importlib
import math
import subprocess
import sys
import tarfile
import tempfile
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


def _kernel_at(rev: str, into: Path):
    """The package ``orbitledger/kernel`` as it was at git revision ``rev``, imported as the
    top-level package ``kernel_before`` (the kernel imports only itself and libraries)."""
    repo = Path(__file__).resolve().parents[1]
    archive = into / "kernel.tar"
    with archive.open("wb") as out:
        subprocess.run(["git", "-C", str(repo), "archive", rev, "orbitledger/kernel"],
                       stdout=out, check=True)  # fmt: skip
    with tarfile.open(archive) as tar:
        tar.extractall(into, filter="data")
    (into / "orbitledger" / "kernel").rename(into / "kernel_before")
    sys.path.insert(0, str(into))
    return importlib.import_module("kernel_before")


def _sub(package, name: str):
    return importlib.import_module(f"{package.__name__}.{name}")


def _timed_group(name: str, functions: dict, base: str, repeats: int) -> dict[str, float]:
    best = min_times_s(functions, repeats=repeats)
    report_ratios(best, base)
    return best


def _starter_disposal(before) -> bool:
    from bench_editor_cases import _starter_disposal_call

    args, kw = _starter_disposal_call()
    elements, limit, b = args
    i_rad = math.radians(float(elements.i_deg))
    radius = _mean_radius_km(i_rad, kw["body"])

    def cold(module):
        def run() -> float:
            _sub(module, "lifetime")._CACHE.clear()
            return _sub(module, "budget").disposal_perigee_lowering(*args, **kw).perigee_altitude_km

        return run

    def ode() -> float:
        rp, _ = disposal_bisection_ode(float(elements.a_km), float(elements.e), i_rad, b,
                                       kw["density"], radius, 120.0, limit)  # fmt: skip
        return rp - radius

    import orbitledger.kernel as now

    name = "disposal search, starter case"
    base = f"{name}, former ODE path"
    functions = {base: ode}
    if before is not None:
        functions[f"{name}, kernel before"] = cold(before)
    functions[f"{name}, fast kernel"] = cold(now)
    best = _timed_group(name, functions, base, 7)
    f, o = cold(now)(), ode()
    line = f"  fast {f:.6g} km, ODE {o:.6g} km: |diff| {abs(f - o):.3g} km"
    if before is not None:
        line += f"; before {cold(before)():.6g} km"
    print(line)
    met = best[f"{name}, fast kernel"] <= 40e-3
    print(f"  target <= 40 ms: {'met' if met else 'MISSED'}")
    return met


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--before", metavar="REV", help="also time the kernel of git REV")
    options = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        before = _kernel_at(options.before, Path(tmp)) if options.before else None
        return _run(before)


def _run(before) -> int:
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
        functions = {base: ode}
        if before is not None:
            functions[f"{name}, kernel before"] = _before_call(before, name)
        functions[f"{name}, fast kernel"] = fast
        best = _timed_group(name, functions, base, repeats)
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
    ok &= _starter_disposal(before)
    ok &= _nrlmsis_beside_exponential()
    return 0 if ok else 1


def _before_call(before, name: str):
    """The group's call with the kernel ``before`` (the same case, cache cleared)."""

    def run() -> float:
        _sub(before, "lifetime")._CACHE.clear()
        if "disposal" in name:
            return (
                _sub(before, "budget")
                .disposal_perigee_lowering(DISPOSAL_START, LIMIT_YEARS, B)
                .perigee_altitude_km
            )
        elements = CIRCULAR if name.startswith("circular") else ECCENTRIC
        return (
            _sub(before, "lifetime").lifetime_years(elements, ballistic_coefficient_kg_m2=B).years
        )

    return run


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
