"""The results panel: the case's named results (orbitledger.analysis) as a grouped table.

Each row carries ``data-result="<name>"`` so a reader (or a browser test) can find a value by
its result name, the same name the record and ``editor.summary`` use.
"""

from __future__ import annotations

import html
import math
from collections.abc import Mapping
from typing import Any

import ipywidgets as w

__all__ = ["GROUP_TITLES", "ResultsPanel", "format_value", "results_table_html", "unit_html"]

# One title per result group of orbitledger.analysis (ALL_GROUPS).
GROUP_TITLES = {
    "orbit": "Two-body orbit",
    "j2": "J2 drift and sun-synchronous condition",
    "eclipses": "Eclipses",
    "contacts": "Station contact",
    "lifetime": "Lifetime",
    "budget": "Delta-v budget",
    "earth_orientation": "Earth orientation (IERS table)",
    "targets": "Targets and coverage",
}

# Groups whose numbers could feed a disposal or re-entry decision (rules: safety caution).
_CAUTION_GROUPS = {"lifetime", "budget"}
CAUTION = (
    "Preliminary analysis with the stated models. Lifetime and disposal figures carry large "
    "uncertainty (solar activity); defer to authoritative ephemerides and data, the licensing "
    "authority and licensed practice."
)


def format_value(value: Any, unit: str = "") -> str:
    """A result value as shown: 6 significant digits, thousands kept readable."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        return html.escape(str(value))
    if math.isnan(value):
        return "\u2013"
    if math.isinf(value):
        return "\u221e" if value > 0 else "\u2212\u221e"
    if value == 0:
        return "0"
    magnitude = abs(value)
    if float(value).is_integer() and magnitude < 1e7:
        return f"{int(value):,}".replace(",", "\u2009").replace("-", "\u2212")
    if 1e-3 <= magnitude < 1e7:
        digits = max(0, 5 - int(math.floor(math.log10(magnitude))))
        text = f"{value:,.{digits}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        return text.replace(",", "\u2009").replace("-", "\u2212")
    return f"{value:.6g}".replace("-", "\u2212")


def unit_html(unit: str) -> str:
    """A unit as shown in the editor and the trade view alike (km^2/s^2 as km\u00b2/s\u00b2)."""
    return html.escape(unit.replace("^2", "\u00b2").replace("^3", "\u00b3"))


def results_table_html(results: Mapping[str, Any], pending: str = "") -> str:
    """The panel's HTML for ``{name: Result}``; ``pending`` is a note for results on the way."""
    rows: list[str] = []
    group = None
    for name, r in results.items():
        if r.group != group:
            group = r.group
            title = GROUP_TITLES.get(group, group.replace("_", " ").capitalize())
            rows.append(f'<tr class="ol-group"><td colspan="3">{html.escape(title)}</td></tr>')
        rows.append(
            f'<tr data-result="{html.escape(name)}" title="{html.escape(name)}">'
            f"<td>{html.escape(r.description)}</td>"
            f'<td class="ol-num">{format_value(r.value, r.unit)}</td>'
            f'<td class="ol-u">{unit_html(r.unit)}</td></tr>'
        )
    body = "".join(rows) or '<tr><td class="ol-note">no results</td></tr>'
    notes = ""
    if pending:
        notes += f'<div class="ol-note">{html.escape(pending)}</div>'
    if _CAUTION_GROUPS & {r.group for r in results.values()}:
        notes += f'<div class="ol-note">{html.escape(CAUTION)}</div>'
    return f'<table aria-label="Results">{body}</table>{notes}'


class ResultsPanel:
    """The results table widget; ``show(results)`` replaces its content in one message."""

    def __init__(self) -> None:
        self.title = w.HTML('<span class="ol-section-title">Results</span>')
        self.table = w.HTML("", layout=w.Layout(width="100%"))
        self.table.add_class("ol-results")
        self.message = w.HTML("")
        self.message.add_class("ol-error")
        self.widget = w.VBox([self.title, self.message, self.table])
        self.widget.add_class("ol-section")

    def show(self, results: Mapping[str, Any], pending: str = "") -> None:
        self.message.value = ""
        self.table.value = results_table_html(results, pending)

    def show_error(self, text: str) -> None:
        self.message.value = html.escape(text)
