"""Bokeh figure builders shared by the editor widgets and the records.

Pure functions from kernel results (arrays, dataclasses) to Bokeh models: one code path for the
figure an analyst sees live and the figure in the record. Each ``x_figure(...)`` builder has an
``x_data(...)`` partner returning the columns of its named sources, so a live view can update a
figure in place with :func:`update_figure`. ``show(fig, name, caption)`` displays a figure in a
notebook and tags it for the record. See docs/figures.md.
"""

from .groundtrack import ground_track_data, ground_track_figure, station_circle
from .mapping import split_at_antimeridian, visibility_central_angle_deg
from .palette import DARK, LIGHT, OKABE_ITO, Palette, palette_for
from .show import FIGURE_MIME_TYPE, ensure_notebook_bokehjs, forget_figures, show, shown_figures
from .sources import sources_of, update_figure

__all__ = [
    "DARK",
    "FIGURE_MIME_TYPE",
    "LIGHT",
    "OKABE_ITO",
    "Palette",
    "ensure_notebook_bokehjs",
    "forget_figures",
    "ground_track_data",
    "ground_track_figure",
    "palette_for",
    "show",
    "shown_figures",
    "sources_of",
    "split_at_antimeridian",
    "station_circle",
    "update_figure",
    "visibility_central_angle_deg",
]
