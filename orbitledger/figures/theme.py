"""Common styling of every figure: paper and ink from the palette, labelled axes with units,
hover tooltips that state values with their units.

A builder makes its figure with :func:`new_figure`, which refuses an axis label without a unit
in parentheses (``"altitude (km)"``); :func:`tooltip` writes one tooltip row with its unit.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from bokeh.models import HoverTool, Legend
from bokeh.plotting import figure

from ..kernel.errors import InputError
from .palette import Palette, palette_for

__all__ = [
    "FONT",
    "axis_label",
    "new_figure",
    "style_figure",
    "tooltip",
    "add_hover",
    "caption_lines",
    "finish_legend",
    "UNIT_PATTERN",
]

FONT = "Helvetica, Arial, 'DejaVu Sans', sans-serif"
# An axis label ends with its unit in parentheses, e.g. "altitude (km)", "time (UTC)".
UNIT_PATTERN = re.compile(r"\([^()]+\)\s*$")

_TOOLS = "pan,wheel_zoom,box_zoom,reset,save"


def axis_label(quantity: str, unit: str) -> str:
    """``quantity (unit)``, the one form of every axis label."""
    return f"{quantity} ({unit})"


def _checked_label(argument: str, label: str | None) -> str | None:
    if label is None:  # a categorical axis (names of lines, stations): no quantity, no unit
        return None
    if not UNIT_PATTERN.search(label):
        raise InputError(argument, label, "an axis label must end with its unit, e.g. 'x (km)'")
    return label


def new_figure(
    *,
    title: str,
    x_label: str | None,
    y_label: str | None,
    theme: str | Palette = "light",
    width: int = 640,
    height: int = 420,
    tools: str = _TOOLS,
    **kwargs,
):
    """A styled Bokeh figure with both axes labelled with their units (``None`` only for a
    categorical axis, whose tick labels name its rows).

    ``kwargs`` go to :func:`bokeh.plotting.figure` (``x_axis_type="datetime"``,
    ``match_aspect=True``, ``y_range=[...]`` ...).
    """
    fig = figure(
        title=title,
        x_axis_label=_checked_label("x_label", x_label),
        y_axis_label=_checked_label("y_label", y_label),
        width=width,
        height=height,
        tools=tools,
        toolbar_location="right",
        **kwargs,
    )
    fig.toolbar.logo = None
    style_figure(fig, theme)
    return fig


def style_figure(fig, theme: str | Palette = "light") -> None:
    """Apply the palette's paper, ink and grid and the common fonts to ``fig`` in place."""
    pal = palette_for(theme)
    fig.background_fill_color = pal.paper
    fig.border_fill_color = pal.paper
    fig.outline_line_color = pal.grid
    fig.title.text_color = pal.ink
    fig.title.text_font = FONT
    fig.title.text_font_size = "13px"
    fig.title.text_font_style = "bold"
    for axis in list(fig.xaxis) + list(fig.yaxis):
        axis.axis_label_text_color = pal.ink
        axis.axis_label_text_font = FONT
        axis.axis_label_text_font_size = "12px"
        axis.axis_label_text_font_style = "normal"
        axis.major_label_text_color = pal.muted
        axis.major_label_text_font = FONT
        axis.major_label_text_font_size = "11px"
        axis.axis_line_color = pal.muted
        axis.major_tick_line_color = pal.muted
        axis.minor_tick_line_color = pal.muted
    for grid in list(fig.xgrid) + list(fig.ygrid):
        grid.grid_line_color = pal.grid


def tooltip(name: str, field: str, unit: str = "", fmt: str = "0.000") -> tuple[str, str]:
    """One hover row: ``(name, "@{field}{fmt} unit")``; ``fmt`` is a Bokeh number format, or
    ``"datetime"`` for a UTC time column, or ``""`` to show text as it is."""
    if fmt == "datetime":
        value = f"@{{{field}}}{{%Y-%m-%d %H:%M:%S}}"
    elif fmt:
        value = f"@{{{field}}}{{{fmt}}}"
    else:
        value = f"@{{{field}}}"
    return (name, f"{value} {unit}".rstrip())


def add_hover(fig, renderers: Sequence, rows: Sequence[tuple[str, str]], **kwargs) -> HoverTool:
    """Add a hover tool over ``renderers`` showing ``rows``; datetime rows get their formatter."""
    formatters = {}
    for _name, value in rows:
        for match in re.finditer(r"@\{([^}]+)\}\{%", value):
            formatters["@{" + match.group(1) + "}"] = "datetime"
    hover = HoverTool(
        renderers=list(renderers), tooltips=list(rows), formatters=formatters, **kwargs
    )
    fig.add_tools(hover)
    return hover


def finish_legend(
    fig,
    theme: str | Palette = "light",
    *,
    location: str = "top_right",
    outside: str | None = None,
) -> None:
    """Style the legend (if any): palette colours, click to hide a series. ``outside``
    ("right", "below", "above") moves it out of the plot area, in a row when above or below."""
    pal = palette_for(theme)
    for legend in list(fig.select(type=Legend)):
        if outside:
            if legend in fig.center:
                fig.center.remove(legend)
            fig.add_layout(legend, outside)
            if outside in ("above", "below"):
                legend.orientation = "horizontal"
                legend.spacing = 12
                legend.margin = 2
                legend.padding = 4
        else:
            legend.location = location
        legend.click_policy = "hide"
        legend.background_fill_color = pal.paper
        legend.background_fill_alpha = 0.85
        legend.border_line_color = pal.grid
        legend.label_text_color = pal.ink
        legend.label_text_font = FONT
        legend.label_text_font_size = "11px"


def caption_lines(
    fig, text: str, theme: str | Palette = "light", *, width_chars: int = 110, italic: bool = True
) -> None:
    """Add ``text`` under the plot, wrapped to lines of ``width_chars`` (a Bokeh title is one
    line): cautions, data attributions."""
    import textwrap

    from bokeh.models import Title

    pal = palette_for(theme)
    for line in textwrap.wrap(text, width_chars):  # "below" stacks outwards, in order
        fig.add_layout(
            Title(
                text=line,
                text_font_size="9px",
                text_color=pal.muted,
                text_font_style="italic" if italic else "normal",
                text_font=FONT,
            ),
            "below",
        )
