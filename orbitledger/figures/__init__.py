"""Bokeh figure builders shared by the editor widgets and the records.

Pure functions from kernel results (arrays, dataclasses) to Bokeh models: one code path for the
figure an analyst sees live and the figure in the record. Each ``x_figure(...)`` builder has an
``x_data(...)`` partner returning the columns of its named sources, so a live view can update a
figure in place with :func:`update_figure`. ``show(fig, name, caption)`` displays a figure in a
notebook and tags it for the record. See docs/figures.md.
"""

from .budget import budget_data, budget_figure
from .coverage import coverage_data, coverage_figure
from .ephemeris_difference import ephemeris_difference_data, ephemeris_difference_figure
from .groundtrack import ground_track_data, ground_track_figure, station_circle
from .inertial import inertial_data, inertial_figure, project, reproject
from .mapping import split_at_antimeridian, visibility_central_angle_deg
from .orbit_plane import orbit_plane_data, orbit_plane_figure
from .palette import DARK, LIGHT, OKABE_ITO, Palette, palette_for, sequential
from .seasons import beta_history_data, beta_history_figure, node_time_data, node_time_figure
from .show import FIGURE_MIME_TYPE, ensure_notebook_bokehjs, forget_figures, show, shown_figures
from .sources import sources_of, update_figure
from .timeseries import (
    altitude_speed_data,
    altitude_speed_figure,
    contact_timeline_data,
    contact_timeline_figure,
    eclipse_timeline_data,
    eclipse_timeline_figure,
)
from .transfer import transfer_data, transfer_figure

__all__ = [
    "DARK",
    "FIGURE_MIME_TYPE",
    "LIGHT",
    "OKABE_ITO",
    "Palette",
    "altitude_speed_data",
    "altitude_speed_figure",
    "beta_history_data",
    "beta_history_figure",
    "budget_data",
    "budget_figure",
    "contact_timeline_data",
    "contact_timeline_figure",
    "coverage_data",
    "coverage_figure",
    "eclipse_timeline_data",
    "eclipse_timeline_figure",
    "ensure_notebook_bokehjs",
    "ephemeris_difference_data",
    "ephemeris_difference_figure",
    "forget_figures",
    "ground_track_data",
    "ground_track_figure",
    "inertial_data",
    "inertial_figure",
    "node_time_data",
    "node_time_figure",
    "orbit_plane_data",
    "orbit_plane_figure",
    "palette_for",
    "project",
    "reproject",
    "sequential",
    "show",
    "shown_figures",
    "sources_of",
    "split_at_antimeridian",
    "station_circle",
    "transfer_data",
    "transfer_figure",
    "update_figure",
    "visibility_central_angle_deg",
]
