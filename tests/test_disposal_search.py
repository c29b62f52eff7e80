"""The disposal perigee-lowering search: few batches, the same answer as the former search
(to its stated 0.1 km), and the highest perigee that meets the limit by the kernel's own
``lifetime_years``."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import EARTH, Elements
from orbitledger.kernel import budget as kb
from orbitledger.kernel import disposal as kd
from orbitledger.kernel.lifetime import _mean_radius_km, lifetime_years

RE = EARTH.radius_km
B = 48.0 / (2.2 * 0.12)  # a small satellite's m / (Cd A), kg/m^2 (common practice: Cd 2.2)
# The former rounds after the first: perigees 0.4 and 2 tolerances either side of the estimate.
_FORMER_COMB = np.array([-2.0, -0.4, 0.4, 2.0])


def _elements(hp_km: float, ha_km: float, i_deg: float = 97.4) -> Elements:
    radius = _mean_radius_km(math.radians(i_deg), EARTH)
    rp, ra = radius + hp_km, radius + ha_km
    return Elements(0.5 * (rp + ra), (ra - rp) / (ra + rp), i_deg, 0.0, 0.0, 0.0)


def _counted(monkeypatch) -> list[int]:
    sizes: list[int] = []
    original = kd._batch_lifetimes

    def batch(r_a, r_ps, *args, **kw):
        sizes.append(len(r_ps))
        return original(r_a, r_ps, *args, **kw)

    monkeypatch.setattr(kd, "_batch_lifetimes", batch)
    return sizes


CASES = [
    # (perigee km, apogee km, limit years): the starter case's end of mission (545 km
    # circular, 5-year rule), a lower and a higher limit, an eccentric orbit, a higher orbit.
    (545.0, 545.0, 5.0),
    (545.0, 545.0, 2.0),
    (545.0, 545.0, 10.0),
    (650.0, 800.0, 5.0),
    (700.0, 700.0, 25.0),
]


@pytest.mark.parametrize("hp, ha, limit", CASES)
def test_search_agrees_with_the_former_search_in_fewer_batches(monkeypatch, hp, ha, limit):
    el = _elements(hp, ha)
    sizes = _counted(monkeypatch)
    new = kb.disposal_perigee_lowering(el, limit, B)
    new_batches = len(sizes)
    sizes.clear()
    monkeypatch.setattr(kd, "_COMB", _FORMER_COMB)
    monkeypatch.setattr(kd, "_ROUGH_POINTS", 0)  # the former first round: 8, accurate
    old = kb.disposal_perigee_lowering(el, limit, B)
    old_batches = len(sizes)
    assert new.dv_km_s > 0.0
    # Both are within the stated 0.1 km below the root, so within 0.1 km of each other.
    assert new.perigee_altitude_km == pytest.approx(old.perigee_altitude_km, abs=0.1)
    assert new_batches <= min(2, old_batches)


@pytest.mark.parametrize("hp, ha, limit", CASES)
def test_result_is_the_highest_perigee_meeting_the_limit(hp, ha, limit):
    # Brute force with the kernel's own lifetime: the plan's perigee meets the limit and one
    # tolerance (0.1 km) higher does not.
    el = _elements(hp, ha)
    plan = kb.disposal_perigee_lowering(el, limit, B)
    radius = _mean_radius_km(math.radians(97.4), EARTH)
    ra = radius + plan.apogee_altitude_km

    def life(hp_km: float) -> float:
        rp = radius + hp_km
        return lifetime_years(
            Elements(0.5 * (rp + ra), (ra - rp) / (ra + rp), 97.4, 0.0, 0.0, 0.0),
            ballistic_coefficient_kg_m2=B,
        ).years

    assert life(plan.perigee_altitude_km) <= limit
    assert life(plan.perigee_altitude_km + 0.1) > limit
    assert plan.lifetime_after_years == pytest.approx(life(plan.perigee_altitude_km), rel=1e-4)


def test_starter_case_disposal_matches_the_ode_bisection_with_nrlmsis(monkeypatch):
    # The starter case of `orbitledger new`: 545 km circular at 97.5 deg, B = m / (Cd A) =
    # 181.8 kg/m^2, 5-year limit, NRLMSIS 2.1 (pymsis) at the ECSS-E-ST-10-04C moderate level.
    # Reference: the former bisection to 0.1 km with one scipy RK45 integration in time per
    # trial (lifetime_ode) on the same density table; both lie within 0.1 km below the root.
    from orbitledger.kernel.flux import level_flux
    from orbitledger.kernel.lifetime_ode import disposal_bisection_ode, orbit_averaged_ode
    from orbitledger.kernel.nrlmsis import nrlmsis_profile

    i_deg, b, limit = 97.5, 181.818, 5.0
    profile = nrlmsis_profile(level_flux("moderate"), i_deg)
    el = Elements(RE + 545.0, 0.0, i_deg, 0.0, 0.0, 0.0)
    sizes = _counted(monkeypatch)
    plan = kb.disposal_perigee_lowering(el, limit, b, density=profile)
    assert len(sizes) == 2  # one rough batch, one accurate comb
    i_rad = math.radians(i_deg)
    radius = _mean_radius_km(i_rad, EARTH)
    rp_ode, _ = disposal_bisection_ode(el.a_km, 0.0, i_rad, b, profile, radius, 120.0, limit)
    assert plan.perigee_altitude_km == pytest.approx(rp_ode - radius, abs=0.2)
    rp, ra = radius + plan.perigee_altitude_km, radius + plan.apogee_altitude_km
    years, reentered, _ = orbit_averaged_ode(
        0.5 * (rp + ra), (ra - rp) / (ra + rp), i_rad, b, profile, radius, 120.0, 50.0
    )
    assert reentered
    assert plan.lifetime_after_years == pytest.approx(years, rel=1e-4)
    assert plan.lifetime_after_years <= limit
