"""Criteria on a trade's metrics: each case passes or fails, with the reasons; ranked candidates.

A criterion is a threshold on one metric column, written as in a requirement:
``"contact_min_per_day >= 20"``, ``"longest_eclipse_s <= 2100"``, ``"lifetime_years < 25"``.
A case meets the criteria when every one holds; a metric that could not be computed for a
case (NaN, or a case refused with an ``error``) fails it, with that said in the reason.

``rank_candidates`` keeps the passing cases and orders them by the criteria's metrics in
turn, each in its better direction (a ``>=`` threshold: larger is better; ``<=``: smaller),
or by ``rank_by`` as given. ``candidates_to_cases`` makes a Case of each candidate (the base
case recorded in the table's ``attrs`` with the candidate's inputs), for the widgets' trade
view ``compare([...])`` or a record.

Caution: a lifetime or disposal criterion is preliminary analysis with the stated models;
compliance is shown to the licensing authority with its accepted tools and data.
"""

from __future__ import annotations

import math
import operator
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..case.criterion import split_criterion
from ..kernel.errors import InputError

__all__ = [
    "Criterion",
    "apply_criteria",
    "candidates_to_cases",
    "failure_reason",
    "parse_criterion",
    "rank_candidates",
]

_OPERATORS = {
    ">=": operator.ge,
    "<=": operator.le,
    ">": operator.gt,
    "<": operator.lt,
}


@dataclass(frozen=True)
class Criterion:
    """``metric op threshold``, e.g. Criterion("contact_min_per_day", ">=", 20.0)."""

    metric: str
    op: str
    threshold: float

    def __post_init__(self) -> None:
        if self.op not in _OPERATORS:
            raise InputError(
                "criteria", self.op, f"operator must be one of {', '.join(_OPERATORS)}"
            )
        if not math.isfinite(float(self.threshold)):
            raise InputError("criteria", self.threshold, "the threshold must be a finite number")

    @property
    def text(self) -> str:
        return f"{self.metric} {self.op} {self.threshold:g}"

    @property
    def better(self) -> str:
        """ "max" for a lower bound (more is better), "min" for an upper bound."""
        return "max" if self.op.startswith(">") else "min"

    def holds(self, values: np.ndarray) -> np.ndarray:
        with np.errstate(invalid="ignore"):
            return _OPERATORS[self.op](values, float(self.threshold)) & np.isfinite(values)


def failure_reason(criterion: Criterion, value: float, unit: str = "") -> str:
    """Why ``value`` fails ``criterion``: "contact_min_per_day = 12.5 min/day, needs >= 20"."""
    if not math.isfinite(value):
        return f"{criterion.metric} not computed for this case"
    return (
        f"{criterion.metric} = {value:.6g} {unit}".rstrip()
        + f", needs {criterion.op} {criterion.threshold:g}"
    )


def parse_criterion(text: str | Criterion) -> Criterion:
    """``"contact_min_per_day >= 20"`` -> Criterion (a Criterion passes through)."""
    if isinstance(text, Criterion):
        return text
    try:
        metric, op, value = split_criterion(text)
    except ValueError:
        raise InputError(
            "criteria", text, "write METRIC >= VALUE (or <=, >, <), e.g. contact_min_per_day >= 20"
        ) from None
    try:
        threshold = float(value)
    except ValueError:
        raise InputError("criteria", text, f"{value!r} is not a number") from None
    return Criterion(metric, op, threshold)


def _checked(frame: Any, criteria: Sequence[str | Criterion]) -> list[Criterion]:
    parsed = [parse_criterion(c) for c in criteria]
    if not parsed:
        raise InputError("criteria", [], "state at least one criterion")
    for c in parsed:
        if c.metric not in frame.columns:
            metrics = frame.attrs.get("metrics") or [str(x) for x in frame.columns]
            raise InputError(
                "criteria",
                c.text,
                f"{c.metric!r} is not a metric of this study; its metrics: {', '.join(metrics)}",
            )
    return parsed


def apply_criteria(frame: Any, criteria: Sequence[str | Criterion]) -> Any:
    """A copy of ``frame`` with ``meets_criteria`` (bool) and ``reasons`` (why a case fails,
    "; "-separated, empty when it passes). ``attrs["criteria"]`` lists the criteria."""
    parsed = _checked(frame, criteria)
    units = frame.attrs.get("units", {})
    out = frame.copy()
    passes = np.ones(len(frame), dtype=bool)
    reasons = np.full(len(frame), "", dtype=object)
    for c in parsed:
        values = frame[c.metric].to_numpy(dtype=float)
        ok = c.holds(values)
        passes &= ok
        unit = units.get(c.metric, "")
        for k in np.flatnonzero(~ok):  # only failing cases: a short loop of string building
            why = failure_reason(c, float(values[k]), unit)
            reasons[k] = why if not reasons[k] else f"{reasons[k]}; {why}"
    if "error" in frame.columns:
        failed = frame["error"].astype(str).to_numpy() != ""
        for k in np.flatnonzero(failed):
            reasons[k] = f"case refused: {frame['error'].iloc[k]}" + (
                f"; {reasons[k]}" if reasons[k] else ""
            )
        passes &= ~failed
    out["meets_criteria"] = passes
    out["reasons"] = reasons.astype(str)
    out.attrs["criteria"] = [c.text for c in parsed]
    return out


def rank_candidates(
    frame: Any,
    criteria: Sequence[str | Criterion],
    *,
    rank_by: Sequence[tuple[str, str]] | None = None,
    top: int | None = None,
) -> Any:
    """The cases that meet ``criteria``, best first: a DataFrame with ``rank`` (1 = best) and
    ``case`` (the row of the study), the inputs, then the criteria's metrics.

    ``rank_by``: [(metric, "min" | "max" | "abs-min"), ...] ("abs-min": nearest zero); default: the criteria's metrics in order, each
    in its better direction. Ties keep the study's row order. ``top`` keeps the first rows.
    """
    parsed = _checked(frame, criteria)
    order = list(rank_by) if rank_by is not None else [(c.metric, c.better) for c in parsed]
    for metric, direction in order:
        if metric not in frame.columns:
            raise InputError("rank_by", metric, "is not a column of this study")
        if direction not in ("min", "max", "abs-min"):
            raise InputError("rank_by", direction, f"for {metric}: use 'min', 'max' or 'abs-min'")
    judged = apply_criteria(frame, parsed)
    passing = judged[judged["meets_criteria"]].copy()
    passing.insert(0, "case", passing.index.to_numpy())
    if order:
        keys = {f"__key{k}": passing[m].abs() if d == "abs-min" else passing[m]
                for k, (m, d) in enumerate(order)}  # fmt: skip
        passing = passing.assign(**keys).sort_values(
            [*keys, "case"],
            ascending=[d != "max" for _, d in order] + [True],
            kind="mergesort",
        )
    if top is not None:
        passing = passing.head(int(top))
    inputs = list(frame.attrs.get("inputs", []))
    metrics = list(dict.fromkeys([c.metric for c in parsed] + [m for m, _ in order]))
    table = passing[["case", *inputs, *[m for m in metrics if m not in inputs]]].reset_index(
        drop=True
    )
    table.insert(0, "rank", np.arange(1, len(table) + 1))
    table.attrs = dict(frame.attrs)
    table.attrs["criteria"] = [c.text for c in parsed]
    table.attrs["rank_by"] = [list(x) for x in order]
    return table


def candidates_to_cases(table: Any, base_case: Any = None) -> list[Any]:
    """A Case for each row of a candidate table (or any study table), in its order.

    ``base_case`` defaults to the base case recorded in ``table.attrs``. Each case is the base
    with the row's inputs, its title tagged with the rank (or row) and the inputs, so the
    widgets' ``compare([...])`` labels its columns by candidate.
    """
    import json

    from ..case import case_from_data
    from .evaluate import as_case, case_changes

    if base_case is None:
        text = table.attrs.get("base_case_json")
        if not text:
            raise InputError("base_case", None, "the table records no base case: pass one")
        base = case_from_data(json.loads(text))
    else:
        base = as_case(base_case)
    inputs = list(table.attrs.get("inputs", []))
    if not inputs:
        raise InputError("table", list(table.columns), "has no recorded inputs (attrs['inputs'])")
    cases = []
    for k, row in enumerate(table.itertuples(index=False)):
        values = dict(zip(table.columns, row, strict=True))
        changes: dict[str, Any] = case_changes(base, {p: values[p] for p in inputs})
        label = f"#{values.get('rank', k + 1)}"
        shown = ", ".join(f"{p.rsplit('.', 1)[-1]} {values[p]:g}" for p in inputs)
        title = f"{label} {shown}: {base.meta.title}"[:200]
        changes["meta.title"] = title
        cases.append(base.with_changes(changes))
    return cases
