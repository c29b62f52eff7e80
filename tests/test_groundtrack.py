"""Ground track: latitude limits, westward node shift, antimeridian split."""

from __future__ import annotations

import math

import numpy as np
import pytest
from _circular_orbit import circular, plane_basis

from orbitledger.kernel.constants import EARTH
from orbitledger.kernel.groundtrack import antimeridian_crossings, ground_track

pytestmark = pytest.mark.filterwarnings(
    "ignore::orbitledger.kernel.timescales.LeapSecondExtrapolationWarning"
)

A_KM = EARTH.radius_km + 540.0


def _track(i_deg: float = 97.5, days: float = 1.0, step_s: float = 10.0):
    p, q = plane_basis(i_deg, 30.0)
    traj = circular(A_KM, p, q)
    return traj, ground_track(traj, np.arange(0.0, days * 86400.0, step_s))


def test_latitude_reaches_the_inclination_limit() -> None:
    # A circular orbit reaches geocentric latitude 180 - i (retrograde) at its vertex (common
    # practice), with i measured from the true equator of date: the CIP's GCRS direction
    # (X, Y, sqrt(1 - X^2 - Y^2)) from ERFA xys06a (IERS Conventions 2010, Eq. 5.7). The
    # geodetic latitude there lies between that and the surface-point value
    # tan(phi_d) = tan(phi_c) / (1 - f)^2 (WGS-84 f, NIMA TR8350.2).
    import erfa

    traj, gt = _track()
    x, y, _ = erfa.xys06a(traj.start.tt1, traj.start.tt2)
    pole = np.array([x, y, math.sqrt(1 - x * x - y * y)])
    p, q = plane_basis(97.5, 30.0)
    i_true = math.degrees(math.acos(np.dot(np.cross(p, q), pole)))
    phi_c = 180.0 - i_true
    upper = math.degrees(math.atan(math.tan(math.radians(phi_c)) / (1 - EARTH.flattening) ** 2))
    assert phi_c - 0.005 < np.max(gt.lat_deg) < upper + 0.005


def test_successive_node_longitudes_shift_west_by_earth_rotation() -> None:
    # Two-body orbit: the track shifts west by omega_E P per revolution (Curtis 3rd ed., Sec. 4.9
    # / Example 4.12 form; common practice), omega_E = 7.2921150e-5 rad/s (IERS 2010).
    traj, gt = _track(step_s=1.0)
    k = np.flatnonzero((gt.lat_deg[:-1] < 0) & (gt.lat_deg[1:] >= 0))
    frac = -gt.lat_deg[k] / (gt.lat_deg[k + 1] - gt.lat_deg[k])
    lon_node = gt.lon_deg[k] + frac * (((gt.lon_deg[k + 1] - gt.lon_deg[k]) + 180) % 360 - 180)
    shift = ((np.diff(lon_node) + 180.0) % 360.0) - 180.0
    expected = -math.degrees(7.2921150e-5 * traj.period_s)
    # Nutation and the Sun-independent ERA rate are uniform; tolerance 0.001 deg (110 m).
    assert np.allclose(shift, expected, atol=1e-3)


def test_antimeridian_split_for_plotting() -> None:
    _, gt = _track()
    lon, lat = gt.plot_lon_lat()
    breaks = np.flatnonzero(np.isnan(lon))
    crossings = antimeridian_crossings(gt.lon_deg)
    assert breaks.size == crossings.size >= 10  # about one per orbit, 15 orbits a day
    assert np.all(np.abs(lon[breaks - 1]) == 180.0) and np.all(np.abs(lon[breaks + 1]) == 180.0)
    assert np.all(lon[breaks - 1] == -lon[breaks + 1])
    pieces = gt.segments()
    assert len(pieces) == crossings.size + 1
    for piece in pieces:
        assert np.all(np.abs(np.diff(gt.lon_deg[piece])) < 180.0)
    assert sum(p.stop - p.start for p in pieces) == gt.lon_deg.size


def test_height_of_a_circular_orbit_over_the_ellipsoid() -> None:
    # Height above WGS-84 of a sphere of radius a: a - 6378.137 km at the equator, a - 6356.752 km
    # at the poles (NIMA TR8350.2, Tables 3.1 and 3.3).
    _, gt = _track(i_deg=90.0)
    assert np.min(gt.height_km) == pytest.approx(A_KM - 6378.137, abs=0.01)
    assert np.max(gt.height_km) == pytest.approx(A_KM - 6356.752, abs=0.05)
