"""Two page-side fixes that keep a live-figure update from blocking the browser.

Both were found by profiling the editor in JupyterLab (headless Chromium, CPU profile of an
orbit edit on the starter case; benchmarks/bench_editor_frames.py) and run once per kernel,
after BokehJS is on the page (the editor's ``load_bokehjs``).

1. **No echo.** jupyter_bokeh 4.1's front end listens to its BokehJS document's changes and
   sends each one to the kernel; while it applies a patch from the kernel it queues the
   changes that patch makes and sends them afterwards. BokehJS marks those changes
   ``sync: false`` ("came from the other side, do not send back"; its own server session
   drops them, ``ClientSession._document_changed``), but that front end does not look at the
   mark. So every live-figure update came back as a copy of every changed column,
   gzip-compressed and base64-encoded on the browser's main thread (about 470 KiB per orbit
   edit on the starter case), then was decoded and applied again in the kernel, where it
   queued in front of the next click (Cancel among them). The fix wraps
   ``Document.on_change`` so that the listener jupyter_bokeh registers (recognised by its
   ``_change_event`` call) no longer receives ``sync: false`` changes. Changes made in the
   browser (a range the user pans, a slider) keep ``sync: true`` and still reach the kernel.

2. **One style look-up per element and task.** BokehJS reads a CSS custom property
   (``--bk-...``, ``VisualProperties._get_css_value``) for every visual of every axis label,
   tick and glyph on each paint, through ``getComputedStyle``; on a page as large as
   JupyterLab's, with the results panel just updated, each read can force a style
   recalculation: over a third of a figure's repaint was spent there. The fix remembers each
   element's values until the current task ends (the next ``setTimeout(0)``), so a paint reads
   each once; a style changed in a later task is read afresh.

``window.__orbitledger_former_updates = true`` turns both off for the page (the side-by-side
run of benchmarks/bench_editor_frames.py). Each fix checks that what it wraps is there and does nothing otherwise (another jupyter_bokeh
or BokehJS): the figures then work as before, only slower. The script goes out in the display
type of BokehJS's own loader (``application/vnd.bokehjs_load.v0+json``, which jupyter_bokeh's
renderer runs, so no trusted-JavaScript output is needed; records drop that type, like the
loader itself).
"""

from __future__ import annotations

__all__ = ["BOKEHJS_FIXES_JS", "install_bokehjs_fixes"]

BOKEHJS_FIXES_JS = r"""
(function () {
  function no_echo(B) {
    var proto = B.require("document").Document.prototype;
    if (proto.__orbitledger_no_echo || typeof proto.on_change !== "function") { return; }
    var on_change = proto.on_change;
    proto.on_change = function (callback, allow_batches) {
      if (!allow_batches && String(callback).indexOf("_change_event") >= 0) {
        var filtered = function (event) {
          if (event == null || event.sync !== false || window.__orbitledger_former_updates) {
            callback(event);
          }
        };
        return on_change.call(this, filtered, allow_batches);
      }
      return on_change.call(this, callback, allow_batches);
    };
    proto.__orbitledger_no_echo = true;
  }
  function one_style_read(B) {
    var visual = B.require("core/visuals/visual");
    var proto = visual && visual.VisualProperties && visual.VisualProperties.prototype;
    if (!proto || proto.__orbitledger_style_cache || typeof proto._get_css_value !== "function") {
      return;
    }
    var read = proto._get_css_value;
    var cache = null;
    proto._get_css_value = function (name) {
      var el = this.obj && this.obj.el;
      if (el == null || window.__orbitledger_former_updates) { return read.call(this, name); }
      if (cache === null) {
        cache = new Map();
        setTimeout(function () { cache = null; }, 0);
      }
      var values = cache.get(el);
      if (values === undefined) { values = new Map(); cache.set(el, values); }
      var key = this.css_prefix + name;
      var value = values.get(key);
      if (value === undefined) { value = read.call(this, name); values.set(key, value); }
      return value;
    };
    proto.__orbitledger_style_cache = true;
  }
  function install() {
    var B = window.Bokeh;
    if (B == null || typeof B.require !== "function") { return false; }
    try { no_echo(B); } catch (e) { console.warn("orbitledger: echo filter not installed", e); }
    try { one_style_read(B); } catch (e) { console.warn("orbitledger: style cache not installed", e); }
    return true;
  }
  if (!install()) {
    var tries = 0;
    var timer = setInterval(function () {
      tries += 1;
      if (install() || tries > 500) { clearInterval(timer); }
    }, 10);
  }
})();
"""

_installed = False


def install_bokehjs_fixes() -> None:
    """Put the fixes on the page once per kernel (see the module's docstring)."""
    global _installed
    if _installed:
        return
    from bokeh.io.notebook import LOAD_MIME_TYPE, publish_display_data

    publish_display_data(
        {"application/javascript": BOKEHJS_FIXES_JS, LOAD_MIME_TYPE: BOKEHJS_FIXES_JS}
    )
    _installed = True
