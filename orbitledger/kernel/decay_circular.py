"""Decay of a circular orbit by one quadrature, in a density that does not change with time.

The circular case of the orbit-averaged drag rates of ``orbitledger.kernel.decay`` (King-Hele,
*Satellite Orbits in an Atmosphere: Theory and Applications*, Blackie 1987): v^2 = mu / a and
e stays 0, so the time to fall from a0 to the re-entry radius is one integral over a, taken
with three Gauss-Legendre nodes per 1-km cell of the density profile.
"""

from __future__ import annotations

import math

import numpy as np

from .constants import Body
from .density import DensityProfile

__all__ = ["circular_decay"]

_GL3_X = np.array([-math.sqrt(0.6), 0.0, math.sqrt(0.6)])
_GL3_W = np.array([5.0, 8.0, 5.0]) / 9.0


def circular_decay(
    a0_km: float,
    *,
    i_rad: float,
    ballistic_coefficient_kg_m2: float,
    profile: DensityProfile,
    radius_km: float,
    reentry_altitude_km: float,
    body: Body,
) -> tuple[np.ndarray, np.ndarray]:
    """Decay of a circular orbit in a density that does not change with time, by quadrature.

    Returns (a_km, t_s): the semi-major axis from ``a0_km`` down to the re-entry radius at
    the profile's cell edges, and the time (s) at which the orbit passes each, from 0 at
    ``a0_km``; the last time is the lifetime. T = int B / (1e3 F rho(a - R) sqrt(mu a)) da
    (the circular case of the rates in the module docstring: v^2 = mu / a), three
    Gauss-Legendre nodes per cell of the profile (ln rho is linear in each, so the rule is
    exact to about 1e-9).
    """
    mu, w = body.mu_km3_s2, body.rotation_rate_rad_s
    r_re = radius_km + float(reentry_altitude_km)
    if a0_km <= r_re:
        return np.array([a0_km]), np.zeros(1)
    lo = (r_re - radius_km - profile.h0_km) / profile.dh_km
    hi = (a0_km - radius_km - profile.h0_km) / profile.dh_km
    inner = np.arange(math.floor(lo) + 1, math.ceil(hi))
    inner_a = radius_km + profile.h0_km + profile.dh_km * inner
    inner_a = inner_a[(inner_a > r_re) & (inner_a < a0_km)]
    edges = np.concatenate(([a0_km], inner_a[::-1], [r_re]))
    mid, half = 0.5 * (edges[:-1] + edges[1:]), 0.5 * (edges[:-1] - edges[1:])
    nodes = mid[:, None] + half[:, None] * _GL3_X
    rotation = (1.0 - nodes * w * math.cos(i_rad) / np.sqrt(mu / nodes)) ** 2
    with np.errstate(over="ignore"):
        dt_da = (
            ballistic_coefficient_kg_m2
            * np.exp(-profile.log_density(nodes - radius_km))
            / (1e3 * rotation * np.sqrt(mu * nodes))
        )
    cell_t = (dt_da @ _GL3_W) * half
    return edges, np.concatenate(([0.0], np.cumsum(cell_t)))
