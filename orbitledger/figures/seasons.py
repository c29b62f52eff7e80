"""Mission-long figures: the beta-angle history with its eclipse seasons, and the drift of the
node's local time, from a ``kernel.seasons.SeasonSeries``.

``beta_history_figure``: beta (deg) over the mission with the days in shadow shaded as bands
(one per eclipse season) and, below on the same time axis, the longest shadow of each day's
orbit (min). ``node_time_figure``: the local mean solar time of the ascending node (h) over
the mission, with the apparent solar time beside it (they differ by the equation of time).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from bokeh.layouts import column
from bokeh.models import BoxAnnotation, Span

from ..kernel.errors import InputError
from ..kernel.seasons import eclipse_seasons
from ._stacked import stacked_time_figures
from ._times import utc_ms_after
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, caption_lines, finish_legend, new_figure, tooltip

__all__ = ["beta_history_data", "beta_history_figure", "node_time_data", "node_time_figure"]

_TIME = axis_label("date", "UTC")


def _check(series: Any) -> None:
    if not (hasattr(series, "beta_deg") and hasattr(series, "offset_s")):
        raise InputError("series", type(series).__name__, "needs a kernel SeasonSeries")


def beta_history_data(series: Any) -> FigureData:
    """Columns: source ``days`` (date, beta, shadow fraction, longest shadow) and ``seasons``
    (first and last day of each eclipse season, ms since 1970 UTC)."""
    _check(series)
    t = utc_ms_after(series.start, series.offset_s)
    half_step = 0.5 * (float(t[1] - t[0]) if t.size > 1 else 86_400_000.0)
    seasons = eclipse_seasons(series)
    first = utc_ms_after(series.start, np.array([s["first_offset_s"] for s in seasons]))
    last = utc_ms_after(series.start, np.array([s["last_offset_s"] for s in seasons]))
    return {
        "days": {
            "time_utc": t,
            "beta_deg": np.asarray(series.beta_deg, dtype=float),
            "shadow_percent": 100.0 * np.asarray(series.shadow_fraction, dtype=float),
            "max_shadow_min": np.asarray(series.max_shadow_s, dtype=float) / 60.0,
        },
        "seasons": {
            "start": np.atleast_1d(first) - half_step,
            "end": np.atleast_1d(last) + half_step,
            "max_shadow_min": np.array([s["max_shadow_s"] / 60.0 for s in seasons]),
        },
    }


def beta_history_figure(
    series: Any,
    *,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 760,
):
    """Beta angle over the mission with eclipse-season bands; the longest shadow per day below."""
    pal = palette_for(theme)
    data = beta_history_data(series)
    top, bottom = stacked_time_figures(
        title
        or f"Beta angle; shaded: days with shadow; dashed: beta* = asin(R / a) = "
        f"\u00b1{series.beta_star_deg:.1f} deg, no shadow beyond",
        _TIME,
        (axis_label("beta angle", "deg"), axis_label("longest shadow", "min")),
        (280, 250),
        theme=pal,
        width=width,
    )
    for lo, hi in zip(data["seasons"]["start"], data["seasons"]["end"], strict=True):
        for fig in (top, bottom):
            fig.add_layout(
                BoxAnnotation(
                    left=lo, right=hi, fill_color=pal.muted, fill_alpha=0.12, level="underlay"
                )
            )
    if np.isfinite(series.beta_star_deg):
        for sign in (1.0, -1.0):
            top.add_layout(Span(location=sign * series.beta_star_deg, dimension="width",
                                line_color=pal.muted, line_dash="dashed", line_width=1))  # fmt: skip
    src = named_source(data, "days")
    beta = top.line("time_utc", "beta_deg", source=src, line_color=pal.series_colour(0), line_width=2,
                    legend_label="beta angle")  # fmt: skip
    shadow = bottom.line("time_utc", "max_shadow_min", source=src, line_color=pal.series_colour(1),
                         line_width=2, legend_label="longest shadow of the day's orbit")  # fmt: skip
    rows = [
        tooltip("date", "time_utc", "UTC", "datetime"),
        tooltip("beta", "beta_deg", "deg", "0.00"),
        tooltip("in shadow", "shadow_percent", "% of the orbit", "0.0"),
        tooltip("longest shadow", "max_shadow_min", "min", "0.00"),
    ]
    add_hover(top, [beta], rows, mode="vline")
    add_hover(bottom, [shadow], rows, mode="vline")
    top.xaxis.axis_label = None
    finish_legend(top, pal, outside="above")
    finish_legend(bottom, pal, outside="above")
    caption_lines(bottom, "; ".join(series.notes), pal, width_chars=150)
    return column(top, bottom)


def node_time_data(series: Any) -> FigureData:
    """Columns: source ``days`` (date, LTAN mean and apparent, LTDN), hours in [0, 24)."""
    _check(series)
    return {
        "days": {
            "time_utc": utc_ms_after(series.start, series.offset_s),
            "ltan_h": np.asarray(series.ltan_h, dtype=float),
            "ltan_true_h": np.asarray(series.ltan_true_h, dtype=float),
            "ltdn_h": np.asarray(series.ltdn_h, dtype=float),
        }
    }


def node_time_figure(
    series: Any,
    *,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 760,
):
    """Local solar time of the ascending node over the mission (mean and apparent), h."""
    pal = palette_for(theme)
    data = node_time_data(series)
    drift = series.ltan_drift_h_per_year()
    rate = f"{drift * 60.0:+.1f} min" if abs(drift) < 2.0 else f"{drift:+.1f} h"
    fig = new_figure(
        title=title or f"Local time of the ascending node; drift {rate} per year (J2 and the Sun)",
        x_label=_TIME,
        y_label=axis_label("LTAN", "h"),
        theme=pal,
        width=width,
        height=320,
        x_axis_type="datetime",
    )
    src = named_source(data, "days")
    mean = fig.scatter("time_utc", "ltan_h", source=src, size=3, color=pal.series_colour(0),
                       legend_label="LTAN, mean solar time")  # fmt: skip
    true = fig.scatter("time_utc", "ltan_true_h", source=src, size=2, color=pal.series_colour(2),
                       legend_label="LTAN, apparent solar time")  # fmt: skip
    add_hover(
        fig,
        [mean, true],
        [
            tooltip("date", "time_utc", "UTC", "datetime"),
            tooltip("LTAN (mean)", "ltan_h", "h", "0.000"),
            tooltip("LTAN (apparent)", "ltan_true_h", "h", "0.000"),
            tooltip("LTDN (mean)", "ltdn_h", "h", "0.000"),
        ],
    )
    finish_legend(fig, pal, outside="above")
    caption_lines(fig, "; ".join(series.notes), pal, width_chars=150)
    return fig
