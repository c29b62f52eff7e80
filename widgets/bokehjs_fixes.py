"""Four page-side fixes that keep a live-figure update from blocking the browser.

All four were found by profiling the editor in JupyterLab (headless Chromium, CPU profile of an
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

3. **Paint when seen.** An analyst types at the top of the form while the figures sit far
   below, off screen; BokehJS still repainted every one of them on each update (layout, tick
   labels, canvases: 15-45 ms a plot, five figures), and those paints were the long frames.
   A plot inside an editor's figure box (``.ol-figure``) now keeps its paint request while
   an ``IntersectionObserver`` says the box is more than half a view away, and paints as
   soon as the box comes near (the request is kept, not dropped, so the figure always shows
   the last update). The box itself has ``content-visibility: auto`` (widgets/style.py), so
   the browser neither lays it out nor paints it while it is off screen.

4. **One plot per frame.** When several plots of the editor must repaint at once (the
   figures in view), each takes a frame of its own: the next waits for the next animation
   frame, so no frame carries the five repaints of an orbit edit. Plots outside an editor
   (a study's own figures) are painted as BokehJS does.

Measured side by side in benchmarks/bench_editor_frames.py (former page vs current one).

``window.__orbitledger_former_updates = true`` turns all four off for the page (the
side-by-side run of benchmarks/bench_editor_frames.py). Each fix checks that what it wraps is
there and does nothing otherwise (another jupyter_bokeh or BokehJS): the figures then work as
before, only slower. The script goes out in the display type of BokehJS's own loader
(``application/vnd.bokehjs_load.v0+json``, which jupyter_bokeh's renderer runs, so no
trusted-JavaScript output is needed; records drop that type, like the loader itself).
"""

from __future__ import annotations

__all__ = ["BOKEHJS_FIXES_JS", "install_bokehjs_fixes"]

BOKEHJS_FIXES_JS = r"""
(function () {
  // The editor's figure box (.ol-figure) a plot view is drawn in, found once per view (up
  // through the shadow roots BokehJS draws in); null for a plot outside an editor, and for
  // every plot while the former updates are asked for.
  var boxes = new WeakMap();
  function editor_box(view) {
    if (window.__orbitledger_former_updates) { return null; }
    var box = boxes.get(view);
    if (box !== undefined || view.el == null || !view.el.isConnected) { return box || null; }
    box = null;
    for (var n = view.el; n != null && box === null; n = n.parentNode || n.host) {
      if (n.classList && n.classList.contains("ol-figure")) { box = n; }
    }
    boxes.set(view, box);
    return box;
  }
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
  function paint_when_seen(B) {
    var plots = B.require("models/plots/plot_canvas");
    var proto = plots && plots.PlotView && plots.PlotView.prototype;
    if (!proto || proto.__orbitledger_paint_when_seen || typeof proto.schedule_paint !== "function"
        || typeof IntersectionObserver !== "function") {
      return;
    }
    var schedule = proto.schedule_paint;
    var seen = new WeakMap();     // an editor's figure box -> in or near the view
    var waiting = new WeakMap();  // that box -> the plot views whose paint waits for it
    var observer = new IntersectionObserver(function (entries) {
      entries.forEach(function (entry) {
        seen.set(entry.target, entry.isIntersecting);
        var views = waiting.get(entry.target);
        if (entry.isIntersecting && views) {
          waiting.delete(entry.target);
          views.forEach(function (view) { if (!view.is_destroyed) { schedule.call(view); } });
        }
      });
    }, {rootMargin: "50% 0px"});
    proto.schedule_paint = function () {
      var box = editor_box(this);
      if (box === null) { return schedule.call(this); }
      if (!seen.has(box)) { seen.set(box, true); observer.observe(box); }
      if (seen.get(box)) { return schedule.call(this); }
      var views = waiting.get(box);
      if (views === undefined) { views = new Set(); waiting.set(box, views); }
      views.add(this);
    };
    proto.__orbitledger_paint_when_seen = true;
  }
  function one_paint_per_frame(B) {
    var plots = B.require("models/plots/plot_canvas");
    var proto = plots && plots.PlotView && plots.PlotView.prototype;
    if (!proto || proto.__orbitledger_one_paint || typeof proto.repaint !== "function") { return; }
    var repaint = proto.repaint;
    var painted = false;  // an editor's plot was painted in this frame
    var queue = [];       // the editor's plots waiting for a frame of their own
    function next_frame() {
      painted = false;
      var view = queue.shift();
      if (view !== undefined && !view.is_destroyed) { view.repaint(); }
    }
    proto.repaint = function () {
      if (editor_box(this) === null) { return repaint.call(this); }
      if (painted) {
        if (queue.indexOf(this) < 0) { queue.push(this); }
        return;
      }
      painted = true;
      requestAnimationFrame(next_frame);
      return repaint.call(this);
    };
    proto.__orbitledger_one_paint = true;
  }
  function install() {
    var B = window.Bokeh;
    if (B == null || typeof B.require !== "function") { return false; }
    try { no_echo(B); } catch (e) { console.warn("orbitledger: echo filter not installed", e); }
    try { one_style_read(B); } catch (e) { console.warn("orbitledger: style cache not installed", e); }
    try { paint_when_seen(B); } catch (e) { console.warn("orbitledger: paint deferral not installed", e); }
    try { one_paint_per_frame(B); } catch (e) { console.warn("orbitledger: paint pacing not installed", e); }
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
