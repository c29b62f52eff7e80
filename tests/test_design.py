"""Design helpers against well-known missions' parameters and textbook results."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import (
    EARTH,
    Elements,
    InputError,
    repeat_ground_track_sma_km,
    sun_synchronous_inclination_deg,
)
from orbitledger.kernel.design import (
    CRITICAL_INCLINATION_DEG,
    frozen_orbit,
    geosynchronous_radius_km,
    ltan_drift_h_per_day,
    molniya_orbit,
    repeat_ground_track_solutions,
    sun_synchronous_altitude_km,
    sun_synchronous_repeat,
)

R_E = EARTH.radius_km


def test_landsat_8_repeat_track():
    # Landsat 8 (from memory): sun-synchronous, about 705 km, 98.2 deg, 233 revolutions in
    # 16 days. "705 km" is a rounded nominal altitude; the mean-element solution sits within a
    # few km of it.
    a = repeat_ground_track_sma_km(233, 16, 98.2)
    assert abs((a - R_E) - 705.0) < 8.0  # km
    sso = sun_synchronous_repeat(233, 16)
    assert abs(sso.i_deg - 98.2) < 0.05  # deg
    assert abs(sso.altitude_km - (a - R_E)) < 0.1  # km: i barely moves a


def test_sentinel_2_repeat_track():
    # Sentinel-2 (from memory): 786 km, 98.62 deg, 143 revolutions in 10 days.
    sso = sun_synchronous_repeat(143, 10)
    assert abs(sso.altitude_km - 786.0) < 3.0  # km
    assert abs(sso.i_deg - 98.62) < 0.1  # deg (mean vs published osculating inclination)
    a = repeat_ground_track_sma_km(143, 10, 98.62)
    assert abs((a - R_E) - 786.0) < 3.0


def test_repeat_track_broadcasts():
    a = repeat_ground_track_sma_km(
        np.array([233, 143]), np.array([16, 10]), np.array([98.2, 98.62])
    )
    assert a.shape == (2,)
    assert abs(a[0] - repeat_ground_track_sma_km(233, 16, 98.2)) < 1e-9


def test_repeat_track_period_matches_the_nodal_day():
    # Definition check (Vallado 4th ed., Sec. 11.4.2): k nodal periods = m nodal days, with the
    # J2 rates of Vallado Eq. 9-41 written out here independently of the kernel.
    k, m, i = 15, 1, math.radians(97.0)
    a = repeat_ground_track_sma_km(k, m, 97.0)
    n = math.sqrt(EARTH.mu_km3_s2 / a**3)
    f = n * EARTH.j2 * (R_E / a) ** 2
    raan = -1.5 * f * math.cos(i)
    argp = 0.75 * f * (5 * math.cos(i) ** 2 - 1)
    mdot = n + 0.75 * f * (3 * math.cos(i) ** 2 - 1)
    nodal_period = 2 * math.pi / (mdot + argp)
    nodal_day = 2 * math.pi / (EARTH.rotation_rate_rad_s - raan)
    assert abs(k * nodal_period - m * nodal_day) < 1e-3  # s


def test_repeat_track_solutions_in_a_band():
    sols = repeat_ground_track_solutions(690.0, 720.0, 16)
    pairs = {(s.revolutions, s.days) for s in sols}
    assert (233, 16) in pairs  # Landsat 8 (from memory)
    assert all(math.gcd(s.revolutions, s.days) == 1 for s in sols)
    assert all(690.0 <= s.altitude_km <= 720.0 for s in sols)
    assert [s.altitude_km for s in sols] == sorted(s.altitude_km for s in sols)
    fixed = repeat_ground_track_solutions(690.0, 720.0, 16, i_deg=98.2)
    assert all(s.i_deg == 98.2 for s in fixed)
    with pytest.raises(InputError, match="no repeat ground track"):
        repeat_ground_track_solutions(700.0, 700.5, 2)


def test_repeat_track_inside_the_body_refused():
    with pytest.raises(InputError, match="revolutions"):
        repeat_ground_track_sma_km(20, 1, 98.0)
    with pytest.raises(InputError, match="days"):
        repeat_ground_track_sma_km(14, 0, 98.0)


def test_sun_synchronous_altitude_inverts_the_inclination():
    # Landsat 8 (from memory): 705 km gives 98.2 deg.
    assert abs(sun_synchronous_altitude_km(98.2) - 705.0) < 5.0  # km
    alts = sun_synchronous_altitude_km(np.array([97.4, 98.0, 99.0]), 0.001)
    back = sun_synchronous_inclination_deg(alts + R_E, 0.001)
    assert np.all(np.abs(back - [97.4, 98.0, 99.0]) < 1e-9)
    with pytest.raises(InputError, match="i_deg"):
        sun_synchronous_altitude_km(80.0)


def test_ltan_drift():
    # Common practice: a polar orbit's node is fixed in inertial space, so its local time
    # drifts by -24 h in one tropical year; an exactly sun-synchronous orbit does not drift.
    polar = ltan_drift_h_per_day(Elements(R_E + 700.0, 0.0, 90.0, 0.0, 0.0, 0.0))
    assert abs(polar * 365.24219 + 24.0) < 1.0 / 3600.0  # 1 s per year
    i_ss = sun_synchronous_inclination_deg(R_E + 700.0)
    assert abs(ltan_drift_h_per_day(Elements(R_E + 700.0, 0.0, i_ss, 0.0, 0.0, 0.0))) < 1e-12
    # slightly above the sun-synchronous inclination the node turns faster: LTAN gets later
    assert ltan_drift_h_per_day(Elements(R_E + 700.0, 0.0, i_ss + 0.1, 0.0, 0.0, 0.0)) > 0.0


def test_frozen_orbit_for_low_sun_synchronous_missions():
    # Common practice: frozen low sun-synchronous orbits at 700-800 km fly e ~ 0.0011-0.0012
    # with argp = 90 deg. The classical J2-J3 result (Vallado 4th ed., Sec. 11.4.3) gives about
    # 0.00104; the remaining ~10 % comes from the higher odd zonals, outside this model.
    for alt, inc in ((705.0, 98.2), (786.0, 98.62)):
        fz = frozen_orbit(R_E + alt, inc)
        assert 0.00095 < fz.e < 0.00125
        assert fz.argp_deg == 90.0
    # no J3, nothing to balance: circular
    from dataclasses import replace

    assert frozen_orbit(R_E + 700.0, 98.0, replace(EARTH, j3=0.0)).e == 0.0


def test_critical_inclination():
    # Textbook (Vallado 4th ed., Sec. 9.6): arccos(1/sqrt 5) = 63.4349 deg.
    assert abs(CRITICAL_INCLINATION_DEG - 63.4349) < 1e-4


def test_geostationary_radius():
    # Common practice: the geostationary radius is 42 164 km (35 786 km altitude).
    assert abs(geosynchronous_radius_km() - 42164.0) < 0.5  # km
    assert abs(geosynchronous_radius_km() - R_E - 35786.0) < 0.5


def test_molniya():
    # Common practice: Molniya orbits have a period of half a sidereal day (about 718 min), the
    # critical inclination 63.4 deg and a semi-major axis of about 26 560 km.
    orb = molniya_orbit(600.0)
    assert abs(orb.period_s / 60.0 - 718.0) < 1.0  # minutes
    assert abs(orb.a_km - 26560.0) < 15.0
    assert orb.i_deg == CRITICAL_INCLINATION_DEG
    assert abs(orb.a_km * (1 - orb.e) - R_E - 600.0) < 1e-6
