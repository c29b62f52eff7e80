"""What a live figure sends to the browser: its lines thinned to what its pixels can show.

A line of the live figures often has more points than its plot has pixel columns (the height
and speed over a 30-day window: 259 201 samples on a 720-pixel plot). The editor sends only
the points that change the drawing, with the M4 aggregation (U. Jugel, Z. Jerzak, G. Hackenbroich,
V. Markl, "M4: A Visualization-Oriented Time Series Data Aggregation", PVLDB 7(10), 2014): of
each run of consecutive points that fall into the same pixel column, the first, the last, the
lowest and the highest. The line drawn through those touches the same pixels as the line
through every point: within the column it spans the same lowest to highest row, and it enters
and leaves the column by the same segments. The argument holds for any polyline, so it serves
the map's ground track (columns of longitude) as well as the time series.

What stays exact: every point where a line breaks (NaN: the ground track's antimeridian splits,
the ends of each eclipsed stretch, the hidden part of an orbit behind the Earth) and its
neighbours on both sides, so each piece keeps its first and last point; a run of several NaN
in a row becomes one NaN (it breaks the line the same). Every column of a thinned source
keeps the same rows, so tooltips show the values of a real sample.

Only the figures on screen are thinned; the record's figures (``orbitledger.figures``, built
by ``case_figures``) keep every point. A plot's pixel width is its ``frame_width`` or else
its ``width`` (the frame is narrower, so columns come out finer than the screen's, never
coarser); zoomed in with the plot's tools, the live view shows the thinned points, the record
all of them. Sources drawn by anything but lines (markers, patches), or with fewer rows than
twice the plot's pixel width, are sent whole.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

__all__ = ["LinePlan", "line_plans", "m4_keep", "thin_columns", "thin_sources"]

_FALLBACK_WIDTH_PX = 1600  # a plot whose width Bokeh leaves to the page: a wide screen's


@dataclass(frozen=True)
class LinePlan:
    """One line drawn from a source: its x and y columns, the plot's pixel columns, and the
    x range shown (None: the data's own extent, as Bokeh's automatic range gives)."""

    x: str
    y: str
    pixels: int
    x_span: tuple[float, float] | None = None


def m4_keep(x: np.ndarray, y: np.ndarray, pixels: int, x_span=None) -> np.ndarray:
    """Boolean mask of the points of the polyline (x, y) to draw it on ``pixels`` columns
    spanning ``x_span`` (default: the finite extent of ``x``); see the module's docstring."""
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    n = x.size
    if n != y.size:
        raise ValueError(f"x and y differ in length ({n} and {y.size})")
    if n <= 2:
        return np.ones(n, dtype=bool)
    finite = np.isfinite(x) & np.isfinite(y)
    if x_span is None:
        if not finite.any():
            return _one_nan_per_run(finite)
        x0, x1 = float(x[finite].min()), float(x[finite].max())
    else:
        x0, x1 = float(x_span[0]), float(x_span[1])
    scale = pixels / (x1 - x0) if x1 != x0 else 0.0
    column = np.floor((np.where(finite, x, x0) - x0) * scale)
    # A run starts at the first point, where the column changes, and at and after any break.
    start = np.ones(n, dtype=bool)
    start[1:] = (column[1:] != column[:-1]) | ~finite[1:] | ~finite[:-1]
    keep = start.copy()
    keep[:-1] |= start[1:]  # the last point of each run
    keep[-1] = True
    run = np.cumsum(start) - 1
    starts = np.flatnonzero(start)
    for values, reduce in (
        (np.where(finite, y, np.inf), np.minimum),
        (np.where(finite, y, -np.inf), np.maximum),
    ):
        extreme = reduce.reduceat(values, starts)
        hit = np.flatnonzero(finite & (values == extreme[run]))
        first = np.ones(hit.size, dtype=bool)
        first[1:] = run[hit[1:]] != run[hit[:-1]]
        keep[hit[first]] = True  # the first point of each run at its lowest / highest
    return keep & _one_nan_per_run(finite)


def _one_nan_per_run(finite: np.ndarray) -> np.ndarray:
    """True except for a break point that follows another break point."""
    out = np.ones(finite.size, dtype=bool)
    out[1:] = finite[1:] | finite[:-1]
    return out


def thin_columns(columns: Mapping[str, Any], plans: list[LinePlan]) -> dict[str, Any]:
    """``columns`` with the rows the lines of ``plans`` need (every column the same rows);
    unchanged when a plan's columns are missing or not numeric, or when thinning would keep
    nearly every row."""
    out = dict(columns)
    if not plans:
        return out
    lengths = {len(v) for v in columns.values() if hasattr(v, "__len__")}
    if len(lengths) != 1:
        return out
    (n,) = lengths
    if n <= 2 * min(p.pixels for p in plans):
        return out
    keep = np.zeros(n, dtype=bool)
    for plan in plans:
        try:
            x = np.asarray(columns[plan.x], dtype=float)
            y = np.asarray(columns[plan.y], dtype=float)
        except (KeyError, TypeError, ValueError):
            return out
        keep |= m4_keep(x, y, plan.pixels, plan.x_span)
    if keep.sum() > 0.9 * n:
        return out
    index = np.flatnonzero(keep)
    for name, value in columns.items():
        if isinstance(value, np.ndarray):
            out[name] = value[index]
        else:
            out[name] = [value[i] for i in index]
    return out


def line_plans(root: Any) -> dict[str, list[LinePlan]]:
    """For each named source of ``root`` that only lines draw, the plans of those lines."""
    from bokeh.models import CDSView, GlyphRenderer, Line, Plot, Range1d
    from bokeh.models.filters import AllIndices

    plans: dict[str, list[LinePlan]] = {}
    refused: set[str] = set()
    for plot in root.select({"type": Plot}):
        pixels = int(plot.frame_width or plot.width or _FALLBACK_WIDTH_PX)
        x_range = plot.x_range
        span = (float(x_range.start), float(x_range.end)) if isinstance(x_range, Range1d) else None
        for renderer in plot.renderers:
            if not isinstance(renderer, GlyphRenderer):
                continue
            source = renderer.data_source
            name = getattr(source, "name", None)
            if not name:
                continue
            glyph = renderer.glyph
            view = renderer.view
            plain_view = isinstance(view, CDSView) and isinstance(view.filter, AllIndices)
            if not (isinstance(glyph, Line) and plain_view):
                refused.add(name)
                continue
            if not (isinstance(glyph.x, str) and isinstance(glyph.y, str)):
                refused.add(name)
                continue
            plans.setdefault(name, []).append(LinePlan(glyph.x, glyph.y, pixels, span))
    return {name: p for name, p in plans.items() if name not in refused}


def thin_sources(
    data: Mapping[str, Mapping[str, Any]], plans: Mapping[str, list[LinePlan]]
) -> dict[str, dict[str, Any]]:
    """Every source's columns of ``data`` (a builder's ``x_data``), thinned by ``plans``."""
    return {name: thin_columns(cols, list(plans.get(name, ()))) for name, cols in data.items()}
