/* orbitledger record: draw the figures (BokehJS inlined above), the code toggle, and a flag
   the PDF printer waits for: document.body.dataset.figures = "ready" once every figure drew. */
(function () {
  "use strict";
  var body = document.body;
  var button = document.getElementById("toggle-code");
  if (button) {
    button.addEventListener("click", function () {
      var shown = body.classList.toggle("show-code");
      button.textContent = shown ? "Hide code" : "Show code";
      button.setAttribute("aria-pressed", shown ? "true" : "false");
    });
  }
  var specs = Array.prototype.slice.call(document.querySelectorAll("script.orbitledger-figure"));
  body.dataset.figureCount = String(specs.length);
  if (specs.length === 0) { body.dataset.figures = "ready"; return; }
  if (typeof window.Bokeh === "undefined") { body.dataset.figures = "failed: BokehJS missing"; return; }
  /* Printing (the PDF printer sets orbitledgerPrintMode before the page loads): plots
     without toolbars, whose buttons mean nothing on paper, drawn as SVG, so that every line
     stays sharp and every axis label and tick is text in the PDF. */
  function forPrint(node) {
    if (Array.isArray(node)) { node.forEach(forPrint); return; }
    if (!node || typeof node !== "object") { return; }
    if (node.type === "object" && /^(Figure|Plot|GMapPlot|GridPlot)$/.test(node.name)) {
      node.attributes = node.attributes || {};
      node.attributes.toolbar_location = null;
      if (node.name !== "GridPlot") { node.attributes.output_backend = "svg"; }
    }
    if (node.type === "object" && node.name === "Legend") {
      /* BokehJS sizes a legend before it sizes the legend's SVG glyphs (500 px by default),
         which widens the plot by that much; the glyphs' own size, set here, avoids it. */
      node.attributes = node.attributes || {};
      var gw = node.attributes.glyph_width || 20, gh = node.attributes.glyph_height || 20;
      var sheets = node.attributes.stylesheets || [];
      node.attributes.stylesheets = sheets.concat(["svg { width: " + gw + "px; height: " + gh + "px; }"]);
    }
    Object.keys(node).forEach(function (key) { forPrint(node[key]); });
  }
  var pending = specs.map(function (el) {
    var item = JSON.parse(el.textContent);
    if (window.orbitledgerPrintMode) { forPrint(item); }
    return Promise.resolve(window.Bokeh.embed.embed_item(item, el.dataset.target));
  });
  function painted() {  /* two animation frames after the views exist: the canvases are drawn */
    return new Promise(function (done) {
      requestAnimationFrame(function () { requestAnimationFrame(done); });
    });
  }
  Promise.all(pending).then(painted).then(function () {
    body.dataset.figures = "ready";
  }).catch(function (err) {
    body.dataset.figures = "failed: " + err;
  });
  /* For print: a figure wider than the page (or taller than it) is scaled down whole with
     a transform, so that BokehJS keeps its own layout (a CSS zoom makes it re-measure and
     cut the plot off); the host takes the scaled size. Resolves once drawn again. */
  function invisibleTexts(root, found) {  /* SVG text drawn with no ink (BokehJS's outline pass) */
    root.querySelectorAll("*").forEach(function (el) {
      if (el.shadowRoot) { invisibleTexts(el.shadowRoot, found); }
      if (el.tagName.toLowerCase() !== "text") { return; }
      var noFill = el.getAttribute("fill") === "none" || el.getAttribute("fill-opacity") === "0";
      var noStroke = !el.getAttribute("stroke") || el.getAttribute("stroke") === "none" ||
        el.getAttribute("stroke-opacity") === "0";
      if (noFill && noStroke) { found.push(el); }
    });
    return found;
  }
  window.orbitledgerPrepareForPrint = function (widthPx, heightPx) {
    return painted().then(function () {
      /* Each would print as a second, invisible copy of its label in the PDF's text. */
      invisibleTexts(document, []).forEach(function (el) { el.remove(); });
      document.querySelectorAll(".figure-host").forEach(function (host) {
        var inner = host.firstElementChild;
        if (!inner) { return; }
        var box = inner.getBoundingClientRect();
        var w = Math.max(box.width, inner.scrollWidth), h = Math.max(box.height, inner.scrollHeight);
        var scale = Math.min(1, widthPx / w, heightPx ? heightPx / h : 1);
        host.dataset.printScale = scale.toFixed(4);
        if (scale < 1) {
          inner.style.transformOrigin = "0 0";
          inner.style.transform = "scale(" + scale + ")";
          host.style.width = Math.ceil(w * scale) + "px";
          host.style.height = Math.ceil(h * scale) + "px";
          host.style.overflow = "visible";
        }
      });
      return painted();
    }).then(function () { return true; });
  };
})();
