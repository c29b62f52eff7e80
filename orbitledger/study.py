"""What a study notebook has used: the case files it opened, its named results, its figures.

This registry lives in the notebook's kernel process. ``orbitledger build`` reads it at the end
of a clean run (``manifest()``) to assemble the record; nothing here does I/O or imports
reporting. ``result(name, value, unit, description)`` is the one way a notebook names a number
for the record: it is noted here and shown in the notebook.
"""

from __future__ import annotations

import html
import math
import numbers
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

from .kernel.errors import InputError

__all__ = [
    "RESULT_MIME",
    "SNAPSHOT_MIME",
    "NamedResult",
    "NotedFigure",
    "OpenedCase",
    "manifest",
    "note_case",
    "note_figure",
    "note_result",
    "opened_cases",
    "reset",
    "result",
]

# The MIME type of a named result in a notebook's outputs (the record renders it as a row).
RESULT_MIME = "application/vnd.orbitledger.result+json"
# A widget's static snapshot beside its live view (widgets/snapshot.py; the record's table).
SNAPSHOT_MIME = "application/vnd.orbitledger.snapshot+json"


@dataclass(frozen=True)
class OpenedCase:
    path: str
    fingerprint: str


@dataclass(frozen=True)
class NamedResult:
    """A number (or short text) the study names for the record, with its unit and meaning."""

    name: str
    value: float | int | str | bool
    unit: str
    description: str


@dataclass(frozen=True)
class NotedFigure:
    name: str
    caption: str


_cases: dict[str, OpenedCase] = {}
_results: dict[str, NamedResult] = {}
_figures: dict[str, NotedFigure] = {}


def note_case(path: str | Path, fingerprint: str) -> None:
    """Record that the study opened (or saved) the case file at ``path``; last fingerprint wins."""
    key = str(Path(path).resolve())
    _cases[key] = OpenedCase(path=key, fingerprint=fingerprint)


def opened_cases() -> list[OpenedCase]:
    return list(_cases.values())


def _plain_value(name: str, value: Any) -> float | int | str | bool:
    """A JSON-safe copy of ``value``: numpy scalars and 0-d arrays become Python numbers."""
    if hasattr(value, "item") and getattr(value, "shape", None) == ():
        value = value.item()
    if isinstance(value, bool | str):
        return value
    if isinstance(value, numbers.Integral):
        return int(value)
    if isinstance(value, numbers.Real):
        value = float(value)
        if not math.isfinite(value):
            raise InputError(f"result {name!r}", value, "a named result must be finite")
        return value
    raise InputError(
        f"result {name!r}", value, "a named result is a number, a bool or a short text"
    )


def note_result(name: str, value: Any, unit: str = "", description: str = "") -> NamedResult:
    """Record the named result ``name`` (last value wins); returns what was recorded."""
    if not isinstance(name, str) or not name.strip():
        raise InputError("name", name, "a named result needs a non-empty name")
    noted = NamedResult(name, _plain_value(name, value), str(unit), str(description))
    _results[name] = noted
    return noted


def note_figure(name: str, caption: str = "") -> None:
    """Record that the study showed the figure ``name`` (called by ``orbitledger.figures.show``)."""
    _figures[str(name)] = NotedFigure(str(name), str(caption))


def _format_value(value: float | int | str | bool) -> str:
    if isinstance(value, float):
        return f"{value:.10g}"
    return str(value)


class _ShownResult:
    """What ``result`` returns to the notebook: displays as one line, carries the value."""

    def __init__(self, noted: NamedResult) -> None:
        self.noted = noted
        self.value = noted.value

    def _repr_mimebundle_(self, include: Any = None, exclude: Any = None) -> dict[str, Any]:
        r = self.noted
        text = f"{r.name} = {_format_value(r.value)} {r.unit}".rstrip()
        if r.description:
            text += f"  ({r.description})"
        shown = (
            f"<div class='orbitledger-result'><b>{html.escape(r.name)}</b> = "
            f"{html.escape(_format_value(r.value))} {html.escape(r.unit)}"
            f"<span style='color:#666'> {html.escape(r.description)}</span></div>"
        )
        return {"text/plain": text, "text/html": shown, RESULT_MIME: asdict(r)}


def result(name: str, value: Any, unit: str = "", description: str = "") -> Any:
    """Name ``value`` (in ``unit``, meaning ``description``) for the record, and show it.

    In a notebook the result is displayed as one line; the record lists it in its results
    table and fingerprints it. Returns ``value`` unchanged, so ``x = result("x", f(), "km")``
    reads naturally. Raises ``InputError`` for an empty name or a value that is not a finite
    number, a bool or a text.
    """
    noted = note_result(name, value, unit, description)
    try:
        from IPython import get_ipython
        from IPython.display import display
    except ImportError:  # plain Python: nothing to show
        return value
    if get_ipython() is not None:
        display(_ShownResult(noted))
    return value


def manifest() -> dict[str, Any]:
    """Everything noted so far, as JSON-safe data: cases, named results, figures."""
    return {
        "cases": [asdict(c) for c in _cases.values()],
        "results": [asdict(r) for r in _results.values()],
        "figures": [asdict(f) for f in _figures.values()],
    }


def reset() -> None:
    """Forget everything recorded (for tests)."""
    _cases.clear()
    _results.clear()
    _figures.clear()
