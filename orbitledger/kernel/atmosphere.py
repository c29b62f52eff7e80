"""Atmospheric density: a piecewise-exponential model with an explicit solar-activity level.

Base model (the "moderate" level): the exponential atmosphere of Vallado, *Fundamentals of
Astrodynamics and Applications*, 4th ed. (2013), Table 8-4, which tabulates a
base density and a scale height for 28 altitude bands from 0 to 1000 km (CIRA-72 above
25 km, the U.S. Standard Atmosphere 1976 below). In a band starting at h0,

    rho(h) = rho0 * exp(-(h - h0) / H)

Heights are above the ellipsoid, km; densities kg/m^3. Above 1000 km the last band continues;
below 0 km the sea-level density is returned (drag there is outside any orbit question).

Solar activity is an explicit input, one of three named levels. The table stands for moderate
activity; "low" and "high" scale it by an altitude-dependent factor taken from a published
flux-scaled model, the IPS (Australian Space Weather Services) satellite-decay atmosphere:

    T = 900 + 2.5 (F10.7 - 70) + 1.5 Ap    K
    m = 27 - 0.012 (h - 200)                (valid 180-500 km)
    H = T / m                               km
    rho = 6e-10 exp(-(h - 175) / H)         kg/m^3

(IPS Radio and Space Services, "Satellite Orbital Decay Calculations", 1999.) The factor for
a level is rho_IPS(h; level) / rho_IPS(h; moderate): exactly 1 at and below 175 km (where every
flux gives the same density in that model), the model's ratio from 175 to 500 km, and held at
its 500-km value above (the IPS model is not valid higher; this understates the solar-cycle
swing above 500 km, where the real one keeps growing). The levels' F10.7 values (solar flux
units) are the usual solar-minimum / mean / solar-maximum figures (common practice); the
geomagnetic index Ap is held at 15 for all three.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError

__all__ = [
    "DENSITY_MODEL_NAME",
    "SolarActivityLevel",
    "SOLAR_ACTIVITY_LEVELS",
    "solar_activity_level",
    "density_kg_m3",
    "density_and_scale_height",
]

DENSITY_MODEL_NAME = (
    "piecewise-exponential atmosphere, Vallado 4th ed. (2013) Table 8-4 (CIRA-72 / US Std Atm "
    "1976), scaled for solar activity by the IPS flux-scaled decay model (1999)"
)

# Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Table 8-4:
# (base altitude h0 km, nominal density rho0 kg/m^3, scale height H km).
_TABLE_8_4 = (
    (0.0, 1.225, 7.249),
    (25.0, 3.899e-2, 6.349),
    (30.0, 1.774e-2, 6.682),
    (40.0, 3.972e-3, 7.554),
    (50.0, 1.057e-3, 8.382),
    (60.0, 3.206e-4, 7.714),
    (70.0, 8.770e-5, 6.549),
    (80.0, 1.905e-5, 5.799),
    (90.0, 3.396e-6, 5.382),
    (100.0, 5.297e-7, 5.877),
    (110.0, 9.661e-8, 7.263),
    (120.0, 2.438e-8, 9.473),
    (130.0, 8.484e-9, 12.636),
    (140.0, 3.845e-9, 16.149),
    (150.0, 2.070e-9, 22.523),
    (180.0, 5.464e-10, 29.740),
    (200.0, 2.789e-10, 37.105),
    (250.0, 7.248e-11, 45.546),
    (300.0, 2.418e-11, 53.628),
    (350.0, 9.518e-12, 53.298),
    (400.0, 3.725e-12, 58.515),
    (450.0, 1.585e-12, 60.828),
    (500.0, 6.967e-13, 63.822),
    (600.0, 1.454e-13, 71.835),
    (700.0, 3.614e-14, 88.667),
    (800.0, 1.170e-14, 124.64),
    (900.0, 5.245e-15, 181.05),
    (1000.0, 3.019e-15, 268.00),
)
_H0_KM = np.array([row[0] for row in _TABLE_8_4])
_RHO0_KG_M3 = np.array([row[1] for row in _TABLE_8_4])
_LOG_RHO0 = np.log(_RHO0_KG_M3)
_SCALE_KM = np.array([row[2] for row in _TABLE_8_4])

# IPS decay model constants (IPS Radio and Space Services 1999, see module docstring).
_IPS_ANCHOR_KM = 175.0
_IPS_TOP_KM = 500.0


@dataclass(frozen=True)
class SolarActivityLevel:
    """A named solar-activity level: the F10.7 and Ap it stands for, and what it means."""

    name: str
    f107_sfu: float
    ap: float
    meaning: str


SOLAR_ACTIVITY_LEVELS: Mapping[str, SolarActivityLevel] = MappingProxyType(
    {
        "low": SolarActivityLevel(
            "low", 70.0, 15.0, "solar minimum, F10.7 = 70 sfu, Ap = 15 (common practice)"
        ),
        "moderate": SolarActivityLevel(
            "moderate",
            150.0,
            15.0,
            "mean activity, F10.7 = 150 sfu, Ap = 15: the tabulated Vallado Table 8-4 densities",
        ),
        "high": SolarActivityLevel(
            "high", 250.0, 15.0, "solar maximum, F10.7 = 250 sfu, Ap = 15 (common practice)"
        ),
    }
)


def solar_activity_level(level: str | SolarActivityLevel) -> SolarActivityLevel:
    """The level named ``level`` ("low", "moderate", "high"), or ``level`` itself if given one.

    Raises InputError(solar_activity) for an unknown name.
    """
    if isinstance(level, SolarActivityLevel):
        return level
    key = str(level).strip().lower()
    if key not in SOLAR_ACTIVITY_LEVELS:
        raise InputError(
            "solar_activity", level, f"must be one of {', '.join(SOLAR_ACTIVITY_LEVELS)}"
        )
    return SOLAR_ACTIVITY_LEVELS[key]


def _ips_log_density(h_km: np.ndarray, level: SolarActivityLevel) -> np.ndarray:
    """Natural log of the IPS model density (kg/m^3) at 175 <= h <= 500 km."""
    temperature_k = 900.0 + 2.5 * (level.f107_sfu - 70.0) + 1.5 * level.ap
    molecular_mass = 27.0 - 0.012 * (h_km - 200.0)
    scale_km = temperature_k / molecular_mass
    return np.log(6e-10) - (h_km - _IPS_ANCHOR_KM) / scale_km


def _activity_log_factor(h_km: np.ndarray, level: SolarActivityLevel) -> np.ndarray:
    """ln(rho_level / rho_moderate) at ``h_km`` (0 at and below 175 km)."""
    moderate = SOLAR_ACTIVITY_LEVELS["moderate"]
    h_clip = np.clip(h_km, _IPS_ANCHOR_KM, _IPS_TOP_KM)
    return _ips_log_density(h_clip, level) - _ips_log_density(h_clip, moderate)


def density_and_scale_height(
    h_km: ArrayLike, solar_activity: str | SolarActivityLevel = "moderate"
) -> tuple[np.ndarray, np.ndarray]:
    """Density (kg/m^3) and the local density scale height (km) at ellipsoidal heights ``h_km``.

    Given ``h_km`` of any shape; returns two arrays of that shape. The scale height is the
    tabulated band value (the local -rho / (d rho / dh) of the moderate table); the
    solar-activity factor changes it only slightly and is not folded in. Source: module
    docstring (Vallado 4th ed. Table 8-4; IPS 1999).
    """
    level = solar_activity_level(solar_activity)
    h = np.asarray(h_km, dtype=float)
    band = np.maximum(np.searchsorted(_H0_KM, h, side="right") - 1, 0)
    above_base = np.maximum(h - _H0_KM[band], 0.0)
    log_rho = _LOG_RHO0[band] - above_base / _SCALE_KM[band]
    if level != SOLAR_ACTIVITY_LEVELS["moderate"]:
        log_rho = log_rho + _activity_log_factor(h, level)
    return np.exp(log_rho), _SCALE_KM[band]


def density_kg_m3(
    h_km: ArrayLike, solar_activity: str | SolarActivityLevel = "moderate"
) -> np.ndarray:
    """Atmospheric density, kg/m^3, at ellipsoidal heights ``h_km`` (any shape).

    Valid for 0-1000 km as tabulated (Vallado 4th ed., Table 8-4), extended as
    described in the module docstring; ``solar_activity`` is "low", "moderate" or "high"
    (see ``SOLAR_ACTIVITY_LEVELS`` for what each means) or a ``SolarActivityLevel``.
    """
    return density_and_scale_height(h_km, solar_activity)[0]
