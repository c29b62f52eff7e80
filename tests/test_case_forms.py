"""The orbit of a case as the kernel sees it, and the same orbit in another form.

Outside references: Curtis, Orbital Mechanics for Engineering Students, 3rd ed. (2014),
Example 4.7 (elements to state, a hyperbola); Vallado, Fundamentals of Astrodynamics and
Applications, 4th ed. (2013), Example 2-1 (Kepler's equation); WGS-84 (NIMA TR8350.2) for
the equatorial radius behind altitude_km; vis-viva for the speed at periapsis.
"""

from __future__ import annotations

import copy
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from orbitledger.case import CaseError, case_from_data, starter_case
from orbitledger.case.starter import STARTER_DATA

MM_KM = 1e-6  # one millimetre, in km
MM_S_KM_S = 1e-6  # one millimetre per second, in km/s


def with_orbit(orbit: dict, body: dict | None = None):
    raw = copy.deepcopy(STARTER_DATA)
    raw["orbit"] = orbit
    if body is not None:
        raw["body"] = body
    return case_from_data(raw)


def test_curtis_example_4_7_state_from_elements():
    # Curtis 3rd ed., Example 4.7: h = 80 000 km^2/s, e = 1.4, RAAN 40, i 30, argp 60, nu 30 deg,
    # mu = 398 600 km^3/s^2. Book answer (values quoted from memory):
    # r = [-4039.9, 4814.56, 3628.62] km, v = [-10.386, -4.77192, 1.74388] km/s.
    mu, h, e = 398600.0, 80000.0, 1.4
    a_km = -(h * h / mu) / (e * e - 1.0)
    case = with_orbit(
        {
            "form": "classical",
            "a_km": a_km,
            "e": e,
            "i_deg": 30.0,
            "raan_deg": 40.0,
            "argp_deg": 60.0,
            "nu_deg": 30.0,
        },
        body={
            "name": "Earth",
            "mu_km3_s2": mu,
            "sources": {"mu_km3_s2": "Curtis 3rd ed., Table A.2"},
        },
    )
    r_km, v_km_s = case.state()
    # Tolerance: half a unit in the last digit the book prints, per component (5 m .. 50 m,
    # 5 mm/s .. 0.5 m/s).
    r_half_unit = np.array([0.05, 0.005, 0.005])
    v_half_unit = np.array([5e-4, 5e-6, 5e-6])
    assert np.all(np.abs(r_km - [-4039.9, 4814.56, 3628.62]) <= r_half_unit)
    assert np.all(np.abs(v_km_s - [-10.386, -4.77192, 1.74388]) <= v_half_unit)


def test_vallado_example_2_1_mean_anomaly_to_true():
    # Vallado 4th ed., Example 2-1: M = 235.4 deg, e = 0.4 -> E = 220.512074767522 deg (from memory).
    eccentric = math.radians(220.512074767522)
    e = 0.4
    nu_ref = 2.0 * math.atan2(
        math.sqrt(1 + e) * math.sin(eccentric / 2), math.sqrt(1 - e) * math.cos(eccentric / 2)
    )
    orbit = dict(STARTER_DATA["orbit"], e=e, mean_anomaly_deg=235.4)
    orbit.pop("nu_deg")
    elements = with_orbit(orbit).elements()
    arcsec = abs(float(elements.nu_deg) - math.degrees(nu_ref) % 360.0) * 3600.0
    assert arcsec < 1e-4


def test_altitude_is_measured_from_the_wgs84_equatorial_radius():
    # WGS-84 semi-major axis 6378.137 km (NIMA TR8350.2, Table 3.1).
    assert starter_case().elements().a_km == pytest.approx(6378.137 + 540.0, abs=MM_KM)


def test_apsides_form_puts_periapsis_and_apoapsis_at_the_given_altitudes():
    base = {
        "form": "apsides",
        "periapsis_alt_km": 500.0,
        "apoapsis_alt_km": 580.0,
        "i_deg": 97.5,
        "raan_deg": 30.0,
        "argp_deg": 90.0,
    }
    mu, radius = 398600.4418, 6378.137  # WGS-84 (NIMA TR8350.2)
    at_periapsis = with_orbit(dict(base, nu_deg=0.0))
    r_km, v_km_s = at_periapsis.state()
    assert np.linalg.norm(r_km) == pytest.approx(radius + 500.0, abs=MM_KM)
    a_km = radius + 540.0
    # Vis-viva (common practice; Vallado 4th ed. eq. 1-31): v^2 = mu (2/r - 1/a).
    speed = math.sqrt(mu * (2.0 / (radius + 500.0) - 1.0 / a_km))
    assert np.linalg.norm(v_km_s) == pytest.approx(speed, abs=MM_S_KM_S)
    r_apo, _ = with_orbit(dict(base, nu_deg=180.0)).state()
    assert np.linalg.norm(r_apo) == pytest.approx(radius + 580.0, abs=MM_KM)


def _same_orbit(first, second):
    r1, v1 = first.state()
    r2, v2 = second.state()
    assert np.max(np.abs(r1 - r2)) < 1.0 * MM_KM
    assert np.max(np.abs(v1 - v2)) < 1.0 * MM_S_KM_S


@pytest.mark.parametrize(
    "orbit",
    [
        dict(STARTER_DATA["orbit"]),
        {
            "form": "classical",
            "a_km": 26560.0,
            "e": 0.72,
            "i_deg": 63.4,
            "raan_deg": 300.0,
            "argp_deg": 270.0,
            "mean_anomaly_deg": 10.0,
        },
        {
            "form": "classical",
            "altitude_km": 35786.0,
            "e": 0.0002,
            "i_deg": 0.05,
            "raan_deg": 75.0,
            "argp_deg": 10.0,
            "nu_deg": 123.0,
        },
        {
            "form": "classical",
            "a_km": 7000.0,
            "e": 0.01,
            "i_deg": 179.0,
            "raan_deg": 0.0,
            "argp_deg": 0.0,
            "nu_deg": 359.0,
        },
    ],
)
def test_classical_apsides_cartesian_classical_round_trip_within_a_millimetre(orbit):
    start = with_orbit(orbit)
    apsides = start.with_orbit_form("apsides")
    cartesian = apsides.with_orbit_form("cartesian")
    back = cartesian.with_orbit_form("classical")
    assert (apsides.orbit.form, cartesian.orbit.form, back.orbit.form) == (
        "apsides",
        "cartesian",
        "classical",
    )
    for other in (apsides, cartesian, back):
        _same_orbit(start, other)
    assert back.orbit.a_km == pytest.approx(float(start.elements().a_km), abs=MM_KM)
    assert back.meta == start.meta and back.stations == start.stations


def test_the_kind_of_anomaly_is_kept_between_classical_and_apsides():
    orbit = dict(STARTER_DATA["orbit"], mean_anomaly_deg=45.0)
    orbit.pop("nu_deg")
    apsides = with_orbit(orbit).with_orbit_form("apsides")
    assert apsides.orbit.mean_anomaly_deg == 45.0 and apsides.orbit.nu_deg is None
    back = apsides.with_orbit_form("classical")
    assert back.orbit.altitude_km == pytest.approx(540.0, abs=MM_KM) and back.orbit.a_km is None


def test_hyperbolic_orbits_convert_but_have_no_apsides_form():
    hyper = with_orbit(
        {
            "form": "classical",
            "a_km": -20000.0,
            "e": 1.5,
            "i_deg": 28.5,
            "raan_deg": 10.0,
            "argp_deg": 20.0,
            "nu_deg": 30.0,
        }
    )
    _same_orbit(hyper, hyper.with_orbit_form("cartesian").with_orbit_form("classical"))
    assert hyper.with_orbit_form("cartesian").with_orbit_form("classical").orbit.a_km < 0
    with pytest.raises(CaseError) as caught:
        hyper.with_orbit_form("apsides")
    assert caught.value.field == "orbit.form" and "e < 1" in caught.value.reason
    with pytest.raises(CaseError, match="must be one of"):
        hyper.with_orbit_form("keplerian")


def test_cartesian_state_is_returned_as_given():
    orbit = {"form": "cartesian", "r_km": [7000.0, -12.5, 3.25], "v_km_s": [0.001, 7.5, 1.0]}
    r_km, v_km_s = with_orbit(orbit).state()
    assert r_km.tolist() == orbit["r_km"] and v_km_s.tolist() == orbit["v_km_s"]


@settings(max_examples=60, deadline=None)
@given(
    a_km=st.floats(6600.0, 60000.0),
    e=st.floats(0.0, 0.9),
    i_deg=st.floats(0.0, 180.0),
    raan_deg=st.floats(0.0, 359.999),
    argp_deg=st.floats(0.0, 359.999),
    nu_deg=st.floats(0.0, 359.999),
)
def test_form_round_trip_property(a_km, e, i_deg, raan_deg, argp_deg, nu_deg):
    # Property (common practice): re-expressing an orbit never moves the spacecraft; positions
    # agree within 1 mm and velocities within 1 mm/s, circular and equatorial orbits included.
    start = with_orbit(
        {
            "form": "classical",
            "a_km": a_km,
            "e": e,
            "i_deg": i_deg,
            "raan_deg": raan_deg,
            "argp_deg": argp_deg,
            "nu_deg": nu_deg,
        }
    )
    back = (
        start.with_orbit_form("apsides").with_orbit_form("cartesian").with_orbit_form("classical")
    )
    _same_orbit(start, back)
