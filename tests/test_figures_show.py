"""show(): the MIME bundle the record collects, BokehJS loaded once, unique names."""

from __future__ import annotations

import sys

import pytest
from bokeh.io.notebook import EXEC_MIME_TYPE, LOAD_MIME_TYPE
from bokeh.plotting import figure
from IPython.core.interactiveshell import InteractiveShell
from IPython.utils.capture import capture_output

from orbitledger import study
from orbitledger.figures import FIGURE_MIME_TYPE, show
from orbitledger.kernel import InputError

# The module behind ``show`` (the package exports the function under the module's name).
show_module = sys.modules["orbitledger.figures.show"]


@pytest.fixture(autouse=True)
def fresh_study(monkeypatch):
    InteractiveShell.instance()
    study.reset()
    show_module.forget_figures()
    monkeypatch.setattr(show_module, "_bokehjs_loaded", False)
    yield
    study.reset()
    show_module.forget_figures()


def _fig():
    f = figure(width=200, height=150, x_axis_label="t (s)", y_axis_label="x (km)")
    f.line([0, 1], [0, 1])
    return f


def _bundles(captured):
    return [o.data for o in captured.outputs]


def test_bundle_carries_the_record_item_and_a_live_rendering():
    fig = _fig()
    with capture_output() as cap:
        show(fig, "altitude over the window", "Kestrel-2 altitude")
    bundles = _bundles(cap)
    tagged = [b for b in bundles if FIGURE_MIME_TYPE in b]
    assert len(tagged) == 1
    payload = tagged[0][FIGURE_MIME_TYPE]
    assert payload["name"] == "altitude over the window"
    assert payload["caption"] == "Kestrel-2 altitude"
    assert payload["item"]["root_id"] == fig.id and "doc" in payload["item"]
    assert tagged[0]["text/plain"].startswith("[figure altitude over the window]")
    assert "<div" in tagged[0]["text/html"]
    # Bokeh's own live rendering follows (the exec bundle), after BokehJS was loaded.
    assert any(EXEC_MIME_TYPE in b for b in bundles[bundles.index(tagged[0]) :])
    assert any(LOAD_MIME_TYPE in b for b in bundles[: bundles.index(tagged[0])])
    assert [f["name"] for f in study.manifest()["figures"]] == ["altitude over the window"]


def test_bokehjs_is_loaded_once_per_kernel():
    with capture_output() as first:
        show(_fig(), "one")
    with capture_output() as second:
        show(_fig(), "two")
    assert sum(LOAD_MIME_TYPE in b for b in _bundles(first)) == 1
    assert sum(LOAD_MIME_TYPE in b for b in _bundles(second)) == 0


def test_duplicate_name_is_refused_and_shows_nothing():
    with capture_output():
        show(_fig(), "ground track")
    with capture_output() as cap, pytest.raises(InputError, match="name = 'ground track'"):
        show(_fig(), "ground track")
    assert cap.outputs == []
    with pytest.raises(InputError, match="non-empty name"):
        show(_fig(), "  ")


def test_rerunning_the_same_cell_replaces_its_figure(monkeypatch):
    cell = {"id": "cell-7", "count": 3}
    monkeypatch.setattr(show_module, "_current_cell", lambda: (cell["id"], cell["count"]))
    with capture_output():
        show(_fig(), "orbit plane")
    cell["count"] = 4  # the same cell, run again
    with capture_output():
        show(_fig(), "orbit plane", "edited")
    assert [f.caption for f in show_module.shown_figures()] == ["edited"]
    cell["id"] = "cell-9"  # another cell with the same name
    with pytest.raises(InputError):
        show(_fig(), "orbit plane")


def test_a_new_study_frees_the_names():
    with capture_output():
        show(_fig(), "budget")
    study.reset()
    with capture_output():
        show(_fig(), "budget")
