"""Cowell propagation against two-body motion, the J2 secular node rate, physics and decay."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import EARTH, Elements
from orbitledger.kernel.cowell import propagate_cowell
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.forces import ForceModel, ellipsoidal_height_km

MU, RE = EARTH.mu_km3_s2, EARTH.radius_km
METRE = 1e-3  # km
MM = 1e-6  # km


def _circular_state(alt_km, i_deg):
    r = RE + alt_km
    v = math.sqrt(MU / r)
    c, s = math.cos(math.radians(i_deg)), math.sin(math.radians(i_deg))
    return np.array([r, 0.0, 0.0]), np.array([0.0, v * c, v * s])


def test_without_perturbations_agrees_with_two_body_propagation_to_1_m_over_a_day():
    # The acceptance check: point-mass Cowell against the kernel's analytic two-body
    # propagator (Kepler's equation solved to machine precision), better than 1 m over a day.
    from orbitledger.kernel import elements_to_state, propagate_two_body

    elements = Elements(a_km=7000.0, e=0.02, i_deg=97.5, raan_deg=30.0, argp_deg=90.0, nu_deg=10.0)
    r0, v0 = elements_to_state(elements)
    t = np.linspace(0.0, 86_400.0, 97)
    ours = propagate_cowell(r0, v0, t)
    ref_r, _ = propagate_two_body(r0, v0, t)
    assert ours.t_s.shape == (97,) and not ours.decayed
    assert np.max(np.linalg.norm(ours.r_km - ref_r, axis=-1)) < 1.0 * METRE


def test_without_perturbations_keeps_energy_and_angular_momentum():
    # Point-mass motion conserves the specific energy and angular momentum (Newton;
    # common practice): over a day at default tolerances (rtol 1e-10 per step) they drift
    # by < 2e-9 relative, i.e. a millimetre-level position error.
    r0, v0 = _circular_state(500.0, 51.6)
    v0 = v0 * 1.01
    res = propagate_cowell(r0, v0, np.linspace(0.0, 86_400.0, 25))
    energy = 0.5 * np.sum(res.v_km_s**2, axis=1) - MU / np.linalg.norm(res.r_km, axis=1)
    h = np.cross(res.r_km, res.v_km_s)
    assert np.max(np.abs(energy / energy[0] - 1.0)) < 2e-9
    assert np.max(np.linalg.norm(h - h[0], axis=1)) / np.linalg.norm(h[0]) < 2e-9


def test_j2_only_keeps_the_energy_integral():
    # J2 is a static, axisymmetric potential: v^2/2 - mu/r + (mu J2 R^2 / (2 r^3))(3 sin^2 - 1)
    # and the z component of angular momentum are constant (common practice).
    r0, v0 = _circular_state(600.0, 63.0)
    res = propagate_cowell(r0, v0, np.linspace(0.0, 86_400.0, 25), force_model=ForceModel(2))
    rn = np.linalg.norm(res.r_km, axis=1)
    s2 = (res.r_km[:, 2] / rn) ** 2
    u_j2 = MU * EARTH.j2 * RE**2 / (2 * rn**3) * (3 * s2 - 1)
    energy = 0.5 * np.sum(res.v_km_s**2, axis=1) - MU / rn + u_j2
    hz = np.cross(res.r_km, res.v_km_s)[:, 2]
    assert np.max(np.abs(energy / energy[0] - 1.0)) < 2e-9
    assert np.max(np.abs(hz / hz[0] - 1.0)) < 2e-9


def _raan_deg(r, v):
    h = np.cross(r, v)
    return np.degrees(np.unwrap(np.arctan2(h[:, 0], -h[:, 1])))


def test_raan_drift_with_j2_matches_the_secular_rate():
    # Nodal regression from a J2-only integration over 5 days, fitted by a straight line
    # through the osculating node (short-period terms average out over ~75 revolutions),
    # against the first-order secular rate -3/2 n J2 (R/p)^2 cos i (Vallado 4th ed., Eq. 9-41;
    # Curtis 3rd ed., Eq. 4.52; the kernel's j2_secular_rates). Tolerance 1 % of the rate
    # (about 0.01 deg/day), the size of the mean-versus-osculating semi-major axis
    # difference and of second-order J2 terms.
    from orbitledger.kernel import j2_secular_rates

    alt, inc = 700.0, 98.2
    r0, v0 = _circular_state(alt, inc)
    t = np.linspace(0.0, 5 * 86_400.0, 2001)
    res = propagate_cowell(r0, v0, t, force_model=ForceModel(zonal_degree=2))
    slope_deg_per_day = np.polyfit(t / 86_400.0, _raan_deg(res.r_km, res.v_km_s), 1)[0]
    expected = j2_secular_rates(Elements(RE + alt, 0.0, inc, 0.0, 0.0, 0.0))["raan_deg_per_day"]
    # A 98.2 deg orbit at 700 km is near sun-synchronous: about +0.99 deg/day (common practice).
    assert expected == pytest.approx(0.9856, abs=0.05)
    assert slope_deg_per_day == pytest.approx(float(expected), rel=0.01)


def test_orbit_that_decays_inside_the_window_reports_the_decay_time():
    # A 180 km orbit with a small ballistic coefficient re-enters within a day or two; the
    # run stops at the 120 km crossing, keeps the states before it, and does not raise.
    r0, v0 = _circular_state(180.0, 51.6)
    model = ForceModel(zonal_degree=2, ballistic_coefficient_kg_m2=20.0)
    t = np.linspace(0.0, 5 * 86_400.0, 121)
    res = propagate_cowell(r0, v0, t, force_model=model, reentry_altitude_km=120.0)
    assert res.decayed and res.success
    assert 0.0 < res.decay_time_s < 5 * 86_400.0
    assert res.t_s.size < t.size and np.all(res.t_s <= res.decay_time_s)
    assert res.t_end_s == pytest.approx(res.decay_time_s)
    r_end, _ = res.state_at(res.decay_time_s)
    assert ellipsoidal_height_km(r_end) == pytest.approx(120.0, abs=1.0 * METRE)
    assert "decayed" in res.message


def test_dense_output_matches_the_integrated_samples_and_runs_backwards():
    r0, v0 = _circular_state(800.0, 30.0)
    t = np.linspace(0.0, 6 * 3600.0, 13)
    res = propagate_cowell(r0, v0, t, force_model=ForceModel(4))
    r_dense, v_dense = res.state_at(t)
    assert np.max(np.linalg.norm(r_dense - res.r_km, axis=1)) < 1.0 * MM
    assert res.state_at([[0.0, 10.0], [20.0, 30.0]])[0].shape == (2, 2, 3)
    # Integrating back from the end returns to the start within 0.1 m after 2 x 6 h (time
    # reversibility of a conservative force model; common practice as an integration check).
    back = propagate_cowell(res.r_km[-1], res.v_km_s[-1], [-t[-1]], force_model=ForceModel(4))
    assert np.linalg.norm(back.r_km[0] - r0) < 0.1 * METRE
    with pytest.raises(InputError, match="t_s"):
        res.state_at(t[-1] + 100.0)
    repeated = propagate_cowell(r0, v0, [0.0, 1800.0, 1800.0, 3600.0], force_model=ForceModel(4))
    assert repeated.t_s.tolist() == [0.0, 1800.0, 1800.0, 3600.0]
    assert np.array_equal(repeated.r_km[1], repeated.r_km[2])
    assert np.linalg.norm(repeated.r_km[3] - res.r_km[2]) < 1.0 * METRE  # other step sequence


def test_progress_is_reported_per_day_and_results_are_unchanged():
    r0, v0 = _circular_state(500.0, 97.4)
    seen = []
    t = np.linspace(0.0, 3 * 86_400.0, 7)
    chunked = propagate_cowell(r0, v0, t, progress=seen.append)
    whole = propagate_cowell(r0, v0, t)
    assert seen == pytest.approx([1 / 3, 2 / 3, 1.0])
    assert np.max(np.linalg.norm(chunked.r_km - whole.r_km, axis=1)) < 1.0 * METRE
    assert chunked.state_at(1.5 * 86_400.0)[0].shape == (3,)


def test_third_bodies_move_a_leo_orbit_by_metres_to_tens_of_metres_in_a_day():
    # Luni-solar perturbations displace a LEO satellite by of order 10-1000 m per day
    # (Montenbruck & Gill, Satellite Orbits, Fig. 3.1 chart; from memory).
    r0, v0 = _circular_state(700.0, 98.0)
    epoch = (2461486.0, 0.0)
    t = [86_400.0]
    plain = propagate_cowell(r0, v0, t, force_model=ForceModel(2), epoch_jd_tt=epoch)
    both = propagate_cowell(
        r0, v0, t, force_model=ForceModel(2, third_bodies=("sun", "moon")), epoch_jd_tt=epoch
    )
    moved_m = np.linalg.norm(both.r_km[0] - plain.r_km[0]) * 1e3
    assert 1.0 < moved_m < 5000.0


def test_bad_inputs_are_refused_with_the_field_named():
    r0, v0 = _circular_state(500.0, 45.0)
    with pytest.raises(InputError, match="t_s"):
        propagate_cowell(r0, v0, [100.0, 50.0])
    with pytest.raises(InputError, match="t_s"):
        propagate_cowell(r0, v0, [])
    with pytest.raises(InputError, match="rtol"):
        propagate_cowell(r0, v0, [10.0], rtol=0.0)
    with pytest.raises(InputError, match="r0_km"):
        propagate_cowell(np.array([RE + 90.0, 0, 0]), v0, [10.0])
    with pytest.raises(InputError, match="r0_km"):
        propagate_cowell(r0[:2], v0, [10.0])
