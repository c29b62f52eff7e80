"""Which theme the front end shows (JupyterLab or Notebook 7, light or dark), read in the page.

The figures are drawn on canvases, which cannot take CSS variables, so the editor needs to know
the theme to draw them in the right palette. JupyterLab (and Notebook 7, built from its parts)
marks the page's ``<body>`` with ``data-jp-theme-light="true"`` or ``"false"`` and changes it
when the user picks another theme (documented in JupyterLab's theme guide). A probe, a Bokeh
model of no size in its own ``jupyter_bokeh.BokehModel``, reads that mark in the browser when
its document is ready and whenever it changes (a ``MutationObserver``), and writes
``"light"``/``"dark"`` into its ``tags``; ``jupyter_bokeh`` syncs that change back to the
kernel, where ``on_theme(theme)`` is called. Headless (no front end) nothing is reported and
the figures stay in the light palette.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import ipywidgets as w

__all__ = ["ThemeProbe", "THEME_JS"]

THEME_JS = """
const read = () => {
  const flag = document.body ? document.body.dataset.jpThemeLight : undefined;
  const theme = flag === "false" ? "dark" : flag === "true" ? "light" : "unknown";
  if (theme !== "unknown" && probe.tags[0] !== theme) {
    probe.tags = [theme];
  }
};
read();
if (document.body && !probe.__olObserver) {
  probe.__olObserver = new MutationObserver(read);
  probe.__olObserver.observe(document.body,
    {attributes: true, attributeFilter: ["data-jp-theme-light", "data-jp-theme-name"]});
}
"""


class ThemeProbe:
    """``ThemeProbe(on_theme)``: lay out ``.widget`` once; ``on_theme("light" | "dark")`` is
    called from the kernel's message handler when the front end reports its theme."""

    def __init__(self, on_theme: Callable[[str], None]) -> None:
        from bokeh.document import Document
        from bokeh.events import DocumentReady
        from bokeh.models import CustomJS, Spacer
        from jupyter_bokeh import BokehModel

        self.theme: str | None = None
        self._on_theme = on_theme
        self.model = Spacer(width=0, height=0, tags=["unknown"], name="ol-theme-probe")
        doc = Document()
        doc.add_root(self.model)
        doc.js_on_event(DocumentReady, CustomJS(args={"probe": self.model}, code=THEME_JS))
        self.model.on_change("tags", self._changed)
        self.view = BokehModel(self.model)
        self.widget = w.Box([self.view], layout=w.Layout(height="0px", overflow="hidden"))
        self.widget.add_class("ol-theme-probe")

    def _changed(self, _attr: str, _old: Any, new: Any) -> None:
        theme = new[0] if new else None
        if theme in ("light", "dark") and theme != self.theme:
            self.theme = theme
            self._on_theme(theme)
