"""Ground track: geodetic latitude, longitude and height of the sub-satellite point over time.

The sub-satellite point is the foot of the normal to the WGS-84 ellipsoid through the
satellite (geodetic coordinates of its ITRF position, ERFA ``gc2gd``). For plotting on an
equirectangular map the track is split where it crosses the antimeridian (longitude jumps
between +180 and -180 deg): ``segments()`` gives the index ranges of the unbroken pieces and
``plot_lon_lat()`` the same track with a point interpolated on the map edge and a NaN break.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .frames import geodetic_from_itrf
from .propagation import Trajectory
from .timescales import TimeScales

__all__ = ["GroundTrack", "antimeridian_crossings", "ground_track", "split_at_antimeridian"]


@dataclass(frozen=True, eq=False)
class GroundTrack:
    """Sub-satellite points at epochs ``offset_s`` after the trajectory's start.

    lat_deg: geodetic latitude, deg; lon_deg: longitude, deg in (-180, 180]; height_km:
    height above the ellipsoid; times_utc: the epochs (``TimeScales``); in_eclipse: True in
    the Earth's shadow (umbra or penumbra), when computed, else None.
    """

    offset_s: np.ndarray
    times_utc: TimeScales
    lat_deg: np.ndarray
    lon_deg: np.ndarray
    height_km: np.ndarray
    in_eclipse: np.ndarray | None = None

    @property
    def utc_tai_extrapolated(self) -> bool:
        return self.times_utc.utc_tai_extrapolated

    def segments(self) -> list[slice]:
        """Index ranges of the pieces between antimeridian crossings, in time order."""
        cuts = antimeridian_crossings(self.lon_deg) + 1
        edges = np.concatenate(([0], cuts, [self.lon_deg.size]))
        return [slice(int(a), int(b)) for a, b in zip(edges[:-1], edges[1:], strict=True)]

    def plot_lon_lat(self) -> tuple[np.ndarray, np.ndarray]:
        """Longitude and latitude with, at each antimeridian crossing, the point on the map
        edge (+-180 deg, latitude interpolated linearly in longitude), a NaN, and the point on
        the opposite edge, so that a line plot never draws across the map."""
        lon, lat = split_at_antimeridian(self.lon_deg, self.lat_deg)
        return lon, lat


def antimeridian_crossings(lon_deg: ArrayLike) -> np.ndarray:
    """Indices k where the track crosses +-180 deg between samples k and k + 1 (a jump of
    more than 180 deg in longitude; samples must be dense enough that no real step exceeds
    180 deg, i.e. much less than half an orbit)."""
    lon = np.asarray(lon_deg, dtype=float)
    return np.flatnonzero(np.abs(np.diff(lon)) > 180.0)


def split_at_antimeridian(
    lon_deg: ArrayLike, lat_deg: ArrayLike, *columns: ArrayLike
) -> tuple[np.ndarray, ...]:
    """Break a lon/lat polyline where it crosses the antimeridian, for plotting.

    ``GroundTrack.plot_lon_lat`` applies it to a track; further columns (times, heights for a
    figure's tooltip) are carried along, and any lon/lat polyline (a visibility circle) works.

    Given longitudes in [-180, 180] deg, latitudes (deg) and optional further per-point columns
    (times, heights...). Where consecutive longitudes jump by more than 180 deg the track has
    crossed +-180: a point is interpolated on the edge it leaves, a NaN row breaks the line, and
    a point on the opposite edge starts the next piece (the further columns are interpolated
    the same way, NaN at the break). NaN points already present stay breaks. Returns
    ``(lon, lat, *columns)`` as float arrays; no piece spans more than 180 deg of longitude.
    """
    lon = np.asarray(lon_deg, dtype=float).ravel()
    lat = np.asarray(lat_deg, dtype=float).ravel()
    extra = [np.asarray(c, dtype=float).ravel() for c in columns]
    if any(len(c) != len(lon) for c in [lat, *extra]):
        raise InputError("lat_deg", len(lat), "every column must have one value per longitude")
    if len(lon) < 2:
        return (lon, lat, *extra)
    jumps = antimeridian_crossings(lon)  # the kernel's test; NaN differences compare False
    step = np.diff(lon)
    if len(jumps) == 0:
        return (lon, lat, *extra)
    # Crossing eastward (+180 -> -180) has step < -180: leave at +180, re-enter at -180.
    edge = np.where(step[jumps] < 0.0, 180.0, -180.0)
    lon_next = lon[jumps + 1] + 2.0 * edge  # the next point, unwrapped beside the current one
    frac = (edge - lon[jumps]) / (lon_next - lon[jumps])
    frac = np.clip(np.nan_to_num(frac, nan=0.5), 0.0, 1.0)

    def cut(values: np.ndarray, leave: np.ndarray, enter: np.ndarray) -> np.ndarray:
        inserts = np.column_stack([leave, np.full(len(jumps), np.nan), enter])
        return np.insert(values, np.repeat(jumps + 1, 3), inserts.ravel())

    out_lon = cut(lon, edge, -edge)
    lat_cross = lat[jumps] + frac * (lat[jumps + 1] - lat[jumps])
    out_lat = cut(lat, lat_cross, lat_cross)
    out_extra = []
    for c in extra:
        c_cross = c[jumps] + frac * (c[jumps + 1] - c[jumps])
        out_extra.append(cut(c, c_cross, c_cross))
    return (out_lon, out_lat, *out_extra)


def ground_track(
    traj: Trajectory, offset_s: ArrayLike, *, in_eclipse: ArrayLike | None = None
) -> GroundTrack:
    """Ground track of ``traj`` at ``offset_s`` (1-D, s after its start, within its span).

    One vectorised propagation and one GCRF-to-ITRF transformation for all epochs, then WGS-84
    geodetic coordinates (see ``frames.geodetic_from_itrf``). ``in_eclipse`` (booleans, one
    per epoch) may be attached, e.g. from ``eclipses.shadow_state``.
    """
    t = np.asarray(offset_s, dtype=float)
    if t.ndim != 1 or t.size < 1:
        raise InputError("offset_s", offset_s, "must be a 1-D array of times, s")
    r_itrf, _ = traj.itrf(t)
    lat, lon, h = geodetic_from_itrf(r_itrf)
    lon = np.where(lon <= -180.0, lon + 360.0, lon)
    shadow = None if in_eclipse is None else np.asarray(in_eclipse, dtype=bool)
    if shadow is not None and shadow.shape != t.shape:
        raise InputError("in_eclipse", shadow.shape, f"needs one flag per epoch ({t.size})")
    return GroundTrack(t, traj.times(t), lat, lon, h, shadow)
