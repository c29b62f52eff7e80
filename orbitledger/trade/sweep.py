"""Parameter sweeps: numeric case inputs, named by their JSON paths, over grids or lists.

A sweep takes a base case and, for each varied input, the values it takes; the cases of the
sweep are every combination (the full factorial grid, the first input varying slowest). An
input is named as in the case file (``orbit.altitude_km``, ``stations[0].elevation_mask_deg``);
each case of the sweep is the base case with those paths changed (``Case.with_changes``), so
it is validated by the case model like any edited case.

``grid(start, stop, step)`` includes ``stop`` when it falls on the grid: within a millionth of
the step (the tolerance absorbs the rounding of ``start + k * step``, e.g. 0.1 + 2 * 0.1).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from ..case.changes import check_input_path
from ..kernel.errors import InputError

__all__ = [
    "STOP_TOLERANCE",
    "check_input_path",
    "grid",
    "parse_values",
    "parse_vary",
    "sweep",
    "sweep_axes",
    "sweep_inputs",
    "sweep_size",
]

STOP_TOLERANCE = 1e-6
"""Fraction of the step within which ``stop`` counts as on the grid."""

def _finite(field: str, value: Any) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(field, value, "must be a number") from None
    if isinstance(value, bool) or not math.isfinite(number):
        raise InputError(field, value, "must be a finite number")
    return number


def grid(start: float, stop: float, step: float, *, field: str = "grid") -> np.ndarray:
    """Values ``start, start + step, ...`` up to ``stop``, ``stop`` included when on the grid.

    ``step`` must be non-zero and point from ``start`` towards ``stop`` (negative for a
    falling grid); ``start == stop`` gives the single value. Values are ``start + k * step``
    (no accumulated rounding); the last one is ``stop`` itself when it falls within
    ``STOP_TOLERANCE * |step|`` of the grid. ``field`` names the input in error messages.
    """
    lo = _finite(f"{field} start", start)
    hi = _finite(f"{field} stop", stop)
    dx = _finite(f"{field} step", step)
    if dx == 0.0:
        raise InputError(f"{field} step", step, "must not be zero")
    if (hi - lo) * dx < 0.0:
        raise InputError(
            f"{field} step",
            step,
            f"has the wrong sign: it must point from start {lo:g} towards stop {hi:g}",
        )
    count = math.floor((hi - lo) / dx + STOP_TOLERANCE) + 1
    _check_grid_size(field, step, count)
    values = lo + dx * np.arange(count, dtype=float)
    if abs(values[-1] - hi) <= STOP_TOLERANCE * abs(dx):
        values[-1] = hi
    return values


def _check_grid_size(field: str, step: float, count: int) -> None:
    """Refuse a grid whose values alone would be over the memory limit (analysis.estimates)."""
    from ..analysis.estimates import MEMORY_LIMIT_ENV, memory_limit_bytes
    from ..limits import size_text

    need, limit = 8.0 * count, memory_limit_bytes()
    if need > limit:
        raise InputError(
            f"{field} step",
            step,
            f"makes {count:,} values, {size_text(need)} for the grid alone (limit "
            f"{size_text(limit)}, {MEMORY_LIMIT_ENV}); use a coarser step",
        )


_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_RANGE = re.compile(rf"^\s*({_NUMBER})\s*:\s*({_NUMBER})\s*:\s*({_NUMBER})\s*$")


def parse_values(text: str, *, field: str) -> np.ndarray:
    """``"START:STOP:STEP"`` (a grid) or ``"v1,v2,..."`` (a list) -> the values, float64."""
    match = _RANGE.match(text)
    if match:
        return grid(*(float(g) for g in match.groups()), field=field)
    if ":" in text:
        raise InputError(field, text, "write a grid as START:STOP:STEP (three numbers)")
    items = [item.strip() for item in text.split(",")]
    if not items or any(not item for item in items):
        raise InputError(field, text, "write START:STOP:STEP or a list v1,v2,...")
    return np.array([_finite(field, _number(item, field)) for item in items])


def _number(text: str, field: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise InputError(field, text, "is not a number") from None


def parse_vary(text: str) -> tuple[str, np.ndarray]:
    """``"orbit.altitude_km=500:600:10"`` -> ``("orbit.altitude_km", values)``."""
    path, sep, values = text.partition("=")
    if not sep or not path.strip():
        raise InputError("--vary", text, "write PATH=START:STOP:STEP or PATH=v1,v2,...")
    return path.strip(), parse_values(values, field=path.strip())


def sweep_axes(base: Any, vary: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """The values of each varied input, checked: ``{path: 1-d float64 array}``.

    ``vary`` maps each path to its values: a sequence or array of numbers, or a string
    ``"START:STOP:STEP"`` / ``"v1,v2"``. Paths are checked against the base case
    (:func:`check_input_path`).
    """
    if not vary:
        raise InputError("vary", {}, "name at least one input to vary")
    axes: dict[str, np.ndarray] = {}
    for path, values in vary.items():
        check_input_path(base, path)
        if isinstance(values, str):
            array = parse_values(values, field=path)
        else:
            try:
                array = np.asarray(values, dtype=float).ravel()
            except (TypeError, ValueError):
                raise InputError(path, values, "values must be numbers") from None
        if array.size == 0:
            raise InputError(path, [], "needs at least one value")
        if not np.all(np.isfinite(array)):
            raise InputError(path, array.tolist(), "values must be finite numbers")
        axes[path] = array
    return axes


def sweep_size(axes: Mapping[str, np.ndarray]) -> int:
    """The number of cases of the full factorial grid over ``axes``."""
    return math.prod(int(a.size) for a in axes.values())


def sweep_inputs(base: Any, vary: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """The input columns of a sweep: every combination of the varied values (full factorial,
    the first path varying slowest), ``{path: array of sweep_size}``."""
    axes = sweep_axes(base, vary)
    mesh = np.meshgrid(*axes.values(), indexing="ij", copy=False)
    return {path: m.ravel() for path, m in zip(axes, mesh, strict=True)}


def sweep(
    base: Any,
    vary: Mapping[str, Any],
    metrics: Sequence[str] | str = ("orbit", "j2"),
    **options: Any,
):
    """Evaluate ``metrics`` over every combination of the ``vary`` values: a DataFrame.

    ``base``: a Case or CaseFile; ``vary``: {path: values} (see :func:`sweep_inputs`);
    ``metrics``: metric names or groups (``orbitledger.trade.metrics``). ``options`` go to
    :func:`orbitledger.trade.evaluate.evaluate_cases` (``scheduler``, ``chunk_size``,
    ``progress``, ``repeat``, ``max_memory_bytes``). One row per case: the input columns
    (named by their paths), then the metric columns (named with their units).
    """
    from .evaluate import as_case, evaluate_cases, refuse_if_too_large

    case = as_case(base)
    axes = sweep_axes(case, vary)
    refuse_if_too_large(
        sweep_size(axes), len(axes), metrics, options.get("max_memory_bytes"), field="vary"
    )
    mesh = np.meshgrid(*axes.values(), indexing="ij", copy=False)
    inputs = {path: m.ravel() for path, m in zip(axes, mesh, strict=True)}
    return evaluate_cases(case, inputs, metrics, kind="sweep", **options)
