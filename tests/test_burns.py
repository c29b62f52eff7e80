"""Impulsive burns in RTN, burn timing and burn plans."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from orbitledger.kernel import EARTH, Elements, InputError
from orbitledger.kernel.burns import (
    BurnSpec,
    apply_burn_plan,
    apply_impulse,
    rtn_basis,
    time_to_next_s,
)
from orbitledger.kernel.elements import elements_to_state

MU = EARTH.mu_km3_s2
R_E = EARTH.radius_km
MM_S = 1e-6
M = 1e-3


def _integrate(r, v, t):
    def rhs(_t, y):
        rr = y[:3]
        return np.concatenate([y[3:], -MU * rr / np.linalg.norm(rr) ** 3])

    sol = solve_ivp(rhs, (0.0, t), np.concatenate([r, v]), method="DOP853", rtol=1e-13, atol=1e-10)
    return sol.y[:3, -1], sol.y[3:, -1]


def test_rtn_axes():
    # Vallado 4th ed., Sec. 3.3.3: R along r, N along r x v, T = N x R (along v when circular).
    r, v = elements_to_state(Elements(R_E + 500.0, 0.0, 51.6, 40.0, 0.0, 77.0))
    basis = rtn_basis(r, v)
    assert np.allclose(basis @ basis.T, np.eye(3), atol=1e-15)
    assert np.allclose(basis[1], v / np.linalg.norm(v), atol=1e-15)
    _, v_new = apply_impulse(r, v, [0.0, 0.0, 0.1])
    assert abs(np.linalg.norm(v_new - v) - 0.1) < 1e-15 and abs((v_new - v) @ v) < 1e-12


def test_circular_transfer_step_is_the_vallado_hohmann():
    # Vallado 4th ed., Example 6-1: 191.34411 km to 35 781.34857 km altitude:
    # dva = 2.457 038 km/s, dvb = 1.478 187 km/s, transfer 5.256 713 h.
    r, v = elements_to_state(Elements(R_E + 191.34411, 0.0, 28.5, 0.0, 0.0, 0.0))
    steps = apply_burn_plan(
        r, v, [BurnSpec("to GEO", "epoch", t_s=0.0, circular_radius_km=R_E + 35781.34857)]
    )
    assert [s.name for s in steps] == ["to GEO (1 of 2)", "to GEO (2 of 2)"]
    assert abs(steps[0].dv_magnitude_km_s - 2.457038) < 2 * MM_S
    assert abs(steps[1].dv_magnitude_km_s - 1.478187) < 2 * MM_S
    assert abs(steps[1].t_s - 5.256713 * 3600.0) < 1.0
    # the second burn happens where scipy's integration of the first arc arrives
    r_end, _ = _integrate(steps[0].r_km, steps[0].v_after_km_s, steps[1].t_s)
    assert np.linalg.norm(r_end - steps[1].r_km) < 1 * M
    assert float(steps[1].elements_after.e) < 1e-10


def test_plane_change_at_the_node():
    # Vallado 4th ed., Eq. 6-23: at a node a pure inclination change costs 2 v sin(di/2).
    r, v = elements_to_state(Elements(R_E + 700.0, 0.0, 97.0, 10.0, 0.0, 300.0))
    steps = apply_burn_plan(r, v, [BurnSpec("trim", "ascending", i_deg=99.0)])
    speed = math.sqrt(MU / (R_E + 700.0))
    assert abs(steps[0].dv_magnitude_km_s - 2 * speed * math.sin(math.radians(1.0))) < 1e-3 * MM_S
    assert abs(float(steps[0].elements_after.i_deg) - 99.0) < 1e-9
    assert abs(float(steps[0].elements_after.raan_deg) - 10.0) < 1e-9  # node kept
    # the burn point is the ascending node (z = 0, moving north)
    assert abs(steps[0].r_km[2]) < 1e-6 and steps[0].v_before_km_s[2] > 0


def test_timing_of_apsides_and_nodes():
    el = Elements(9000.0, 0.1, 40.0, 20.0, 60.0, 10.0)
    r, v = elements_to_state(el)
    period = 2 * math.pi * math.sqrt(9000.0**3 / MU)
    t_peri = time_to_next_s(r, v, "periapsis")
    t_apo = time_to_next_s(r, v, "apoapsis")
    # Kepler: apoapsis follows periapsis by half a period (common practice)
    assert abs(((t_apo - t_peri) % period) - period / 2) < 1e-6
    # brute force with scipy: at the node time the orbit crosses the equator northward
    t_node = time_to_next_s(r, v, "ascending")
    rn, vn = _integrate(r, v, t_node)
    assert abs(rn[2]) < 1 * M and vn[2] > 0
    rd, vd = _integrate(r, v, time_to_next_s(r, v, "descending"))
    assert abs(rd[2]) < 1 * M and vd[2] < 0
    # strictly after now: at periapsis, the next periapsis is one period away
    r0, v0 = elements_to_state(Elements(9000.0, 0.1, 40.0, 20.0, 60.0, 0.0))
    assert abs(time_to_next_s(r0, v0, "periapsis") - period) < 1e-6


def test_bad_plans_refused():
    r, v = elements_to_state(Elements(R_E + 500.0, 0.0, 0.0, 0.0, 0.0, 0.0))
    with pytest.raises(InputError, match="equatorial"):
        apply_burn_plan(r, v, [BurnSpec("x", "ascending", dv_rtn_km_s=(0, 0.01, 0))])
    plan = [
        BurnSpec("a", "epoch", t_s=600.0, dv_rtn_km_s=(0, 0.01, 0)),
        BurnSpec("b", "epoch", t_s=300.0, dv_rtn_km_s=(0, 0.01, 0)),
    ]
    with pytest.raises(InputError, match=r"burns\[1\]\.at\.epoch_utc"):
        apply_burn_plan(r, v, plan)
    with pytest.raises(InputError, match="exactly one"):
        apply_burn_plan(r, v, [BurnSpec("c", "epoch", t_s=0.0)])
    # an inclination no plane through r reaches: r at 60 deg latitude cannot be in a 30 deg orbit
    r2, v2 = elements_to_state(Elements(R_E + 500.0, 0.0, 70.0, 0.0, 0.0, 80.0))
    with pytest.raises(InputError, match="node"):
        apply_burn_plan(r2, v2, [BurnSpec("d", "epoch", t_s=0.0, i_deg=30.0)])
