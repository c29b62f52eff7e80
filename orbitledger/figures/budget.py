"""Delta-v budget chart: one bar per budget line, the margin stacked on the computed delta-v,
the total as its own bar, propellant and masses in the tooltip.

Takes the kernel's ``DeltaVBudget`` (``kernel.delta_v_budget``); several budgets (candidates)
are drawn side by side per line with a legend. Delta-v is shown in m/s, the unit budgets are
read in; the kernel's km/s values are multiplied by 1000.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.models import FactorRange, LabelSet

from ..kernel.budget import DeltaVBudget
from ..kernel.errors import InputError
from ._inputs import as_list, labels_for
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, caption_lines, finish_legend, new_figure, tooltip

__all__ = ["budget_data", "budget_figure", "TOTAL_LINE"]

TOTAL_LINE = "total"
_M_PER_KM = 1000.0


def budget_data(
    budgets: Any, *, labels: Sequence[str] | None = None, theme: str | Palette = "light"
) -> FigureData:
    """Columns of the budget chart: source "lines" with one row per (line, budget), in order,
    and a final "total" row per budget.

    Every column the chart draws is here, styling included (``colour`` of the budget in the
    ``theme``'s palette, the ``value_text`` labels, the bars' ``zero`` base and the total's
    ``total_hatch``), so that a live view updates the chart in place from this data alone.
    """
    pal = palette_for(theme)
    budgets = as_list(budgets, lambda b: isinstance(b, DeltaVBudget))
    if not budgets or not all(isinstance(b, DeltaVBudget) for b in budgets):
        raise InputError("budgets", budgets, "needs one or more kernel DeltaVBudget results")
    names = labels_for(labels, len(budgets), "budget")
    line_names: list[str] = []
    for b in budgets:
        for line in b.lines:
            if line.name not in line_names:
                line_names.append(line.name)
    cols: dict[str, list] = {
        key: []
        for key in (
            "factor",
            "line",
            "budget",
            "dv_m_s",
            "margin_m_s",
            "with_margin_m_s",
            "propellant_kg",
            "mass_before_kg",
            "mass_after_kg",
            "cumulative_m_s",
            "basis",
            "colour_index",
        )
    }

    def add(factor, line, label, dv, margin, total, mp, m0, m1, cum, basis, index):
        for key, value in zip(
            cols,
            (factor, line, label, dv, margin, total, mp, m0, m1, cum, basis, index),
            strict=True,
        ):
            cols[key].append(value)

    for name in line_names + [TOTAL_LINE]:
        for k, (b, label) in enumerate(zip(budgets, names, strict=True)):
            factor = (name, label) if len(budgets) > 1 else name
            if name == TOTAL_LINE:
                dv = sum(x.dv_km_s for x in b.lines) * _M_PER_KM
                margin = sum(x.margin_km_s for x in b.lines) * _M_PER_KM
                add(
                    factor,
                    name,
                    label,
                    dv,
                    margin,
                    b.total_dv_km_s * _M_PER_KM,
                    b.total_propellant_kg,
                    b.initial_mass_kg,
                    b.final_mass_kg,
                    b.total_dv_km_s * _M_PER_KM,
                    "sum of the lines",
                    k,
                )
                continue
            line = next((x for x in b.lines if x.name == name), None)
            if line is None:
                continue
            add(
                factor,
                name,
                label,
                line.dv_km_s * _M_PER_KM,
                line.margin_km_s * _M_PER_KM,
                line.dv_with_margin_km_s * _M_PER_KM,
                line.propellant_kg,
                line.mass_before_kg,
                line.mass_after_kg,
                line.cumulative_dv_km_s * _M_PER_KM,
                line.basis,
                k,
            )
    data = {
        key: (np.asarray(v, dtype=float) if key.endswith(("_m_s", "_kg")) else v)
        for key, v in cols.items()
    }
    data["colour"] = [pal.series_colour(k) for k in cols["colour_index"]]
    data["zero"] = np.zeros(len(cols["line"]))
    data["total_hatch"] = [" " if name != TOTAL_LINE else "/" for name in cols["line"]]
    data["value_text"] = [f"{v:.1f} m/s" for v in cols["with_margin_m_s"]]
    return {"lines": data}


def budget_figure(
    budgets: Any,
    *,
    labels: Sequence[str] | None = None,
    theme: str | Palette = "light",
    title: str = "Delta-v budget",
    width: int = 640,
):
    """Horizontal stacked bars: computed delta-v and margin per line, then the total."""
    pal = palette_for(theme)
    data = budget_data(budgets, labels=labels, theme=pal)
    cols = data["lines"]
    factors = list(dict.fromkeys(cols["factor"]))[::-1]  # first line at the top
    n_budgets = len(set(cols["budget"]))
    frame_height = 26 * len(factors) + 8
    fig = new_figure(
        title=title,
        x_label=axis_label("delta-v", "m/s"),
        y_label=None,
        theme=pal,
        width=width,
        height=None,
        frame_height=frame_height,
        y_range=FactorRange(*factors),
        x_range=(0.0, 1.18 * float(np.max(cols["with_margin_m_s"], initial=1.0))),
        tools="save,reset",
    )
    fig.ygrid.visible = False
    src = named_source(data, "lines")
    legend = {"legend_label": "computed"} if n_budgets == 1 else {}
    bars = fig.hbar(
        y="factor",
        left="zero",
        right="dv_m_s",
        height=0.7,
        source=src,
        fill_color="colour",
        line_color=pal.paper,
        hatch_pattern="total_hatch",
        hatch_color=pal.paper,
        hatch_alpha=0.5,
        **legend,
    )
    margins = fig.hbar(
        y="factor",
        left="dv_m_s",
        right="with_margin_m_s",
        height=0.7,
        source=src,
        fill_color=pal.margin,
        line_color="colour",
        line_width=1.2,
        legend_label="margin",
    )
    add_hover(
        fig,
        [bars, margins],
        [
            ("line", "@line"),
            ("budget", "@budget"),
            tooltip("delta-v", "dv_m_s", "m/s", "0.00"),
            tooltip("margin", "margin_m_s", "m/s", "0.00"),
            tooltip("with margin", "with_margin_m_s", "m/s", "0.00"),
            tooltip("propellant", "propellant_kg", "kg", "0.000"),
            tooltip("mass before", "mass_before_kg", "kg", "0.000"),
            tooltip("mass after", "mass_after_kg", "kg", "0.000"),
            tooltip("cumulative", "cumulative_m_s", "m/s", "0.00"),
            ("basis", "@basis"),
        ],
    )
    if n_budgets > 1:  # the inner tick labels name the budgets; the line names group them
        fig.yaxis.group_label_orientation = "horizontal"
        fig.yaxis.group_text_color = pal.ink
        fig.yaxis.group_text_font_style = "normal"
    fig.add_layout(
        LabelSet(
            x="with_margin_m_s",
            y="factor",
            text="value_text",
            source=src,
            x_offset=5,
            y_offset=-6,
            text_font_size="10px",
            text_color=pal.ink,
        )
    )
    finish_legend(fig, pal, outside="above")
    first = as_list(budgets, lambda b: isinstance(b, DeltaVBudget))[0]
    caption_lines(fig, first.caution, pal, width_chars=int(width / 5.6))
    return fig
