"""Physical constants and central bodies, each value beside its published source.

Units: km, km^3/s^2, s, rad/s. The kernel takes bodies as arguments (``body=EARTH``) and never
reads a global setting, so a study can state a different model explicitly.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

__all__ = [
    "Body",
    "EARTH",
    "SUN",
    "MOON",
    "MARS",
    "BODIES",
    "AU_KM",
    "G0_M_S2",
    "SECONDS_PER_DAY",
    "SIDEREAL_DAY_S",
    "TROPICAL_YEAR_DAYS",
    "SPEED_OF_LIGHT_KM_S",
    "SOLAR_FLUX_1AU_W_M2",
]


@dataclass(frozen=True)
class Body:
    """A central body: gravity parameter, shape, zonal harmonics, rotation.

    ``sources`` maps each field name to the publication its value comes from.
    Zonal harmonics are unnormalised (J2 = -C20 * sqrt(5) for a normalised C20).
    """

    name: str
    mu_km3_s2: float
    radius_km: float
    flattening: float = 0.0
    j2: float = 0.0
    j3: float = 0.0
    j4: float = 0.0
    rotation_rate_rad_s: float = 0.0
    sources: Mapping[str, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        object.__setattr__(self, "sources", MappingProxyType(dict(self.sources)))

    @property
    def polar_radius_km(self) -> float:
        return self.radius_km * (1.0 - self.flattening)


_WGS84 = (
    "NIMA TR8350.2, Department of Defense World Geodetic System 1984, 3rd ed. (2000), Table 3.1"
)
_EGM96 = (
    "EGM96 (Lemoine et al. 1998, NASA/TP-1998-206861), coefficient file egm96_to360.ascii: "
    "fully normalised C20 = -0.484165371736e-3, C30 = 0.957254173792e-6, "
    "C40 = 0.539873863789e-6; J_n = -sqrt(2n + 1) C_n0"
)

EARTH = Body(
    name="Earth",
    # WGS-84 GM including the atmosphere: 3.986004418e14 m^3/s^2.
    mu_km3_s2=398600.4418,
    radius_km=6378.137,
    flattening=1.0 / 298.257223563,
    j2=4.84165371736e-4 * math.sqrt(5.0),
    j3=-9.57254173792e-7 * math.sqrt(7.0),
    j4=-5.39873863789e-7 * 3.0,
    # IERS Conventions (2010), Table 1.1: nominal mean angular velocity of the Earth.
    rotation_rate_rad_s=7.292115e-5,
    sources={
        "mu_km3_s2": _WGS84,
        "radius_km": _WGS84,
        "flattening": _WGS84,
        "j2": _EGM96,
        "j3": _EGM96,
        "j4": _EGM96,
        "rotation_rate_rad_s": "IERS Conventions (2010), IERS Technical Note 36, Table 1.1",
    },
)

SUN = Body(
    name="Sun",
    # IAU 2009 system of astronomical constants, TDB-compatible GM of the Sun.
    mu_km3_s2=1.32712440041e11,
    # IAU 2015 Resolution B3, nominal solar radius.
    radius_km=695700.0,
    sources={
        "mu_km3_s2": "IAU 2009 System of Astronomical Constants (Luzum et al. 2011), TDB-compatible",
        "radius_km": "IAU 2015 Resolution B3, nominal solar radius",
    },
)

MOON = Body(
    name="Moon",
    mu_km3_s2=4902.800066,
    radius_km=1737.4,
    sources={
        "mu_km3_s2": "JPL DE430 (Folkner et al. 2014, IPN Progress Report 42-196), Table 8",
        "radius_km": "IAU WGCCRE report 2015 (Archinal et al. 2018), mean radius",
    },
)

MARS = Body(
    name="Mars",
    mu_km3_s2=42828.375214,
    radius_km=3396.19,
    flattening=(3396.19 - 3376.20) / 3396.19,
    j2=1.96045e-3,
    rotation_rate_rad_s=7.088218e-5,
    sources={
        "mu_km3_s2": "JPL DE430 (Folkner et al. 2014), Mars system GM",
        "radius_km": "IAU WGCCRE report 2009 (Archinal et al. 2011), equatorial radius",
        "flattening": "IAU WGCCRE report 2009, equatorial 3396.19 km and polar 3376.20 km radii",
        "j2": "NASA GSFC Mars Fact Sheet, J2 = 1960.45e-6",
        "rotation_rate_rad_s": "NASA GSFC Mars Fact Sheet, sidereal rotation period 24.6229 h",
    },
)

BODIES: Mapping[str, Body] = MappingProxyType({b.name.lower(): b for b in (EARTH, SUN, MOON, MARS)})

# IAU 2012 Resolution B2: the astronomical unit is exactly 149 597 870 700 m.
AU_KM = 149_597_870.700
# Standard acceleration of gravity, 3rd CGPM (1901): exactly 9.80665 m/s^2.
G0_M_S2 = 9.80665
SECONDS_PER_DAY = 86_400.0
# Mean sidereal day, 23 h 56 min 4.0905 s (Astronomical Almanac, glossary).
SIDEREAL_DAY_S = 86_164.0905
# Mean tropical year, 365.24219 days (Explanatory Supplement to the Astronomical Almanac, 1992).
TROPICAL_YEAR_DAYS = 365.24219
# Speed of light, exact by the definition of the metre (17th CGPM, 1983).
SPEED_OF_LIGHT_KM_S = 299_792.458
# Total solar irradiance at 1 au, 1361 W/m^2 (IAU 2015 Resolution B3, nominal).
SOLAR_FLUX_1AU_W_M2 = 1361.0
