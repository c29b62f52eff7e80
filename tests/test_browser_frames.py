"""What an edit sends in a real browser: JupyterLab, headless Chromium, the starter case.

The page must not send the figures' updates back to the kernel (jupyter_bokeh 4.1 did: every
changed column, about 470 KiB per orbit edit; widgets/bokehjs_fixes.py), and BokehJS's style
look-up is the one that reads each element once per task. Counted in the page: the bytes it
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
  return [doc.__orbitledger_no_echo === true, visual.__orbitledger_style_cache === true];
}"""


def test_an_edit_is_not_sent_back_to_the_kernel(tmp_path: Path, jupyter_editor) -> None:
    app, path = APPS[0]  # JupyterLab (Notebook 7 runs the same extension)
    with editor_page(app, path, tmp_path, jupyter_editor) as (page, editor, _case_file):
        assert page.evaluate(_INSTALLED) == [True, True]
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
