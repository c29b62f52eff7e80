"""The HTML record opens from file:// with the network blocked: nothing leaves, every figure draws."""

from __future__ import annotations

import pytest
from _record_study import simulated_run, write_study
from orbitledger.reporting.build import record_run
from orbitledger.reporting.render_pdf import chromium, find_browser, wait_for_figures

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(find_browser() is None, reason="no headless Chromium"),
]

# Count the non-blank pixels of every canvas under each figure host, through Bokeh's shadow
# roots (BokehJS draws each plot into canvases inside shadow DOM).
_CANVAS_INK = """
() => Array.from(document.querySelectorAll('.figure-host')).map(host => {
  const canvases = [];
  const walk = node => {
    if (node.tagName === 'CANVAS') canvases.push(node);
    if (node.shadowRoot) Array.from(node.shadowRoot.children).forEach(walk);
    Array.from(node.children || []).forEach(walk);
  };
  walk(host);
  let ink = 0;
  for (const c of canvases) {
    if (!c.width || !c.height) continue;
    const data = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
    for (let i = 0; i < data.length; i += 4) {
      const [r, g, b, a] = [data[i], data[i + 1], data[i + 2], data[i + 3]];
      if (a > 0 && (r < 240 || g < 240 || b < 240)) ink++;
    }
  }
  return {name: host.dataset.figureName, canvases: canvases.length, ink};
})
"""


@pytest.fixture(scope="module")
def record_html(tmp_path_factory):
    folder = tmp_path_factory.mktemp("offline")
    study = write_study(folder / "study")
    executed, manifest = simulated_run(study)
    return record_run(study, executed, manifest, ledger_dir=folder / "ledger").files["html"]


def test_opens_offline_with_no_request_leaving_and_every_figure_drawn(record_html):
    requests: list[str] = []
    blocked: list[str] = []
    errors: list[str] = []

    def route(r):
        url = r.request.url
        requests.append(url)
        if url.startswith("file:"):
            r.continue_()
        else:
            blocked.append(url)
            r.abort()

    with chromium() as browser:
        page = browser.new_page()
        page.route("**/*", route)
        page.on("pageerror", lambda err: errors.append(str(err)))
        page.goto(record_html.as_uri())
        wait_for_figures(page, 30_000)
        figures = page.evaluate(_CANVAS_INK)
        count = page.evaluate("document.querySelectorAll('script.orbitledger-figure').length")
    assert blocked == [], f"the record tried to fetch: {blocked}"
    assert requests == [record_html.as_uri()]  # the page itself, nothing else
    assert errors == []
    assert count == 1 and len(figures) == 1
    for fig in figures:
        assert fig["canvases"] >= 1 and fig["ink"] > 500, fig
