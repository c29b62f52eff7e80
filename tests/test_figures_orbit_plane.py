"""Orbit-plane view: the drawn conic against the textbook geometry of conics and Kepler's
second law."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from bokeh.embed import json_item

from orbitledger.figures import orbit_plane_data, orbit_plane_figure
from orbitledger.figures.sources import sources_of
from orbitledger.kernel import EARTH, Elements, InputError, elements_to_state, orbit_summary

MU = EARTH.mu_km3_s2
MOLNIYA_LIKE = Elements(EARTH.radius_km + 6000.0, 0.45, 63.4, 30.0, 270.0, 60.0)
FLYBY = Elements(-12_000.0, 1.6, 30.0, 0.0, 0.0, -40.0)


@pytest.fixture(scope="module")
def ellipse():
    return orbit_plane_data(MOLNIYA_LIKE, sectors=8)


def test_conic_is_the_orbit_equation_to_scale(ellipse):
    a, e = MOLNIYA_LIKE.a_km, MOLNIYA_LIKE.e
    c = ellipse["conic-0"]
    r = np.hypot(c["x_km"], c["y_km"])
    nu = np.arctan2(c["y_km"], c["x_km"])
    # orbit equation r = p / (1 + e cos nu) (Curtis, Orbital Mechanics for Engineering
    # Students, 3rd ed., Eq. 2.45), p = a (1 - e^2); 1 mm.
    assert np.max(np.abs(r - a * (1 - e * e) / (1 + e * np.cos(nu)))) < 1e-6


def test_apsides_foci_and_semi_axes(ellipse):
    a, e = MOLNIYA_LIKE.a_km, MOLNIYA_LIKE.e
    summary = orbit_summary(MOLNIYA_LIKE)
    aps = ellipse["apsides-0"]
    # periapsis at r_p = a (1 - e) from the occupied focus, apoapsis at r_a = a (1 + e) on the
    # other side (textbook conic geometry, Curtis 3rd ed., Eqs. 2.70-2.71); 1 mm.
    assert aps["x_km"][0] == pytest.approx(a * (1 - e), abs=1e-6)
    assert aps["x_km"][0] == pytest.approx(summary["periapsis_radius_km"], abs=1e-6)
    assert aps["x_km"][1] == pytest.approx(-a * (1 + e), abs=1e-6)
    foci = ellipse["foci-0"]
    assert foci["x_km"] == pytest.approx([0.0, -2 * a * e], abs=1e-6)  # foci 2ae apart
    axes = ellipse["axes-0"]
    assert axes["length_km"] == pytest.approx([a, a * math.sqrt(1 - e * e)], abs=1e-6)
    # the semi-minor axis ends on the conic: (x + ae)^2 / a^2 + y^2 / b^2 = 1 at (-ae, b)
    assert axes["x1"][1] == pytest.approx(-a * e, abs=1e-6)


def test_sweep_sectors_have_equal_areas_h_dt_over_2(ellipse):
    summary = orbit_summary(MOLNIYA_LIKE)
    s = ellipse["sectors"]
    dt = s["duration_s"][0]
    assert np.all(s["duration_s"] == dt)
    assert dt * 8 == pytest.approx(summary["period_s"], abs=1e-6)
    # Kepler's second law: equal areas in equal times, dA/dt = h / 2 (Curtis 3rd ed.,
    # Eq. 2.47). The drawn area is a polygon whose chords cut the arc: 2e-5 relative.
    expected = 0.5 * summary["specific_angular_momentum_km2_s"] * dt
    assert np.max(np.abs(s["area_km2"] / expected - 1.0)) < 2e-5
    # The eight sectors tile the ellipse: total = pi a b.
    a, e = MOLNIYA_LIKE.a_km, MOLNIYA_LIKE.e
    assert np.sum(s["area_km2"]) == pytest.approx(math.pi * a * a * math.sqrt(1 - e * e), rel=2e-5)
    # The sector at periapsis sweeps the widest angle, the one at apoapsis the narrowest.
    first_angle = np.arctan2(s["ys"][0][-2], s["xs"][0][-2])
    assert first_angle > math.radians(90.0)


def test_position_and_velocity_arrow():
    data = orbit_plane_data(MOLNIYA_LIKE, sectors=0)
    now = data["now-0"]
    perifocal = Elements(MOLNIYA_LIKE.a_km, MOLNIYA_LIKE.e, 0.0, 0.0, 0.0, MOLNIYA_LIKE.nu_deg)
    r, v = elements_to_state(perifocal)
    assert [now["x_km"][0], now["y_km"][0]] == pytest.approx(r[:2], abs=1e-6)
    arrow = np.array([now["x_end"][0] - now["x_km"][0], now["y_end"][0] - now["y_km"][0]])
    cos = arrow @ v[:2] / (np.linalg.norm(arrow) * np.linalg.norm(v[:2]))
    assert cos == pytest.approx(1.0, abs=1e-12)  # the arrow points along the velocity
    # vis-viva (Curtis 3rd ed., Eq. 2.81); 1 mm/s
    rr = now["r_km"][0]
    assert now["speed_km_s"][0] == pytest.approx(
        math.sqrt(MU * (2 / rr - 1 / MOLNIYA_LIKE.a_km)), abs=1e-6
    )
    assert "sectors" not in data


def test_hyperbola_branch_near_periapsis():
    data = orbit_plane_data(FLYBY, sectors=6)
    a, e = FLYBY.a_km, FLYBY.e
    c = data["conic-0"]
    r = np.hypot(c["x_km"], c["y_km"])
    assert np.min(r) == pytest.approx(a * (1 - e), abs=1e-6)  # r_p = a (1 - e), a < 0
    assert np.max(r) <= 4.0 * a * (1 - e) + 1e-6  # drawn out to 4 r_p
    # every drawn point lies within the asymptotes: cos(nu) > -1/e
    assert np.all(np.cos(np.radians(c["nu_deg"])) > -1.0 / e)
    assert data["foci-0"]["x_km"][1] == pytest.approx(-2 * a * e, abs=1e-6)
    assert data["apsides-0"]["name"] == ["periapsis"]  # no apoapsis
    h = orbit_summary(FLYBY)["specific_angular_momentum_km2_s"]
    s = data["sectors"]
    assert np.max(np.abs(s["area_km2"] / (0.5 * h * s["duration_s"]) - 1.0)) < 2e-5


def test_figure_axes_tooltips_overlay():
    other = Elements(EARTH.radius_km + 700.0, 0.02, 97.5, 30.0, 90.0, 100.0)
    fig = orbit_plane_figure([MOLNIYA_LIKE, other], labels=["Kestrel-2 A", "Kestrel-2 B"])
    assert fig.match_aspect is True
    assert fig.xaxis[0].axis_label.endswith("(km)") and fig.yaxis[0].axis_label.endswith("(km)")
    names = set(sources_of(fig))
    assert {"conic-0", "conic-1", "sectors", "body", "now-1"} <= names
    rows = [row for tool in fig.tools if hasattr(tool, "tooltips") for row in tool.tooltips]
    assert ("area (drawn outline)", "@{area_km2}{0.000e} km^2") in rows
    assert ("duration", "@{duration_s}{0.0} s") in rows
    assert "altitude above equatorial radius" in [name for name, _ in rows]  # its reference
    json.dumps(json_item(fig))


def test_bad_inputs():
    with pytest.raises(InputError, match="orbits"):
        orbit_plane_data([])
    with pytest.raises(InputError, match="sectors"):
        orbit_plane_data(MOLNIYA_LIKE, sectors=1)
