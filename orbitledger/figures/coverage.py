"""Coverage map of a region: each grid point coloured by the day of its first access.

Equirectangular map of the region's box (longitude, latitude in degrees) over the coastlines.
Covered points are squares coloured by the day of their first access (cividis, dark = early);
points never reached in the window are drawn as crosses, so the meaning does not rest on
colour alone. Targets, if given, are triangles. Takes a ``kernel.coverage.Coverage`` (or a
mapping with the same fields: lat_deg, lon_deg, first_access_s, access_count, window_s).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.models import ColorBar, LinearColorMapper, Range1d

from ._inputs import get
from .mapping import coastline_lon_lat
from .palette import Palette, palette_for, sequential
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = ["coverage_data", "coverage_figure"]

_DAY_S = 86_400.0


def _unwrapped(lon: np.ndarray) -> np.ndarray:
    """Longitudes made continuous across 180 deg when the region crosses it."""
    if lon.size and np.ptp(lon) > 180.0:
        return np.where(lon < 0.0, lon + 360.0, lon)
    return lon


def coverage_data(coverage: Any, targets: Sequence[Any] = ()) -> FigureData:
    """Columns of the named sources: ``covered``, ``missed``, ``targets``, ``coastline``."""
    lat = np.asarray(get(coverage, "lat_deg", field="coverage"), dtype=float)
    lon = _unwrapped(np.asarray(get(coverage, "lon_deg", field="coverage"), dtype=float))
    first = np.asarray(get(coverage, "first_access_s", field="coverage"), dtype=float)
    count = np.asarray(get(coverage, "access_count", field="coverage"), dtype=float)
    seen = np.isfinite(first)
    c_lon, c_lat = coastline_lon_lat()
    if lon.size and np.max(lon) > 180.0:
        c_lon = np.where(c_lon < 0.0, c_lon + 360.0, c_lon)
        c_lon[np.abs(np.diff(c_lon, prepend=c_lon[:1])) > 180.0] = np.nan
    t_lat = [float(get(t, "lat_deg", field="targets")) for t in targets]
    t_lon = _unwrapped(np.array([float(get(t, "lon_deg", field="targets")) for t in targets]))
    return {
        "covered": {
            "lon_deg": lon[seen],
            "lat_deg": lat[seen],
            "first_day": first[seen] / _DAY_S,
            "accesses": count[seen],
        },
        "missed": {"lon_deg": lon[~seen], "lat_deg": lat[~seen]},
        "targets": {
            "lon_deg": t_lon,
            "lat_deg": np.array(t_lat),
            "name": [str(get(t, "name", field="targets")) for t in targets],
        },
        "coastline": {"lon_deg": c_lon, "lat_deg": c_lat},
    }


def coverage_figure(
    coverage: Any,
    targets: Sequence[Any] = (),
    *,
    step_deg: float | None = None,
    theme: str | Palette = "light",
    title: str = "Coverage of the region",
    width: int = 620,
):
    """The coverage map (see the module docstring); ``step_deg``: the grid step (default: the
    coverage's own ``step_deg``), the size of each square."""
    pal = palette_for(theme)
    data = coverage_data(coverage, targets)
    step = float(step_deg if step_deg is not None else get(coverage, "step_deg", default=1.0))
    if not math.isfinite(step) or step <= 0.0:
        step = 1.0
    window_days = float(get(coverage, "window_s", field="coverage")) / _DAY_S
    lon = np.concatenate([data["covered"]["lon_deg"], data["missed"]["lon_deg"]])
    lat = np.concatenate([data["covered"]["lat_deg"], data["missed"]["lat_deg"]])
    pad = max(step, 1.0)
    x0, x1 = float(np.min(lon)) - pad, float(np.max(lon)) + pad
    y0, y1 = max(float(np.min(lat)) - pad, -90.0), min(float(np.max(lat)) + pad, 90.0)
    aspect = (y1 - y0) / max(x1 - x0, 1e-9)
    fig = new_figure(
        title=title,
        x_label=axis_label("longitude", "deg"),
        y_label=axis_label("latitude", "deg"),
        theme=pal,
        width=None,
        height=None,
        frame_width=width,
        frame_height=int(min(max(width * aspect, 240), 900)),
        x_range=Range1d(x0, x1),
        y_range=Range1d(y0, y1),
    )
    fig.background_fill_color = pal.ocean
    fig.patch(
        "lon_deg", "lat_deg", source=named_source(data, "coastline"),
        fill_color=pal.land, line_color=pal.coast, line_width=0.6,
    )  # fmt: skip
    mapper = LinearColorMapper(palette=sequential(256), low=0.0, high=max(window_days, 1e-6))
    squares = fig.rect(
        "lon_deg", "lat_deg", width=step, height=step, source=named_source(data, "covered"),
        fill_color={"field": "first_day", "transform": mapper}, fill_alpha=0.85,
        line_color=None, legend_label="covered (colour: day of first access)",
    )  # fmt: skip
    missed = fig.scatter(
        "lon_deg", "lat_deg", source=named_source(data, "missed"), marker="x", size=7,
        line_color=pal.ink, line_width=1.2, legend_label="not reached in the window",
    )  # fmt: skip
    add_hover(
        fig,
        [squares],
        [
            tooltip("latitude", "lat_deg", "deg", "0.00"),
            tooltip("longitude", "lon_deg", "deg", "0.00"),
            tooltip("first access", "first_day", "days after the start", "0.00"),
            tooltip("accesses", "accesses", "", "0"),
        ],
    )
    add_hover(
        fig, [missed],
        [tooltip("latitude", "lat_deg", "deg", "0.00"), tooltip("longitude", "lon_deg", "deg", "0.00")],
    )  # fmt: skip
    if data["targets"]["name"]:
        marks = fig.scatter(
            "lon_deg", "lat_deg", source=named_source(data, "targets"), marker="triangle",
            size=11, fill_color=pal.station, line_color=pal.ink, legend_label="target",
        )  # fmt: skip
        add_hover(fig, [marks], [("target", "@name")])
    bar = ColorBar(
        color_mapper=mapper,
        title="first access (days after the window start)",
        title_text_color=pal.ink,
        major_label_text_color=pal.muted,
        background_fill_color=pal.paper,
    )
    fig.add_layout(bar, "right")
    finish_legend(fig, pal, outside="below")
    return fig
