"""Mission-long beta angle, eclipse seasons and LTAN drift against closed forms.

Outside references:
- the Sun's ecliptic longitude and the obliquity from the low-precision formulas of the
  Astronomical Almanac (Sec. C, "Low precision formulas for the Sun", about 0.01 deg over
  1950-2050; from memory);
- the beta angle as the Sun's unit vector (ecliptic longitude, obliquity) dotted with the orbit
  normal (sin i sin RAAN, -sin i cos RAAN, cos i): sin beta = cos G sin O sin i -
  sin G cos e cos O sin i + sin G sin e cos i (common practice);
- the J2 nodal rate -3/2 n J2 (R/p)^2 cos i (Vallado 4th ed., Eq. 9-41) with EGM96 J2 and
  WGS-84 mu and R written out here;
- the eclipse fraction of a circular orbit in a cylindrical shadow, acos(sqrt(h^2 + 2 R h) /
  (r cos beta)) / pi for |beta| < asin(R / r), else 0 (common practice; e.g. Vallado 4th ed.,
  Sec. 5.3, the cylindrical shadow);
- the drift of the node's local time, (dRAAN/dt - 360 deg per tropical year) / 15 deg/h.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import Elements
from orbitledger.kernel.seasons import eclipse_seasons, mission_seasons

MU = 398_600.4418  # km^3/s^2, WGS-84
R_E = 6378.137  # km, WGS-84
J2 = 1.0826267e-3  # EGM96 (C20 = -4.84165371736e-4 unnormalised)
TROPICAL_YEAR_D = 365.24219

START = "2000-01-01T12:00:00Z"  # J2000.0: GCRF and the equinox of date agree to 0.014 deg/yr


def _nodal_rate_deg_day(a: float, i_deg: float) -> float:
    n = math.sqrt(MU / a**3)
    return math.degrees(-1.5 * n * J2 * (R_E / a) ** 2 * math.cos(math.radians(i_deg))) * 86400


def _sun_almanac(days_from_j2000: np.ndarray):
    n = days_from_j2000
    L = np.radians(280.460 + 0.9856474 * n)
    g = np.radians(357.528 + 0.9856003 * n)
    lam = L + np.radians(1.915) * np.sin(g) + np.radians(0.020) * np.sin(2 * g)
    eps = np.radians(23.439 - 0.0000004 * n)
    return lam, eps


def _closed_form(a: float, i_deg: float, raan0_deg: float, days: np.ndarray):
    raan = np.radians(raan0_deg + _nodal_rate_deg_day(a, i_deg) * days)
    lam, eps = _sun_almanac(days)
    i = math.radians(i_deg)
    s = (np.cos(lam) * np.sin(raan) * math.sin(i) - np.sin(lam) * np.cos(eps) * np.cos(raan)
         * math.sin(i) + np.sin(lam) * np.sin(eps) * math.cos(i))  # fmt: skip
    beta = np.arcsin(s)
    h = a - R_E
    beta_star = math.asin(R_E / a)
    with np.errstate(invalid="ignore"):
        frac = np.arccos(np.sqrt(h**2 + 2 * R_E * h) / (a * np.cos(beta))) / math.pi
    frac = np.where(np.abs(beta) < beta_star, frac, 0.0)
    return np.degrees(beta), frac, math.degrees(beta_star)


CASES = [(R_E + 540.0, 97.6, 157.5), (R_E + 420.0, 51.6, 10.0), (R_E + 1200.0, 63.4, 250.0)]


@pytest.mark.parametrize("a, i_deg, raan0", CASES)
def test_year_of_beta_and_eclipses_matches_closed_form(a, i_deg, raan0):
    elements = Elements(a_km=a, e=0.0, i_deg=i_deg, raan_deg=raan0, argp_deg=0.0, nu_deg=0.0)
    series = mission_seasons(elements, START, 365.0, model="cylindrical")
    days = series.offset_s / 86_400.0
    beta, frac, beta_star = _closed_form(a, i_deg, raan0, days)
    # 0.02 deg: the almanac Sun (0.01 deg, apparent) against ERFA's geometric Sun (aberration
    # 0.006 deg), precession of the equinox over the year (0.014 deg); seen 0.011 deg
    assert np.max(np.abs(series.beta_deg - beta)) < 0.02
    clear = np.abs(np.abs(beta) - beta_star) > 0.5  # days not at a season's edge
    # the shadow geometry itself: the closed form at the kernel's own beta (seen 3e-6)
    h = a - R_E
    with np.errstate(invalid="ignore"):
        at_beta = np.arccos(np.sqrt(h**2 + 2 * R_E * h) / (a * np.cos(np.radians(series.beta_deg))))
    at_beta = np.where(np.abs(series.beta_deg) < beta_star, at_beta / math.pi, 0.0)
    assert np.max(np.abs(series.shadow_fraction[clear] - at_beta[clear])) < 2e-5
    # all closed form (almanac Sun): the beta difference near the edges dominates (seen 3e-4)
    assert np.max(np.abs(series.shadow_fraction[clear] - frac[clear])) < 1e-3
    period = 2 * math.pi * math.sqrt(a**3 / MU)
    # one shadow per orbit: the longest shadow is the whole of it (J2 moves the period by 1e-3)
    assert np.allclose(series.max_shadow_s[clear], frac[clear] * period, rtol=2e-3, atol=1.0)
    # eclipse seasons: the days with shadow are those with |beta| < beta*, up to edge days
    assert (
        np.count_nonzero((series.shadow_fraction > 0) != (frac > 0))
        <= 2 * len(eclipse_seasons(series)) + 2
    )


def test_sun_synchronous_orbit_never_leaves_shadow_and_polar_one_has_seasons():
    # 540 km SSO at 22:36 LTAN: |beta| stays near 20-35 deg < beta* = 67 deg: shadow all year.
    sso = Elements(a_km=R_E + 540.0, e=0.001, i_deg=97.6, raan_deg=157.5, argp_deg=90.0, nu_deg=0.0)
    series = mission_seasons(sso, "2027-03-21T10:30:00Z", 365.0)
    assert series.eclipse_days == series.offset_s.size
    # A dawn-dusk 800 km SSO (LTAN 06:00, i = 98.6 deg): its normal lies 8.6 deg from the
    # equator, towards the Sun's side, so |beta| is least, 90 - 23.44 - 8.6 = 57.96 deg, at the
    # December solstice (the Sun 23.44 deg south), under beta* = asin(R / r) = 63.2 deg: one
    # eclipse season centred on the December solstice (geometry worked by hand).
    dd = Elements(a_km=R_E + 800.0, e=0.0, i_deg=98.6, raan_deg=270.0, argp_deg=0.0, nu_deg=0.0)
    series = mission_seasons(dd, "2027-03-21T06:00:00Z", 365.0)
    (season,) = eclipse_seasons(series)
    assert np.min(np.abs(series.beta_deg)) == pytest.approx(90 - 23.44 - 8.6, abs=0.2)
    middle = 0.5 * (season["first_offset_s"] + season["last_offset_s"]) / 86_400.0
    solstice = 275.0  # 2027-12-22 is 276 days after 2027-03-21
    assert abs(middle - solstice) < 5.0


@pytest.mark.parametrize("i_deg", [97.0, 97.6, 98.2, 60.0])
def test_ltan_drift_is_nodal_rate_minus_suns_mean_motion(i_deg):
    a = R_E + 540.0
    elements = Elements(a_km=a, e=0.0, i_deg=i_deg, raan_deg=157.5, argp_deg=0.0, nu_deg=0.0)
    series = mission_seasons(elements, "2027-03-21T10:30:00Z", 3 * 365.25, step_days=5.0)
    expected = (_nodal_rate_deg_day(a, i_deg) - 360.0 / TROPICAL_YEAR_D) / 15.0 * 365.25
    # 0.005 h/yr: the equinox precesses 50 arcsec/yr against the GCRF node (0.0037 h/yr)
    assert series.ltan_drift_h_per_year() == pytest.approx(expected, abs=0.005)
    # and the LTDN is the LTAN + 12 h, the apparent LTAN within the equation of time (17 min)
    assert np.allclose((series.ltdn_h - series.ltan_h) % 24.0, 12.0)
    gap = (series.ltan_true_h - series.ltan_h + 12.0) % 24.0 - 12.0
    assert np.max(np.abs(gap)) < 17.0 / 60.0


def test_bad_inputs_are_refused():
    from orbitledger.kernel.errors import InputError

    el = Elements(a_km=R_E + 540.0, e=0.0, i_deg=97.6, raan_deg=0.0, argp_deg=0.0, nu_deg=0.0)
    for kwargs in ({"step_days": 0.0}, {"model": "flat"}, {"samples_per_orbit": 10}):
        with pytest.raises(InputError):
            mission_seasons(el, START, 30.0, **kwargs)
    with pytest.raises(InputError):
        mission_seasons(el, START, -1.0)


def test_shadow_runs_by_hand():
    from orbitledger.kernel.seasons import _shadow_runs

    # Worked by hand, 10 samples 1 s apart on a closed orbit; crossings halfway between
    # samples of depth +1 and -1. Row 0: in shadow from 1.5 to 4.5 (3 s) and from 8.5 past
    # the end to 0.5 (2 s, wrapping); row 1 never in shadow; row 2 always.
    depth = np.array(
        [
            [1.0, -1.0, 1.0, 1.0, 1.0, -1.0, -2.0, -1.0, -1.0, 1.0],
            [-1.0] * 10,
            [0.5] * 10,
        ]
    )
    total, longest = _shadow_runs(depth, 1.0)
    assert total.tolist() == pytest.approx([5.0, 0.0, 10.0])
    assert longest.tolist() == pytest.approx([3.0, 0.0, 10.0])


def test_days_in_chunks_give_the_same_series(monkeypatch):
    from orbitledger.kernel import seasons

    el = Elements(a_km=R_E + 800.0, e=0.01, i_deg=98.6, raan_deg=270.0, argp_deg=30.0, nu_deg=0.0)
    whole = mission_seasons(el, START, 60.0)
    monkeypatch.setattr(seasons, "_CHUNK_SAMPLES", 7 * 720)  # 7 days a chunk, 61 days
    chunked = mission_seasons(el, START, 60.0)
    assert np.array_equal(whole.shadow_fraction, chunked.shadow_fraction)
    assert np.array_equal(whole.max_shadow_s, chunked.max_shadow_s)
