"""Time series over the analysis window, on UTC datetime axes: height and speed (fast near
periapsis, slow near apoapsis), the eclipse timeline (penumbra and umbra bars) and the
station-contact timeline (one row per station, one bar per pass).

Inputs are kernel results: GCRF states with their epochs (``Trajectory.gcrf`` and
``Trajectory.times``), ``kernel.eclipses.EclipseSearch`` and ``kernel.passes.PassSearch``,
whose event times are seconds after the window start ``start_utc``.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.layouts import column
from bokeh.models import FactorRange

from ..kernel.constants import EARTH, Body
from ..kernel.errors import InputError
from ..kernel.forces import ellipsoidal_height_km
from ._inputs import as_list, get, labels_for
from ._stacked import stacked_time_figures
from ._times import utc_ms, utc_ms_after
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = [
    "altitude_speed_data",
    "altitude_speed_figure",
    "contact_timeline_data",
    "contact_timeline_figure",
    "eclipse_timeline_data",
    "eclipse_timeline_figure",
]

_TIME_LABEL = axis_label("time", "UTC")


def _is_single_series(obj: Any) -> bool:
    return (isinstance(obj, dict) and "r_km" in obj) or hasattr(obj, "r_km")


def altitude_speed_data(series: Any, *, body: Body = EARTH) -> FigureData:
    """Columns of the height and speed plot: source ``series-k`` per series.

    ``series``: one or a sequence of mappings/objects with ``times_utc`` (a ``TimeScales``
    or anything ``kernel.parse_utc`` takes), ``r_km`` and ``v_km_s`` (GCRF, shape (n, 3)).
    Height is above the body's ellipsoid (``kernel.forces.ellipsoidal_height_km``).
    """
    items = as_list(series, _is_single_series)
    if not items:
        raise InputError("series", series, "needs at least one series of states")
    data: FigureData = {}
    for k, item in enumerate(items):
        field = f"series[{k}]"
        r = np.asarray(get(item, "r_km", field=field), dtype=float)
        v = np.asarray(get(item, "v_km_s", field=field), dtype=float)
        t = utc_ms(get(item, "times_utc", field=field)).ravel()
        if r.ndim != 2 or r.shape[-1] != 3 or r.shape != v.shape or len(t) != len(r):
            raise InputError(field, r.shape, "needs times_utc (n,), r_km and v_km_s (n, 3)")
        data[f"series-{k}"] = {
            "time_utc": t,
            "height_km": ellipsoidal_height_km(r, body),
            "r_km": np.linalg.norm(r, axis=-1),
            "speed_km_s": np.linalg.norm(v, axis=-1),
        }
    return data


def altitude_speed_figure(
    series: Any,
    *,
    labels: Sequence[str] | None = None,
    body: Body = EARTH,
    theme: str | Palette = "light",
    title: str | None = None,
    width: int = 720,
):
    """Two stacked plots sharing the UTC time axis: height (km) and speed (km/s)."""
    pal = palette_for(theme)
    data = altitude_speed_data(series, body=body)
    title = title or f"Height above the {body.name} ellipsoid and speed over the window"
    n = len(data)
    names = labels_for(labels, n, "orbit")
    top, bottom = stacked_time_figures(
        title,
        _TIME_LABEL,
        (axis_label("height above ellipsoid", "km"), axis_label("speed", "km/s")),
        (240, 240),
        theme=pal,
        width=width,
    )
    rows = [
        tooltip("time", "time_utc", "UTC", "datetime"),
        tooltip("height above ellipsoid", "height_km", "km", "0.0"),
        tooltip("radius", "r_km", "km", "0.0"),
        tooltip("speed", "speed_km_s", "km/s", "0.0000"),
    ]
    for k in range(n):
        src = named_source(data, f"series-{k}")
        colour = pal.series_colour(k)
        h = top.line(
            "time_utc",
            "height_km",
            source=src,
            line_color=colour,
            line_width=2,
            legend_label=names[k],
        )
        s = bottom.line(
            "time_utc",
            "speed_km_s",
            source=src,
            line_color=colour,
            line_width=2,
            legend_label=names[k],
        )
        add_hover(top, [h], [("orbit", names[k]), *rows], mode="vline")
        add_hover(bottom, [s], [("orbit", names[k]), *rows], mode="vline")
    top.xaxis.axis_label = None  # the shared time axis is labelled once, under the speed
    top.xaxis.major_label_text_font_size = "0px"
    finish_legend(top, pal, outside="above")
    bottom.legend.visible = False  # the top plot's legend names the series for both
    return column(top, bottom)


def _is_eclipse_search(obj: Any) -> bool:
    return hasattr(obj, "eclipses") and hasattr(obj, "per_orbit")


def eclipse_timeline_data(
    searches: Any, start_utc: Any, *, labels: Sequence[str] | None = None
) -> FigureData:
    """Columns of the eclipse timeline: sources ``penumbra`` (whole shadow passage, entry to
    exit) and ``umbra`` (total shadow), one row per search (candidate).

    ``searches``: one ``EclipseSearch`` or a sequence; ``start_utc``: the window start its
    offsets count from (one for all, or one per search).
    """
    items = as_list(searches, _is_eclipse_search)
    if not items:
        raise InputError("searches", searches, "needs at least one eclipse search")
    # A list gives one start per search; anything else (an ISO string, a TimeScales, a
    # (jd1, jd2) pair) is the one start of them all.
    starts = list(start_utc) if isinstance(start_utc, list) else [start_utc] * len(items)
    if len(starts) != len(items):
        raise InputError("start_utc", start_utc, f"needs one start per search ({len(items)})")
    names = labels_for(labels, len(items), "shadow")
    shadow: dict[str, list] = {k: [] for k in ("row", "start", "end", "duration_s", "kind")}
    umbra: dict[str, list] = {k: [] for k in ("row", "start", "end", "duration_s", "kind")}
    for search, name, start in zip(items, names, starts, strict=True):
        ecl = list(search.eclipses)
        entry = np.array([e.entry_s for e in ecl], dtype=float)
        exit_ = np.array([e.exit_s for e in ecl], dtype=float)
        if ecl:
            shadow["start"].extend(utc_ms_after(start, entry).ravel())
            shadow["end"].extend(utc_ms_after(start, exit_).ravel())
        shadow["row"].extend([name] * len(ecl))
        shadow["duration_s"].extend(exit_ - entry)
        shadow["kind"].extend(["shadow (penumbra entry to exit)"] * len(ecl))
        full = [e for e in ecl if e.umbra_entry_s is not None and e.umbra_exit_s is not None]
        u0 = np.array([e.umbra_entry_s for e in full], dtype=float)
        u1 = np.array([e.umbra_exit_s for e in full], dtype=float)
        if full:
            umbra["start"].extend(utc_ms_after(start, u0).ravel())
            umbra["end"].extend(utc_ms_after(start, u1).ravel())
        umbra["row"].extend([name] * len(full))
        umbra["duration_s"].extend(u1 - u0)
        umbra["kind"].extend(["umbra"] * len(full))

    def arrays(cols):
        return {
            k: (np.asarray(v, dtype=float) if k in ("start", "end", "duration_s") else v)
            for k, v in cols.items()
        }

    return {"penumbra": arrays(shadow), "umbra": arrays(umbra), "rows": {"row": names}}


def _timeline(title: str, rows: list[str], pal: Palette, width: int):
    fig = new_figure(
        title=title,
        x_label=_TIME_LABEL,
        y_label=None,
        theme=pal,
        width=width,
        height=None,
        frame_height=34 * len(rows) + 16,
        x_axis_type="datetime",
        y_range=FactorRange(*rows[::-1]),
        tools="xpan,xwheel_zoom,reset,save",
    )
    fig.ygrid.visible = False
    return fig


def eclipse_timeline_figure(
    searches: Any,
    start_utc: Any,
    *,
    labels: Sequence[str] | None = None,
    theme: str | Palette = "light",
    title: str = "Eclipses over the window",
    width: int = 720,
):
    """Bars of shadow passages (penumbra entry to exit) with the umbra inside them."""
    pal = palette_for(theme)
    data = eclipse_timeline_data(searches, start_utc, labels=labels)
    fig = _timeline(title, list(data["rows"]["row"]), pal, width)
    rows = [
        ("", "@kind"),
        tooltip("from", "start", "UTC", "datetime"),
        tooltip("to", "end", "UTC", "datetime"),
        tooltip("duration", "duration_s", "s", "0"),
    ]
    pen = fig.hbar(
        y="row",
        left="start",
        right="end",
        height=0.8,
        source=named_source(data, "penumbra"),
        fill_color=pal.penumbra,
        fill_alpha=0.55,
        line_color=None,
        legend_label="penumbra",
    )
    umb = fig.hbar(
        y="row",
        left="start",
        right="end",
        height=0.5,
        source=named_source(data, "umbra"),
        fill_color=pal.umbra,
        line_color=None,
        legend_label="umbra",
    )
    add_hover(fig, [pen, umb], rows)
    finish_legend(fig, pal, outside="above")
    return fig


def _is_pass_search(obj: Any) -> bool:
    return hasattr(obj, "passes") and hasattr(obj, "stations")


def contact_timeline_data(search: Any, start_utc: Any) -> FigureData:
    """Columns of the contact timeline: source ``passes`` (one row per pass) and the station
    rows in order. ``search``: a ``kernel.passes.PassSearch``; ``start_utc``: the window
    start its offsets count from."""
    if not _is_pass_search(search):
        raise InputError("search", type(search).__name__, "needs a kernel PassSearch result")
    passes = list(search.passes)
    stations = [s.name for s in search.stations]
    aos = np.array([p.aos_s for p in passes], dtype=float)
    tmax = np.array([p.tmax_s for p in passes], dtype=float)
    los = np.array([p.los_s for p in passes], dtype=float)
    ms = utc_ms_after(start_utc, np.concatenate([aos, tmax, los])).ravel() if passes else []
    n = len(passes)
    return {
        "passes": {
            "station": [p.station for p in passes],
            "aos": np.asarray(ms[:n], dtype=float),
            "tmax": np.asarray(ms[n : 2 * n], dtype=float),
            "los": np.asarray(ms[2 * n :], dtype=float),
            "duration_min": (los - aos) / 60.0,
            "max_elevation_deg": np.array([p.max_elevation_deg for p in passes], dtype=float),
            "aos_azimuth_deg": np.array([p.aos_azimuth_deg for p in passes], dtype=float),
            "los_azimuth_deg": np.array([p.los_azimuth_deg for p in passes], dtype=float),
            "colour_index": [
                stations.index(p.station) if p.station in stations else 0 for p in passes
            ],
        },
        "rows": {"station": stations},
    }


def contact_timeline_figure(
    search: Any,
    start_utc: Any,
    *,
    theme: str | Palette = "light",
    title: str = "Station contacts over the window",
    width: int = 720,
):
    """One row per station, one bar per pass from AOS to LOS, a tick at maximum elevation."""
    pal = palette_for(theme)
    data = contact_timeline_data(search, start_utc)
    stations = list(data["rows"]["station"])
    if not stations:
        raise InputError("search.stations", [], "needs at least one station")
    fig = _timeline(title, stations, pal, width)
    src = named_source(data, "passes")
    src.data["colour"] = [pal.series_colour(k) for k in data["passes"]["colour_index"]]
    bars = fig.hbar(
        y="station",
        left="aos",
        right="los",
        height=0.6,
        source=src,
        fill_color="colour",
        line_color="colour",
    )
    fig.scatter(
        x="tmax",
        y="station",
        source=src,
        marker="dash",
        size=14,
        angle=1.5708,
        line_color=pal.ink,
        line_width=2,
    )
    add_hover(
        fig,
        [bars],
        [
            ("station", "@station"),
            tooltip("AOS", "aos", "UTC", "datetime"),
            tooltip("max elevation at", "tmax", "UTC", "datetime"),
            tooltip("max elevation", "max_elevation_deg", "deg", "0.0"),
            tooltip("LOS", "los", "UTC", "datetime"),
            tooltip("duration", "duration_min", "min", "0.0"),
            tooltip("azimuth AOS", "aos_azimuth_deg", "deg", "0"),
            tooltip("azimuth LOS", "los_azimuth_deg", "deg", "0"),
        ],
    )
    return fig
