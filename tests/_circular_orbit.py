"""A circular Keplerian orbit written out in closed form, independent of the kernel's
propagators, for the geometry tests (passes, eclipses, ground track)."""

from __future__ import annotations

import math

import numpy as np

from orbitledger.kernel.constants import EARTH
from orbitledger.kernel.propagation import Trajectory
from orbitledger.kernel.timescales import time_scales


def plane_basis(i_deg: float, raan_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors to the ascending node (P) and 90 deg along the orbit (Q), GCRF."""
    i, o = math.radians(i_deg), math.radians(raan_deg)
    p = np.array([math.cos(o), math.sin(o), 0.0])
    q = np.array([-math.cos(i) * math.sin(o), math.cos(i) * math.cos(o), math.sin(i)])
    return p, q


def circular(
    a_km: float,
    p: np.ndarray,
    q: np.ndarray,
    start_utc: str = "2027-03-21T10:30:00Z",
    u0_deg: float = 0.0,
) -> Trajectory:
    """r(t) = a (cos u P + sin u Q), u = u0 + n t, n = sqrt(mu / a^3) (two-body circle)."""
    n = math.sqrt(EARTH.mu_km3_s2 / a_km**3)

    def state(t: np.ndarray):
        u = math.radians(u0_deg) + n * np.asarray(t, dtype=float)
        c, s = np.cos(u)[..., None], np.sin(u)[..., None]
        return a_km * (c * p + s * q), a_km * n * (-s * p + c * q)

    return Trajectory(time_scales(start_utc), state, 2.0 * math.pi / n, "closed-form circle")
