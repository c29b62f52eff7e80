"""Kepler's equation against textbook worked examples, scipy's root finder and its residual."""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from orbitledger.kernel import InputError, solve_kepler
from orbitledger.kernel.kepler import solve_kepler_elliptic_sincos
from orbitledger.kernel.kepler_hyperbolic import hyperbolic_kepler_residual


def test_vallado_example_2_1():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Example 2-1:
    # M = 235.4 deg, e = 0.4 -> E = 220.512074767522 deg (from memory). 1e-9 deg.
    E = solve_kepler(math.radians(235.4), 0.4)
    assert isinstance(E, float)
    assert abs(math.degrees(E) - 220.512074767522) < 1e-9


def test_curtis_example_3_2():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 3.2: e = 0.37255,
    # M = 3.6029 rad -> E = 3.4794 rad (book rounds to 5 digits).
    assert abs(solve_kepler(3.6029, 0.37255) - 3.4794) < 1e-4


def test_curtis_example_3_5_hyperbolic():
    # Curtis 3rd ed., Example 3.5: e = 2.7696, M_h = 40.690 -> F = 3.4631 (5 digits).
    assert abs(solve_kepler(40.690, 2.7696) - 3.4631) < 1e-4


def test_against_scipy_brentq():
    # Independent reference: scipy.optimize.brentq on the same equations, xtol 1e-15.
    rng = np.random.default_rng(7)
    M = rng.uniform(-10.0, 10.0, 200)
    e = np.concatenate([rng.uniform(0.0, 0.9999, 100), rng.uniform(1.0001, 20.0, 100)])
    got = solve_kepler(M, e)

    def elliptic(x, ei, Mi):
        return x - ei * math.sin(x) - Mi

    def hyperbolic(x, ei, Mi):
        return ei * math.sinh(x) - x - Mi

    for Mi, ei, Ei in zip(M, e, got, strict=True):
        if ei < 1.0:
            ref = brentq(elliptic, Mi - 1.0, Mi + 1.0, args=(ei, Mi), xtol=1e-15)
        else:
            ref = brentq(hyperbolic, -30.0, 30.0, args=(ei, Mi), xtol=1e-15)
        assert abs(Ei - ref) < 1e-12 * max(1.0, abs(ref))


def test_elliptic_residual_one_million_pairs():
    # The accuracy target: |E - e sin E - M| <= 1e-13 rad for e up to 0.999.
    rng = np.random.default_rng(1)
    M = rng.uniform(-np.pi, np.pi, 1_000_000)
    e = rng.uniform(0.0, 0.999, 1_000_000)
    E = solve_kepler(M, e)
    assert np.max(np.abs(E - e * np.sin(E) - M)) <= 1e-13


def test_elliptic_near_parabolic_and_near_quarter_turn():
    # e within 1e-16 of 1, tiny M; and E near pi/2 where cos E from sin E loses digits.
    rng = np.random.default_rng(2)
    e = 1.0 - 10.0 ** rng.uniform(-16, -2, 200_000)
    M = np.concatenate([10.0 ** rng.uniform(-12, 0.5, 100_000), np.zeros(1)])
    E = solve_kepler(M, e[: M.size])
    assert np.max(np.abs(E - e[: M.size] * np.sin(E) - M)) <= 1e-15
    E0 = np.pi / 2 + rng.normal(0.0, 1e-6, 200_000)
    M2 = E0 - e * np.sin(E0)
    E2 = solve_kepler(M2, e)
    assert np.max(np.abs(E2 - e * np.sin(E2) - M2)) <= 1e-14


def test_hyperbolic_relative_residual():
    # e sinh H - H = M to a few ulp of M, near-parabolic (e - 1 down to 1e-12) to e = 1e6;
    # residual evaluated in extended precision (numpy longdouble) without cancellation.
    rng = np.random.default_rng(3)
    e = 1.0 + 10.0 ** rng.uniform(-12, 6, 100_000)
    M = rng.choice([-1.0, 1.0], e.size) * 10.0 ** rng.uniform(-10, 4, e.size)
    H = solve_kepler(M, e)
    Hl, el = H.astype(np.longdouble), e.astype(np.longdouble)
    res = (el - 1) * np.sinh(Hl) + (np.sinh(Hl) - Hl) - M
    small = np.abs(H) < 0.1  # there sinh H - H needs its series also in long double
    res[small] = hyperbolic_kepler_residual(H[small], e[small], M[small])
    assert float(np.max(np.abs(res) / np.abs(M))) < 4e-15


def test_revolutions_kept_and_broadcasting():
    E = solve_kepler(np.array([[0.5], [0.5 + 20 * np.pi]]), np.array([0.1, 0.7]))
    assert E.shape == (2, 2)
    assert np.allclose(E[1] - E[0], 20 * np.pi, atol=1e-12)
    mixed = solve_kepler([1.0, 1.0, 0.0], [0.5, 2.0, 0.0])
    assert abs(mixed[1] - solve_kepler(1.0, 2.0)) == 0.0 and mixed[2] == 0.0


def test_sincos_variant_matches():
    M = np.linspace(-np.pi, np.pi, 10001)
    E, s, c = solve_kepler_elliptic_sincos(M, 0.6)
    assert np.max(np.abs(s - np.sin(E))) < 2e-15 and np.max(np.abs(c - np.cos(E))) < 2e-15


@pytest.mark.parametrize("bad", [-0.1, 1.0, float("nan"), float("inf")])
def test_bad_eccentricity(bad):
    with pytest.raises(InputError, match="^e = "):
        solve_kepler(1.0, bad)
