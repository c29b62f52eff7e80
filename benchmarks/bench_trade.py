"""Trade studies: vectorised metrics over a million cases; per-case metrics on a Dask cluster.

1. Cheap metrics. Candidate: ``sweep`` of the Kestrel-2 case over 1000 altitudes x 1000
   inclinations (1e6 cases) with the ``orbit`` (two-body summary) and ``j2`` groups, the
   DataFrame included. Baseline: ``numpy.sin`` over an array of 1e6. Target: at most 30 x.
   Min of N interleaved repeats (benchmarks/_timing.py).
2. Per-case metrics. A sweep of ``--cases`` cases (default 2000) of passes (3 stations) and
   eclipses over a 3-day window, in-process and on a 2-worker LocalCluster (processes, one
   thread each, on loopback), run once each, side by side. Target: Dask at least 1.6 x faster
   on this 2-core machine. Also printed: the cases per second of each, the speed-up per
   worker (the scaling), and the scheduling overhead per task (the mean wall time of 400
   empty tasks through the same client).

Run: /work/venv/bin/python benchmarks/bench_trade.py [--cases N] [--skip-dask]
"""

from __future__ import annotations

import argparse
import logging
import os
import sys
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

from orbitledger.case import load_case  # noqa: E402
from orbitledger.trade import sweep  # noqa: E402

CASE = Path(__file__).resolve().parent.parent / "examples" / "candidate-a.case.json"


def _noop(task: object) -> int:
    return 0


class _Empty:
    def __len__(self) -> int:
        return 1


def cheap_metrics(base) -> bool:
    vary = {
        "orbit.altitude_km": np.linspace(400.0, 800.0, 1000),
        "orbit.i_deg": np.linspace(96.0, 99.0, 1000),
    }
    x = np.random.default_rng(1).random(1_000_000)
    best = min_times_s(
        {
            "numpy.sin, 1e6": lambda: np.sin(x),
            "sweep orbit+j2, 1e6 cases, DataFrame": lambda: sweep(
                base, vary, ["orbit", "j2"], progress=False
            ),
        },
        repeats=7,
    )
    print("1. vectorised metrics over 1e6 cases (min of 7 interleaved runs)")
    return report_ratios(best, "numpy.sin, 1e6", {"sweep orbit+j2, 1e6 cases, DataFrame": 30.0})


def per_case_metrics(base, cases: int) -> bool:
    from distributed import Client, LocalCluster

    from orbitledger.trade.evaluate import chunk_size_for
    from orbitledger.trade.execution import DaskRunner

    three_days = base.with_changes({"window.duration_s": 3 * 86400.0})
    altitudes = np.linspace(450.0, 650.0, max(cases // 20, 1))
    raans = np.linspace(0.0, 342.0, 20)[: max(cases // max(altitudes.size, 1), 1)]
    vary = {"orbit.altitude_km": altitudes, "orbit.raan_deg": raans}
    n = altitudes.size * raans.size
    metrics = ["eclipses", "contacts"]
    print(f"\n2. {n} cases of passes (3 stations) and eclipses over 3 days")
    print(f"load average before: {os.getloadavg()[0]:.2f} (2 cores, shared with other work)")
    start = time.perf_counter()
    local = sweep(three_days, vary, metrics, progress=False)
    local_s = time.perf_counter() - start
    with (
        LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            dashboard_address=None,
            silence_logs=logging.CRITICAL,
            host="127.0.0.1",
        ) as cluster,
        Client(cluster, set_as_default=False) as client,
    ):
        client.wait_for_workers(2)
        # Warm the workers (imports, first ERFA and SciPy calls) as a long-lived cluster is.
        sweep(three_days, {"orbit.altitude_km": [500.0, 510.0]}, metrics, scheduler=client,
              chunk_size=1, progress=False)  # fmt: skip
        start = time.perf_counter()
        remote = sweep(three_days, vary, metrics, scheduler=client, progress=False)
        dask_s = time.perf_counter() - start
        tasks = [_Empty() for _ in range(400)]
        runner = DaskRunner(client)
        start = time.perf_counter()
        for _ in runner.map(_noop, tasks, progress=False):
            pass
        overhead_s = (time.perf_counter() - start) / len(tasks)
    identical = local.equals(remote)
    chunks = -(-n // chunk_size_for(n, 2))
    speedup = local_s / dask_s
    print(f"in-process                 {local_s:9.1f} s  {n / local_s:7.2f} cases/s")
    print(f"Dask, 2 workers, {chunks:3d} tasks {dask_s:9.1f} s  {n / dask_s:7.2f} cases/s")
    met = speedup >= 1.6
    print(
        f"speed-up {speedup:.2f} x (target >= 1.6 x: {'met' if met else 'MISSED'}); "
        f"scaling {speedup / 2:.0%} of ideal per worker; identical tables: {identical}"
    )
    print(f"overhead per task (400 empty tasks): {overhead_s * 1e3:.2f} ms")
    print(f"load average after: {os.getloadavg()[0]:.2f}")
    return met and identical


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=2000, help="cases of part 2 (2000)")
    parser.add_argument("--skip-dask", action="store_true", help="part 1 only")
    args = parser.parse_args()
    warnings.simplefilter("ignore")
    base = load_case(CASE)
    ok = cheap_metrics(base)
    if not args.skip_dask:
        ok &= per_case_metrics(base, args.cases)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
