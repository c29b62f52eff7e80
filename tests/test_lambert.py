"""Lambert's problem against textbook examples and brute-force propagation."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from orbitledger.kernel import EARTH, InputError, lambert
from orbitledger.kernel.lambert import LambertPlaneWarning, solve_lambert

MU = EARTH.mu_km3_s2
MM_S = 1e-6  # km/s
M = 1e-3  # km


def _land(r1, v1, tof, mu=MU):
    """End position by scipy's DOP853 (an integrator outside the project), tight tolerances."""

    def rhs(_t, y):
        r = y[:3]
        return np.concatenate([y[3:], -mu * r / np.linalg.norm(r) ** 3])

    sol = solve_ivp(
        rhs, (0.0, tof), np.concatenate([r1, v1]), method="DOP853", rtol=1e-13, atol=1e-10
    )
    return sol.y[:3, -1], sol.y[3:, -1]


def test_vallado_example_7_5():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Example 7-5 (short way,
    # 76 min): v0 = (2.058913, 2.915965, 0) km/s, v = (-3.451565, 0.910315, 0) km/s.
    v1, v2 = lambert([15945.34, 0.0, 0.0], [12214.83899, 10249.46731, 0.0], 76.0 * 60.0, MU)
    assert np.allclose(v1, [2.058913, 2.915965, 0.0], atol=2 * MM_S)
    assert np.allclose(v2, [-3.451565, 0.910315, 0.0], atol=2 * MM_S)


def test_curtis_example_5_2():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 5.2 (mu = 398 600):
    # v1 = (-5.9925, 1.9254, 3.2456) km/s, v2 = (-3.3125, -4.1966, -0.38529) km/s.
    v1, v2 = lambert([5000.0, 10000.0, 2100.0], [-14600.0, 2500.0, 7000.0], 3600.0, 398600.0)
    assert np.allclose(v1, [-5.9925, 1.9254, 3.2456], atol=0.1e-3)  # 0.1 m/s: book's digits
    assert np.allclose(v2, [-3.3125, -4.1966, -0.38529], atol=0.1e-3)


@pytest.mark.parametrize("revs", [1, 2, 3])
@pytest.mark.parametrize("branch", ["low", "high"])
@pytest.mark.parametrize("prograde", [True, False])
def test_multi_revolution_lands_on_r2(revs, branch, prograde):
    # Brute force: propagate v1 (scipy DOP853) and land on r2 within 1 m, with v2 to 1 mm/s.
    r1 = np.array([7000.0, 0.0, 0.0])
    r2 = np.array([-2000.0, 9000.0, 1500.0])
    tof = 3.2 * 3600.0 * revs + 3600.0
    v1, v2 = lambert(r1, r2, tof, MU, prograde=prograde, revolutions=revs, branch=branch)
    r_end, v_end = _land(r1, v1, tof)
    assert np.linalg.norm(r_end - r2) < 1 * M
    assert np.linalg.norm(v_end - v2) < 1 * MM_S
    h_z = np.cross(r1, v1)[2]
    assert (h_z > 0) == prograde


def test_branches_are_low_and_high_energy():
    r1 = np.array([7000.0, 0.0, 0.0])
    r2 = np.array([-2000.0, 9000.0, 1500.0])
    low = solve_lambert(r1, r2, 20000.0, MU, revolutions=2, branch="low")
    high = solve_lambert(r1, r2, 20000.0, MU, revolutions=2, branch="high")
    assert low.a_km < high.a_km
    # the same energies from vis-viva (independent of the solver's own a)
    for sol in (low, high):
        v = np.linalg.norm(sol.v1_km_s)
        assert abs(1.0 / (2.0 / 7000.0 - v**2 / MU) - sol.a_km) < 1 * M


def test_time_of_flight_too_short_for_the_revolutions():
    r1, r2 = [7000.0, 0.0, 0.0], [0.0, 8000.0, 0.0]
    tmin = float(solve_lambert(r1, r2, 1.0, MU, revolutions=1).tof_min_s)
    with pytest.raises(InputError, match="minimum time of flight") as err:
        lambert(r1, r2, 0.99 * tmin, MU, revolutions=1)
    assert f"{tmin:.3f}" in str(err.value)
    lambert(r1, r2, 1.01 * tmin, MU, revolutions=1)  # just above: solvable
    # Kepler's third law: every ellipse through r1 and r2 has a >= s/2 (the minimum-energy
    # ellipse), so one whole revolution already takes at least 2 pi sqrt((s/2)^3 / mu).
    s = 0.5 * (7000.0 + 8000.0 + np.hypot(7000.0, 8000.0))
    assert tmin > 2 * np.pi * np.sqrt((s / 2) ** 3 / MU)


def test_bad_inputs_named():
    with pytest.raises(InputError, match="tof_s"):
        lambert([7000.0, 0, 0], [0, 7000.0, 0], -5.0)
    with pytest.raises(InputError, match="branch"):
        lambert([7000.0, 0, 0], [0, 7000.0, 0], 3000.0, revolutions=1, branch="left")
    with pytest.raises(InputError, match="r2_km"):
        lambert([7000.0, 0, 0], [0, 7000.0], 3000.0)


def test_exactly_180_degrees_warns_and_picks_a_plane():
    r1 = np.array([7000.0, 1000.0, 0.0])
    r2 = -1.3 * r1
    with pytest.warns(LambertPlaneWarning):
        v1, v2 = lambert(r1, r2, 4000.0, MU)
    h = np.cross(r1, v1)
    assert abs(h[0]) < 1e-9 * np.linalg.norm(h) and abs(h[1]) < 1e-9 * np.linalg.norm(h)
    r_end, _ = _land(r1, v1, 4000.0)
    assert np.linalg.norm(r_end - r2) < 1 * M


def test_near_180_degrees_is_solved_in_its_own_plane():
    ang = np.radians(179.99)
    r1 = np.array([7000.0, 0.0, 0.0])
    r2 = 8000.0 * np.array([np.cos(ang), np.sin(ang) * 0.8, np.sin(ang) * 0.6])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        v1, _ = lambert(r1, r2, 3000.0, MU)
    r_end, _ = _land(r1, v1, 3000.0)
    assert np.linalg.norm(r_end - r2) < 1 * M


def test_vectorised_batch_equals_one_by_one():
    rng = np.random.default_rng(7)
    r1 = rng.normal(size=(50, 3)) * 8000.0
    r2 = rng.normal(size=(50, 3)) * 12000.0
    tof = rng.uniform(1000.0, 30000.0, 50)
    v1, v2 = lambert(r1, r2, tof, MU)
    assert v1.shape == v2.shape == (50, 3)
    for k in range(0, 50, 7):
        w1, w2 = lambert(r1[k], r2[k], tof[k], MU)
        assert np.allclose(w1, v1[k], atol=1e-12) and np.allclose(w2, v2[k], atol=1e-12)


_radius = st.floats(6700.0, 60000.0)
_angle = st.floats(0.05, 2 * np.pi - 0.05)


@settings(max_examples=25, deadline=None)
@given(
    r1n=_radius,
    r2n=_radius,
    theta=_angle,
    tilt=st.floats(-1.4, 1.4),
    tof_h=st.floats(0.2, 30.0),
    prograde=st.booleans(),
)
def test_property_zero_rev_lands_on_r2(r1n, r2n, theta, tilt, tof_h, prograde):
    # Property: for random geometries, v1 propagated for tof lands on r2 within 1 m.
    r1 = np.array([r1n, 0.0, 0.0])
    r2 = r2n * np.array([np.cos(theta), np.sin(theta) * np.cos(tilt), np.sin(theta) * np.sin(tilt)])
    tof = tof_h * 3600.0
    v1, _ = lambert(r1, r2, tof, MU, prograde=prograde)
    r_end, _ = _land(r1, v1, tof)
    assert np.linalg.norm(r_end - r2) < 1 * M


@settings(max_examples=15, deadline=None)
@given(
    theta=_angle,
    revs=st.integers(1, 3),
    stretch=st.floats(1.02, 2.5),
    branch=st.sampled_from(["low", "high"]),
)
def test_property_multi_rev_lands_on_r2(theta, revs, stretch, branch):
    r1 = np.array([7200.0, 0.0, 0.0])
    r2 = 9000.0 * np.array([np.cos(theta), np.sin(theta), 0.1])
    tmin = float(solve_lambert(r1, r2, 1.0, MU, revolutions=revs).tof_min_s)
    tof = tmin * stretch
    v1, _ = lambert(r1, r2, tof, MU, revolutions=revs, branch=branch)
    r_end, _ = _land(r1, v1, tof)
    assert np.linalg.norm(r_end - r2) < 1 * M


@pytest.mark.parametrize("revs, branch", [(0, "low"), (1, "low"), (1, "high"), (3, "high")])
def test_lands_on_r2_with_the_kernel_two_body_propagator(revs, branch):
    # The acceptance check: v1 carried by the kernel's two-body propagator lands on r2
    # within 1 m.
    from orbitledger.kernel.twobody import propagate_two_body

    rng = np.random.default_rng(11 + revs)
    r1 = rng.normal(size=(20, 3)) * 7000.0 + [7000.0, 0, 0]
    r2 = rng.normal(size=(20, 3)) * 9000.0
    tmin = solve_lambert(r1, r2, 1.0, MU, revolutions=revs).tof_min_s if revs else 0.0
    tof = np.maximum(rng.uniform(2000.0, 40000.0, 20), 1.1 * np.asarray(tmin))
    v1, _ = lambert(r1, r2, tof, MU, revolutions=revs, branch=branch)
    for k in range(20):
        r_end, _ = propagate_two_body(r1[k], v1[k], np.array([tof[k]]), mu_km3_s2=MU)
        assert np.linalg.norm(np.reshape(r_end, 3) - r2[k]) < 1 * M
