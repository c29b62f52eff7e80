"""Named data sources: how a live view updates a figure without rebuilding it.

Each builder ``x_figure(...)`` has a twin-free partner ``x_data(...)`` that computes the
columns of every ``ColumnDataSource`` the figure draws, keyed by the source's ``name``. The
figure is built from that data; a widget that re-runs ``x_data`` after an edit hands the result
to :func:`update_figure`, which replaces the columns in place (one message per source to the
browser, no new models).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from bokeh.models import ColumnDataSource

from ..kernel.errors import InputError

__all__ = ["Columns", "FigureData", "named_source", "update_figure", "sources_of"]

Columns = dict[str, np.ndarray | list]
FigureData = dict[str, Columns]


def named_source(data: FigureData, name: str) -> ColumnDataSource:
    """A ColumnDataSource named ``name`` holding ``data[name]``."""
    return ColumnDataSource(data=dict(data[name]), name=name)


def sources_of(fig) -> dict[str, ColumnDataSource]:
    """Every named ColumnDataSource of a figure or layout, by name."""
    return {s.name: s for s in fig.select({"type": ColumnDataSource}) if s.name}


def update_figure(fig, data: Mapping[str, Mapping]) -> None:
    """Replace the columns of ``fig``'s named sources with ``data`` (from the same builder's
    ``x_data`` function). Raises ``InputError`` when a name is missing from the figure: the
    figure's structure changed (another number of orbits or stations), so rebuild it."""
    found = sources_of(fig)
    missing = [name for name in data if name not in found]
    if missing:
        raise InputError("data", missing, "the figure has no source of this name; rebuild it")
    for name, columns in data.items():
        found[name].data = dict(columns)
