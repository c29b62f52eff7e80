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
     without toolbars, whose buttons mean nothing on paper. */
  function withoutToolbars(node) {
    if (Array.isArray(node)) { node.forEach(withoutToolbars); return; }
    if (!node || typeof node !== "object") { return; }
    if (node.type === "object" && /^(Figure|Plot|GMapPlot|GridPlot)$/.test(node.name)) {
      node.attributes = node.attributes || {};
      node.attributes.toolbar_location = null;
    }
    Object.keys(node).forEach(function (key) { withoutToolbars(node[key]); });
  }
  var pending = specs.map(function (el) {
    var item = JSON.parse(el.textContent);
    if (window.orbitledgerPrintMode) { withoutToolbars(item); }
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
  /* For print: wide figures fitted to the page width; resolves once drawn again. */
  window.orbitledgerPrepareForPrint = function (widthPx) {
    return painted().then(function () {
      document.querySelectorAll(".figure-host").forEach(function (host) {
        var inner = host.firstElementChild;
        if (!inner) { return; }
        var w = inner.getBoundingClientRect().width;
        if (w > widthPx) { host.style.zoom = String(widthPx / w); }
      });
      return painted();
    }).then(function () { return true; });
  };
})();
