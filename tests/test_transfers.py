"""Transfers against textbook worked examples (sources beside each check)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq, minimize_scalar

from orbitledger.kernel import EARTH, InputError, bielliptic, hohmann
from orbitledger.kernel.transfers import (
    combined_plane_change,
    hohmann_elliptic,
    phasing,
    plane_change_dv_km_s,
)

R_E = EARTH.radius_km
MM_S = 1e-6  # km/s
M = 1e-3  # km


def test_hohmann_vallado_example_6_1():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Example 6-1:
    # 191.34411 km circular to geostationary (35 781.34857 km altitude):
    # dva = 2.457 038 km/s, dvb = 1.478 187 km/s, total 3.935 224 km/s, 5.256 713 h.
    res = hohmann(R_E + 191.34411, R_E + 35781.34857)
    assert abs(res.dv1_km_s - 2.457038) < 2 * MM_S
    assert abs(res.dv2_km_s - 1.478187) < 2 * MM_S
    assert abs(res.dv_total_km_s - 3.935224) < 2 * MM_S
    assert abs(res.tof_s - 5.256713 * 3600.0) < 1.0  # s


def test_hohmann_unpacks_by_name_and_by_position():
    res = hohmann(R_E + 400.0, R_E + 550.0)
    dv1, dv2, total, tof = res
    assert (dv1, dv2, total, tof) == (res.dv1_km_s, res.dv2_km_s, res.dv_total_km_s, res.tof_s)
    assert res["tof_s"] == res[3] == tof
    assert dict(res)["dv1_km_s"] == dv1
    # vis-viva identity: the total equals the sum of the two burns (no other source needed)
    assert total == pytest.approx(dv1 + dv2, abs=1e-15)


def test_hohmann_broadcasts_and_lowers_with_magnitudes():
    up = hohmann(R_E + 400.0, R_E + np.array([500.0, 600.0, 700.0]))
    assert up.dv_total_km_s.shape == (3,)
    down = hohmann(R_E + 700.0, R_E + 400.0)
    # a descent costs the same magnitudes in reverse order (symmetry of the Hohmann ellipse)
    assert abs(down.dv_total_km_s - up.dv_total_km_s[2]) < 1e-12


def test_hohmann_between_apsides_curtis_example_6_1():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 6.1 (mu = 398 600,
    # R = 6378 km): 480 x 800 km orbit, perigee burn to a 480 x 16 000 km ellipse, circularise
    # at 16 000 km: dvA = 1.7225 km/s, dvB = 1.3297 km/s, total 3.0522 km/s.
    res = hohmann_elliptic(6378 + 480, 6378 + 800, 6378 + 16000, 6378 + 16000, 398600.0)
    assert abs(res.dv1_km_s - 1.7225) < 0.1e-3  # 0.1 m/s: the book's four decimals
    assert abs(res.dv2_km_s - 1.3297) < 0.1e-3
    assert abs(res.dv_total_km_s - 3.0522) < 0.1e-3


def test_bielliptic_vallado_example_6_2():
    # Vallado 4th ed., Example 6-2: 191.34411 km altitude to 376 310 km altitude through
    # rb at 503 873 km altitude: dva = 3.156 233, dvb = 0.677 358 km/s, total 3.904 057 km/s,
    # 593.92 h (from memory of the worked example).
    res = bielliptic(R_E + 191.34411, R_E + 376310.0, R_E + 503873.0)
    assert abs(res.dv1_km_s - 3.156233) < 2 * MM_S
    assert abs(res.dv2_km_s - 0.677358) < 2 * MM_S
    assert abs(res.dv_total_km_s - 3.904057) < 2 * MM_S
    assert abs(res.tof_s - 593.92 * 3600.0) < 40.0  # s: the book's two decimals of an hour
    dv1, dv2, dv3, total, tof = res
    assert total == pytest.approx(dv1 + dv2 + dv3, abs=1e-15)


def test_bielliptic_hohmann_crossover_ratios():
    # Textbook result (Vallado 4th ed., Sec. 6.3.2; Curtis 3rd ed., Sec. 6.3): the bi-elliptic
    # transfer beats the Hohmann for rb -> infinity once r2/r1 > 11.94, and for every rb > r2
    # once r2/r1 > 15.58.
    def excess_far(ratio: float) -> float:
        return (
            bielliptic(1.0, ratio, 1e12, 1.0).dv_total_km_s - hohmann(1.0, ratio, 1.0).dv_total_km_s
        )

    def excess_near(ratio: float) -> float:
        rb = ratio * (1.0 + 1e-6)
        return (
            bielliptic(1.0, ratio, rb, 1.0).dv_total_km_s - hohmann(1.0, ratio, 1.0).dv_total_km_s
        )

    assert abs(brentq(excess_far, 5.0, 14.0, xtol=1e-9) - 11.94) < 0.005
    assert abs(brentq(excess_near, 12.0, 20.0, xtol=1e-9) - 15.58) < 0.005


def test_bad_radii_and_intermediate_radius_refused():
    with pytest.raises(InputError, match="r1_km"):
        hohmann(6000.0, 7000.0)  # inside the Earth
    with pytest.raises(InputError, match="rb_km"):
        bielliptic(7000.0, 70000.0, 50000.0)
    with pytest.raises(InputError, match="r2_km"):
        hohmann(7000.0, float("nan"))


def test_plane_change_in_low_orbit():
    # Common practice: in low Earth orbit (about 7.7 km/s) one degree of plane change costs
    # about 130-135 m/s; Vallado 4th ed., Eq. 6-23 dv = 2 v sin(di/2).
    v = math.sqrt(EARTH.mu_km3_s2 / (R_E + 400.0))
    assert 0.130 < plane_change_dv_km_s(v, 1.0) < 0.135
    # a 60 deg change costs the orbital speed itself (2 sin 30 deg = 1)
    assert abs(plane_change_dv_km_s(v, 60.0) - v) < 1e-12
    # flight-path angle: only the horizontal velocity turns (Vallado 4th ed., Eq. 6-24)
    assert abs(plane_change_dv_km_s(v, 10.0, 60.0) - 0.5 * plane_change_dv_km_s(v, 10.0)) < 1e-12


def test_combined_plane_change_cape_to_geostationary():
    # Common practice (from memory): from a 28.5 deg parking orbit to geostationary, the best
    # split makes about 2 deg of the plane change at perigee and the rest at apogee.
    r1, r2 = R_E + 185.0, 42164.17
    res = combined_plane_change(r1, r2, 28.5)
    assert 2.0 < res.di1_deg < 2.5
    assert abs(res.di1_deg + res.di2_deg - 28.5) < 1e-9

    # The optimum against scipy's bounded scalar minimiser (outside reference library).
    mu = EARTH.mu_km3_s2
    v1, v2 = math.sqrt(mu / r1), math.sqrt(mu / r2)
    vt1 = math.sqrt(2 * mu * r2 / (r1 * (r1 + r2)))
    vt2 = math.sqrt(2 * mu * r1 / (r2 * (r1 + r2)))
    di = math.radians(28.5)

    def total(d1: float) -> float:
        a = math.sqrt(v1**2 + vt1**2 - 2 * v1 * vt1 * math.cos(d1))
        b = math.sqrt(vt2**2 + v2**2 - 2 * vt2 * v2 * math.cos(di - d1))
        return a + b

    best = minimize_scalar(total, bounds=(0.0, di), method="bounded", options={"xatol": 1e-12})
    assert abs(res.dv_total_km_s - best.fun) < 1e-3 * MM_S
    assert abs(math.radians(res.di1_deg) - best.x) < 1e-6  # rad


def test_combined_plane_change_all_at_apogee_is_about_1_8_km_s():
    # Common practice (from memory): a GTO-to-GEO apogee burn from a 28.5 deg orbit ~ 1.83 km/s.
    mu = EARTH.mu_km3_s2
    r1, r2 = R_E + 185.0, 42164.17
    vt2 = math.sqrt(2 * mu * r1 / (r2 * (r1 + r2)))
    v2 = math.sqrt(mu / r2)
    dv = math.sqrt(vt2**2 + v2**2 - 2 * vt2 * v2 * math.cos(math.radians(28.5)))
    assert 1.80 < dv < 1.86
    assert combined_plane_change(r1, r2, 28.5).dv2_km_s < dv  # splitting never costs more


def _two_body(mu: float):
    def rhs(_t, y):
        r = y[:3]
        return np.concatenate([y[3:], -mu * r / np.linalg.norm(r) ** 3])

    return rhs


@pytest.mark.parametrize("offset_km, k", [(500.0, 1), (-800.0, 2), (2000.0, 3)])
def test_phasing_meets_the_target(offset_km, k):
    # Vallado 4th ed., Sec. 6.6.1 (co-orbital phasing): checked by brute force, integrating both
    # spacecraft with scipy's DOP853 (outside reference integrator) for k phasing periods.
    mu = EARTH.mu_km3_s2
    r = R_E + 550.0
    res = phasing(r, offset_km, k)
    v = math.sqrt(mu / r)
    theta = offset_km / r
    dv_sign = -1.0 if offset_km > 0 else 1.0
    chaser0 = [r, 0.0, 0.0, 0.0, v + dv_sign * res.dv1_km_s, 0.0]
    target0 = [
        r * math.cos(theta),
        r * math.sin(theta),
        0.0,
        -v * math.sin(theta),
        v * math.cos(theta),
        0.0,
    ]
    opts = dict(method="DOP853", rtol=1e-12, atol=1e-10)
    chaser = solve_ivp(_two_body(mu), (0.0, res.tof_s), chaser0, **opts).y[:, -1]
    target = solve_ivp(_two_body(mu), (0.0, res.tof_s), target0, **opts).y[:, -1]
    assert np.linalg.norm(chaser[:3] - target[:3]) < 1 * M
    # after the second burn the chaser is back on the circular orbit, with the target's velocity
    back = chaser[3:5] - dv_sign * res.dv2_km_s * chaser[3:5] / np.linalg.norm(chaser[3:5])
    assert np.linalg.norm(back - target[3:5]) < 1 * MM_S


def test_phasing_refuses_an_ellipse_through_the_earth():
    with pytest.raises(InputError, match="along_track_offset_km"):
        phasing(R_E + 400.0, 15000.0, 1)
