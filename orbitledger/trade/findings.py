"""Findings: each criterion a case states on its own results, judged pass or fail.

A case file may list criteria (``"criteria": ["propellant_margin_kg >= 0", ...]``, see
docs/case-file.md), each written as a trade criterion is (``parse_criterion``), on the names
of the case's standard results (``orbitledger.analysis.case_results``). ``case_findings``
judges them with the trade's own ``Criterion.holds`` and words a failure as the trade does
(``failure_reason``). Besides the stated criteria, every margin among the results (a result
whose name contains ``margin``) must not be negative: a negative margin is a finding even when
no criterion names it. A result the case does not have fails its criterion ("not computed").

The findings work on plain data (the case's JSON, the results as rows), so a record can be
judged again from the file alone (``orbitledger verify``).

Caution: a lifetime or disposal criterion is preliminary analysis with the stated models;
compliance is shown to the licensing authority with its accepted tools and data.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np

from ..case.criterion import stated_criteria
from .criteria import Criterion, failure_reason

__all__ = ["IMPLICIT_SOURCE", "case_findings", "failing"]

IMPLICIT_SOURCE = "a margin must not be negative (applies to every margin)"


def _rows(results: Any) -> dict[str, tuple[float, str]]:
    """{name: (value, unit)} from ``case_results`` (Result objects) or record rows (dicts)."""
    if isinstance(results, Mapping):
        items: Iterable[Any] = results.values()
    else:
        items = results
    out = {}
    for r in items:
        name = r["name"] if isinstance(r, Mapping) else r.name
        value = r["value"] if isinstance(r, Mapping) else r.value
        unit = r.get("unit", "") if isinstance(r, Mapping) else r.unit
        try:
            number = float(value)  # the record writes NaN as the text "NaN"
        except (TypeError, ValueError):
            number = float("nan")
        out[name] = (number, unit)
    return out


def case_findings(case_data: Mapping[str, Any], results: Any) -> list[dict[str, Any]]:
    """The findings of one case: its stated criteria, then the implicit margin checks.

    ``case_data``: the case as JSON data (``Case.to_data()`` or the record's canonical JSON);
    ``results``: its standard results (``case_results(case)`` or the record's rows). Each
    finding: ``criterion`` (text), ``metric``, ``op``, ``threshold``, ``threshold_from`` (the
    case field the threshold was read from, or ""), ``value`` (None when not computed),
    ``unit``, ``passed``, ``reason`` ("" when passed) and ``source`` ("case" or the implicit
    rule's wording).
    """
    rows = _rows(results)
    stated = stated_criteria(dict(case_data))
    findings = []
    named = set()
    for c in stated:
        findings.append(_judge(c.text, c.metric, c.op, c.threshold, c.threshold_from, rows, "case"))
        named.add(c.metric)
    for name in rows:
        if "margin" in name and name not in named:
            findings.append(_judge(f"{name} >= 0", name, ">=", 0.0, "", rows, IMPLICIT_SOURCE))
    return findings


def _judge(
    text: str,
    metric: str,
    op: str,
    threshold: float,
    threshold_from: str,
    rows: Mapping[str, tuple[float, str]],
    source: str,
) -> dict[str, Any]:
    criterion = Criterion(metric, op, threshold)
    value, unit = rows.get(metric, (float("nan"), ""))
    passed = bool(criterion.holds(np.array([value], dtype=float))[0])
    reason = "" if passed else failure_reason(criterion, value, unit)
    if not passed and metric not in rows:
        reason = f"{metric} is not a result of this case"
    if not passed and threshold_from:
        reason += f" (from {threshold_from})"
    return {
        "criterion": text,
        "metric": metric,
        "op": op,
        "threshold": threshold,
        "threshold_from": threshold_from,
        "value": value if math.isfinite(value) else None,
        "unit": unit,
        "passed": passed,
        "reason": reason,
        "source": source,
    }


def failing(findings: Iterable[Mapping[str, Any]]) -> list[Mapping[str, Any]]:
    """The findings that did not pass."""
    return [f for f in findings if not f["passed"]]
