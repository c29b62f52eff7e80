"""The fast lifetime kernel against the former ODE path (scipy RK45 in time, kept in
``lifetime_ode``) driven by the untabulated exponential atmosphere, to 1e-4 relative."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from orbitledger.kernel import EARTH, Elements
from orbitledger.kernel.atmosphere import density_kg_m3
from orbitledger.kernel.budget import disposal_perigee_lowering
from orbitledger.kernel.lifetime import _mean_radius_km, lifetime_years
from orbitledger.kernel.lifetime_ode import disposal_bisection_ode, orbit_averaged_ode

RE = EARTH.radius_km


class _Untabulated:
    """The exponential atmosphere evaluated directly (no 1-km table), for the ODE reference."""

    def __init__(self, level: str) -> None:
        self.level = level

    def density_kg_m3(self, h_km, _t_years=0.0):
        return density_kg_m3(h_km, self.level)


def _reference(elements: Elements, b: float, level: str, h_re: float = 120.0) -> float:
    i_rad = math.radians(elements.i_deg)
    years, reentered, _ = orbit_averaged_ode(
        float(elements.a_km), float(elements.e), i_rad, b, _Untabulated(level),  # type: ignore[arg-type]
        _mean_radius_km(i_rad, EARTH), h_re, 200.0,
    )  # fmt: skip
    assert reentered
    return years


@pytest.mark.parametrize(
    "alt_km, i_deg, b, level",
    [
        (300.0, 51.6, 50.0, "moderate"),
        (450.0, 97.4, 80.0, "low"),
        (550.0, 97.4, 30.0, "high"),
        (520.0, 0.0, 120.0, "moderate"),
    ],
)
def test_circular_lifetime_matches_quadrature_and_the_ode(alt_km, i_deg, b, level):
    # References: (1) scipy.integrate.quad (adaptive, rtol 1e-12, break points at every km)
    # of T = int B / (1e3 F rho sqrt(mu a)) da, the circular case of King-Hele's (1987)
    # averaged rates, on the untabulated density: 1e-6; (2) the former integration in time
    # (scipy RK45, rtol 1e-7): 2e-4, because that integration is itself up to 1.5e-4 off the
    # converged quadrature (measured at 300 km / 24 days and 550 km at high activity).
    elements = Elements(RE + alt_km, 0.0, i_deg, 0.0, 0.0, 0.0)
    fast = lifetime_years(elements, ballistic_coefficient_kg_m2=b, solar_activity=level)
    assert fast.reentered
    i_rad = math.radians(i_deg)
    radius = _mean_radius_km(i_rad, EARTH)
    mu, w = EARTH.mu_km3_s2, EARTH.rotation_rate_rad_s

    def dt_da(a):
        rotation = (1.0 - a * w * math.cos(i_rad) / math.sqrt(mu / a)) ** 2
        return b / (1e3 * rotation * float(density_kg_m3(a - radius, level)) * math.sqrt(mu * a))

    breaks = [radius + h for h in range(121, int(alt_km))]
    seconds = quad(dt_da, radius + 120.0, RE + alt_km, points=breaks, limit=2000,
                   epsabs=0.0, epsrel=1e-12)[0]  # fmt: skip
    assert fast.days * 86400.0 == pytest.approx(seconds, rel=1e-6)
    assert fast.years == pytest.approx(_reference(elements, b, level), rel=2e-4)


@pytest.mark.parametrize(
    "hp_km, ha_km, i_deg, b, level",
    [
        (215.0, 939.0, 65.1, 45.0, "moderate"),  # the Curtis Example 12.1 orbit (test_lifetime)
        (350.0, 1200.0, 51.6, 60.0, "high"),
        (400.0, 700.0, 97.4, 100.0, "low"),
    ],
)
def test_eccentric_lifetime_matches_the_ode_to_1e_4(hp_km, ha_km, i_deg, b, level):
    rp, ra = RE + hp_km, RE + ha_km
    elements = Elements(0.5 * (rp + ra), (ra - rp) / (ra + rp), i_deg, 0.0, 0.0, 0.0)
    fast = lifetime_years(elements, ballistic_coefficient_kg_m2=b, solar_activity=level)
    assert fast.reentered
    assert fast.years == pytest.approx(_reference(elements, b, level), rel=1e-4)


@pytest.mark.parametrize("e", [0.0, 0.02])
def test_lifetime_scales_exactly_as_the_ballistic_coefficient(e):
    # The drag rates are proportional to 1/B (King-Hele 1987), so the lifetime is
    # proportional to B in a density that does not change with time.
    elements = Elements(RE + 500.0, e, 51.6, 0.0, 0.0, 0.0)
    t1 = lifetime_years(elements, ballistic_coefficient_kg_m2=20.0).years
    t2 = lifetime_years(elements, ballistic_coefficient_kg_m2=70.0).years
    assert t2 == pytest.approx(3.5 * t1, rel=1e-12)


def test_span_cut_follows_the_scaled_history():
    # The same orbit with a span shorter than its lifetime reports inf and ends at the span.
    elements = Elements(RE + 500.0, 0.0, 51.6, 0.0, 0.0, 0.0)
    full = lifetime_years(elements, ballistic_coefficient_kg_m2=50.0)
    cut = lifetime_years(elements, ballistic_coefficient_kg_m2=50.0, max_years=0.5 * full.years)
    assert not cut.reentered and math.isinf(cut.years)
    assert cut.t_years[-1] == pytest.approx(0.5 * full.years, rel=1e-12)
    assert np.all(np.diff(cut.perigee_alt_km) <= 0.0)


@pytest.mark.parametrize(
    "hp_km, ha_km, b, limit",
    [(700.0, 700.0, 50.0, 25.0), (650.0, 800.0, 80.0, 5.0), (600.0, 600.0, 40.0, 1.0)],
)
def test_disposal_search_matches_the_ode_bisection(hp_km, ha_km, b, limit):
    # Reference: the former bisection to 0.1 km with one RK45 integration per trial.
    rp, ra = RE + hp_km, RE + ha_km
    elements = Elements(0.5 * (rp + ra), (ra - rp) / (ra + rp), 97.4, 0.0, 0.0, 0.0)
    plan = disposal_perigee_lowering(elements, limit, b)
    i_rad = math.radians(97.4)
    radius = _mean_radius_km(i_rad, EARTH)
    rp_ode, life_ode = disposal_bisection_ode(
        float(elements.a_km), float(elements.e), i_rad, b, _Untabulated("moderate"),  # type: ignore[arg-type]
        radius, 120.0, limit,
    )  # fmt: skip
    assert plan.lifetime_after_years <= limit
    assert life_ode <= limit
    assert plan.perigee_altitude_km == pytest.approx(rp_ode - radius, abs=0.2)
    # The plan's lifetime is the kernel's own at that perigee.
    new_rp = radius + plan.perigee_altitude_km
    after = Elements(0.5 * (ra + new_rp), (ra - new_rp) / (ra + new_rp), 97.4, 0.0, 0.0, 0.0)
    assert lifetime_years(after, ballistic_coefficient_kg_m2=b).years == pytest.approx(
        plan.lifetime_after_years, rel=1e-4
    )


def test_solar_cycle_lifetime_matches_the_ode_to_1e_4():
    # A density that changes with time (NRLMSIS 2.1 through pymsis over a Hathaway-Wilson-
    # Reichmann 1994 solar cycle, kernel/flux.py): the kernel integrates (q, t) over a with
    # the graded q tolerance; the reference is the former integration in time (scipy RK45)
    # reading the same table at each time.
    from orbitledger.kernel.flux import solar_cycle_flux
    from orbitledger.kernel.nrlmsis import nrlmsis_profile

    cycle = nrlmsis_profile(solar_cycle_flux(2461406.5, 2458832.5), 97.5)
    assert cycle.time_varying
    i_rad = math.radians(97.5)
    radius = _mean_radius_km(i_rad, EARTH)
    rp, ra = radius + 400.0, radius + 800.0
    elements = Elements(0.5 * (rp + ra), (ra - rp) / (ra + rp), 97.5, 0.0, 0.0, 0.0)
    fast = lifetime_years(elements, ballistic_coefficient_kg_m2=80.0, density=cycle)
    years, reentered, _ = orbit_averaged_ode(
        float(elements.a_km), float(elements.e), i_rad, 80.0, cycle, radius, 120.0, 200.0
    )
    assert fast.reentered and reentered
    assert fast.years == pytest.approx(years, rel=1e-4)
