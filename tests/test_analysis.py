"""case_results: the results every face shows, checked against outside references."""

from __future__ import annotations

import math

import pytest

from orbitledger.analysis import FAST_GROUPS, Result, case_results, results_as_values
from orbitledger.case import starter_case
from orbitledger.kernel import EARTH, InputError

WGS84_MU = 398600.4418  # km^3/s^2, NIMA TR8350.2 Table 3.1


def _circular(alt_km: float, i_deg: float, **changes):
    case = starter_case().with_changes(
        {"orbit.altitude_km": alt_km, "orbit.e": 0.0, "orbit.i_deg": i_deg, **changes}
    )
    return case


def test_period_follows_keplers_third_law():
    # T = 2 pi sqrt(a^3 / mu) (Kepler's third law, any textbook; WGS-84 mu and radius).
    case = _circular(500.0, 51.6)
    r = case_results(case, ["orbit"])
    a = EARTH.radius_km + 500.0
    assert abs(r["period_s"].value - 2 * math.pi * math.sqrt(a**3 / WGS84_MU)) < 1e-6  # s
    # A 500 km circular orbit takes about 94.6 min (common practice).
    assert abs(r["period_s"].value / 60.0 - 94.6) < 0.1
    # Circular speed sqrt(mu / a), about 7.61 km/s at 500 km (common practice).
    assert abs(r["speed_km_s"].value - math.sqrt(WGS84_MU / a)) < 1e-9
    assert r["period_s"].unit == "s" and r["speed_km_s"].unit == "km/s"


def test_sun_synchronous_offset_is_zero_at_the_sso_inclination():
    # Sun-synchronous orbits at 700-800 km fly at about 98.2-98.6 deg (Landsat 8: 705 km,
    # 98.2 deg; from memory, a fact of the trade).
    case = _circular(705.0, 98.2)
    r = case_results(case, ["j2"])
    assert abs(r["sun_synchronous_inclination_deg"].value - 98.2) < 0.05
    # At the SSO inclination the node turns 360 deg per tropical year: 0.9856 deg/day.
    i_sso = r["sun_synchronous_inclination_deg"].value
    r2 = case_results(_circular(705.0, i_sso), ["j2"])
    assert abs(r2["raan_rate_deg_per_day"].value - 360.0 / 365.24219) < 1e-9
    assert abs(r2["sun_synchronous_offset_deg"].value) < 1e-9


def test_eclipse_fraction_matches_the_cylindrical_shadow_at_the_orbits_beta():
    # Circular orbit: at beta = 0 the shadow fraction is asin(R / r) / pi for a cylindrical shadow
    # (e.g. Curtis, Orbital Mechanics, sec. on eclipses; common practice). The conical model
    # adds the penumbra, so the fraction is within a few percent of it.
    case = _circular(540.0, 97.55)
    r = case_results(case, ["eclipses"])
    beta = math.radians(r["beta_angle_deg"].value)
    a = EARTH.radius_km + 540.0
    # Exact cylindrical fraction at this beta (Hughes/Wertz form, common practice).
    half = math.acos(min(1.0, math.sqrt(a**2 - EARTH.radius_km**2) / (a * math.cos(beta))))
    expected = half / math.pi if abs(math.sin(beta)) < EARTH.radius_km / a else 0.0
    assert abs(r["eclipse_fraction_mean"].value - expected) < 0.01
    assert 0.0 <= r["ltan_h"].value < 24.0


def test_contacts_and_lifetime_carry_units_and_the_lifetime_caution():
    case = starter_case()
    r = case_results(case, ["contacts", "lifetime"])
    assert r["passes_per_day"].unit == "1/day"
    # A LEO satellite passes a mid-latitude station a handful of times a day (common practice).
    assert 2 <= r["passes_in_window"].value <= 40
    assert r["contact_min_per_day"].value > 0.0
    life = r["lifetime_years"]
    assert life.unit == "yr" and life.value > 0.0
    assert "licensing authority" in life.caution
    # The re-entry height names its reference (kernel.lifetime: the ellipsoid at the mean
    # latitude), since it differs from an altitude above the equatorial radius by up to 21 km.
    assert "above the ellipsoid" in life.description


def test_fast_groups_and_plain_values_for_the_editor():
    values = results_as_values(case_results(starter_case(), FAST_GROUPS))
    assert set(values) >= {"period_s", "periapsis_alt_km", "raan_rate_deg_per_day"}
    assert all(isinstance(v, float) for v in values.values())


def test_unknown_group_is_named():
    with pytest.raises(InputError, match="groups.*unknown result group"):
        case_results(starter_case(), ["orbits"])


def test_tolerances_decide_agreement():
    r = Result("x", 100.0, "s", "", "g", rel_tol=0.0, abs_tol=1.0)
    assert r.agrees_with(100.9) and not r.agrees_with(101.5)
    assert Result("n", math.nan, "", "", "g").agrees_with(math.nan)
