"""Side-by-side timing for the benchmark scripts: min of N interleaved repeats.

The machine is shared, so the candidate and its baseline are timed alternately in the same
loop (a burst of load hits both) and each keeps its fastest run, the usual estimate of the
cost without interference (the ``timeit`` documentation recommends the minimum).
"""

from __future__ import annotations

import time
from collections.abc import Callable, Mapping


def min_times_s(
    functions: Mapping[str, Callable[[], object]], repeats: int = 15, warmup: int = 1
) -> dict[str, float]:
    """Fastest wall time in seconds of each function over ``repeats`` interleaved rounds."""
    for _ in range(warmup):
        for fn in functions.values():
            fn()
    best = {name: float("inf") for name in functions}
    for _ in range(repeats):
        for name, fn in functions.items():
            start = time.perf_counter()
            fn()
            best[name] = min(best[name], time.perf_counter() - start)
    return best


def report_ratios(
    best_s: Mapping[str, float], baseline: str, targets: Mapping[str, float] | None = None
) -> bool:
    """Print each time and its ratio to ``baseline``; True when every target ratio is met."""
    ok = True
    base = best_s[baseline]
    for name, seconds in best_s.items():
        ratio = seconds / base
        line = f"{name:<44s} {seconds * 1e3:9.2f} ms  {ratio:6.2f} x {baseline}"
        if targets and name in targets:
            met = ratio <= targets[name]
            ok &= met
            line += f"  (target <= {targets[name]:g} x: {'met' if met else 'MISSED'})"
        print(line)
    return ok


def median_p90_s(samples: list[float]) -> tuple[float, float]:
    """Median and 90th percentile (nearest rank) of ``samples`` (seconds)."""
    ordered = sorted(samples)
    if not ordered:
        return float("nan"), float("nan")
    mid = len(ordered) // 2
    median = ordered[mid] if len(ordered) % 2 else 0.5 * (ordered[mid - 1] + ordered[mid])
    rank = max(0, min(len(ordered) - 1, -(-9 * len(ordered) // 10) - 1))
    return median, ordered[rank]
