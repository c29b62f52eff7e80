"""Orbit summary against textbook examples, Kepler's third law and the cautions."""

import math

import numpy as np
import pytest

from orbitledger.kernel import (
    EARTH,
    SIDEREAL_DAY_S,
    SUN,
    Body,
    Elements,
    elements_to_state,
    orbit_cautions,
    orbit_summary,
)

CURTIS_EARTH = Body("Earth", 398600.0, 6378.0)  # Curtis's mu and radius


def test_geostationary_radius_from_the_sidereal_day():
    # Geostationary radius 42164.17 km (common practice): a = (mu (T/2pi)^2)^(1/3) with the
    # sidereal day; the period of that orbit is the sidereal day to 1 ms.
    a = (EARTH.mu_km3_s2 * (SIDEREAL_DAY_S / (2 * math.pi)) ** 2) ** (1 / 3)
    assert abs(a - 42164.17) < 0.01
    s = orbit_summary(Elements(a, 0.0, 0.0, 0.0, 0.0, 0.0))
    assert abs(s["period_s"] - SIDEREAL_DAY_S) < 1e-3
    assert abs(s["speed_km_s"] - 3.0747) < 1e-4  # geostationary speed 3.0747 km/s (common practice)


@pytest.mark.parametrize(
    "a_1e6_km, period_days",
    [  # NASA GSFC Planetary Fact Sheet, semi-major axis and sidereal orbit period (from memory)
        (57.909, 87.969),  # Mercury
        (108.209, 224.701),  # Venus
        (149.596, 365.256),  # Earth
        (227.923, 686.980),  # Mars
        (778.570, 4332.589),  # Jupiter
    ],
)
def test_keplers_third_law_for_the_planets(a_1e6_km, period_days):
    # T = 2 pi sqrt(a^3 / GM_sun). The planet's own mass (up to 1e-3 of the Sun's, Jupiter)
    # and the fact sheet's rounding allow 1e-3 relative. (The outer planets' tabulated mean
    # distances include perturbations of that order and more, so they are left out.)
    s = orbit_summary(Elements(a_1e6_km * 1e6, 0.0, 0.0, 0.0, 0.0, 0.0), SUN)
    assert abs(s["period_s"] / 86400.0 / period_days - 1.0) < 1e-3


def test_curtis_example_3_1_orbit():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 3.1: perigee
    # 9600 km, apogee 21000 km -> e = 0.37255, h = 72472 km^2/s, T = 18834 s (5 digits).
    a = (9600.0 + 21000.0) / 2.0
    e = (21000.0 - 9600.0) / (21000.0 + 9600.0)
    s = orbit_summary(Elements(a, e, 0.0, 0.0, 0.0, 0.0), CURTIS_EARTH)
    assert abs(s["specific_angular_momentum_km2_s"] - 72472.0) < 1.0
    assert abs(s["period_s"] - 18834.0) < 1.0
    assert abs(s["periapsis_radius_km"] - 9600.0) < 1e-9
    assert abs(s["apoapsis_radius_km"] - 21000.0) < 1e-9
    # vis-viva at the apsides equals h / r there (conservation of angular momentum)
    assert abs(s["speed_periapsis_km_s"] - 72472.0 / 9600.0) < 1e-4
    assert abs(s["speed_apoapsis_km_s"] - 72472.0 / 21000.0) < 1e-4
    assert abs(s["areal_velocity_km2_s"] - 72472.0 / 2.0) < 0.5


def test_curtis_example_3_5_hyperbola():
    # Curtis 3rd ed., Example 3.5: perigee 6678 km at 15 km/s -> e = 2.7696; at theta = 100 deg
    # r = 48497 km (5 digits). v_inf^2 = v_p^2 - 2 mu / r_p (vis-viva at infinity).
    rp, vp = 6678.0, 15.0
    e = (rp * vp) ** 2 / (398600.0 * rp) - 1.0
    s = orbit_summary(Elements(rp / (1.0 - e), e, 0.0, 0.0, 0.0, 100.0), CURTIS_EARTH)
    assert abs(s["radius_km"] - 48497.0) < 1.0
    assert abs(s["v_inf_km_s"] - math.sqrt(vp**2 - 2 * 398600.0 / rp)) < 1e-9
    assert abs(s["c3_km2_s2"] - s["v_inf_km_s"] ** 2) < 1e-9
    assert s["period_s"] == math.inf and s["apoapsis_radius_km"] == math.inf
    assert math.isnan(s["speed_apoapsis_km_s"])


def test_current_point_against_the_state():
    # Radius, speed, flight-path angle and escape speed at nu agree with the Cartesian state
    # (flight-path angle: sin(gamma) = r . v / (|r| |v|), Vallado 4th ed., Ch. 2).
    el = Elements(26600.0, 0.74, 63.4, 10.0, 270.0, 123.0)
    s = orbit_summary(el)
    r, v = elements_to_state(el)
    rm, vm = np.linalg.norm(r), np.linalg.norm(v)
    assert abs(s["radius_km"] - rm) < 1e-9 and abs(s["speed_km_s"] - vm) < 1e-12
    gamma = math.degrees(math.asin(float(r @ v) / (rm * vm)))
    assert abs(s["flight_path_angle_deg"] - gamma) < 1e-9
    assert abs(s["escape_speed_km_s"] - math.sqrt(2 * EARTH.mu_km3_s2 / rm)) < 1e-12
    assert abs(s["specific_energy_km2_s2"] - (0.5 * vm * vm - EARTH.mu_km3_s2 / rm)) < 1e-11


def test_vectorised_summary():
    a = np.array([7000.0, 42164.17, -20000.0])
    s = orbit_summary(Elements(a, np.array([0.001, 0.0, 1.5]), 0.0, 0.0, 0.0, 0.0))
    assert s["period_s"].shape == (3,) and s["period_s"][2] == math.inf
    single = orbit_summary(Elements(7000.0, 0.001, 0.0, 0.0, 0.0, 0.0))
    assert isinstance(single["period_s"], float)
    assert single["period_s"] == s["period_s"][0]


def test_cautions():
    # Kestrel-2 nominal orbit: no caution.
    assert orbit_cautions(Elements(6978.137, 0.001, 97.8, 0.0, 0.0, 0.0)) == []
    inside = orbit_cautions(Elements(6400.0, 0.01, 97.8, 0.0, 0.0, 0.0))
    assert len(inside) == 1 and "inside Earth" in inside[0] and "licensing authority" in inside[0]
    low = orbit_cautions(Elements(6600.0, 0.02, 97.8, 0.0, 0.0, 0.0))  # periapsis 90 km
    assert len(low) == 1 and "re-entry" in low[0] and "licensed practice" in low[0]
    escape = orbit_cautions(Elements(-20000.0, 1.5, 30.0, 0.0, 0.0, 0.0))
    assert len(escape) == 1 and "hyperbolic" in escape[0] and "C3 = 19.9300" in escape[0]
    many = orbit_cautions(Elements(np.array([6400.0, 7000.0]), 0.01, 97.8, 0.0, 0.0, 0.0))
    assert many[0].startswith("1 of 2 orbits")
