"""Elements <-> state against textbook worked examples, singular conventions and round trips."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from orbitledger.kernel import EARTH, Elements, InputError, elements_to_state, state_to_elements

MU_CURTIS = 398600.0  # Curtis's Earth gravity parameter, km^3/s^2


def test_vallado_example_2_5_state_to_elements():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., Example 2-5 (from
    # memory): p = 11067.790 km, a = 36127.343 km, e = 0.832853, i = 87.870 deg,
    # RAAN = 227.89 deg, argp = 53.38 deg, nu = 92.335 deg. The book's state has 7 digits, so
    # p and a agree to 0.01 km, the angles to the 0.01 deg it prints.
    el = state_to_elements([6524.834, 6862.875, 6448.296], [4.901327, 5.533756, -1.976341])
    assert abs(el.p_km - 11067.790) < 0.01
    assert abs(el.a_km - 36127.343) < 0.01
    assert abs(el.e - 0.832853) < 1e-6
    assert abs(el.i_deg - 87.870) < 0.002
    assert abs(el.raan_deg - 227.89) < 0.01
    assert abs(el.argp_deg - 53.38) < 0.01
    assert abs(el.nu_deg - 92.335) < 0.001


def test_vallado_example_2_6_elements_to_state():
    # Vallado 4th ed., Example 2-6 (from memory): p = 11067.790 km, e = 0.83285, i = 87.87,
    # RAAN = 227.89, argp = 53.38, nu = 92.335 deg -> r = (6525.368, 6861.532, 6449.119) km,
    # v = (4.902279, 5.533140, -1.975710) km/s; the book prints 1 m and 1 mm/s.
    p, e = 11067.790, 0.83285
    r, v = elements_to_state(Elements(p / (1 - e * e), e, 87.87, 227.89, 53.38, 92.335))
    assert np.max(np.abs(r - [6525.368, 6861.532, 6449.119])) < 1e-3
    assert np.max(np.abs(v - [4.902279, 5.533140, -1.975710])) < 1e-6


def test_curtis_example_4_3_state_to_elements():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 4.3: h = 58310
    # km^2/s, i = 153.2, RAAN = 255.3, e = 0.1712, argp = 20.07, theta = 28.45 deg,
    # a = 8788 km (4 significant digits).
    el = state_to_elements([-6045.0, -3490.0, 2500.0], [-3.457, 6.618, 2.533], MU_CURTIS)
    assert abs(math.sqrt(MU_CURTIS * el.p_km) - 58310.0) < 5.0
    assert abs(el.i_deg - 153.2) < 0.05 and abs(el.raan_deg - 255.3) < 0.05
    assert abs(el.e - 0.1712) < 5e-5
    assert abs(el.argp_deg - 20.07) < 0.005 and abs(el.nu_deg - 28.45) < 0.005
    assert abs(el.a_km - 8788.0) < 1.0


def test_curtis_example_4_7_hyperbolic_elements_to_state():
    # Curtis 3rd ed., Example 4.7: h = 80000 km^2/s, e = 1.4, RAAN = 40, i = 30, argp = 60,
    # theta = 30 deg -> r = (-4040, 4815, 3629) km, v = (-10.39, -4.772, 1.744) km/s (4 digits).
    e = 1.4
    p = 80000.0**2 / MU_CURTIS
    r, v = elements_to_state(Elements(p / (1 - e * e), e, 30.0, 40.0, 60.0, 30.0), MU_CURTIS)
    assert np.max(np.abs(r - [-4040.0, 4815.0, 3629.0])) < 1.0
    assert np.max(np.abs(v - [-10.39, -4.772, 1.744])) < 0.005


def test_singular_conventions():
    # Conventions of orbitledger.kernel.elements (module docstring).
    r, v = elements_to_state(Elements(7000.0, 0.0, 0.0, 0.0, 0.0, 30.0))
    el = state_to_elements(r, v)  # circular equatorial: nu is the true longitude
    assert (el.e, el.i_deg, el.raan_deg, el.argp_deg) == (0.0, 0.0, 0.0, 0.0)
    assert abs(el.nu_deg - 30.0) < 1e-10
    r, v = elements_to_state(Elements(7000.0, 0.0, 50.0, 20.0, 10.0, 30.0))
    el = state_to_elements(r, v)  # circular inclined: nu is the argument of latitude
    assert el.argp_deg == 0.0 and abs(el.nu_deg - 40.0) < 1e-10
    r, v = elements_to_state(Elements(7000.0, 0.1, 180.0, 0.0, 40.0, 30.0))
    el = state_to_elements(r, v)  # retrograde equatorial: argp is the longitude of periapsis
    assert el.i_deg == 180.0 and el.raan_deg == 0.0 and abs(el.argp_deg - 40.0) < 1e-10
    # Normalisation: a state just below the x axis gives nu close to 360, never 360.0 itself.
    el = state_to_elements([7000.0, -1e-13, 0.0], [0.0, 7.546, 0.0])
    assert 0.0 <= el.nu_deg < 360.0


def test_vectorised_and_scalar_outputs():
    els = Elements(np.array([7000.0, 9000.0, -20000.0]), np.array([0.01, 0.5, 1.5]), 30, 40, 50, 20)
    r, v = elements_to_state(els)
    assert r.shape == v.shape == (3, 3)
    back = state_to_elements(r, v)
    assert np.allclose(back.a_km, els.a_km, rtol=1e-13)
    one = state_to_elements(r[0], v[0])
    assert np.ndim(one.a_km) == 0 and isinstance(one.e, float)


@pytest.mark.parametrize(
    "elements, field",
    [
        (Elements(7000.0, -0.1, 0, 0, 0, 0), "elements.e"),
        (Elements(7000.0, 1.2, 0, 0, 0, 0), "elements.a_km"),
        (Elements(-7000.0, 0.2, 0, 0, 0, 0), "elements.a_km"),
        (Elements(7000.0, 0.1, 181.0, 0, 0, 0), "elements.i_deg"),
        (Elements(-7000.0, 1.2, 0, 0, 0, 150.0), "elements.nu_deg"),
        (Elements(float("nan"), 0.1, 0, 0, 0, 0), "elements.a_km"),
    ],
)
def test_bad_elements(elements, field):
    with pytest.raises(InputError, match=f"^{field}"):
        elements_to_state(elements)


def test_rectilinear_state_refused():
    with pytest.raises(InputError, match="rectilinear"):
        state_to_elements([7000.0, 0, 0], [1.0, 0, 0])


# --- round trips (hypothesis) -----------------------------------------------------------------
# Tolerances: a double-precision state resolves 1e-16 of |r|; the conversions cost up to a few
# hundred ulp in the near-singular and near-parabolic corners (1 - e and sin i down to 1e-12
# and below), so positions must agree to 1e-12 |r| (0.04 mm at geostationary radius) and
# velocities to 1e-12 |v| (below 0.01 mm/s for any Earth orbit).

angles = st.floats(0.0, 360.0, exclude_max=True)
ecc = st.one_of(
    st.just(0.0),
    st.floats(0.0, 1e-9),
    st.floats(0.0, 0.99),
    st.floats(1e-12, 1e-2).map(lambda x: 1.0 - x),  # near-parabolic ellipses
    st.floats(1e-12, 1e-2).map(lambda x: 1.0 + x),  # near-parabolic hyperbolas
    st.floats(1.01, 30.0),
)
incl = st.one_of(
    st.just(0.0),
    st.just(180.0),
    st.floats(0.0, 1e-7),
    st.floats(180.0 - 1e-7, 180.0),
    st.floats(0.0, 180.0),
)


def _rel_err(x, y):
    return float(np.linalg.norm(np.asarray(x) - y) / np.linalg.norm(y))


@settings(max_examples=400, deadline=None)
@given(
    rp=st.floats(6500.0, 100_000.0),
    e=ecc,
    i=incl,
    raan=angles,
    argp=angles,
    frac=st.floats(-0.95, 0.95),
)
def test_elements_state_elements_round_trip(rp, e, i, raan, argp, frac):
    nu_max = 180.0 if e < 1.0 else math.degrees(math.acos(-1.0 / e))
    nu = frac * min(nu_max, 170.0)  # |nu| <= 170 deg keeps near-parabolic radii finite
    a = rp / (1.0 - e)
    r, v = elements_to_state(Elements(a, e, i, raan, argp, nu))
    el = state_to_elements(r, v)
    r2, v2 = elements_to_state(el)
    assert _rel_err(r2, r) < 1e-12 and _rel_err(v2, v) < 1e-12
    assert abs(el.p_km - rp * (1.0 + e)) < 1e-12 * rp
    assert abs(el.e - e) < 1e-11 and abs(el.i_deg - i) < 1e-9
    assert 0.0 <= el.raan_deg < 360.0 and 0.0 <= el.argp_deg < 360.0 and 0.0 <= el.nu_deg < 360.0


unit = st.floats(-1.0, 1.0)


@settings(max_examples=400, deadline=None)
@given(
    rmag=st.floats(6500.0, 100_000.0),
    rdir=st.tuples(unit, unit, unit),
    vdir=st.tuples(unit, unit, unit),
    speed=st.floats(0.2, 1.9),
    flat=st.booleans(),
)
def test_state_elements_state_round_trip(rmag, rdir, vdir, speed, flat):
    rd = np.array(rdir, dtype=float)
    vd = np.array(vdir, dtype=float)
    if flat:  # exactly equatorial states
        rd[2] = vd[2] = 0.0
    rn, vn = np.linalg.norm(rd), np.linalg.norm(vd)
    # Skip degenerate draws and near-rectilinear states (velocity within 3 deg of radial),
    # where the elements are ill-conditioned beyond the tolerance below.
    if rn < 1e-3 or vn < 1e-3 or np.linalg.norm(np.cross(rd, vd)) < 0.05 * rn * vn:
        return
    r = rmag * rd / np.linalg.norm(rd)
    v = speed * math.sqrt(EARTH.mu_km3_s2 / rmag) * vd / np.linalg.norm(vd)
    r2, v2 = elements_to_state(state_to_elements(r, v))
    # 1e-11: a draw near the 3-deg cut or near parabolic loses a few more digits (a CI run
    # measured 1.15e-12 on one of 400 random draws); 1e-11 is still ~50,000 x float64 epsilon.
    assert _rel_err(r2, r) < 1e-11 and _rel_err(v2, v) < 1e-11


def test_mean_anomaly_helper():
    # Curtis 3rd ed., Example 3.1: theta = 120 deg on e = 0.37255 -> Me = 1.3601 rad (5 digits).
    e = (21000.0 - 9600.0) / (21000.0 + 9600.0)
    el = Elements(15300.0, e, 0.0, 0.0, 0.0, 120.0)
    assert abs(math.radians(el.mean_anomaly_deg) - 1.3601) < 1e-4
    assert 0.0 <= Elements(15300.0, e, 0.0, 0.0, 0.0, 350.0).mean_anomaly_deg < 360.0
