"""Classical orbital elements.

Conventions for the singular orbits (documented here once, used everywhere):

- circular (e = 0): the argument of perigee is 0 and ``nu_deg`` is the argument of latitude,
  measured from the ascending node;
- equatorial (i = 0 or 180 deg): the RAAN is 0 and ``argp_deg`` is the longitude of periapsis,
  measured from the GCRF x axis;
- circular and equatorial: RAAN and argument of perigee are 0 and ``nu_deg`` is the true
  longitude, measured from the GCRF x axis.

Angles other than the inclination are normalised to [0, 360) deg; the inclination lies in
[0, 180] deg. Hyperbolic orbits carry a negative semi-major axis (a = -mu / v_inf^2).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["Elements"]


@dataclass(frozen=True)
class Elements:
    """Osculating classical elements; each field a float or an array (all broadcast together).

    a_km: semi-major axis, km (negative for e > 1)
    e: eccentricity
    i_deg: inclination, deg in [0, 180]
    raan_deg: right ascension of the ascending node, deg
    argp_deg: argument of periapsis, deg
    nu_deg: true anomaly, deg
    """

    a_km: ArrayLike
    e: ArrayLike
    i_deg: ArrayLike
    raan_deg: ArrayLike
    argp_deg: ArrayLike
    nu_deg: ArrayLike

    @property
    def p_km(self) -> np.ndarray:
        """Semi-latus rectum a (1 - e^2), km; finite for every conic."""
        return np.asarray(self.a_km) * (1.0 - np.asarray(self.e) ** 2)
