"""Accelerations against the potential's gradient, closed forms, handbook magnitudes, astropy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import eval_legendre

from orbitledger.kernel import EARTH, MOON, SUN
from orbitledger.kernel.atmosphere import density_kg_m3
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.forces import (
    ForceModel,
    acceleration_km_s2,
    ballistic_coefficient_kg_m2,
    drag_acceleration_km_s2,
    ellipsoidal_height_km,
    sun_moon_positions_gcrf_km,
    third_body_acceleration_km_s2,
    two_body_acceleration_km_s2,
    zonal_acceleration_km_s2,
)

MU, RE = EARTH.mu_km3_s2, EARTH.radius_km
J = {2: EARTH.j2, 3: EARTH.j3, 4: EARTH.j4}
NM_S2 = 1e-12  # 1 nm/s^2 in km/s^2


def _zonal_potential(r, degree):
    # U_zonal = -(mu/r) sum Jn (R/r)^n Pn(sin phi), the zonal part of the geopotential whose
    # gradient is the acceleration (Montenbruck & Gill, Satellite Orbits, Sec. 3.2, Cn0 = -Jn),
    # with the Legendre polynomials from scipy (an outside reference for Pn).
    rn = np.linalg.norm(r)
    s = r[2] / rn
    return -MU / rn * sum(J[n] * (RE / rn) ** n * eval_legendre(n, s) for n in range(2, degree + 1))


@pytest.mark.parametrize("degree", [2, 3, 4])
@pytest.mark.parametrize(
    "r",
    [
        np.array([6878.0, 0.0, 0.0]),
        np.array([4000.0, -3000.0, 5000.0]),
        np.array([-1200.0, 2500.0, -6500.0]),
    ],
)
def test_zonal_acceleration_is_the_gradient_of_the_zonal_potential(degree, r):
    step = 1e-3  # km; central differences, truncation error ~ step^2 * U''' ~ 1e-16 km/s^2
    grad = np.array(
        [
            (_zonal_potential(r + d, degree) - _zonal_potential(r - d, degree)) / (2 * step)
            for d in np.eye(3) * step
        ]
    )
    assert np.allclose(zonal_acceleration_km_s2(r, degree=degree), grad, rtol=0, atol=NM_S2)


def test_j2_closed_form_at_equator_and_pole():
    # Gradient of the J2 potential U = -(mu J2 R^2 / (2 r^3)) (3 sin^2 phi - 1), by hand:
    # at the equator a_r = -(3/2) J2 mu R^2 / r^4; over the pole a_r = +3 J2 mu R^2 / r^4
    # (Montenbruck & Gill, Satellite Orbits, Sec. 3.2, specialised to n = 2).
    r = 7000.0
    k = J[2] * MU * RE**2 / r**4
    eq = zonal_acceleration_km_s2(np.array([0.0, r, 0.0]))
    pole = zonal_acceleration_km_s2(np.array([0.0, 0.0, r]))
    assert eq == pytest.approx([0.0, -1.5 * k, 0.0], abs=NM_S2)
    assert pole == pytest.approx([0.0, 0.0, 3.0 * k], abs=NM_S2)
    # Textbook magnitude: J2 gravity at the equatorial surface is 1.5 J2 g = 0.0159 m/s^2
    # (about 1/600 of g; common practice).
    surface = np.linalg.norm(zonal_acceleration_km_s2(np.array([RE, 0.0, 0.0]))) * 1e3
    assert surface == pytest.approx(0.0159, abs=0.0001)


def test_zonal_refuses_other_degrees():
    with pytest.raises(InputError, match="zonal_degree"):
        zonal_acceleration_km_s2(np.array([7000.0, 0, 0]), degree=5)


def test_drag_matches_the_drag_equation_with_a_co_rotating_atmosphere():
    # a = -(1/2) rho |v_rel| v_rel / B with v_rel = v - w x r (Montenbruck & Gill Sec. 3.5):
    # an equatorial prograde circular orbit at 400 km sees the air at v - w r.
    r = np.array([RE + 400.0, 0.0, 0.0])
    v_circ = math.sqrt(MU / r[0])
    v = np.array([0.0, v_circ, 0.0])
    b = ballistic_coefficient_kg_m2(48.0, 0.12, 2.2)
    assert b == pytest.approx(48.0 / 0.264)
    acc = drag_acceleration_km_s2(r, v, b)
    v_rel_m_s = (v_circ - EARTH.rotation_rate_rad_s * r[0]) * 1e3
    expected_m_s2 = 0.5 * 3.725e-12 * v_rel_m_s**2 / b  # Vallado Table 8-4 at 400 km
    assert acc * 1e3 == pytest.approx([0.0, -expected_m_s2, 0.0], rel=1e-9, abs=1e-18)
    # Handbook magnitude: drag at 400 km for B ~ 100-200 kg/m^2 is of order 1e-7 to 1e-6 m/s^2
    # (Montenbruck & Gill Fig. 3.1 order-of-magnitude chart; from memory).
    assert 1e-7 < expected_m_s2 < 3e-6


def test_drag_broadcasts_and_refuses_non_positive_b():
    r = np.array([[RE + 300.0, 0.0, 0.0], [0.0, 0.0, RE + 500.0]])
    v = np.array([[0.0, 7.7, 0.0], [7.6, 0.0, 0.0]])
    acc = drag_acceleration_km_s2(r, v, 50.0, "high")
    assert acc.shape == (2, 3)
    assert np.allclose(acc[1], drag_acceleration_km_s2(r[1], v[1], 50.0, "high"), atol=0)
    with pytest.raises(InputError, match="ballistic"):
        drag_acceleration_km_s2(r, v, 0.0)


def test_ellipsoidal_height_matches_wgs84_at_pole_and_equator():
    # WGS-84 polar radius 6356.752 km (NIMA TR8350.2, Table 3.1 derived value).
    assert ellipsoidal_height_km(np.array([0.0, 0.0, 6356.752 + 500.0])) == pytest.approx(
        500.0, abs=0.001
    )
    assert ellipsoidal_height_km(np.array([RE + 500.0, 0.0, 0.0])) == pytest.approx(500.0)


def test_sun_and_moon_third_body_magnitudes_in_leo():
    # Tidal acceleration ~ 2 mu r / d^3 along the line to the body (common practice); handbook
    # magnitudes in LEO: Sun about 5e-7 m/s^2, Moon about 1e-6 m/s^2 (Montenbruck & Gill,
    # Satellite Orbits, Fig. 3.1; from memory).
    r_sun, r_moon = sun_moon_positions_gcrf_km(2461486.0, 0.5)
    for s, mu, handbook_m_s2 in ((r_sun, SUN.mu_km3_s2, 5e-7), (r_moon, MOON.mu_km3_s2, 1.1e-6)):
        d = np.linalg.norm(s)
        toward = 7000.0 * s / d
        acc_m_s2 = np.linalg.norm(third_body_acceleration_km_s2(toward, s, mu)) * 1e3
        # Along the line the exact difference is mu (1/(d - r)^2 - 1/d^2) (Newton).
        exact_m_s2 = mu * (1.0 / (d - 7000.0) ** 2 - 1.0 / d**2) * 1e3
        assert acc_m_s2 == pytest.approx(exact_m_s2, rel=1e-6)
        assert acc_m_s2 == pytest.approx(2 * mu * 7000.0 / d**3 * 1e3, rel=0.06)
        assert handbook_m_s2 / 2 < acc_m_s2 < handbook_m_s2 * 2
        # Perpendicular to the line, the tidal term is -mu r / d^3 (half, and inward).
        side = np.cross(s, [0.0, 0.0, 1.0])
        side = 7000.0 * side / np.linalg.norm(side)
        acc_side = third_body_acceleration_km_s2(side, s, mu)
        assert np.linalg.norm(acc_side) == pytest.approx(mu * 7000.0 / d**3, rel=0.01)
        assert np.dot(acc_side, side) < 0


@pytest.mark.filterwarnings("ignore::erfa.ErfaWarning")  # astropy's UTC past the leap table
def test_moon_position_against_astropy():
    # astropy's GCRS Moon (an outside reference library; its built-in lunar series, apparent
    # place) against ERFA moon98 (geometric): agreement to 0.02 deg and 100 km.
    from astropy.coordinates import get_body, solar_system_ephemeris
    from astropy.time import Time

    times = Time(["2027-03-21T10:30:00", "2030-09-01T00:00:00", "2024-01-15T18:00:00"], scale="utc")
    with solar_system_ephemeris.set("builtin"):
        moon = get_body("moon", times)
    ref = np.stack(
        [
            moon.cartesian.x.to_value("km"),
            moon.cartesian.y.to_value("km"),
            moon.cartesian.z.to_value("km"),
        ],
        axis=-1,
    )
    _, ours = sun_moon_positions_gcrf_km(times.tt.jd1, times.tt.jd2)
    cos_angle = (
        np.sum(ref * ours, axis=-1) / np.linalg.norm(ref, axis=-1) / np.linalg.norm(ours, axis=-1)
    )
    angle_deg = np.degrees(np.arccos(np.clip(cos_angle, -1, 1)))
    assert np.all(angle_deg < 0.02)
    assert np.all(np.abs(np.linalg.norm(ref, axis=-1) - np.linalg.norm(ours, axis=-1)) < 100.0)


def test_total_acceleration_sums_the_chosen_terms_and_broadcasts():
    rng = np.random.default_rng(7)
    r = rng.normal(size=(5, 3))
    r = r / np.linalg.norm(r, axis=1, keepdims=True) * (RE + 450.0)
    v = np.cross(r, [0.0, 0.0, 1.0])
    v = v / np.linalg.norm(v, axis=1, keepdims=True) * 7.6
    jd = (np.full(5, 2461486.0), np.linspace(0.0, 1.0, 5))
    model = ForceModel(
        zonal_degree=4, ballistic_coefficient_kg_m2=80.0, third_bodies=("Sun", "moon")
    )
    total = acceleration_km_s2(model, r, v, jd)
    r_sun, r_moon = sun_moon_positions_gcrf_km(*jd)
    parts = (
        two_body_acceleration_km_s2(r, MU)
        + zonal_acceleration_km_s2(r, EARTH, 4)
        + drag_acceleration_km_s2(r, v, 80.0)
        + third_body_acceleration_km_s2(r, r_sun, SUN.mu_km3_s2)
        + third_body_acceleration_km_s2(r, r_moon, MOON.mu_km3_s2)
    )
    assert np.allclose(total, parts, rtol=0, atol=1e-18)
    one = acceleration_km_s2(model, r[2], v[2], (jd[0][2], jd[1][2]))
    assert np.allclose(one, total[2], rtol=0, atol=1e-18)
    given = acceleration_km_s2(model, r, v, sun_moon_km=(r_sun, r_moon))
    assert np.array_equal(given, total)
    # Point mass alone: mu / r^2 inward (Newton).
    g = acceleration_km_s2(ForceModel(), r, v)
    assert np.allclose(np.linalg.norm(g, axis=1), MU / (RE + 450.0) ** 2, rtol=1e-14)
    assert density_kg_m3(450.0) > 0


def test_force_model_refuses_bad_choices():
    with pytest.raises(InputError, match="zonal_degree"):
        ForceModel(zonal_degree=1)
    with pytest.raises(InputError, match="third_body"):
        ForceModel(third_bodies=("jupiter",))
    with pytest.raises(InputError, match="ballistic"):
        ForceModel(ballistic_coefficient_kg_m2=-3.0)
    with pytest.raises(InputError, match="solar_activity"):
        ForceModel(ballistic_coefficient_kg_m2=50.0, solar_activity="medium")
    with pytest.raises(InputError, match="jd_tt"):
        acceleration_km_s2(ForceModel(third_bodies=("sun",)), [7000.0, 0, 0], [0, 7.5, 0])
    assert "drag" in ForceModel(ballistic_coefficient_kg_m2=50.0).description
