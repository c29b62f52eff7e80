"""What an edit sends in a real browser: JupyterLab, headless Chromium, the starter case.

The page must not send the figures' updates back to the kernel (jupyter_bokeh 4.1 did: every
changed column, about 470 KiB per orbit edit; widgets/bokehjs_fixes.py), and BokehJS's style
look-up is the one that reads each element once per task. A figure off screen is not repainted
during an edit, and repaints once it comes into view. Counted in the page: the bytes it
writes to the kernel's websocket from the Enter until the figures have been updated. Reference:
BokehJS marks a change that came from the kernel ``sync: false`` and its own server session
does not send such a change back (``ClientSession._document_changed``, bokeh 3.9).
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest
from test_browser_editor import APPS, editor_page
from test_browser_lab import _wait_for

pytestmark = [pytest.mark.browser, pytest.mark.slow]

_COUNT = """() => {
  window.__up = 0;
  const send = WebSocket.prototype.send;
  WebSocket.prototype.send = function (d) {
    window.__up += typeof d === 'string' ? d.length : (d.byteLength || d.size || 0);
    return send.call(this, d);
  };
}"""

_INSTALLED = """() => {
  const B = window.Bokeh;
  const doc = B.require('document').Document.prototype;
  const visual = B.require('core/visuals/visual').VisualProperties.prototype;
  const plot = B.require('models/plots/plot_canvas').PlotView.prototype;
  return [doc.__orbitledger_no_echo === true, visual.__orbitledger_style_cache === true,
          plot.__orbitledger_paint_when_seen === true, plot.__orbitledger_one_paint === true];
}"""


def test_an_edit_is_not_sent_back_to_the_kernel(tmp_path: Path, jupyter_editor) -> None:
    app, path = APPS[0]  # JupyterLab (Notebook 7 runs the same extension)
    with editor_page(app, path, tmp_path, jupyter_editor) as (page, editor, _case_file):
        assert page.evaluate(_INSTALLED) == [True, True, True, True]
        periapsis = editor.locator('tr[data-result="periapsis_alt_km"] td.ol-num')
        field = editor.get_by_label("Eccentricity", exact=True)
        field.fill("0.0013")
        field.press("Enter")
        _wait_for(lambda: periapsis.inner_text() != "", 30, "the results")
        time.sleep(3.0)  # the first edit's figures drawn
        before = periapsis.inner_text()
        page.evaluate(_COUNT)
        field.fill("0.0021")
        field.press("Enter")
        _wait_for(lambda: periapsis.inner_text() != before, 30, "the new periapsis")
        time.sleep(3.0)  # the figures' patches, and whatever the page sends after them
        sent = page.evaluate("() => window.__up")
        # The edit itself and the widgets' small messages: a few KiB (the echo was ~470 KiB).
        assert 0 < sent < 32 * 1024, sent


# Every paint of a plot, with where its element was against the view (CSSOM View's
# getBoundingClientRect and innerHeight) at that moment.
_PAINTS = """() => {
  const P = window.Bokeh.require('models/plots/plot_canvas').PlotView.prototype;
  const paint = P._actual_paint;
  window.__paints = [];
  P._actual_paint = function () {
    const r = this.el.getBoundingClientRect();
    window.__paints.push({top: r.top, bottom: r.bottom, view: window.innerHeight});
    return paint.call(this);
  };
}"""


def test_a_figure_off_screen_repaints_once_in_view(tmp_path: Path, jupyter_editor) -> None:
    app, path = APPS[0]
    with editor_page(app, path, tmp_path, jupyter_editor) as (page, editor, _case_file):
        periapsis = editor.locator('tr[data-result="periapsis_alt_km"] td.ol-num')
        _wait_for(lambda: periapsis.inner_text() != "", 30, "the results")
        time.sleep(2.0)  # the first paint of every figure
        page.evaluate(_PAINTS)
        before = periapsis.inner_text()
        field = editor.get_by_label("Eccentricity", exact=True)
        field.fill("0.0021")  # the field is at the top of the form, the figures far below
        field.press("Enter")
        _wait_for(lambda: periapsis.inner_text() != before, 30, "the new periapsis")
        time.sleep(3.0)  # the figures' patches have arrived
        paints = page.evaluate("() => window.__paints")
        far = [p for p in paints if p["top"] > 1.5 * p["view"] or p["bottom"] < -0.5 * p["view"]]
        assert far == [], far  # nothing was painted off screen (beyond half a view)
        editor.locator(".ol-figure").first.evaluate("e => e.scrollIntoView({block: 'start'})")
        _wait_for(lambda: page.evaluate("() => window.__paints.length") > 0, 10, "a repaint")
