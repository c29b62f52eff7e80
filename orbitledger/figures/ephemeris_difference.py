"""Position differences between an imported ephemeris and our propagation, over time.

Input: an ``exchange.compare.EphemerisDifference`` (or any object or mapping with
``times_utc``, ``dr_rtn_km`` (n, 3) and ``distance_km`` (n,)). Plotted on a UTC time axis: the
radial, transverse (along-track) and normal (cross-track) components and the distance, in
metres when every difference is below 10 km, else in kilometres; the unit is in the axis
label and the hover.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..kernel.errors import InputError
from ._inputs import get
from ._times import utc_ms
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = ["ephemeris_difference_data", "ephemeris_difference_figure"]

_COMPONENTS = (("radial", 0), ("transverse", 1), ("normal", 2))


def _unit(distance_km: np.ndarray) -> tuple[str, float]:
    """Metres for differences below 10 km, else kilometres: (unit, factor from km)."""
    top = float(np.max(distance_km)) if distance_km.size else 0.0
    return ("m", 1000.0) if top < 10.0 else ("km", 1.0)


def ephemeris_difference_data(diff: Any) -> FigureData:
    """Columns of source ``difference``: time_utc (ms since 1970 UTC), radial, transverse,
    normal, distance, all in the unit named in column ``unit`` ("m" or "km")."""
    t = utc_ms(list(get(diff, "times_utc", field="diff"))).ravel()
    rtn = np.asarray(get(diff, "dr_rtn_km", field="diff"), dtype=float)
    dist = np.asarray(get(diff, "distance_km", field="diff"), dtype=float)
    if rtn.shape != (len(t), 3) or dist.shape != (len(t),):
        raise InputError(
            "diff", rtn.shape, "needs times_utc (n,), dr_rtn_km (n, 3), distance_km (n,)"
        )
    unit, factor = _unit(dist)
    columns: dict[str, Any] = {"time_utc": t, "distance": dist * factor, "unit": [unit] * len(t)}
    for name, k in _COMPONENTS:
        columns[name] = rtn[:, k] * factor
    return {"difference": columns}


def ephemeris_difference_figure(
    diff: Any,
    *,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 720,
    height: int = 360,
):
    """Line plot of the RTN components and the distance of ``diff`` against UTC time."""
    pal = palette_for(theme)
    data = ephemeris_difference_data(diff)
    unit = _unit(np.asarray(get(diff, "distance_km", field="diff"), dtype=float))[0]
    label = get(diff, "label", default="", field="diff")
    fig = new_figure(
        title=title or (f"Ephemeris difference: {label}" if label else "Ephemeris difference"),
        x_label=axis_label("time", "UTC"),
        y_label=axis_label("position difference", unit),
        theme=pal,
        width=width,
        height=height,
        x_axis_type="datetime",
    )
    src = named_source(data, "difference")
    renderers = []
    for k, (name, _) in enumerate(_COMPONENTS):
        renderers.append(
            fig.line(
                "time_utc",
                name,
                source=src,
                line_color=pal.series_colour(k),
                line_width=1.5,
                legend_label=name,
            )
        )
    renderers.append(
        fig.line(
            "time_utc",
            "distance",
            source=src,
            line_color=pal.ink,
            line_width=2.0,
            line_dash="dashed",
            legend_label="distance",
        )
    )
    rows = [tooltip("time", "time_utc", "UTC", "datetime")] + [
        tooltip(name, name, unit, "0.000")
        for name in ("radial", "transverse", "normal", "distance")
    ]
    add_hover(fig, renderers[-1:], rows, mode="vline")
    finish_legend(fig, pal, outside="above")
    return fig
