"""J2 secular rates and the sun-synchronous inclination against textbook values."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel.constants import EARTH, TROPICAL_YEAR_DAYS, Body
from orbitledger.kernel.elements import Elements
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.j2 import j2_secular_rates, sun_synchronous_inclination_deg


def _circular(a_km: float, i_deg: float, e: float = 0.0) -> Elements:
    return Elements(a_km=a_km, e=e, i_deg=i_deg, raan_deg=0.0, argp_deg=0.0, nu_deg=0.0)


@pytest.mark.parametrize("alt_km", [400.0, 540.0, 800.0, 1200.0])
def test_sun_synchronous_node_turns_360_deg_per_tropical_year(alt_km: float) -> None:
    # Definition of a sun-synchronous orbit (common practice): the node advances 360 deg per
    # tropical year, 365.24219 days (Explanatory Supplement to the Astronomical Almanac, 1992).
    a_km = EARTH.radius_km + alt_km
    i_deg = sun_synchronous_inclination_deg(a_km, 0.001)
    rates = j2_secular_rates(
        Elements(a_km=a_km, e=0.001, i_deg=i_deg, raan_deg=0, argp_deg=0, nu_deg=0)
    )
    assert rates["raan_deg_per_day"] == pytest.approx(360.0 / TROPICAL_YEAR_DAYS, rel=1e-12)
    assert 96.0 < i_deg < 101.0


def test_argp_drift_vanishes_at_critical_inclination() -> None:
    # Critical inclination acos(1/sqrt(5)) = 63.4349 deg (Vallado 4th ed., Sec. 9.6; Curtis 3rd
    # ed., Sec. 4.7): 5 cos^2 i - 1 = 0.
    crit = math.degrees(math.acos(1.0 / math.sqrt(5.0)))
    assert crit == pytest.approx(63.43, abs=0.005)
    rates = j2_secular_rates(_circular(26_554.0, crit, e=0.72))  # a Molniya-like orbit
    assert abs(rates["argp_deg_per_day"]) < 1e-12
    # Away from it the drift is not zero: prograde below, regressing above.
    assert j2_secular_rates(_circular(7000.0, 50.0))["argp_deg_per_day"] > 0.1
    assert j2_secular_rates(_circular(7000.0, 75.0))["argp_deg_per_day"] < -0.1


def test_curtis_example_4_9_sun_synchronous_100_min_orbit() -> None:
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed. (2014), Example 4.9: a
    # sun-synchronous circular orbit of period 100 min has z = 759 km and i = 98.43 deg, with
    # mu = 398600 km^3/s^2, R = 6378 km, J2 = 0.00108263 (values from memory).
    curtis_earth = Body(name="Earth", mu_km3_s2=398600.0, radius_km=6378.0, j2=0.00108263)
    a_km = (398600.0 * (100.0 * 60.0) ** 2 / (4.0 * math.pi**2)) ** (1.0 / 3.0)
    assert a_km - 6378.0 == pytest.approx(759.0, abs=1.0)
    i_deg = sun_synchronous_inclination_deg(a_km, 0.0, body=curtis_earth)
    assert i_deg == pytest.approx(98.43, abs=0.01)


@pytest.mark.parametrize(
    ("a_km", "e", "i_deg"), [(6778.0, 0.0, 51.6), (7200.0, 0.05, 98.0), (12000.0, 0.3, 30.0)]
)
def test_rates_match_smad_closed_forms(a_km: float, e: float, i_deg: float) -> None:
    # Wertz & Larson, Space Mission Analysis and Design, 3rd ed. (1999), Eqs. 6-19 and 6-20:
    # dRAAN/dt = -2.06474e14 a^-3.5 cos i (1-e^2)^-2 deg/day, dargp/dt = 1.03237e14 a^-3.5
    # (4 - 5 sin^2 i)(1-e^2)^-2 deg/day, a in km (coefficients from memory, 6 digits, so the
    # tolerance is 2e-5 relative).
    rates = j2_secular_rates(_circular(a_km, i_deg, e))
    s = math.radians(i_deg)
    raan = -2.06474e14 * a_km**-3.5 * math.cos(s) * (1 - e**2) ** -2
    argp = 1.03237e14 * a_km**-3.5 * (4 - 5 * math.sin(s) ** 2) * (1 - e**2) ** -2
    assert rates["raan_deg_per_day"] == pytest.approx(raan, rel=2e-5)
    assert rates["argp_deg_per_day"] == pytest.approx(argp, rel=2e-5)


def test_mean_anomaly_rate_includes_keplerian_mean_motion() -> None:
    # ISS-like orbit: about 15.5 revolutions per day (common practice); the J2 term adds a few
    # hundredths of a degree per day at 51.6 deg (Vallado 4th ed., Eq. 9-41, dM/dt).
    a_km = 6778.0
    n_deg_day = math.degrees(math.sqrt(EARTH.mu_km3_s2 / a_km**3)) * 86400.0
    m_rate = j2_secular_rates(_circular(a_km, 51.6))["mean_anomaly_deg_per_day"]
    assert m_rate / 360.0 == pytest.approx(15.5, abs=0.1)
    assert 0.0 < abs(m_rate - n_deg_day) < 1.0


def test_rates_broadcast_over_arrays() -> None:
    i = np.linspace(0.0, 180.0, 7)
    rates = j2_secular_rates(_circular(7000.0, i))
    assert rates["raan_deg_per_day"].shape == (7,)
    assert rates["raan_deg_per_day"][0] < 0 < rates["raan_deg_per_day"][-1]
    sso = sun_synchronous_inclination_deg(np.array([6900.0, 7100.0]))
    assert sso.shape == (2,) and sso[1] > sso[0]


def test_no_sun_synchronous_orbit_far_out_is_refused() -> None:
    with pytest.raises(InputError, match="a_km"):
        sun_synchronous_inclination_deg(15_000.0)
    with pytest.raises(InputError, match="elements.e"):
        j2_secular_rates(_circular(7000.0, 98.0, e=1.2))


def test_j2_mean_propagation_without_j2_is_the_two_body_circle() -> None:
    # With J2 = 0 the rates vanish and the model must reduce to Kepler motion: compare with
    # the circle written out in closed form (tests/_circular_orbit.py), to 1 mm over a day.
    from _circular_orbit import circular, plane_basis

    from orbitledger.kernel.j2 import propagate_j2_mean

    no_j2 = Body(name="Earth", mu_km3_s2=EARTH.mu_km3_s2, radius_km=EARTH.radius_km, j2=0.0)
    el = Elements(a_km=6918.137, e=0.0, i_deg=97.5, raan_deg=30.0, argp_deg=0.0, nu_deg=40.0)
    t = np.linspace(0.0, 86400.0, 2001)
    r, v = propagate_j2_mean(el, t, body=no_j2)
    p, q = plane_basis(97.5, 30.0)
    ref_r, ref_v = circular(6918.137, p, q, u0_deg=40.0).gcrf(t)
    assert np.max(np.abs(r - ref_r)) < 1e-6
    assert np.max(np.abs(v - ref_v)) < 1e-9


def test_j2_mean_velocity_is_the_derivative_of_position() -> None:
    from orbitledger.kernel.j2 import propagate_j2_mean

    el = Elements(a_km=7200.0, e=0.05, i_deg=63.0, raan_deg=10.0, argp_deg=45.0, nu_deg=0.0)
    t = 5.0 * 86400.0 + np.array([-0.01, 0.0, 0.01])  # central difference (common practice)
    r, v = propagate_j2_mean(el, t)
    assert np.max(np.abs((r[2] - r[0]) / 0.02 - v[1])) < 1e-6  # 1 mm/s


def test_sun_synchronous_orbit_keeps_its_local_time_over_30_days() -> None:
    # Sun-synchronous: the local mean time of the node stays fixed (definition; common
    # practice). Over 30 days with the J2 mean model it moves < 0.5 min; a 97.0 deg orbit at
    # the same height drifts by minutes (the node rate differs by 0.03 deg/day per 0.5 deg).
    import warnings

    from orbitledger.kernel.eclipses import node_local_times_h
    from orbitledger.kernel.j2 import mean_semi_major_axis_km
    from orbitledger.kernel.propagation import trajectory

    a_km = EARTH.radius_km + 540.0
    i_sso = sun_synchronous_inclination_deg(a_km, 0.0)
    for _ in range(2):  # sun-synchronous for the mean semi-major axis the trajectory uses
        el = Elements(a_km=a_km, e=0.0, i_deg=i_sso, raan_deg=340.0, argp_deg=0.0, nu_deg=0.0)
        i_sso = sun_synchronous_inclination_deg(mean_semi_major_axis_km(el), 0.0)
    days = np.array([0.0, 30.0 * 86400.0])
    drift = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for i_deg in (i_sso, 97.0):
            el = Elements(a_km=a_km, e=0.0, i_deg=i_deg, raan_deg=340.0, argp_deg=0.0, nu_deg=0.0)
            traj = trajectory("j2-mean", el, "2027-03-21T10:30:00Z", duration_s=days[1])
            lt = node_local_times_h(traj, days)["ltan_h"]
            drift[i_deg] = (lt[1] - lt[0]) * 60.0
    assert abs(drift[i_sso]) < 0.5
    assert abs(drift[97.0]) > 3.0


def _cowell_j2(el: Elements, t: np.ndarray):
    from orbitledger.kernel.cowell import propagate_cowell
    from orbitledger.kernel.elements import elements_to_state, state_to_elements
    from orbitledger.kernel.forces import ForceModel

    r0, v0 = elements_to_state(el)
    run = propagate_cowell(r0, v0, t, force_model=ForceModel(zonal_degree=2))
    return run, state_to_elements(run.r_km, run.v_km_s)


def test_mean_semi_major_axis_is_the_orbit_average_of_a_numerical_j2_orbit() -> None:
    # Kozai (1959) short-period term of a: a - da must stay constant along a J2-only orbit
    # integrated numerically (Cowell, DOP853), while the osculating a swings by about 10 km.
    from orbitledger.kernel.j2 import mean_semi_major_axis_km

    el = Elements(a_km=6918.137, e=0.001, i_deg=97.5, raan_deg=157.5, argp_deg=90.0, nu_deg=0.0)
    period = 2 * math.pi * math.sqrt(el.a_km**3 / EARTH.mu_km3_s2)
    _, osc = _cowell_j2(el, np.linspace(0.0, period, 201))
    means = np.array(
        [
            mean_semi_major_axis_km(Elements(a, e, i, o, w, n))
            for a, e, i, o, w, n in zip(
                osc.a_km, osc.e, osc.i_deg, osc.raan_deg, osc.argp_deg, osc.nu_deg, strict=True
            )
        ]
    )
    assert np.ptp(np.asarray(osc.a_km)) > 10.0
    assert np.ptp(means) < 0.1  # 100 m


@pytest.mark.parametrize(
    "el",
    [
        Elements(a_km=6918.137, e=0.001, i_deg=97.5, raan_deg=157.5, argp_deg=90.0, nu_deg=0.0),
        Elements(a_km=7200.0, e=0.02, i_deg=51.6, raan_deg=10.0, argp_deg=30.0, nu_deg=200.0),
    ],
)
def test_j2_mean_trajectory_follows_a_numerical_j2_orbit(el: Elements) -> None:
    # Over 3 days the mean-element model stays within 30 km of Cowell with J2 only (the
    # short-period terms of e, i, RAAN, argp and M it omits are a few to ~20 km); without the
    # mean semi-major axis it would drift by hundreds of km a day.
    import warnings

    from orbitledger.kernel.propagation import trajectory

    t = np.linspace(0.0, 3 * 86400.0, 7)
    run, _ = _cowell_j2(el, t)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        traj = trajectory("j2-mean", el, "2027-03-21T10:30:00Z", duration_s=t[-1])
        r, _ = traj.gcrf(t)
    assert np.max(np.linalg.norm(r - run.r_km, axis=-1)) < 30.0
