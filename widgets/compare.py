"""The trade view: candidate cases side by side, the best value per row marked, figures overlaid.

``compare([case_a, case_b, ...])`` takes case files or cases, computes each one's results with
the one results function (``orbitledger.analysis.case_results``), and lays out a table with one
column per candidate. A row is marked only where a stated criterion says which way is better
(:data:`CRITERIA`: less eclipse, more contact, less delta-v...); rows such as the period have no
better direction and stay unmarked. Pass ``criteria={"result name": "min" | "max" | "abs-min"}``
to state your own. Figures that can overlay several orbits draw every candidate in one plot.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import ipywidgets as w

from orbitledger import analysis

from .livefigures import load_bokehjs
from .results import GROUP_TITLES, format_value, unit_html
from .snapshot import TradeView
from .style import style_sheet

__all__ = ["CRITERIA", "TradeTable", "best_index", "compare", "trade_table"]

# Which way is better, by result name: "min", "max" or "abs-min" (closest to zero).
# Mission-design practice for a small Earth-observation satellite (common practice).
CRITERIA: dict[str, str] = {
    "sun_synchronous_offset_deg": "abs-min",
    "eclipse_fraction": "min",
    "longest_eclipse_s": "min",
    "max_eclipse_s": "min",
    "contact_min_per_day": "max",
    "contact_minutes_per_day": "max",
    "passes_per_day": "max",
    "longest_gap_s": "min",
    "longest_gap_h": "min",
    "dv_total_km_s": "min",
    "budget_total_km_s": "min",
    "propellant_kg": "min",
    "propellant_total_kg": "min",
    "disposal_dv_km_s": "min",
    # What is left is better when there is more of it: spare propellant, mass after the burns.
    "propellant_margin_kg": "max",
    "final_mass_kg": "max",
}

# Patterns for results named by later work: (substring, rule).
_PATTERNS: tuple[tuple[str, str], ...] = (
    ("margin", "max"),  # spare of something (checked before "propellant")
    ("contact", "max"),
    ("passes_per_day", "max"),
    ("gap", "min"),
    ("eclipse_fraction", "min"),
    ("longest_eclipse", "min"),
    ("dv_total", "min"),
    ("total_dv", "min"),
    ("propellant", "min"),
)


def criterion_for(name: str, criteria: Mapping[str, str] | None = None) -> str | None:
    """The rule that picks the best value of result ``name``, or None (no better direction)."""
    if criteria and name in criteria:
        return criteria[name]
    if name in CRITERIA:
        return CRITERIA[name]
    for fragment, rule in _PATTERNS:
        if fragment in name:
            return rule
    return None


def best_index(values: Sequence[float | None], rule: str | None) -> int | None:
    """Index of the best finite value under ``rule``; None without a rule, a value or a winner
    (all equal)."""
    if rule is None:
        return None
    finite = [
        (k, v)
        for k, v in enumerate(values)
        if isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)
    ]
    if len(finite) < 2:
        return None
    if rule == "abs-min":
        key: Callable[[tuple[int, float]], float] = lambda kv: abs(kv[1])  # noqa: E731
        pick = min(finite, key=key)
    elif rule == "min":
        key = lambda kv: kv[1]  # noqa: E731
        pick = min(finite, key=key)
    elif rule == "max":
        key = lambda kv: kv[1]  # noqa: E731
        pick = max(finite, key=key)
    else:
        raise ValueError(f"criterion {rule!r}: use 'min', 'max' or 'abs-min'")
    if all(key(kv) == key(pick) for kv in finite):
        return None
    return pick[0]


def _as_case(item: Any) -> Any:
    return item.case if hasattr(item, "case") and hasattr(item, "save") else item


def _as_cases(cases: Any) -> list[Any]:
    """Cases from a list of cases / case files, or from a trade study's candidate table
    (``orbitledger.trade.rank_candidates``: a DataFrame recording its base case)."""
    if "base_case_json" in getattr(cases, "attrs", {}):
        from orbitledger.trade import candidates_to_cases

        return candidates_to_cases(cases)
    return [_as_case(c) for c in cases]


def _label(case: Any, k: int) -> str:
    title = getattr(getattr(case, "meta", None), "title", "") or f"candidate {k + 1}"
    return title.split(":", 1)[0]


class TradeTable:
    """The table of a trade: ``rows`` is [(name, description, unit, group, values, best)]."""

    def __init__(
        self,
        labels: list[str],
        results: list[dict[str, Any]],
        criteria: Mapping[str, str] | None = None,
    ) -> None:
        self.labels = labels
        names: list[str] = []
        for res in results:
            names += [n for n in res if n not in names]
        self.rows = []
        for name in names:
            first = next(res[name] for res in results if name in res)
            values = [res[name].value if name in res else None for res in results]
            rule = criterion_for(name, criteria)
            self.rows.append(
                (
                    name,
                    first.description,
                    first.unit,
                    first.group,
                    values,
                    best_index(values, rule),
                    rule,
                )
            )

    def html(self) -> str:
        head = "".join(f"<th>{html.escape(x)}</th>" for x in self.labels)
        out = [
            f'<table aria-label="Trade table"><tr><th>result</th><th>unit</th>{head}'
            "<th>better</th></tr>"
        ]
        group = None
        for name, text, unit, grp, values, best, rule in self.rows:
            if grp != group:
                group = grp
                title = GROUP_TITLES.get(grp, grp.replace("_", " ").capitalize())
                out.append(
                    f'<tr class="ol-group"><td colspan="{len(values) + 3}">'
                    f"{html.escape(title)}</td></tr>"
                )
            cells = []
            for k, value in enumerate(values):
                cls = "ol-num ol-best" if k == best else "ol-num"
                shown = "\u2013" if value is None else format_value(value, unit)
                cells.append(f'<td class="{cls}">{shown}</td>')
            better = {"min": "lower", "max": "higher", "abs-min": "nearer 0"}.get(rule or "", "")
            out.append(
                f'<tr data-result="{html.escape(name)}"><td>{html.escape(text)}</td>'
                f'<td class="ol-u">{unit_html(unit)}</td>{"".join(cells)}'
                f'<td class="ol-u">{better}</td></tr>'
            )
        out.append("</table>")
        return "".join(out)


def trade_table(
    cases: Sequence[Any],
    criteria: Mapping[str, str] | None = None,
    labels: Sequence[str] | None = None,
) -> TradeTable:
    """The trade table of ``cases`` (CaseFile or Case objects), without widgets."""
    plain = _as_cases(cases)
    if len(plain) < 2:
        raise ValueError("compare needs at least two candidate cases")
    names = list(labels) if labels is not None else [_label(c, k) for k, c in enumerate(plain)]
    return TradeTable(names, [analysis.case_results(c) for c in plain], criteria)


def compare(
    cases: Sequence[Any],
    *,
    criteria: Mapping[str, str] | None = None,
    labels: Sequence[str] | None = None,
    theme: str = "light",
) -> w.VBox:
    """A trade view of ``cases``: the results table, best value per row marked (★), and the
    figures with every candidate overlaid. ``criteria`` adds or overrides which way is better."""
    from .casefigures import overlay_figures

    load_bokehjs()
    plain = _as_cases(cases)
    table = trade_table(plain, criteria, labels)
    heading = w.HTML(
        '<span class="ol-brand">orbitledger \u00b7 trade</span> '
        f'<span class="ol-title">{len(plain)} candidates</span>'
    )
    heading.add_class("ol-header")
    body = w.HTML(table.html(), layout=w.Layout(width="100%"))
    body.add_class("ol-trade")
    note = w.HTML(
        "\u2605 marks the best value of a row with a stated criterion "
        "(column 'better'); other rows have no better direction."
    )
    note.add_class("ol-note")
    from jupyter_bokeh import BokehModel

    figures = [BokehModel(fig) for fig in overlay_figures(plain, table.labels, theme=theme)]
    box = w.HBox(figures, layout=w.Layout(flex_flow="row wrap"))
    view = TradeView([style_sheet(), heading, body, note, box])
    view.add_class("ol-compare")
    view.trade = table  # type: ignore[attr-defined]
    return view
