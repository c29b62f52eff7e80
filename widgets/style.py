"""The editor's look: one style sheet on JupyterLab's theme variables, so light and dark both work.

Every colour comes from a JupyterLab CSS variable (``--jp-ui-font-color1``, ``--jp-layout-color1``,
``--jp-error-color1``, ...) with a neutral fallback for front ends that do not define them. Our
own accent (a deep teal, ``--ol-accent``) marks headings and the best value in a trade table.
Class names start with ``ol-`` so nothing collides with JupyterLab's own.
"""

from __future__ import annotations

import ipywidgets as w

__all__ = ["CSS", "style_sheet"]

CSS = """
.ol-editor, .ol-compare {
  --ol-accent: var(--jp-brand-color1, #1f6f8b);
  --ol-accent-soft: color-mix(in srgb, var(--ol-accent) 14%, transparent);
  --ol-border: var(--jp-border-color2, #d0d0d0);
  --ol-muted: var(--jp-ui-font-color2, #616161);
  color: var(--jp-ui-font-color1, #1a1a1a);
  background: var(--jp-layout-color1, #ffffff);
  font-family: var(--jp-ui-font-family, system-ui, sans-serif);
  font-size: var(--jp-ui-font-size1, 13px);
  border: 1px solid var(--ol-border);
  border-radius: 6px;
  padding: 8px 10px 10px 10px;
  box-sizing: border-box;
}
.ol-editor .widget-label, .ol-compare .widget-label,
.ol-editor .widget-label-basic, .ol-editor label {
  color: var(--jp-ui-font-color1, #1a1a1a);
}
.ol-header {
  border-bottom: 2px solid var(--ol-accent);
  padding-bottom: 4px;
  margin-bottom: 6px;
  align-items: center;
}
.ol-spaced > * { margin-right: 1em; }
.ol-brand { font-weight: 600; letter-spacing: 0.02em; color: var(--ol-accent); }
.ol-title { font-weight: 600; font-size: var(--jp-ui-font-size2, 15px); }
.ol-path, .ol-status { color: var(--ol-muted); font-family: var(--jp-code-font-family, monospace);
  font-size: var(--jp-ui-font-size0, 11px); }
.ol-status-error { color: var(--jp-error-color1, #d32f2f); }
.ol-section {
  border: 1px solid var(--ol-border);
  border-radius: 4px;
  padding: 4px 8px 6px 8px;
  margin: 4px 6px 4px 0;
  background: var(--jp-layout-color0, #ffffff);
}
.ol-section-title { font-weight: 600; color: var(--ol-accent);
  text-transform: uppercase; font-size: var(--jp-ui-font-size0, 11px); letter-spacing: 0.06em; }
.ol-field { align-items: center; margin: 1px 0; }
.ol-field input, .ol-table input {
  color: var(--jp-ui-font-color1, #1a1a1a);
  background: var(--jp-input-background, var(--jp-layout-color1, #fff));
  border-color: var(--jp-border-color1, #bdbdbd);
  font-family: var(--jp-code-font-family, monospace);
}
.ol-field select, .ol-table select {
  color: var(--jp-ui-font-color1, #1a1a1a);
  background-color: var(--jp-input-background, var(--jp-layout-color1, #fff));
  border-color: var(--jp-border-color1, #bdbdbd);
}
.ol-field input:focus, .ol-table input:focus, .ol-editor button:focus-visible {
  outline: 2px solid var(--ol-accent);
  outline-offset: 1px;
}
.ol-unit { color: var(--ol-muted); font-family: var(--jp-code-font-family, monospace);
  font-size: var(--jp-ui-font-size0, 11px); }
.ol-error { color: var(--jp-error-color1, #d32f2f); font-size: var(--jp-ui-font-size0, 11px);
  white-space: normal; line-height: 1.25; }
.ol-invalid input { border-color: var(--jp-error-color1, #d32f2f) !important;
  background: color-mix(in srgb, var(--jp-error-color1, #d32f2f) 8%, transparent) !important; }
.ol-invalid-cell input { border-color: var(--jp-error-color1, #d32f2f) !important;
  background: color-mix(in srgb, var(--jp-error-color1, #d32f2f) 8%, transparent) !important; }
.ol-table-header { align-items: flex-end; }
.ol-table-header .widget-html { height: auto; align-self: flex-end; }
.ol-table-header .widget-html-content { height: auto; line-height: 1.25; white-space: normal;
  color: var(--ol-muted); font-size: var(--jp-ui-font-size0, 11px); padding-bottom: 1px; }
.ol-unit-choice select { font-family: var(--jp-code-font-family, monospace);
  font-size: var(--jp-ui-font-size0, 11px); padding-left: 4px; }
.ol-warn { color: var(--jp-warn-color0, #b35c00); font-size: var(--jp-ui-font-size1, 13px);
  white-space: normal; }
.ol-note { color: var(--ol-muted); font-size: var(--jp-ui-font-size0, 11px); white-space: normal; }
.ol-conflict {
  border: 1px solid var(--jp-warn-color1, #f57c00);
  background: color-mix(in srgb, var(--jp-warn-color1, #f57c00) 12%, transparent);
  border-radius: 4px; padding: 4px 8px; margin: 4px 0; align-items: center;
}
.ol-results table, .ol-trade table { border-collapse: collapse; width: 100%; }
.ol-results td, .ol-results th, .ol-trade td, .ol-trade th {
  padding: 1px 6px; border-bottom: 1px solid var(--ol-border); text-align: left;
  font-size: var(--jp-ui-font-size1, 13px); color: var(--jp-ui-font-color1, #1a1a1a);
}
.ol-results th, .ol-trade th { color: var(--ol-muted); font-weight: 500; }
.ol-results td.ol-num, .ol-trade td.ol-num { text-align: right;
  font-family: var(--jp-code-font-family, monospace); font-variant-numeric: tabular-nums; }
.ol-results tr.ol-group td, .ol-trade tr.ol-group td { color: var(--ol-accent); font-weight: 600; padding-top: 5px;
  border-bottom: none; font-size: var(--jp-ui-font-size0, 11px); text-transform: uppercase; }
.ol-results td.ol-u, .ol-trade td.ol-u { color: var(--ol-muted); font-size: var(--jp-ui-font-size0, 11px); }
.ol-trade td.ol-best { background: var(--ol-accent-soft); font-weight: 700; white-space: nowrap; }
.ol-results td.ol-num, .ol-trade td.ol-num, .ol-results td.ol-u, .ol-trade td.ol-u {
  white-space: nowrap; }
.ol-trade td.ol-best::after { content: " \\2605"; color: var(--ol-accent); }
.ol-job { align-items: center; }
.ol-job .widget-label { color: var(--ol-muted); }
.ol-figures { flex-wrap: wrap; }
/* A figure off screen is neither laid out nor painted (CSS Containment Level 2,
   content-visibility): the figures sit below the form, so an edit typed at the top repaints
   only what is in view. "auto" keeps each figure's last drawn size while it is skipped. */
.ol-figure { margin: 4px 8px 4px 0;
  content-visibility: auto; contain-intrinsic-size: auto 760px auto 520px; }
"""


def style_sheet() -> w.HTML:
    """A hidden HTML widget that carries the style sheet; put it once in each top-level layout."""
    sheet = w.HTML(f"<style>{CSS}</style>", layout=w.Layout(height="0px", margin="0"))
    sheet.add_class("ol-style")
    return sheet
