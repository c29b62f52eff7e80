"""Delta-v budget: the rocket equation, drag make-up, disposal, margins."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import EARTH, Elements, InputError, propellant_mass_kg
from orbitledger.kernel.atmosphere import density_kg_m3
from orbitledger.kernel.budget import (
    BudgetItem,
    delta_v_budget,
    disposal_perigee_lowering,
    drag_makeup_dv_km_s_per_year,
)

R_E = EARTH.radius_km


def test_rocket_equation_curtis_example_6_1():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 6.1 (c): 2000 kg,
    # Isp 300 s, dv 3.0522 km/s -> 1291 kg of propellant.
    assert abs(propellant_mass_kg(3.0522, 300.0, 2000.0) - 1291.0) < 1.0  # kg


def test_rocket_equation_identities():
    # Common practice: a delta-v of Isp g0 ln 2 burns half the mass; g0 = 9.80665 m/s^2.
    dv = 220.0 * 9.80665 * math.log(2.0) / 1000.0
    assert abs(propellant_mass_kg(dv, 220.0, 48.0) - 24.0) < 1e-9  # kg
    many = propellant_mass_kg(np.array([0.0, 0.01, 0.1]), 220.0, 48.0)
    assert many.shape == (3,) and many[0] == 0.0


def test_rocket_equation_refuses_bad_inputs():
    with pytest.raises(InputError, match="isp_s"):
        propellant_mass_kg(0.1, 0.0, 48.0)
    with pytest.raises(InputError, match="initial_mass_kg"):
        propellant_mass_kg(0.1, 220.0, -1.0)


def test_drag_makeup_matches_the_per_revolution_formula():
    # Larson & Wertz, SMAD 3rd ed., Sec. 6.2.3 (from memory): make-up per revolution
    # dv = pi (Cd A / m) rho a V for a circular orbit, non-rotating atmosphere.
    b = 48.0 / (2.2 * 0.12)
    a = R_E + 500.0
    v = math.sqrt(EARTH.mu_km3_s2 / a)
    rho = float(density_kg_m3(500.0))
    per_rev_m_s = math.pi * rho * (a * 1e3) * (v * 1e3) / b
    revs_per_year = 365.24219 * 86400.0 / (2 * math.pi * math.sqrt(a**3 / EARTH.mu_km3_s2))
    got = drag_makeup_dv_km_s_per_year(Elements(a, 0.0, 0.0, 0, 0, 0), b, rotating_atmosphere=False)
    assert abs(got * 1000.0 - per_rev_m_s * revs_per_year) < 1e-6  # m/s per year
    # common practice: a few m/s per year at 500 km for a small satellite near mean activity
    assert 0.5e-3 < got < 20e-3


def test_drag_makeup_grows_with_solar_activity():
    el = Elements(R_E + 540.0, 0.001, 97.5, 0, 90, 0)
    low = drag_makeup_dv_km_s_per_year(el, 180.0, "low")
    high = drag_makeup_dv_km_s_per_year(el, 180.0, "high")
    assert high > 2 * low


def test_budget_margin_and_cumulative_mass():
    items = [
        BudgetItem("launch dispersion correction", 0.015, margin=False),
        BudgetItem("orbit raise", 0.030),
        BudgetItem("station keeping", 0.008),
    ]
    bud = delta_v_budget(
        items, isp_s=220.0, initial_mass_kg=48.0, margin_percent=10.0, propellant_available_kg=2.5
    )
    assert [line.margin_km_s for line in bud.lines] == pytest.approx([0.0, 0.003, 0.0008])
    # propellant over all lines equals one rocket-equation burn of the summed delta-v
    # (the exponential composes: common practice)
    assert abs(bud.total_propellant_kg - propellant_mass_kg(bud.total_dv_km_s, 220.0, 48.0)) < 1e-9
    assert bud.lines[1].mass_before_kg == bud.lines[0].mass_after_kg
    assert abs(bud.final_mass_kg + bud.total_propellant_kg - 48.0) < 1e-12
    assert bud.sufficient is (bud.total_propellant_kg <= 2.5)
    assert bud.as_dict()["lines"][2]["name"] == "station keeping"


def test_disposal_brings_lifetime_under_the_limit():
    el = Elements(R_E + 540.0, 0.001, 97.5, 30.0, 90.0, 0.0)
    b = 48.0 / (2.2 * 0.12)
    plan = disposal_perigee_lowering(el, 5.0, b)
    assert plan.lifetime_before_years > 5.0
    assert plan.lifetime_after_years <= 5.0
    assert plan.lifetime_after_years > 4.5  # the bisection stops within 0.1 km of the limit
    # the burn from vis-viva at apogee (Curtis 3rd ed., Eq. 2.71), written out here
    ra = el.a_km * (1 + el.e)
    radius = ra - plan.apogee_altitude_km  # the reference radius the plan measured heights from
    rp_new = plan.perigee_altitude_km + radius
    mu = EARTH.mu_km3_s2
    v_old = math.sqrt(mu * (2 / ra - 1 / el.a_km))
    v_new = math.sqrt(mu * (2 / ra - 2 / (ra + rp_new)))
    assert abs(plan.dv_km_s - (v_old - v_new)) < 1e-9
    assert "licensing authority" in plan.caution


def test_disposal_not_needed_for_a_low_orbit():
    el = Elements(R_E + 350.0, 0.0, 51.6, 0, 0, 0)
    plan = disposal_perigee_lowering(el, 25.0, 100.0)
    assert plan.dv_km_s == 0.0 and plan.lifetime_before_years <= 25.0
