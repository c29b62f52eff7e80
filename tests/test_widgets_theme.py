"""The editor's figures follow the front end's theme, without a browser.

The front end's side (the page's mark, read in the browser) is checked in
test_browser_editor.py; here the kernel's side: what the probe reports redraws the figures in
that palette, and an explicit ``theme`` is kept. Reference: JupyterLab's dark theme paints its
background ``--jp-layout-color0: #111`` (the installed @jupyterlab/theme-dark-extension's
variables); the light theme is white (same source, theme-light-extension). Relative luminance
from the sRGB weights of ITU-R BT.709 (0.2126 R + 0.7152 G + 0.0722 B).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from orbitledger.widgets import CaseEditor

import orbitledger


def _luminance(colour: str) -> float:
    hex_ = colour.lstrip("#")
    if len(hex_) == 3:
        hex_ = "".join(c * 2 for c in hex_)
    r, g, b = (int(hex_[k : k + 2], 16) / 255.0 for k in (0, 2, 4))
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def _papers(editor: CaseEditor) -> list[float]:
    from bokeh.models import Plot

    drawn = [f.model for f in editor._figures if f.model is not None]
    plots = [p for m in drawn for p in m.select({"type": Plot})]
    assert len(drawn) >= 3 and len(plots) >= len(drawn), "figures not drawn"
    return [_luminance(p.border_fill_color) for p in plots]


@pytest.fixture
def starter(tmp_path: Path) -> Path:
    path = tmp_path / "starter.case.json"
    orbitledger.open_case(path, create=True)  # the starter case, written explicitly
    return path


def test_the_figures_follow_what_the_page_reports(starter: Path) -> None:
    editor = orbitledger.open_case(starter).editor()
    editor._slow_job.wait(120.0)
    assert editor._theme_probe.widget in editor.children
    assert all(v > 0.9 for v in _papers(editor))  # light until the page reports
    editor._theme_probe.model.tags = ["dark"]  # as jupyter_bokeh applies the browser's change
    editor._slow_job.wait(120.0)
    # JupyterLab dark's background #111 has luminance 0.067: the figures' paper is as dark.
    assert all(v < 0.1 for v in _papers(editor))
    editor._theme_probe.model.tags = ["light"]
    editor._slow_job.wait(120.0)
    assert all(v > 0.9 for v in _papers(editor))
    editor._theme_probe.model.tags = ["unknown"]  # a page without the mark changes nothing
    assert all(v > 0.9 for v in _papers(editor))


def test_an_explicit_theme_is_kept(starter: Path) -> None:
    editor = CaseEditor(orbitledger.open_case(starter), theme="dark", window_results=False)
    assert not hasattr(editor, "_theme_probe")
    assert all(v < 0.1 for v in _papers(editor))
