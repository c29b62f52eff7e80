"""Inertial view: the orthographic projection, hidden parts, line of nodes, and the browser
re-projection (CustomJS) against the Python one."""

from __future__ import annotations

import json
import math
import shutil
import subprocess

import numpy as np
import pytest
from bokeh.embed import json_item
from bokeh.models import CustomJS, Slider

from orbitledger.figures import inertial_data, inertial_figure, project, reproject
from orbitledger.figures.inertial import PROJECT_JS
from orbitledger.figures.sources import sources_of
from orbitledger.kernel import EARTH, Elements, elements_to_state, propagate_two_body

R = EARTH.radius_km
KESTREL = Elements(R + 540.0, 0.001, 97.5, 30.0, 90.0, 0.0)


def _orbit(el=KESTREL, n=240):
    r0, v0 = elements_to_state(el)
    period = 2 * math.pi * math.sqrt(el.a_km**3 / EARTH.mu_km3_s2)
    return propagate_two_body(r0, v0, np.linspace(0.0, period, n))


def test_projection_is_a_rotation():
    rng = np.random.default_rng(7)
    p = rng.normal(size=(50, 3)) * 8000.0
    for az, el in [(0.0, 0.0), (30.0, 25.0), (-120.0, 80.0), (200.0, -45.0)]:
        u, v, w = project(p, az, el)
        # an orthographic view is a rotation: lengths are kept (1 mm)
        assert np.max(np.abs(np.sqrt(u * u + v * v + w * w) - np.linalg.norm(p, axis=1))) < 1e-6
    # seen from +x (az 0, el 0): right is +y, up is +z (Snyder 1987, Ch. 20, at the centre)
    u, v, w = project(np.eye(3), 0.0, 0.0)
    assert list(u) == pytest.approx([0, 1, 0]) and list(v) == pytest.approx([0, 0, 1])
    assert list(w) == pytest.approx([1, 0, 0])


def test_hidden_behind_the_body_only():
    pts = np.array([[-2 * R, 0, 0], [-2 * R, 0, 2 * R], [2 * R, 0, 0], [-2 * R, 0.5 * R, 0]])
    vel = np.tile([0.0, 7.5, 0.0], (4, 1))
    data = inertial_data([(pts, vel)], azimuth_deg=0.0, elevation_deg=0.0)
    cols = data["orbit-0"]
    hidden = np.isnan(cols["u_front"])
    # only interior hidden points lose their front value (neighbours are kept to join lines)
    back = np.isfinite(cols["u_back"])
    assert back[0] and back[3] and not hidden[1]


def test_line_of_nodes_is_at_the_raan():
    r, v = _orbit()
    nodes = inertial_data([(r, v)])["nodes-0"]
    ok = np.isfinite(nodes["x_km"])
    x, y, z = nodes["x_km"][ok], nodes["y_km"][ok], nodes["z_km"][ok]
    assert np.max(np.abs(z)) < 1e-6
    angles = np.degrees(np.arctan2(y, x)) % 180.0
    # the node line is along z x h: at the RAAN (30 deg, or 210 on the other side); 0.01 arcsec
    assert np.max(np.abs(angles - 30.0)) * 3600.0 < 0.01
    # drawn outside the body only
    assert np.min(np.sqrt(x * x + y * y)) >= R - 1e-6


def test_reproject_matches_fresh_data():
    r, v = _orbit()
    fig = inertial_figure([(r, v)], sliders=False)
    reproject(fig, 120.0, -30.0)
    fresh = inertial_data([(r, v)], azimuth_deg=120.0, elevation_deg=-30.0)
    for name, src in sources_of(fig).items():
        if "u_km" in src.data and name in fresh:
            np.testing.assert_allclose(src.data["u_km"], fresh[name]["u_km"], atol=1e-9)
            if "u_front" in src.data:
                np.testing.assert_array_equal(
                    np.isnan(src.data["u_front"]), np.isnan(fresh[name]["u_front"])
                )


@pytest.mark.skipif(shutil.which("node") is None, reason="node.js runs the browser callback")
def test_browser_callback_matches_python():
    r, v = _orbit(n=120)
    data = inertial_data([(r, v)], azimuth_deg=30.0, elevation_deg=25.0)
    cols = {k: [float(x) for x in data["orbit-0"][k]] for k in ("x_km", "y_km", "z_km")}
    harness = (
        "const az = {value: -75}, el = {value: 40};\n"
        f"const view = {{data: {{radius_km: [{R}]}}}};\n"
        f"const src = {{data: {json.dumps(cols)}}};\n"
        "const targets = [[src, true]];\n" + PROJECT_JS + "\nconst out = {};\n"
        "for (const k of ['u_km', 'v_km', 'u_front', 'u_back']) out[k] = Array.from(src.data[k]);\n"
        "console.log(JSON.stringify(out));\n"
    )
    run = subprocess.run(["node", "-e", harness], capture_output=True, text=True, timeout=30)
    assert run.returncode == 0, run.stderr
    js = json.loads(run.stdout)
    py = inertial_data([(r, v)], azimuth_deg=-75.0, elevation_deg=40.0)["orbit-0"]
    np.testing.assert_allclose(js["u_km"], py["u_km"], atol=1e-9)
    np.testing.assert_allclose(js["v_km"], py["v_km"], atol=1e-9)
    for k in ("u_front", "u_back"):
        js_nan = np.array([x is None for x in js[k]])  # NaN prints as null
        np.testing.assert_array_equal(js_nan, np.isnan(py[k]))


def test_static_layout_has_turning_sliders_and_serialises():
    layout = inertial_figure([_orbit()], labels=["Kestrel-2 A"])
    sliders = list(layout.select({"type": Slider}))
    assert sorted(s.title for s in sliders) == ["view azimuth (deg)", "view elevation (deg)"]
    assert all(
        isinstance(cb, CustomJS) for s in sliders for cb in s.js_property_callbacks["change:value"]
    )
    fig = layout.children[0]
    assert fig.xaxis[0].axis_label.endswith("(km)") and fig.yaxis[0].axis_label.endswith("(km)")
    json.dumps(json_item(layout))
