// History pages (preview, history, fit): draw every chart in #figures into #fig-<name> with the
// planner's one toolbar (PlannerCharts.draw). No inline scripts: the data arrive in a json_script block.
(function () {
  "use strict";
  var source = document.getElementById("figures");
  if (!source) { return; }
  var figures = JSON.parse(source.textContent);
  var heading = document.querySelector("h1");
  var base = heading ? heading.textContent.trim().toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "") : "";
  Object.keys(figures).forEach(function (name) {
    var el = document.getElementById("fig-" + name);
    if (el) { PlannerCharts.draw(el, figures[name], (base ? base + "-" : "") + name); }
  });
  document.body.dataset.chartsDrawn = "true";
})();
