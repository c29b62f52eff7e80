"""Two plots stacked on one UTC time axis: the set-up the time-series figures share.

The lower plot shares the upper one's ``x_range`` (zoom and pan move both) and has no title of
its own; both are datetime axes labelled with ``x_label``. Used by ``timeseries`` (height and
speed) and ``seasons`` (beta angle and longest shadow).
"""

from __future__ import annotations

from .palette import Palette
from .theme import new_figure

__all__ = ["stacked_time_figures"]


def stacked_time_figures(
    title: str,
    x_label: str,
    y_labels: tuple[str, str],
    heights: tuple[int, int],
    *,
    theme: Palette,
    width: int,
):
    """(top, bottom) Bokeh figures on a shared UTC datetime axis (see the module docstring)."""
    top = new_figure(
        title=title,
        x_label=x_label,
        y_label=y_labels[0],
        theme=theme,
        width=width,
        height=heights[0],
        x_axis_type="datetime",
    )
    bottom = new_figure(
        title="",
        x_label=x_label,
        y_label=y_labels[1],
        theme=theme,
        width=width,
        height=heights[1],
        x_axis_type="datetime",
        x_range=top.x_range,
    )
    return top, bottom
