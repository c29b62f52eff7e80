"""The Earth seen from a satellite: off-nadir and Earth central angles of a ground point, and
the off-nadir angle of a swath's edge.

Spherical-Earth relations of Wertz et al., "Space Mission Engineering: The New SMAD" (2011),
the Earth geometry viewed from space: sin rho = R / r (rho the angular radius of the Earth),
sin eta = sin rho cos eps, lambda = 90 deg - eta - eps, and
tan eta = sin rho sin lambda / (1 - sin rho cos lambda), with eta the off-nadir angle, eps the
elevation at the ground point and lambda the Earth central angle. The vector forms below hold
for any shape of the Earth; the swath relation takes a sphere.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import InputError

__all__ = ["central_angle_deg", "off_nadir_deg", "swath_off_nadir_deg"]


def central_angle_deg(r_km: np.ndarray, site_km: np.ndarray) -> np.ndarray:
    """Earth central angle between position vectors (..., 3), deg."""
    dot = np.sum(r_km * site_km, axis=-1)
    norm = np.linalg.norm(r_km, axis=-1) * np.linalg.norm(site_km, axis=-1)
    return np.degrees(np.arccos(np.clip(dot / norm, -1.0, 1.0)))


def off_nadir_deg(r_km: np.ndarray, site_km: np.ndarray) -> np.ndarray:
    """Angle at the satellite r between the geocentric nadir -r and the target site, deg."""
    d = site_km - r_km
    dot = -np.sum(r_km * d, axis=-1)
    norm = np.linalg.norm(r_km, axis=-1) * np.linalg.norm(d, axis=-1)
    return np.degrees(np.arccos(np.clip(dot / norm, -1.0, 1.0)))


def swath_off_nadir_deg(swath_km: float, altitude_km: float, radius_km: float) -> float:
    """Off-nadir angle (deg) of the edge of a swath ``swath_km`` wide seen from ``altitude_km``
    over a sphere of ``radius_km``: tan eta = sin rho sin lambda / (1 - sin rho cos lambda),
    sin rho = R / (R + h), lambda = w / (2 R) (The New SMAD, Earth geometry viewed from space)."""
    if not (altitude_km > 0.0 and radius_km > 0.0 and swath_km > 0.0):
        raise InputError("swath_km", swath_km, "needs a positive swath, altitude and radius")
    sin_rho = radius_km / (radius_km + altitude_km)
    lam = swath_km / (2.0 * radius_km)
    if lam >= math.acos(sin_rho):
        raise InputError(
            "sensor.swath_km", swath_km, f"reaches beyond the horizon from {altitude_km:.0f} km"
        )
    return math.degrees(math.atan2(sin_rho * math.sin(lam), 1.0 - sin_rho * math.cos(lam)))
