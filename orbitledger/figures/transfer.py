"""Transfer (porkchop) contour plot: delta-v or C3 over departure x arrival dates.

Takes the kernel's ``TransferGrid`` (``kernel.porkchop``): departure and arrival axes with the
delta-v of every cell (NaN where no transfer exists). Planetary grids carry Julian dates
(TDB); they are drawn on datetime axes labelled TDB (TDB runs about 69 s ahead of UTC, a
hair on a plot spanning months). Rendezvous grids carry seconds, drawn in hours. Filled
contours use cividis (see ``palette.sequential``); the cheapest cell is marked, and a coarse
invisible grid carries the tooltip values.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from bokeh.models import ColorBar, NumeralTickFormatter

from ..kernel.errors import InputError
from ._times import UNIX_EPOCH_JD
from .palette import Palette, palette_for, sequential
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, new_figure, tooltip

__all__ = ["QUANTITIES", "transfer_data", "transfer_figure"]

# quantity -> (TransferGrid field, label, unit)
QUANTITIES = {
    "dv_total": ("dv_total_km_s", "total delta-v", "km/s"),
    "dv_departure": ("dv_departure_km_s", "departure delta-v", "km/s"),
    "dv_arrival": ("dv_arrival_km_s", "arrival delta-v", "km/s"),
    "c3": ("c3_km2_s2", "departure C3", "km^2/s^2"),
}
_JD_THRESHOLD = 2_000_000.0  # axis values above this are Julian dates (year 763 onwards)
_HOVER_CELLS = 48  # tooltip grid per axis


def _axis_values(values: np.ndarray, dates: bool) -> np.ndarray:
    if dates:
        return (values - UNIX_EPOCH_JD) * 86_400_000.0  # ms since 1970 on the TDB scale
    return values / 3600.0


def _nice_levels(lo: float, hi: float, count: int) -> np.ndarray:
    """About ``count`` contour levels on a 1-2-5 step covering [lo, hi] (values above the top
    level are left unfilled)."""
    raw = (hi - lo) / max(count, 1)
    magnitude = 10.0 ** np.floor(np.log10(raw))
    step = next(m * magnitude for m in (1.0, 2.0, 2.5, 5.0, 10.0) if m * magnitude >= raw)
    start = np.floor(lo / step) * step
    return start + step * np.arange(int(np.ceil((hi - start) / step)) + 1)


def transfer_data(grid: Any, *, quantity: str = "dv_total", levels: int = 12) -> FigureData:
    """Columns of the porkchop plot: ``cells`` (the tooltip grid), ``best`` (the cheapest
    cell) and ``contour`` (axes, values and the contour levels)."""
    if quantity not in QUANTITIES:
        raise InputError("quantity", quantity, f"must be one of {', '.join(QUANTITIES)}")
    for name in ("departure", "arrival", "tof_s", "valid"):
        if not hasattr(grid, name):
            raise InputError("grid", type(grid).__name__, "needs a kernel TransferGrid")
    attr, _label, _unit = QUANTITIES[quantity]
    dep = np.asarray(grid.departure, dtype=float)
    arr = np.asarray(grid.arrival, dtype=float)
    z = np.where(np.asarray(grid.valid), np.asarray(getattr(grid, attr), dtype=float), np.nan)
    if z.shape != (dep.size, arr.size):
        raise InputError("grid", z.shape, f"values must have shape ({dep.size}, {arr.size})")
    if not np.any(np.isfinite(z)):
        raise InputError("grid", "no valid cell", "has no transfer to draw")
    dates = bool(dep.min() > _JD_THRESHOLD and arr.min() > _JD_THRESHOLD)
    x, y = _axis_values(dep, dates), _axis_values(arr, dates)
    lo = float(np.nanmin(z))
    hi = float(np.nanpercentile(z, 60.0))  # the interesting basin; beyond is one band
    if hi <= lo:
        hi = lo * 1.5 + 1e-9
    level_values = _nice_levels(lo, hi, levels)
    i, j = np.unravel_index(int(np.nanargmin(z)), z.shape)
    tof_days = np.asarray(grid.tof_s, dtype=float) / 86_400.0
    si = np.unique(np.linspace(0, dep.size - 1, min(dep.size, _HOVER_CELLS)).round().astype(int))
    sj = np.unique(np.linspace(0, arr.size - 1, min(arr.size, _HOVER_CELLS)).round().astype(int))
    gi, gj = np.meshgrid(si, sj, indexing="ij")
    gi, gj = gi.ravel(), gj.ravel()
    width = (x[-1] - x[0]) / max(len(si) - 1, 1) if len(si) > 1 else 1.0
    height = (y[-1] - y[0]) / max(len(sj) - 1, 1) if len(sj) > 1 else 1.0
    return {
        "cells": {
            "x": x[gi],
            "y": y[gj],
            "value": z[gi, gj],
            "tof_days": tof_days[gi, gj],
            "w": np.full(gi.size, width),
            "h": np.full(gi.size, height),
        },
        "best": {"x": [x[i]], "y": [y[j]], "value": [z[i, j]], "tof_days": [tof_days[i, j]]},
        "contour": {"x": x, "y": y, "z": z.T, "levels": level_values, "dates": dates},
    }


def transfer_figure(
    grid: Any,
    *,
    quantity: str = "dv_total",
    levels: int = 12,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 640,
):
    """Filled contours of ``quantity`` ("dv_total", "dv_departure", "dv_arrival" or "c3")
    over departure (x) and arrival (y)."""
    pal = palette_for(theme)
    data = transfer_data(grid, quantity=quantity, levels=levels)
    _attr, label, unit = QUANTITIES[quantity]
    c = data["contour"]
    dates = c["dates"]
    axis_kw = {"x_axis_type": "datetime", "y_axis_type": "datetime"} if dates else {}
    fig = new_figure(
        title=title or f"Transfer grid: {label}",
        x_label=axis_label("departure", "TDB") if dates else axis_label("departure", "h"),
        y_label=axis_label("arrival", "TDB") if dates else axis_label("arrival", "h"),
        theme=pal,
        width=width,
        height=int(width * 0.8),
        x_range=(c["x"][0], c["x"][-1]),
        y_range=(c["y"][0], c["y"][-1]),
        **axis_kw,
    )
    fig.grid.visible = False
    colours = sequential(len(c["levels"]) - 1)
    contour = fig.contour(
        c["x"],
        c["y"],
        c["z"],
        c["levels"],
        fill_color=colours,
        line_color=pal.paper,
        line_alpha=0.6,
        line_width=0.6,
    )
    bar = contour.construct_color_bar(
        title=axis_label(label, unit),
        title_text_color=pal.ink,
        major_label_text_color=pal.muted,
        background_fill_color=pal.paper,
    )
    if isinstance(bar, ColorBar):
        bar.title_text_font_style = "normal"
        bar.formatter = NumeralTickFormatter(format="0.[00]")
    fig.add_layout(bar, "right")
    cells = fig.rect(
        "x", "y", "w", "h", source=named_source(data, "cells"), fill_alpha=0.0, line_alpha=0.0
    )
    best = fig.scatter(
        "x",
        "y",
        source=named_source(data, "best"),
        marker="star",
        size=16,
        fill_color=pal.paper,
        line_color=pal.ink,
        line_width=1.5,
        legend_label=f"least {label}",
    )
    when = "datetime" if dates else "0.0"
    when_unit = "TDB" if dates else "h"
    add_hover(
        fig,
        [cells, best],
        [
            tooltip("departure", "x", when_unit, when),
            tooltip("arrival", "y", when_unit, when),
            tooltip("time of flight", "tof_days", "d", "0.0"),
            tooltip(label, "value", unit, "0.000"),
        ],
    )
    fig.legend.location = "top_left"
    fig.legend.background_fill_alpha = 0.8
    return fig
