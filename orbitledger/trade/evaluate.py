"""Evaluate metrics over a table of cases: the engine under sweeps and dispersions.

The cases are the base case with some inputs changed, one row per case: ``inputs`` maps each
varied path to a column of values. The vectorised metric groups are computed in this process
over all rows at once; the per-case groups run in chunks of cases, in this process or on a
Dask cluster (``orbitledger.trade.execution``). Each chunk carries the base case as canonical
JSON and its rows of input values, so a worker rebuilds exactly the cases of a local run, and
the results are identical wherever they are computed.

Before any work, the inputs are checked: the memory the result would need (a study over the
memory limit of ``analysis.estimates`` is refused with the estimate: we refuse rather than
stream, so that a result is always one DataFrame), and the extreme values of every input through the case model (each corner of
the box of inputs, up to six inputs; beyond that each input's extremes alone), so a value
outside a field's range is refused up front, naming its path.
"""

from __future__ import annotations

import itertools
import json
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..case.units import unit_of
from ..kernel.errors import InputError
from .metrics import (
    GROUP_WIDTH,
    MetricSelection,
    repeat_track_metrics,
    resolve_metrics,
    vector_elements,
    vector_metrics,
    vectorisable,
)

__all__ = [
    "CaseChunk",
    "as_case",
    "case_changes",
    "chunk_size_for",
    "check_extremes",
    "estimate_bytes",
    "evaluate_cases",
    "evaluate_chunk",
    "refuse_if_too_large",
]

_BYTES_PER_VALUE = 8  # float64
_WORKING_COPIES = 3  # columns, the DataFrame block, one temporary: a safe multiple
_MAX_CHUNK = 250  # cases per task: scheduling overhead (~ms) small against ~0.1-1 s per case
_CORNER_INPUTS = 6  # all 2**6 = 64 corners checked up to this many inputs


def as_case(item: Any) -> Any:
    """A Case from a Case, a CaseFile (``.case``) or a path to a case file."""
    from ..case import Case, load_case

    if isinstance(item, Case):
        return item
    if hasattr(item, "case") and isinstance(item.case, Case):
        return item.case
    if isinstance(item, str) or hasattr(item, "__fspath__"):
        return load_case(item)
    raise InputError("case", type(item).__name__, "needs a Case, a CaseFile or a case file path")


def estimate_bytes(rows: int, input_columns: int, metrics: Sequence[str] | str) -> int:
    """Bytes a result of ``rows`` cases would need while it is built (an upper estimate)."""
    return rows * _width(input_columns, metrics) * _BYTES_PER_VALUE * _WORKING_COPIES


def _width(input_columns: int, metrics: Sequence[str] | str) -> int:
    """Columns of a result: the inputs, the metrics (by their groups' widths) and one more."""
    names = metrics.split(",") if isinstance(metrics, str) else list(metrics)
    return sum(GROUP_WIDTH.get(n.strip(), 1) for n in names) + input_columns + 1


def refuse_if_too_large(
    rows: int,
    input_columns: int,
    metrics: Sequence[str] | str,
    max_memory_bytes: int | None = None,
    *,
    field: str = "vary",
) -> None:
    """Refuse (InputError naming ``field``) a study whose result would be over the memory limit.

    The limit is the one every heavy verb uses (``analysis.estimates``: 512 MiB, or
    ``ORBITLEDGER_MEMORY_LIMIT``), or ``max_memory_bytes`` when given.
    """
    from ..analysis.estimates import Estimate, check_estimate

    estimate = Estimate(
        "trade",
        estimate_bytes(rows, input_columns, metrics),
        0.0,
        field,
        f"{rows:,} cases",
        f"at {_width(input_columns, metrics)} columns a case",
        "coarsen the grid, vary fewer inputs, or split the study",
    )
    if max_memory_bytes is None:
        check_estimate(estimate)
    else:
        check_estimate(estimate, memory_limit=max_memory_bytes, limit_name="max_memory_bytes")


def _plain(value: float, integer: bool) -> float | int:
    return int(round(value)) if integer and float(value).is_integer() else float(value)


def case_changes(base: Any, row: Mapping[str, float]) -> dict[str, float | int]:
    """``{path: value}`` for ``Case.with_changes``: integer fields of the case get integers."""
    from ..case.changes import check_input_path

    return {p: _plain(float(v), isinstance(check_input_path(base, p), int)) for p, v in row.items()}


def check_extremes(base: Any, inputs: Mapping[str, np.ndarray]) -> None:
    """Validate the cases at the extremes of the inputs through the case model (CaseError
    names the path of a refused value)."""
    from ..case.changes import check_input_path

    integers = {p: isinstance(check_input_path(base, p), int) for p in inputs}
    bounds = {p: sorted({float(np.min(v)), float(np.max(v))}) for p, v in inputs.items()}
    if len(inputs) <= _CORNER_INPUTS:
        corners = [dict(zip(bounds, c, strict=True)) for c in itertools.product(*bounds.values())]
    else:
        corners = [{p: v} for p, vs in bounds.items() for v in vs]
    for corner in corners:
        base.with_changes({p: _plain(v, integers[p]) for p, v in corner.items()})


@dataclass(frozen=True)
class CaseChunk:
    """One task: the base case (canonical JSON), rows of input values, the groups to run.

    ``values`` has shape (rows, len(paths)); ``integer`` says which paths are integer fields;
    ``repeat`` is the repeat cycle when the repeat-track metrics are computed per case.
    """

    base_json: str
    paths: tuple[str, ...]
    integer: tuple[bool, ...]
    values: np.ndarray
    groups: tuple[str, ...]
    columns: tuple[str, ...]
    repeat: tuple[int, int] | None = None

    def __len__(self) -> int:
        return int(self.values.shape[0])


def evaluate_chunk(chunk: CaseChunk) -> dict[str, Any]:
    """Run the per-case groups for every row of ``chunk`` (in a worker or in-process).

    Returns ``{"values": {column: float64 array}, "units": {column: unit}, "errors": [str]}``;
    a case refused by the case model or the kernel gets NaN and its one-line reason.
    """
    from ..analysis import case_results
    from ..case import case_from_data

    base = case_from_data(json.loads(chunk.base_json))
    rows = len(chunk)
    values = {c: np.full(rows, np.nan) for c in chunk.columns}
    units: dict[str, str] = {}
    errors = [""] * rows
    groups = [g for g in chunk.groups if g != "repeat_track"]
    for k in range(rows):
        changes = {
            p: _plain(v, integer)
            for p, v, integer in zip(chunk.paths, chunk.values[k], chunk.integer, strict=True)
        }
        try:
            case = base.with_changes(changes)
            for name, result in case_results(case, groups).items():
                if name in values:
                    values[name][k] = result.value
                    units[name] = result.unit
            if chunk.repeat is not None:
                found = repeat_track_metrics(case.elements(), case.body_constants(), *chunk.repeat)
                for name, column in found.items():
                    if name in values:
                        values[name][k] = float(column)
        except InputError as err:
            errors[k] = str(err)
    return {"values": values, "units": units, "errors": errors}


def chunk_size_for(rows: int, workers: int, chunk_size: int | None = None) -> int:
    """Cases per task: ``chunk_size`` if given, else at least four tasks per worker and at
    most a few hundred cases per task (scheduling overhead small against the work)."""
    if chunk_size is not None:
        if int(chunk_size) < 1:
            raise InputError("chunk_size", chunk_size, "must be at least 1 case per task")
        return int(chunk_size)
    # At least four tasks per worker for balance, at most a few hundred cases per task.
    return max(1, min(_MAX_CHUNK, math.ceil(rows / (4 * max(workers, 1)))))


def evaluate_cases(
    base: Any,
    inputs: Mapping[str, np.ndarray],
    metrics: Sequence[str] | str = ("orbit", "j2"),
    *,
    kind: str = "cases",
    scheduler: Any = None,
    chunk_size: int | None = None,
    progress: bool | None = None,
    repeat: Sequence[int] | None = None,
    max_memory_bytes: int | None = None,
    retries: int = 3,
    connect_timeout_s: float = 10.0,
    attrs: Mapping[str, Any] | None = None,
    on_chunk_done: Callable[[int, int], None] | None = None,
):
    """A DataFrame of ``metrics`` for the cases ``base`` + ``inputs`` (one row per case).

    ``scheduler``: None (in-process), a Dask scheduler address (``"tcp://host:8786"``), a
    ``distributed.LocalCluster`` (or any cluster) or a ``distributed.Client``. ``progress``:
    None shows a bar on a terminal or in a notebook, True always, False never.
    ``on_chunk_done(done_cases, total_cases)`` is called after each chunk. The result's
    ``attrs`` record the base case, the inputs, the metrics and their units (plus ``attrs``).
    """
    import pandas as pd

    from .execution import runner

    case = as_case(base)
    columns = {p: np.asarray(v, dtype=float).ravel() for p, v in inputs.items()}
    sizes = {v.size for v in columns.values()}
    if len(sizes) != 1:
        raise InputError("inputs", sorted(sizes), "every input column needs the same length")
    rows = sizes.pop()
    refuse_if_too_large(rows, len(columns), metrics, max_memory_bytes, field="inputs")
    selection = resolve_metrics(case, metrics, repeat)
    check_extremes(case, columns)

    out: dict[str, np.ndarray] = {}
    vector_groups = list(selection.vector_groups)
    per_case = list(selection.case_groups)
    if vector_groups and vectorisable(case, list(columns)):
        elements = vector_elements(case, columns, rows)
        out.update(vector_metrics(elements, case.body_constants(), selection, vector_groups, rows))
    else:
        per_case = vector_groups + per_case
    errors: list[str] | None = None
    if per_case:  # cases one by one: estimated before any work (analysis.estimates)
        from ..analysis.estimates import check_cases

        field = {"sweep": "vary", "monte-carlo": "samples"}.get(kind, "inputs")
        check_cases(case, per_case, rows, field=field)
        errors = []
        case_columns = tuple(c for c in selection.columns if c not in out)
        found = {c: [] for c in case_columns}
        with runner(scheduler, connect_timeout_s=connect_timeout_s, retries=retries) as run:
            size = chunk_size_for(rows, run.workers, chunk_size)
            chunks = _chunks(case, columns, per_case, case_columns, selection, size)
            for part in run.map(
                evaluate_chunk,
                chunks,
                desc=kind,
                progress=progress,
                on_done=on_chunk_done,
            ):
                for c in case_columns:
                    found[c].append(part["values"][c])
                errors += part["errors"]
        for c in case_columns:
            out[c] = np.concatenate(found[c]) if found[c] else np.full(rows, np.nan)
    data: dict[str, Any] = dict(columns)
    for c in selection.columns:
        data[c] = out.get(c, np.full(rows, np.nan))
    if errors is not None:
        data["error"] = errors
    frame = pd.DataFrame(data, copy=False)
    frame.attrs.update(
        {
            "kind": kind,
            "base_case_fingerprint": case.fingerprint,
            "base_case_json": case.canonical_json(),
            "inputs": list(columns),
            "metrics": list(selection.columns),
            "groups": list(selection.groups),
            "units": {**{p: unit_of(p) for p in columns}, **dict(selection.units)},
            "repeat": list(selection.repeat) if selection.repeat else None,
            **dict(attrs or {}),
        }
    )
    return frame


def _chunks(
    base: Any,
    columns: Mapping[str, np.ndarray],
    groups: Sequence[str],
    case_columns: Sequence[str],
    selection: MetricSelection,
    size: int,
) -> list[CaseChunk]:
    from ..case.changes import check_input_path

    paths = tuple(columns)
    integer = tuple(isinstance(check_input_path(base, p), int) for p in paths)
    table = np.column_stack([columns[p] for p in paths])
    base_json = base.canonical_json()
    repeat = selection.repeat if "repeat_track" in groups else None
    return [
        CaseChunk(
            base_json,
            paths,
            integer,
            table[start : start + size],
            tuple(groups),
            tuple(case_columns),
            repeat,
        )
        for start in range(0, table.shape[0], size)
    ]
