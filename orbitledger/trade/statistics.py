"""What a study's table says at a glance: the spread of each metric, and how close to the
criteria the best case came.

``metric_statistics(frame, criteria)``: per metric column, over the runs where it was computed
(finite values): count, mean, sample standard deviation (ddof = 1), min, the 5th, 50th and
95th percentiles, max, and per criterion on that metric the number of runs failing it (a run
where the metric is missing, or a refused case, fails). Percentiles by linear interpolation
between order statistics, the "type 7" definition of Hyndman & Fan (1996, The American
Statistician 50, 361-365), which is numpy's default ``method="linear"``.

``criteria_margins(frame, criteria)``: the best case of a study (the fewest criteria failed,
then the smallest sum of shortfalls relative to each threshold) and, for each criterion, its
value, the threshold and the margin in the metric's unit: positive when it holds by that much,
negative when it falls short by that much.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from .criteria import Criterion, apply_criteria, parse_criterion

__all__ = [
    "PERCENTILES",
    "criteria_margins",
    "margin_lines",
    "metric_statistics",
    "percentile",
    "statistics_table",
]

PERCENTILES = (5.0, 50.0, 95.0)


def percentile(values: Any, q: float) -> float:
    """The q-th percentile (0 <= q <= 100) of the finite ``values``, linear interpolation
    between order statistics (Hyndman & Fan type 7): x[h] with h = (n - 1) q / 100. NaN when
    there is no finite value."""
    x = np.sort(np.asarray(values, dtype=float)[np.isfinite(values)])
    if x.size == 0:
        return math.nan
    h = (x.size - 1) * float(q) / 100.0
    lo = math.floor(h)
    hi = min(lo + 1, x.size - 1)
    return float(x[lo] + (h - lo) * (x[hi] - x[lo]))


def _failing(frame: Any, criterion: Criterion) -> np.ndarray:
    values = frame[criterion.metric].to_numpy(dtype=float)
    fails = ~criterion.holds(values)
    if "error" in frame.columns:
        fails |= frame["error"].astype(str).to_numpy() != ""
    return fails


def metric_statistics(frame: Any, criteria: Sequence[str | Criterion] = ()) -> list[dict[str, Any]]:
    """One dict per metric of ``frame.attrs["metrics"]``: metric, unit, runs, computed, mean,
    std, min, p5, p50, p95, max, and ``failing``: {criterion text: runs failing it}."""
    parsed = [parse_criterion(c) for c in criteria]
    units = frame.attrs.get("units", {})
    rows = []
    for metric in frame.attrs.get("metrics", []):
        values = frame[metric].to_numpy(dtype=float)
        ok = values[np.isfinite(values)]
        row: dict[str, Any] = {"metric": metric, "unit": units.get(metric, ""),
                               "runs": int(values.size), "computed": int(ok.size)}  # fmt: skip
        row["mean"] = float(ok.mean()) if ok.size else math.nan
        row["std"] = float(ok.std(ddof=1)) if ok.size > 1 else math.nan
        row["min"] = float(ok.min()) if ok.size else math.nan
        for q in PERCENTILES:
            row[f"p{q:g}"] = percentile(ok, q)
        row["max"] = float(ok.max()) if ok.size else math.nan
        row["failing"] = {c.text: int(_failing(frame, c).sum()) for c in parsed
                          if c.metric == metric}  # fmt: skip
        rows.append(row)
    return rows


def _cell(value: float) -> str:
    return "-" if not math.isfinite(value) else f"{value:.6g}"


def statistics_table(rows: Sequence[dict[str, Any]]) -> str:
    """The statistics as a plain-text table, then one line per criterion with its failures."""
    head = ["metric", "unit", "n", "mean", "std", "min", "p5", "p50", "p95", "max"]
    body = [
        [r["metric"], r["unit"] or "-", str(r["computed"]),
         *(_cell(r[k]) for k in ("mean", "std", "min", "p5", "p50", "p95", "max"))]
        for r in rows
    ]  # fmt: skip
    widths = [max(len(x) for x in col) for col in zip(head, *body, strict=True)]
    lines = ["  ".join(f"{x:<{w}}" if k < 2 else f"{x:>{w}}"
                       for k, (x, w) in enumerate(zip(line, widths, strict=True))).rstrip()
             for line in (head, *body)]  # fmt: skip
    for r in rows:
        for text, count in r["failing"].items():
            lines.append(f"criterion {text}: {count} of {r['runs']} runs fail")
        if r["computed"] < r["runs"]:
            lines.append(f"{r['metric']}: not computed in {r['runs'] - r['computed']} runs")
    return "\n".join(lines)


def _margin(criterion: Criterion, value: float) -> float:
    """Positive: holds by that much; negative: short by that much (the metric's unit)."""
    if criterion.better == "max":
        return value - float(criterion.threshold)
    return float(criterion.threshold) - value


def criteria_margins(frame: Any, criteria: Sequence[str | Criterion]) -> dict[str, Any]:
    """The best case and its margin to each criterion.

    Returns {"case": row index, "inputs": {path: value}, "passes": bool, "margins": [{criterion,
    metric, value, threshold, margin, unit, holds}]}. The best case fails the fewest criteria;
    among those, the smallest sum of shortfalls each divided by max(|threshold|, 1e-12);
    ties keep the study's row order. A metric not computed has a NaN margin.
    """
    parsed = [parse_criterion(c) for c in criteria]
    judged = apply_criteria(frame, parsed)
    units = frame.attrs.get("units", {})
    fails = np.zeros(len(frame))
    short = np.zeros(len(frame))
    for c in parsed:
        values = frame[c.metric].to_numpy(dtype=float)
        margin = _margin(c, values)
        fails += _failing(frame, c)
        scale = max(abs(float(c.threshold)), 1e-12)
        short += np.where(np.isfinite(margin), np.clip(-margin, 0.0, None) / scale, np.inf)
    order = np.lexsort((np.arange(len(frame)), short, fails))
    best = int(order[0])
    margins = []
    for c in parsed:
        value = float(frame[c.metric].iloc[best])
        margin = _margin(c, value)
        margins.append({"criterion": c.text, "metric": c.metric, "value": value,
                        "threshold": float(c.threshold), "margin": margin,
                        "unit": units.get(c.metric, ""),
                        "holds": bool(c.holds(np.array([value]))[0])})  # fmt: skip
    inputs = {p: float(frame[p].iloc[best]) for p in frame.attrs.get("inputs", [])}
    return {"case": best, "inputs": inputs, "passes": bool(judged["meets_criteria"].iloc[best]),
            "margins": margins}  # fmt: skip


def margin_lines(best: dict[str, Any]) -> list[str]:
    """The margins of ``criteria_margins`` in words, one line each."""
    where = ", ".join(f"{p} = {v:.6g}" for p, v in best["inputs"].items())
    failed = [m for m in best["margins"] if not m["holds"]]
    lines = [
        f"every criterion holds (best case {best['case']}: {where})"
        if best["passes"]
        else f"no case meets every criterion; the closest, case {best['case']} ({where}), "
        f"fails {len(failed)} of {len(best['margins'])}:"
    ]
    for m in best["margins"]:
        unit = f" {m['unit']}" if m["unit"] else ""
        if not math.isfinite(m["margin"]):
            lines.append(f"  {m['criterion']}: {m['metric']} not computed for this case")
            continue
        verdict = "holds by" if m["holds"] else "short by"
        lines.append(
            f"  {m['criterion']}: {m['metric']} = {m['value']:.6g}{unit}, {verdict} "
            f"{abs(m['margin']):.6g}{unit}"
        )
    return lines
