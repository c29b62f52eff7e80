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

__all__ = ["GroundTrack", "antimeridian_crossings", "ground_track"]


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
        lon, lat = self.lon_deg, self.lat_deg
        k = antimeridian_crossings(lon)
        if k.size == 0:
            return lon.copy(), lat.copy()
        east = lon[k] > 0.0  # leaving over +180 (eastward motion) or over -180
        lon_next = lon[k + 1] + np.where(east, 360.0, -360.0)
        edge = np.where(east, 180.0, -180.0)
        frac = (edge - lon[k]) / (lon_next - lon[k])
        lat_edge = lat[k] + frac * (lat[k + 1] - lat[k])
        inserts = np.stack([edge, np.full_like(edge, np.nan), -edge], axis=-1)
        inserts_lat = np.stack([lat_edge, np.full_like(edge, np.nan), lat_edge], axis=-1)
        pieces_lon, pieces_lat = [], []
        start = 0
        for j, idx in enumerate(k):  # a loop over crossings (about two per orbit), not epochs
            pieces_lon += [lon[start : idx + 1], inserts[j]]
            pieces_lat += [lat[start : idx + 1], inserts_lat[j]]
            start = idx + 1
        pieces_lon.append(lon[start:])
        pieces_lat.append(lat[start:])
        return np.concatenate(pieces_lon), np.concatenate(pieces_lat)


def antimeridian_crossings(lon_deg: ArrayLike) -> np.ndarray:
    """Indices k where the track crosses +-180 deg between samples k and k + 1 (a jump of
    more than 180 deg in longitude; samples must be dense enough that no real step exceeds
    180 deg, i.e. much less than half an orbit)."""
    lon = np.asarray(lon_deg, dtype=float)
    return np.flatnonzero(np.abs(np.diff(lon)) > 180.0)


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
