"""Figures of a trade study: heat maps over two swept inputs, dispersion histograms, the
candidate table.

They take the DataFrames of ``orbitledger.trade`` (inputs named by their case-file paths,
metrics with their units in their names, units in ``attrs["units"]``) and return Bokeh
models, shown live with ``show(fig, name)`` and carried into the record like any figure.

- ``sweep_heatmap_figure``: one metric as coloured cells over two swept inputs (cividis,
  ``palette.sequential``), with each criterion on a metric of the study drawn as its
  threshold contour (the boundary of the region where it holds), in the palette's series
  colours with a dash per criterion, so the contours read without colour.
- ``dispersion_histogram_figure``: the distribution of one metric over a Monte Carlo run,
  with the sample mean and mean +- one standard deviation marked; the seed in the caption.
- ``candidate_table_figure``: the ranked candidates as a Bokeh DataTable.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from bokeh.models import (
    ColorBar,
    ColumnDataSource,
    DataTable,
    LinearColorMapper,
    NumberFormatter,
    Span,
    TableColumn,
)

from ..kernel.errors import InputError
from .palette import Palette, palette_for, sequential
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, caption_lines, finish_legend, new_figure, tooltip

__all__ = [
    "candidate_table_figure",
    "dispersion_histogram_data",
    "dispersion_histogram_figure",
    "sweep_heatmap_data",
    "sweep_heatmap_figure",
]

_DASHES = ("solid", "dashed", "dotted", "dotdash", "dashdot")


def _unit(frame: Any, column: str) -> str:
    return frame.attrs.get("units", {}).get(column, "") or "1"


def _column(frame: Any, name: str, argument: str) -> np.ndarray:
    if name not in frame.columns:
        raise InputError(
            argument, name, f"is not a column of the study; columns: {list(frame.columns)}"
        )
    return frame[name].to_numpy(dtype=float)


def _slice(frame: Any, x: str, y: str, fixed: Mapping[str, float] | None) -> Any:
    """The rows of ``frame`` with every other input at its ``fixed`` value."""
    inputs = list(frame.attrs.get("inputs", []))
    for argument, path in (("x", x), ("y", y)):
        if path not in inputs:
            raise InputError(argument, path, f"is not a swept input; the inputs: {inputs}")
    others = [p for p in inputs if p not in (x, y)]
    fixed = dict(fixed or {})
    unknown = [p for p in fixed if p not in others]
    if unknown:
        raise InputError("fixed", unknown, "names no other input of the sweep")
    rows = np.ones(len(frame), dtype=bool)
    for p in others:
        values = frame[p].to_numpy(dtype=float)
        if p not in fixed and np.unique(values).size > 1:
            raise InputError(
                "fixed", p, "the sweep varies this input too: give its value, e.g. fixed={path: v}"
            )
        if p in fixed:
            rows &= np.isclose(values, float(fixed[p]), rtol=1e-12, atol=0.0)
    if not rows.any():
        raise InputError("fixed", fixed, "selects no case of the sweep")
    return frame[rows]


def sweep_heatmap_data(
    frame: Any,
    x: str,
    y: str,
    metric: str,
    *,
    criteria: Sequence[Any] = (),
    fixed: Mapping[str, float] | None = None,
) -> FigureData:
    """Columns of the heat map: ``cells`` (x, y, value, w, h per case) and, per criterion on a
    metric of the study, ``contour_k`` (the grid, the metric and the threshold level)."""
    from ..trade.criteria import parse_criterion

    part = _slice(frame, x, y, fixed)
    xs, ys = _column(part, x, "x"), _column(part, y, "y")
    ux, uy = np.unique(xs), np.unique(ys)
    if ux.size < 2 or uy.size < 2:
        raise InputError("x, y", (x, y), "a heat map needs at least two values of each input")
    if ux.size * uy.size != len(part):
        raise InputError("x, y", (x, y), "the cases do not form a grid over these two inputs")
    ix, iy = np.searchsorted(ux, xs), np.searchsorted(uy, ys)

    def on_grid(values: np.ndarray) -> np.ndarray:
        z = np.full((uy.size, ux.size), np.nan)
        z[iy, ix] = values
        return z

    def spacing(u: np.ndarray) -> np.ndarray:
        edges = np.concatenate([[u[0] - (u[1] - u[0]) / 2], (u[1:] + u[:-1]) / 2,
                                [u[-1] + (u[-1] - u[-2]) / 2]])  # fmt: skip
        return np.diff(edges)

    values = _column(part, metric, "metric")
    data: FigureData = {
        "cells": {
            "x": xs,
            "y": ys,
            "value": values,
            "w": spacing(ux)[ix],
            "h": spacing(uy)[iy],
        }
    }
    for k, item in enumerate(criteria):
        c = parse_criterion(item)
        z = on_grid(_column(part, c.metric, "criteria"))
        data[f"contour_{k}"] = {"x": ux, "y": uy, "z": z, "level": c.threshold, "text": c.text}
    return data


def sweep_heatmap_figure(
    frame: Any,
    x: str,
    y: str,
    metric: str,
    *,
    criteria: Sequence[Any] = (),
    fixed: Mapping[str, float] | None = None,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 640,
):
    """``metric`` over the swept inputs ``x`` and ``y`` (paths), criteria as contours.

    ``fixed`` picks the slice when the sweep varies more than two inputs. A criterion whose
    threshold is not crossed inside the grid draws no line (it holds everywhere or nowhere).
    """
    pal = palette_for(theme)
    data = sweep_heatmap_data(frame, x, y, metric, criteria=criteria, fixed=fixed)
    cells = data["cells"]
    fig = new_figure(
        title=title or f"{metric} over {x} and {y}",
        x_label=axis_label(x, _unit(frame, x)),
        y_label=axis_label(y, _unit(frame, y)),
        theme=pal,
        width=width,
        height=int(width * 0.75),
    )
    fig.grid.visible = False
    finite = cells["value"][np.isfinite(cells["value"])]
    low, high = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    mapper = LinearColorMapper(palette=sequential(256), low=low, high=high or low + 1.0,
                               nan_color=pal.grid)  # fmt: skip
    source = named_source(data, "cells")
    cells_renderer = fig.rect(
        "x", "y", "w", "h", source=source, line_color=None,
        fill_color={"field": "value", "transform": mapper},
    )  # fmt: skip
    unit = _unit(frame, metric)
    add_hover(
        fig,
        [cells_renderer],
        [
            tooltip(x, "x", _unit(frame, x), "0.000"),
            tooltip(y, "y", _unit(frame, y), "0.000"),
            tooltip(metric, "value", unit, "0.000"),
        ],
    )
    bar = ColorBar(
        color_mapper=mapper,
        title=axis_label(metric, unit),
        title_text_color=pal.ink,
        major_label_text_color=pal.muted,
        background_fill_color=pal.paper,
    )
    fig.add_layout(bar, "right")
    drawn = 0
    for k in range(len(criteria)):
        c = data[f"contour_{k}"]
        z = c["z"]
        if not (np.nanmin(z) < c["level"] < np.nanmax(z)):
            continue  # the threshold is not crossed inside the grid
        fig.contour(
            c["x"], c["y"], np.ma.masked_invalid(z), [c["level"]],
            line_color=pal.series_colour(k), line_width=2.5, line_dash=_DASHES[k % len(_DASHES)],
        )  # fmt: skip
        # A legend entry per criterion: an empty line glyph carrying the contour's style.
        fig.line(
            [], [], legend_label=c["text"], line_color=pal.series_colour(k), line_width=2.5,
            line_dash=_DASHES[k % len(_DASHES)],
        )  # fmt: skip
        drawn += 1
    if drawn:
        finish_legend(fig, pal, outside="below")
    return fig


def dispersion_histogram_data(frame: Any, metric: str, *, bins: int = 40) -> FigureData:
    """Columns of the histogram: ``bins`` (left, right, count) and ``stats`` (n, mean, std)."""
    values = _column(frame, metric, "metric")
    values = values[np.isfinite(values)]
    if values.size < 2:
        raise InputError("metric", metric, "needs at least two computed values for a histogram")
    if int(bins) < 1:
        raise InputError("bins", bins, "must be at least 1")
    counts, edges = np.histogram(values, bins=int(bins))
    return {
        "bins": {"left": edges[:-1], "right": edges[1:], "count": counts},
        "stats": {
            "n": [values.size],
            "mean": [float(values.mean())],
            "std": [float(values.std(ddof=1))],
        },
    }


def dispersion_histogram_figure(
    frame: Any,
    metric: str,
    *,
    bins: int = 40,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 640,
):
    """Histogram of ``metric`` over a Monte Carlo run, mean and mean +- 1 sigma marked."""
    pal = palette_for(theme)
    data = dispersion_histogram_data(frame, metric, bins=bins)
    unit = _unit(frame, metric)
    fig = new_figure(
        title=title or f"Dispersion of {metric}",
        x_label=axis_label(metric, unit),
        y_label=axis_label("cases", "count"),
        theme=pal,
        width=width,
        height=int(width * 0.6),
    )
    bars = fig.quad(
        left="left", right="right", top="count", bottom=0, source=named_source(data, "bins"),
        fill_color=pal.series_colour(0), fill_alpha=0.75, line_color=pal.paper,
    )  # fmt: skip
    add_hover(
        fig,
        [bars],
        [
            tooltip("from", "left", unit, "0.0000"),
            tooltip("to", "right", unit, "0.0000"),
            tooltip("cases", "count", "", "0"),
        ],
    )
    stats = data["stats"]
    mean, std = stats["mean"][0], stats["std"][0]
    for at, dash in ((mean, "solid"), (mean - std, "dashed"), (mean + std, "dashed")):
        fig.add_layout(Span(location=at, dimension="height", line_color=pal.ink,
                            line_dash=dash, line_width=1.5))  # fmt: skip
    seed = frame.attrs.get("seed")
    note = (
        f"{stats['n'][0]} cases; mean {mean:.6g} {unit}, standard deviation {std:.4g} {unit} "
        "(solid: mean; dashed: mean +- 1 sigma)"
        + (
            f"; seed {seed} ({frame.attrs.get('bit_generator', 'PCG64')})"
            if seed is not None
            else ""
        )
    )
    caption_lines(fig, note, pal)
    return fig


def candidate_table_figure(
    table: Any, *, theme: str | Palette = "light", width: int = 760, height: int | None = None
):
    """The candidate table (``rank_candidates``) as a Bokeh DataTable: rank, study row,
    inputs and metrics, each numeric column headed with its unit."""
    if len(table.columns) == 0:
        raise InputError("table", [], "has no columns")
    palette_for(theme)  # the table takes the page's styling; the theme is checked only
    units = table.attrs.get("units", {})
    source = ColumnDataSource(
        {str(c): table[c].to_numpy() for c in table.columns}, name="candidates"
    )
    columns = []
    for c in table.columns:
        numeric = np.issubdtype(table[c].dtype, np.number)
        unit = units.get(c, "")
        header = f"{c} ({unit})" if unit else str(c)
        formatter = (
            NumberFormatter(format="0" if c in ("rank", "case") else "0.000") if numeric else None
        )
        kw = {"formatter": formatter} if formatter else {}
        columns.append(TableColumn(field=str(c), title=header, **kw))
    rows = len(table)
    return DataTable(
        source=source,
        columns=columns,
        width=width,
        height=height or min(60 + 28 * rows, 600),
        index_position=None,
        sortable=True,
    )
