"""Ground track on a world map: coastlines, stations with visibility circles, eclipse segments.

Equirectangular (plate carree) map, longitude and latitude in degrees. The track is split at
the antimeridian; eclipsed stretches are drawn dashed over it. Several tracks (candidates of a
trade) overlay with a legend.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.models import FixedTicker, Range1d

from ..kernel.constants import EARTH, Body
from ..kernel.errors import InputError
from ._inputs import as_list, get, labels_for
from ._times import utc_ms
from .mapping import (
    coastline_lon_lat,
    coastline_source,
    small_circle_lon_lat,
    split_at_antimeridian,
    visibility_central_angle_deg,
)
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = ["ground_track_data", "ground_track_figure", "station_circle"]


def _is_single_track(obj: Any) -> bool:
    return (isinstance(obj, dict) and "lat_deg" in obj) or hasattr(obj, "lat_deg")


def _is_single_station(obj: Any) -> bool:
    return (isinstance(obj, dict) and "name" in obj) or hasattr(obj, "elevation_mask_deg")


def _decimated(n: int, max_points: int) -> np.ndarray:
    stride = max(1, math.ceil(n / max_points))
    index = np.arange(0, n, stride)
    if index[-1] != n - 1:
        index = np.append(index, n - 1)
    return index


def _eclipse_mask(track: Any, n: int, field: str) -> np.ndarray:
    shadow = get(track, "in_eclipse", "in_shadow", "shadow", default=None)
    if shadow is None:
        return np.zeros(n, dtype=bool)
    mask = np.asarray(shadow)
    if mask.shape != (n,):
        raise InputError(field, mask.shape, f"needs one eclipse flag per track point ({n})")
    return mask.astype(float) > 0.0


def _track_columns(track: Any, index: int, max_points: int) -> tuple[dict, dict]:
    field = f"tracks[{index}]"
    lat = np.asarray(get(track, "lat_deg", field=field), dtype=float).ravel()
    lon = np.asarray(get(track, "lon_deg", field=field), dtype=float).ravel()
    if lat.shape != lon.shape or lat.size < 2:
        raise InputError(field, lat.size, "needs matching lat_deg and lon_deg, 2 points or more")
    n = lat.size
    times = get(track, "times_utc", "time_utc", "epochs_utc", default=None)
    t_ms = utc_ms(times).ravel() if times is not None else np.full(n, np.nan)
    height = get(track, "height_km", "alt_km", default=None)
    h_km = np.asarray(height, dtype=float).ravel() if height is not None else np.full(n, np.nan)
    eclipse = _eclipse_mask(track, n, f"{field}.in_eclipse")
    keep = _decimated(n, max_points)
    # Keep every sunlit/eclipse transition so dashed stretches start and end where they do.
    edges = np.flatnonzero(np.diff(eclipse.astype(np.int8)) != 0)
    keep = np.union1d(keep, np.concatenate([edges, edges + 1]))
    lat, lon, t_ms, h_km, eclipse = lat[keep], lon[keep], t_ms[keep], h_km[keep], eclipse[keep]
    x, y, t, h = split_at_antimeridian(lon, lat, t_ms, h_km)
    line = {"lon_deg": x, "lat_deg": y, "time_utc": t, "height_km": h}
    # The eclipsed stretches: each run plus its neighbours, NaN elsewhere, split the same way.
    near = eclipse.copy()
    near[:-1] |= eclipse[1:]
    near[1:] |= eclipse[:-1]
    ex, ey = np.where(near, lon, np.nan), np.where(near, lat, np.nan)
    ex, ey = split_at_antimeridian(ex, ey)
    return line, {"lon_deg": ex, "lat_deg": ey}


def station_circle(
    station: Any, altitude_km: float, body: Body = EARTH, points: int = 181
) -> dict[str, np.ndarray | float]:
    """The visibility circle of one station for a satellite at ``altitude_km``: the ground
    points over which the satellite stands at or above the station's elevation mask.

    Returns lon_deg, lat_deg (split at the antimeridian), the central angle (deg) and the
    ground range (km). Spherical body of the equatorial radius (a plotting aid; the passes
    themselves come from the kernel's WGS-84 geometry).
    """
    lat = float(get(station, "lat_deg", field="stations"))
    lon = float(get(station, "lon_deg", field="stations"))
    mask = float(get(station, "elevation_mask_deg", "mask_deg", default=0.0))
    angle = float(visibility_central_angle_deg(altitude_km, mask, body.radius_km))
    c_lon, c_lat = small_circle_lon_lat(lat, lon, angle, points)
    c_lon, c_lat = split_at_antimeridian(c_lon, c_lat)
    return {
        "lon_deg": c_lon,
        "lat_deg": c_lat,
        "central_angle_deg": angle,
        "ground_range_km": math.radians(angle) * body.radius_km,
    }


def _circle_altitude_km(tracks: list, circle_altitude_km: float | None) -> float | None:
    if circle_altitude_km is not None:
        return float(circle_altitude_km)
    for track in tracks:
        h = get(track, "height_km", "alt_km", default=None)
        if h is not None and np.size(h):
            return float(np.nanmedian(np.asarray(h, dtype=float)))
    return None


def ground_track_data(
    tracks: Any,
    stations: Sequence[Any] = (),
    *,
    circle_altitude_km: float | None = None,
    body: Body = EARTH,
    max_points: int = 4000,
) -> FigureData:
    """Columns of every source of the ground-track figure, by source name.

    ``tracks``: one track or a sequence; a track has ``lat_deg`` and ``lon_deg`` (deg, one
    value per epoch; the kernel's ground-track result or a mapping) and optionally
    ``times_utc`` (for the tooltip), ``height_km`` and ``in_eclipse`` (one flag per epoch).
    ``stations``: each with ``name``, ``lat_deg``, ``lon_deg`` and ``elevation_mask_deg``.
    The visibility circles are drawn for ``circle_altitude_km`` (default: the median height
    of the first track that has heights). At most ``max_points`` points per track are drawn
    (evenly spaced, every sunlit/eclipse transition kept).
    """
    tracks = as_list(tracks, _is_single_track)
    stations = as_list(stations, _is_single_station)
    if not tracks:
        raise InputError("tracks", tracks, "needs at least one ground track")
    data: FigureData = {}
    for k, track in enumerate(tracks):
        data[f"track-{k}"], data[f"eclipse-{k}"] = _track_columns(track, k, max_points)
    altitude = _circle_altitude_km(tracks, circle_altitude_km)
    names, s_lat, s_lon, masks, angles, ranges = [], [], [], [], [], []
    for k, station in enumerate(stations):
        names.append(str(get(station, "name", default=f"station {k + 1}")))
        s_lat.append(float(get(station, "lat_deg", field=f"stations[{k}]")))
        s_lon.append(float(get(station, "lon_deg", field=f"stations[{k}]")))
        masks.append(float(get(station, "elevation_mask_deg", "mask_deg", default=0.0)))
        circle = (
            station_circle(station, altitude, body)
            if altitude is not None and altitude > 0.0
            else {
                "lon_deg": [],
                "lat_deg": [],
                "central_angle_deg": np.nan,
                "ground_range_km": np.nan,
            }
        )
        data[f"circle-{k}"] = {"lon_deg": circle["lon_deg"], "lat_deg": circle["lat_deg"]}
        angles.append(circle["central_angle_deg"])
        ranges.append(circle["ground_range_km"])
    data["stations"] = {
        "name": names,
        "lat_deg": np.asarray(s_lat, dtype=float),
        "lon_deg": np.asarray(s_lon, dtype=float),
        "mask_deg": np.asarray(masks, dtype=float),
        "circle_angle_deg": np.asarray(angles, dtype=float),
        "circle_range_km": np.asarray(ranges, dtype=float),
        "circle_alt_km": np.full(len(names), np.nan if altitude is None else altitude),
    }
    c_lon, c_lat = coastline_lon_lat()
    data["coastline"] = {"lon_deg": c_lon, "lat_deg": c_lat}
    return data


def ground_track_figure(
    tracks: Any,
    stations: Sequence[Any] = (),
    *,
    labels: Sequence[str] | None = None,
    circle_altitude_km: float | None = None,
    body: Body = EARTH,
    theme: str | Palette = "light",
    title: str = "Ground track",
    width: int = 760,
    max_points: int = 4000,
):
    """The ground-track map of one or more tracks with stations (see ``ground_track_data``).

    Solid line: sunlit; dashed: in eclipse; circles: where each station sees the satellite
    above its mask at the circle altitude. ``labels`` name the tracks in the legend.
    """
    pal = palette_for(theme)
    data = ground_track_data(
        tracks, stations, circle_altitude_km=circle_altitude_km, body=body, max_points=max_points
    )
    n_tracks = sum(1 for name in data if name.startswith("track-"))
    names = labels_for(labels, n_tracks, "track")
    fig = new_figure(
        title=title,
        x_label=axis_label("longitude", "deg"),
        y_label=axis_label("latitude", "deg"),
        theme=pal,
        width=None,
        height=None,
        frame_width=width,
        frame_height=width // 2,
        x_range=Range1d(-180.0, 180.0, bounds=(-180.0, 180.0)),
        y_range=Range1d(-90.0, 90.0, bounds=(-90.0, 90.0)),
    )
    fig.background_fill_color = pal.ocean
    fig.xaxis.ticker = FixedTicker(ticks=list(range(-180, 181, 30)))
    fig.yaxis.ticker = FixedTicker(ticks=list(range(-90, 91, 30)))
    coast = named_source(data, "coastline")
    fig.patch(
        "lon_deg",
        "lat_deg",
        source=coast,
        fill_color=pal.land,
        line_color=pal.coast,
        line_width=0.6,
    )
    for k in range(n_tracks):
        colour = pal.series_colour(k)
        line = fig.line(
            "lon_deg",
            "lat_deg",
            source=named_source(data, f"track-{k}"),
            line_color=colour,
            line_width=2.0,
            legend_label=names[k],
        )
        add_hover(
            fig,
            [line],
            [
                ("track", names[k]),
                tooltip("time", "time_utc", "UTC", "datetime"),
                tooltip("latitude", "lat_deg", "deg", "0.00"),
                tooltip("longitude", "lon_deg", "deg", "0.00"),
                tooltip("height above ellipsoid", "height_km", "km", "0.0"),
            ],
            mode="mouse",
        )
        eclipse_colour = pal.umbra if n_tracks == 1 else colour
        fig.line(
            "lon_deg",
            "lat_deg",
            source=named_source(data, f"eclipse-{k}"),
            line_color=eclipse_colour,
            line_width=2.6,
            line_dash=[6, 4],
            legend_label="in eclipse" if n_tracks == 1 else f"{names[k]}: in eclipse",
        )
    n_stations = len(data["stations"]["name"])
    for k in range(n_stations):
        fig.line(
            "lon_deg",
            "lat_deg",
            source=named_source(data, f"circle-{k}"),
            line_color=pal.station,
            line_width=1.4,
            line_alpha=0.9,
        )
    if n_stations:
        marks = fig.scatter(
            "lon_deg",
            "lat_deg",
            source=named_source(data, "stations"),
            marker="triangle",
            size=11,
            fill_color=pal.station,
            line_color=pal.ink,
            legend_label="station, visibility circle",
        )
        add_hover(
            fig,
            [marks],
            [
                ("station", "@name"),
                tooltip("latitude", "lat_deg", "deg", "0.00"),
                tooltip("longitude", "lon_deg", "deg", "0.00"),
                tooltip("elevation mask", "mask_deg", "deg", "0.0"),
                tooltip("circle at altitude", "circle_alt_km", "km", "0"),
                tooltip("circle radius", "circle_range_km", "km", "0"),
                tooltip("circle central angle", "circle_angle_deg", "deg", "0.00"),
            ],
        )
    fig.add_layout(_attribution(pal), "below")
    finish_legend(fig, pal, outside="below")
    return fig


def _attribution(pal: Palette):
    from bokeh.models import Title

    return Title(
        text=f"Coastlines: {coastline_source()}",
        text_font_size="9px",
        text_color=pal.muted,
        text_font_style="normal",
        align="right",
    )
