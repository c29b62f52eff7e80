"""Static snapshots of the widgets for the calculation record.

A widget lives in the notebook only; the record is static. So the trade view and the case
editor display, beside their live view, a snapshot of what they show as plain data
(``orbitledger.study.SNAPSHOT_MIME``): a titled table of text cells, group rows, the best
value of a row marked, and notes. JupyterLab and Notebook 7 render the live widget (they have
no renderer for this type, so it costs nothing on screen); the record renders the table
(``templates/orbitrecord/snapshot.html.j2``), so the reader of the HTML or the PDF sees the
starred comparison or the results panel, not a placeholder.

The editor's snapshot holds every result of its results panel. In a live notebook it is what
the panel has so far (results over the window may still be on the way); in a build
(``orbitledger build`` runs the kernel with ``ORBITLEDGER_BUILD=1``) it holds all of them,
computed with the same ``orbitledger.analysis.case_results`` the background job uses.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from typing import Any

import ipywidgets as w

from orbitledger.study import SNAPSHOT_MIME

from .results import CAUTION, GROUP_TITLES, format_value

__all__ = [
    "EditorSnapshot",
    "RecordSnapshot",
    "TradeView",
    "in_build",
    "results_snapshot",
    "trade_snapshot",
]

BETTER = {"min": "lower", "max": "higher", "abs-min": "nearer 0"}


def in_build() -> bool:
    """True in the kernel of ``orbitledger build`` (no one is there to watch a widget)."""
    return os.environ.get("ORBITLEDGER_BUILD") == "1"


def _unit(unit: str) -> str:
    return unit.replace("^2", "\u00b2").replace("^3", "\u00b3")


def _value(value: Any, unit: str = "") -> str:
    if isinstance(value, bool) or not isinstance(value, int | float):
        return str(value)
    if isinstance(value, float) and math.isnan(value):
        return "\u2013"
    return format_value(value, unit)  # numbers only: plain digits, thin spaces, minus signs


def _title(group: str) -> str:
    return GROUP_TITLES.get(group, group.replace("_", " ").capitalize())


def trade_snapshot(table: Any, title: str = "") -> dict[str, Any]:
    """The trade view's table (``compare``'s ``TradeTable``): one column per candidate, the best
    value of each row with a criterion marked, the row's better direction last."""
    labels = list(table.labels)
    rows: list[dict[str, Any]] = []
    group = None
    for name, text, unit, grp, values, best, rule in (row[:7] for row in table.rows):
        if grp != group:
            group = grp
            rows.append({"group": _title(grp)})
        cells = [{"text": text, "name": name}, {"text": _unit(unit), "unit": True}]
        for k, value in enumerate(values):
            shown = "\u2013" if value is None else _value(value, unit)
            cells.append({"text": shown, "num": True, "best": k == best})
        cells.append({"text": BETTER.get(rule or "", ""), "unit": True})
        rows.append({"cells": cells})
    return {
        "kind": "trade",
        "title": title or f"Trade view: {len(labels)} candidates",
        "columns": [
            {"text": "result"},
            {"text": "unit"},
            *({"text": label, "num": True} for label in labels),
            {"text": "better"},
        ],
        "rows": rows,
        "notes": [
            "\u2605 marks the best value of a row with a stated criterion (column 'better'); "
            "other rows have no better direction.",
            "The trade view's figures (every candidate overlaid) are live in the notebook only.",
        ],
    }


def results_snapshot(
    results: Mapping[str, Any], title: str, pending: str = ""
) -> dict[str, Any]:
    """The editor's results panel: each result with its value and unit, by group."""
    rows: list[dict[str, Any]] = []
    group = None
    for name, r in results.items():
        if r.group != group:
            group = r.group
            rows.append({"group": _title(group)})
        rows.append(
            {
                "cells": [
                    {"text": r.description, "name": name},
                    {"text": _value(r.value, r.unit), "num": True},
                    {"text": _unit(r.unit), "unit": True},
                ]
            }
        )
    notes = [pending] if pending else []
    if {"lifetime", "budget"} & {r.group for r in results.values()}:
        notes.append(CAUTION)
    return {
        "kind": "results",
        "title": title,
        "columns": [{"text": "result"}, {"text": "value", "num": True}, {"text": "unit"}],
        "rows": rows,
        "notes": notes,
    }


class RecordSnapshot:
    """Mixin for a widget whose class defines ``record_snapshot()``: its display carries the
    snapshot for the record beside the live view."""

    def _repr_mimebundle_(self, **kwargs: Any) -> Any:
        data = super()._repr_mimebundle_(**kwargs)  # type: ignore[misc]
        if isinstance(data, dict):
            data[SNAPSHOT_MIME] = self.record_snapshot()  # type: ignore[attr-defined]
        return data


class TradeView(RecordSnapshot, w.VBox):
    """The box ``compare`` returns; ``trade`` is its ``TradeTable``."""

    def record_snapshot(self) -> dict[str, Any]:
        return trade_snapshot(self.trade)  # type: ignore[attr-defined]


class EditorSnapshot(RecordSnapshot):
    """The case editor's part: its results panel for the record."""

    def record_snapshot(self) -> dict[str, Any]:
        case_file = getattr(self, "case_file", None)
        name = case_file.path.name if case_file is not None else self.case.meta.title
        title = f"Case editor, results panel: {name}"
        if in_build():  # every result, as the panel shows them once the window results are in
            from orbitledger import analysis

            return results_snapshot(analysis.case_results(self.case), title)
        pending = "" if self._slow_results or not self.window_results else (
            "results over the analysis window were still on the way"
        )
        return results_snapshot(self.results, title, pending)
