"""Transfer grids: Hohmann cells, planetary windows, consistency with single Lambert solves."""

from __future__ import annotations

import math

import numpy as np
import pytest

from orbitledger.kernel import EARTH, SUN, InputError, hohmann, lambert
from orbitledger.kernel.planets import planet_state
from orbitledger.kernel.porkchop import planetary_porkchop, rendezvous_porkchop, transfer_grid

MM_S = 1e-6


def test_rendezvous_grid_holds_the_hohmann_cell():
    # Coplanar circular chaser and target, target phased so that a Hohmann transfer leaving at
    # t = 0 meets it: that cell's delta-v is the Hohmann's (Vallado 4th ed., Algorithm 36,
    # checked in test_transfers against Example 6-1), and no cell of the grid beats it.
    mu = EARTH.mu_km3_s2
    r1, r2 = EARTH.radius_km + 400.0, EARTH.radius_km + 550.0
    h = hohmann(r1, r2)
    n2 = math.sqrt(mu / r2**3)
    lead = math.pi - n2 * h.tof_s  # target's phase ahead of the chaser at t = 0
    chaser = ([r1, 0, 0], [0, math.sqrt(mu / r1), 0])
    target = (
        [r2 * math.cos(lead), r2 * math.sin(lead), 0],
        [-math.sqrt(mu / r2) * math.sin(lead), math.sqrt(mu / r2) * math.cos(lead), 0],
    )
    dep = np.linspace(-300.0, 300.0, 7)
    arr = h.tof_s + np.linspace(-300.0, 300.0, 7)
    grid = rendezvous_porkchop(*chaser, *target, dep, arr, mu)
    assert grid.dv_total_km_s.shape == (7, 7)
    assert abs(grid.dv_total_km_s[3, 3] - h.dv_total_km_s) < 1 * MM_S
    assert grid.plane_ill_defined[3, 3]  # exactly 180 deg: plane from the +z rule
    assert np.nanmin(grid.dv_total_km_s) >= h.dv_total_km_s - 1 * MM_S


def test_heliocentric_hohmann_curtis_example_8_3():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 8.3: Earth to Mars
    # Hohmann with circular coplanar orbits (1 au = 149.6e6 km, Mars 227.9e6 km,
    # mu_sun = 1.327e11): departure v_inf = 2.943 km/s; transfer about 259 days.
    mu = 1.327e11
    r_e, r_m = 149.6e6, 227.9e6
    tof = math.pi * math.sqrt((0.5 * (r_e + r_m)) ** 3 / mu)
    dep_r = np.array([[r_e, 0.0, 0.0]])
    dep_v = np.array([[0.0, math.sqrt(mu / r_e), 0.0]])
    arr_r = np.array([[-r_m, 0.0, 0.0]])
    arr_v = np.array([[0.0, -math.sqrt(mu / r_m), 0.0]])
    grid = transfer_grid(dep_r, dep_v, arr_r, arr_v, [0.0], [tof], [[tof]], mu)
    assert abs(grid.dv_departure_km_s[0, 0] - 2.943) < 0.5e-3  # the book's three decimals
    assert abs(tof / 86400.0 - 259.0) < 0.5


def test_earth_mars_2026_window():
    # Common practice (from memory): Earth-Mars windows recur every ~26 months with minimum
    # launch C3 between about 8 and 20 km^2/s^2 and arrival v_inf of 2.5-4 km/s; the 2026
    # window opens in the last months of 2026.
    jd0 = 2461284.5  # 2026-09-01 0h TDB
    dep = jd0 + np.linspace(0.0, 120.0, 61)
    arr = jd0 + np.linspace(150.0, 450.0, 61)
    grid = planetary_porkchop("earth", "mars", dep, arr)
    k = np.nanargmin(grid.c3_km2_s2)
    i, j = np.unravel_index(k, grid.c3_km2_s2.shape)
    assert 8.0 < grid.c3_km2_s2[i, j] < 20.0
    assert 2.0 < grid.dv_arrival_km_s[i, j] < 4.0
    assert 2461314.5 < dep[i] < 2461404.5  # October to December 2026
    # each cell is the single Lambert solve of the planets' states (consistency)
    r1, v1 = planet_state("earth", dep[i])
    r2, v2 = planet_state("mars", arr[j])
    w1, w2 = lambert(r1, r2, (arr[j] - dep[i]) * 86400.0, SUN.mu_km3_s2)
    assert abs(np.linalg.norm(w1 - v1) ** 2 - grid.c3_km2_s2[i, j]) < 1e-9
    assert abs(np.linalg.norm(v2 - w2) - grid.dv_arrival_km_s[i, j]) < 1e-12


def test_cells_without_flight_time_are_invalid():
    dep = np.array([2461300.5, 2461500.5])
    arr = np.array([2461400.5])
    grid = planetary_porkchop("earth", "mars", dep, arr)
    assert grid.valid.tolist() == [[True], [False]]
    assert np.isnan(grid.dv_total_km_s[1, 0])
    with pytest.raises(InputError, match="departure_jd_tdb"):
        planetary_porkchop("earth", "mars", [], arr)
