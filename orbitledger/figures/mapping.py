"""Map geometry for the ground-track figure: the shipped coastline, the antimeridian split,
station visibility circles.

Everything here is on a spherical Earth of the body's equatorial radius: the visibility circle
is a plotting aid (a line about one pixel wide), not a pass prediction; passes come from the
kernel's topocentric geometry on the WGS-84 ellipsoid.
"""

from __future__ import annotations

import json
import math
from functools import lru_cache
from importlib import resources

import numpy as np
from numpy.typing import ArrayLike

from ..kernel.errors import InputError
from ..kernel.groundtrack import split_at_antimeridian

__all__ = [
    "coastline_lon_lat",
    "coastline_source",
    "split_at_antimeridian",
    "visibility_central_angle_deg",
    "small_circle_lon_lat",
]

_COASTLINE = "coastline_110m.json"


@lru_cache(maxsize=1)
def _coastline_document() -> dict:
    text = resources.files("orbitledger").joinpath("data", _COASTLINE).read_text("utf-8")
    return json.loads(text)


@lru_cache(maxsize=1)
def coastline_lon_lat() -> tuple[np.ndarray, np.ndarray]:
    """Natural Earth 1:110m country outlines as one NaN-separated (lon, lat) pair, deg, float32.

    Read from the file shipped in ``orbitledger/data`` (see README-coastline.md); no download.
    """
    doc = _coastline_document()
    scale = float(doc["units_per_degree"])
    pieces = []
    for ring in doc["rings"]:
        xy = np.asarray(ring, dtype=np.float32).reshape(-1, 2) / scale
        pieces.append(xy)
        pieces.append(np.full((1, 2), np.nan, dtype=np.float32))
    xy = np.concatenate(pieces[:-1])
    xy.setflags(write=False)
    return xy[:, 0], xy[:, 1]


def coastline_source() -> str:
    """The attribution line of the shipped coastline (Natural Earth, public domain)."""
    doc = _coastline_document()
    return f"{doc['source']}. {doc['licence']}"


def visibility_central_angle_deg(
    altitude_km: ArrayLike, mask_deg: ArrayLike, radius_km: float
) -> np.ndarray:
    """Earth central angle, deg, from a station to the edge of its visibility circle.

    A satellite at ``altitude_km`` above a spherical body of ``radius_km`` is seen at elevation
    >= ``mask_deg`` from every point within this angle of its sub-satellite point. Wertz and
    Larson, *Space Mission Analysis and Design*, 3rd ed. (1999), Ch. 5, Earth geometry
    viewed from space: angular radius of the Earth sin(rho) = R / (R + h), nadir angle
    sin(eta) = sin(rho) cos(eps), central angle lambda = 90 deg - eps - eta. The ground range is
    lambda (rad) times R.
    """
    h = np.asarray(altitude_km, dtype=float)
    eps = np.asarray(mask_deg, dtype=float)
    if np.any(~np.isfinite(h)) or np.any(h <= 0.0):
        raise InputError("altitude_km", altitude_km, "must be a finite altitude > 0 km")
    if np.any(~np.isfinite(eps)) or np.any(eps < -5.0) or np.any(eps > 90.0):
        raise InputError("elevation_mask_deg", mask_deg, "must be a mask in [-5, 90] deg")
    sin_rho = radius_km / (radius_km + h)
    eta = np.arcsin(sin_rho * np.cos(np.radians(eps)))
    return 90.0 - eps - np.degrees(eta)


def small_circle_lon_lat(
    lat_deg: float, lon_deg: float, radius_deg: float, points: int = 181
) -> tuple[np.ndarray, np.ndarray]:
    """Points of the circle of angular radius ``radius_deg`` around (lat, lon) on a sphere,
    deg, closed (first point repeated), longitudes wrapped to [-180, 180).

    The destination-point formulas of spherical trigonometry (Snyder, *Map Projections: A
    Working Manual*, USGS Professional Paper 1395 (1987), Ch. 5, formulas of the
    sphere) at azimuths 0..360 deg.
    """
    phi = math.radians(lat_deg)
    delta = math.radians(radius_deg)
    az = np.linspace(0.0, 2.0 * np.pi, points)
    sin_lat = math.sin(phi) * math.cos(delta) + math.cos(phi) * math.sin(delta) * np.cos(az)
    lat = np.arcsin(np.clip(sin_lat, -1.0, 1.0))
    dlon = np.arctan2(
        np.sin(az) * math.sin(delta) * math.cos(phi), math.cos(delta) - math.sin(phi) * sin_lat
    )
    lon = (lon_deg + np.degrees(dlon) + 180.0) % 360.0 - 180.0
    return lon, np.degrees(lat)
