"""Eclipses against the closed-form cylindrical-shadow results; beta angle; node local times."""

from __future__ import annotations

import math

import numpy as np
import pytest
from _circular_orbit import circular, plane_basis

from orbitledger.kernel.constants import EARTH
from orbitledger.kernel.eclipses import (
    PENUMBRA,
    SUNLIT,
    UMBRA,
    EclipseSearch,
    OrbitEclipse,
    beta_angle_deg,
    find_eclipses,
    node_local_times_h,
    shadow_state,
    sunlit_fraction,
    whole_orbits,
)
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.sun import sun_position_gcrf_km

pytestmark = pytest.mark.filterwarnings(
    "ignore::orbitledger.kernel.timescales.LeapSecondExtrapolationWarning"
)

START = "2027-03-21T10:30:00Z"
R_E = EARTH.radius_km
A_KM = R_E + 540.0


def _orbit_with_beta(beta_deg: float, a_km: float = A_KM):
    """Circular orbit whose normal makes 90 - beta deg with the Sun direction at START."""
    s = sun_position_gcrf_km(START)
    s_hat = s / np.linalg.norm(s)
    perp = np.cross(s_hat, [0.0, 0.0, 1.0])
    perp /= np.linalg.norm(perp)
    b = math.radians(beta_deg)
    h_hat = math.cos(b) * perp + math.sin(b) * s_hat
    p = np.cross([0.0, 0.0, 1.0], h_hat)
    p /= np.linalg.norm(p)
    return circular(a_km, p, np.cross(h_hat, p), START)


def _cylindrical_fraction(r_km: float, beta_deg: float) -> float:
    """Closed form for a circular orbit in a cylindrical shadow: with h = r - R the satellite
    is shadowed while its angle phi from the anti-Sun point in the orbit plane satisfies
    r^2 (1 - cos^2 beta cos^2 phi) < R^2, so the fraction is (1/pi) acos(sqrt(h^2 + 2 R h) /
    (r cos beta)), which for beta = 0 is asin(R / r) / pi. Derived here; the same expression
    is common practice in spacecraft thermal analysis (e.g. Rickman, Introduction to Orbital
    Mechanics and Spacecraft Attitudes for Thermal Engineers, NASA TFAWS 2014; from memory)."""
    h = r_km - R_E
    return (
        math.acos(math.sqrt(h * h + 2 * R_E * h) / (r_km * math.cos(math.radians(beta_deg))))
        / math.pi
    )


def test_beta_zero_cylindrical_fraction_matches_closed_form() -> None:
    traj = _orbit_with_beta(0.0)
    found = find_eclipses(traj, traj.period_s * 3, model="cylindrical")
    first = found.per_orbit[0]
    assert abs(first.beta_deg) < 0.05
    expected = math.asin(R_E / A_KM) / math.pi
    # 0.5 s of a 95 min orbit is 1e-4 of it; the Sun moves 0.07 deg per orbit, a second-order
    # change at beta = 0.
    assert first.fraction == pytest.approx(expected, abs=1e-4)
    assert found.eclipses[0].duration_s == pytest.approx(expected * traj.period_s, abs=0.5)


@pytest.mark.parametrize("beta_deg", [30.0, 55.0])
def test_cylindrical_fraction_with_beta(beta_deg: float) -> None:
    traj = _orbit_with_beta(beta_deg)
    found = find_eclipses(traj, traj.period_s, model="cylindrical")
    # The Sun's motion changes beta by a few hundredths of a degree in an orbit; compare at
    # the orbit's mean beta (the closed form's slope is 0.007 per deg at 55 deg).
    orbit = found.per_orbit[0]
    assert orbit.beta_deg == pytest.approx(beta_deg, abs=0.1)
    assert orbit.fraction == pytest.approx(_cylindrical_fraction(A_KM, orbit.beta_deg), abs=1e-4)


def test_eclipses_vanish_beyond_the_beta_limit() -> None:
    # beta* = asin(R / r): above it the orbit never enters the cylinder (closed form above).
    beta_star = math.degrees(math.asin(R_E / A_KM))
    assert beta_star == pytest.approx(67.25, abs=0.05)
    below = _orbit_with_beta(beta_star - 1.0)
    above = _orbit_with_beta(beta_star + 1.0)
    assert len(find_eclipses(below, below.period_s * 2, model="cylindrical").eclipses) >= 1
    assert find_eclipses(above, above.period_s * 2, model="cylindrical").eclipses == ()


def test_conical_shadow_brackets_the_cylinder() -> None:
    # The penumbra cone widens and the umbra cone narrows away from the Earth (M&G Sec. 3.4.2),
    # so conical penumbra entry < cylinder entry < umbra entry; penumbra lasts about
    # (2 R_sun / d_sun) / (2 pi / P) ~ 8 s per side in low orbit (common practice).
    traj = _orbit_with_beta(0.0)
    cyl = find_eclipses(traj, traj.period_s, model="cylindrical").eclipses[0]
    con = find_eclipses(traj, traj.period_s).eclipses[0]
    assert con.entry_s < cyl.entry_s < con.umbra_entry_s
    assert con.umbra_exit_s < cyl.exit_s < con.exit_s
    side = con.umbra_entry_s - con.entry_s
    assert 6.0 < side < 12.0


def test_sunlit_fraction_through_the_penumbra() -> None:
    traj = _orbit_with_beta(0.0)
    con = find_eclipses(traj, traj.period_s).eclipses[0]
    t = np.linspace(con.entry_s - 1, con.umbra_entry_s + 1, 50)
    r, _ = traj.gcrf(t)
    s = sun_position_gcrf_km(traj.times(t))
    lit = sunlit_fraction(r, s)
    assert lit[0] == 1.0 and lit[-1] == 0.0
    assert np.all(np.diff(lit) <= 1e-12)
    states = shadow_state(r, s)
    assert states[0] == SUNLIT and states[-1] == UMBRA and PENUMBRA in states


def test_beta_angle_and_per_orbit_longest() -> None:
    traj = _orbit_with_beta(20.0)
    r, v = traj.gcrf(np.array([0.0]))
    assert beta_angle_deg(r, v, sun_position_gcrf_km(START)[None, :])[0] == pytest.approx(
        20.0, abs=1e-6
    )
    found = find_eclipses(traj, traj.period_s * 4)
    assert len(found.per_orbit) == 4
    # Book-keeping: the orbits' shadow time adds up to the eclipses' durations, and the
    # longest per orbit is one of them.
    total = sum(e.duration_s for e in found.eclipses)
    assert sum(o.shadow_s for o in found.per_orbit) == pytest.approx(total, abs=1e-6)
    longest = max(o.longest_s for o in found.per_orbit)
    assert longest == pytest.approx(max(e.duration_s for e in found.eclipses), abs=1e-9)
    assert all(o.umbra_s < o.shadow_s for o in found.per_orbit if o.shadow_s > 0)


def test_ltan_of_a_sun_synchronous_orbit_holds_and_ltdn_is_opposite() -> None:
    # A node 22.5 deg west of the Sun's right ascension is at 10:30 apparent local time
    # (15 deg per hour; common practice). Mean local time differs by the equation of time,
    # about -7 min on 21 March (Astronomical Almanac; from memory): mean = apparent + 7 min.
    s = sun_position_gcrf_km(START)
    raan = math.degrees(math.atan2(s[1], s[0])) - 22.5
    p, q = plane_basis(97.6, raan)
    traj = circular(A_KM, p, q, START)
    lt = node_local_times_h(traj, np.array([0.0]))
    assert lt["ltan_true_h"][0] == pytest.approx(10.5, abs=1e-4)
    assert (lt["ltan_h"][0] - lt["ltan_true_h"][0]) * 60 == pytest.approx(7.2, abs=1.0)
    assert lt["ltdn_h"][0] == pytest.approx((lt["ltan_h"][0] + 12) % 24, abs=1e-12)


def test_unknown_shadow_model_refused() -> None:
    traj = _orbit_with_beta(0.0)
    with pytest.raises(InputError, match="shadow_model"):
        find_eclipses(traj, 3600.0, model="spherical")


def test_mean_shadow_fraction_is_over_whole_orbits_only() -> None:
    # A window of 2.6 periods: two whole orbits and a trailing partial one. The per-orbit list
    # is built here by hand from the eclipses (shadow time inside [k P, (k + 1) P) over the
    # orbit's span); the mean "per orbit" is over the two whole orbits only, and for a circle
    # in a cylindrical shadow each whole orbit's fraction is the closed form above.
    traj = _orbit_with_beta(0.0)
    period = traj.period_s
    found = find_eclipses(traj, 2.6 * period, model="cylindrical")
    by_hand = []
    for k in range(3):
        lo, hi = k * period, min((k + 1) * period, 2.6 * period)
        shadow = sum(max(0.0, min(e.exit_s, hi) - max(e.entry_s, lo)) for e in found.eclipses)
        by_hand.append((hi - lo, shadow / (hi - lo)))
    whole = whole_orbits(found, period)
    assert [o.orbit for o in whole] == [0, 1]
    assert len(found.per_orbit) == 3  # the partial orbit is still listed, just not averaged
    hand_mean = sum(f for span, f in by_hand if span >= period * (1 - 1e-9)) / 2
    assert float(np.mean([o.fraction for o in whole])) == pytest.approx(hand_mean, abs=1e-6)
    assert hand_mean == pytest.approx(_cylindrical_fraction(A_KM, 0.0), abs=2e-4)
    # The trailing 0.6 orbit's own fraction differs from a whole orbit's, so a mean that
    # counted it as a whole one would be off (the error the summary used to make).
    naive = float(np.mean([f for _, f in by_hand]))
    assert abs(naive - hand_mean) > 1e-3


def test_whole_orbits_of_a_hand_made_list() -> None:
    # Period 100 s, window 250 s: fractions 0.37 and 0.37 over whole orbits, 0.29 over the
    # last 50 s; the mean over whole orbits is 0.37, not (0.37 + 0.37 + 0.29) / 3 = 0.3433.
    spans = [(0.0, 100.0, 0.37), (100.0, 200.0, 0.37), (200.0, 250.0, 0.29)]
    orbits = tuple(
        OrbitEclipse(k, lo, hi, f * (hi - lo), 0.0, f, 0.0, 0.0, 0.0)
        for k, (lo, hi, f) in enumerate(spans)
    )
    search = EclipseSearch("cylindrical", (), orbits, 250.0, 1.0, 0.01, False, ())
    whole = whole_orbits(search, 100.0)
    assert [o.orbit for o in whole] == [0, 1]
    assert float(np.mean([o.fraction for o in whole])) == pytest.approx(0.37, abs=1e-12)
    short = EclipseSearch("cylindrical", (), orbits[2:], 50.0, 1.0, 0.01, False, ())
    assert whole_orbits(short, 100.0) == ()
