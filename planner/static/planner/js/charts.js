// Every chart in the planner is drawn through PlannerCharts.draw: one toolbar (zoom, pan, reset axes,
// download image), nothing that links or uploads anywhere, and a layout where the toolbar never
// covers a title. Load after plotly.min.js (served from our static files, so charts work offline).
(function () {
  "use strict";
  var TOOLBAR = [["zoom2d", "pan2d", "resetScale2d"], ["toImage"]];
  // Listed as well so that a chart drawn with a default toolbar still loses them.
  var REMOVED = ["sendChartToCloud", "editInChartStudio", "lasso2d", "select2d", "toggleSpikelines",
    "hoverClosestCartesian", "hoverCompareCartesian", "zoomIn2d", "zoomOut2d", "autoScale2d"];
  var TOOLBAR_COLUMN = 40; // px kept free at the right edge for the vertical toolbar
  var MENU_WIDTH = 110; // px the linear/log switch needs at the top right
  var NARROW = 560; // px: below this the linear/log switch gets a row of its own under the title
  var drawn = [];

  function config(name) {
    return {
      responsive: true,
      displayModeBar: true,
      displaylogo: false,
      showLink: false,
      showSendToCloud: false,
      showEditInChartStudio: false,
      plotlyServerURL: "",
      showTips: false,
      modeBarButtons: TOOLBAR,
      modeBarButtonsToRemove: REMOVED,
      toImageButtonOptions: { format: "png", filename: name || "chart", scale: 2 }
    };
  }

  function words(text, perLine) {
    var lines = [];
    var line = "";
    text.split(/\s+/).forEach(function (word) {
      if (line && (line + " " + word).length > perLine) { lines.push(line); line = word; }
      else { line = line ? line + " " + word : word; }
    });
    if (line) { lines.push(line); }
    return lines;
  }

  // The server's layout, fitted to a chart `width` x `height` px: a vertical toolbar in its own
  // right-hand column, and on narrow charts the title wrapped onto its own rows with the
  // linear/log switch on a row below it and the legend in a band at the bottom.
  function fit(layout, width, height, data) {
    var out = Object.assign({}, layout);
    var margin = Object.assign({ l: 64, r: 18, t: 48, b: 52 }, layout.margin || {});
    margin.r = Math.max(margin.r, TOOLBAR_COLUMN);
    out.modebar = Object.assign({ orientation: "v", bgcolor: "rgba(255,253,248,0.85)", color: "#6b7280",
      activecolor: "#24303f" }, layout.modebar || {});
    var title = layout.title && layout.title.text ? Object.assign({}, layout.title) : null;
    var menus = layout.updatemenus || [];
    if (title && title.text.indexOf("<") < 0) {
      var size = (title.font && title.font.size) || 15;
      var charWidth = 0.56 * size;
      var room = width - TOOLBAR_COLUMN - 12;
      var oneLine = title.text.length * charWidth <= room - (menus.length ? MENU_WIDTH : 0);
      if (!oneLine || (menus.length && width < NARROW)) {
        var lines = words(title.text, Math.max(12, Math.floor(room / charWidth)));
        var lineHeight = Math.round(size * 1.3);
        var titleBottom = 8 + lines.length * lineHeight;
        title.text = lines.join("<br>");
        title.xref = "container";
        title.x = 0.01;
        title.yref = "container";
        // Anchored by its middle: plotly places a multi-line title's "top" about a line too high.
        title.y = 1 - (8 + lines.length * lineHeight / 2) / height;
        title.yanchor = "middle";
        margin.t = Math.max(margin.t, titleBottom + (menus.length ? 34 : 10));
        if (menus.length) {
          // Bottom-anchored just above the plot, so a legend that grows the bottom margin cannot push it down.
          var y = 1 + 4 / Math.max(60, height - margin.t - margin.b);
          out.updatemenus = menus.map(function (menu) { return Object.assign({}, menu, { y: y, yanchor: "bottom" }); });
        }
      }
      out.title = title;
    }
    // Narrow charts: the legend, one entry a row, in its own band under the axis title (a legend
    // placed below the plot as a fraction of its height would land on the axis title).
    var entries = (data || []).filter(function (trace) {
      return trace.name && trace.showlegend !== false && trace.type !== "heatmap" && trace.type !== "contour";
    }).length;
    var legend = layout.legend || {};
    if (width < NARROW && layout.showlegend !== false && entries >= 2 && !(legend.y >= 0)) {
      var rowHeight = 18;
      out.legend = Object.assign({}, legend, { orientation: "v", x: 0, xanchor: "left", y: 0, yref: "container",
        yanchor: "bottom", font: Object.assign({}, legend.font || {}, { size: 11 }) });
      margin.b = Math.max(margin.b, 56 + entries * rowHeight + 6);
    }
    out.margin = margin;
    return out;
  }

  // A colour bar on the right would sit under the toolbar column: shorten it and anchor it low.
  function fitData(data) {
    return data.map(function (trace) {
      if (trace.type !== "heatmap" && trace.type !== "contour") { return trace; }
      var colorbar = Object.assign({}, trace.colorbar || {}, { len: 0.7, lenmode: "fraction", y: 0, yanchor: "bottom" });
      return Object.assign({}, trace, { colorbar: colorbar });
    });
  }

  function render(el) {
    var fig = el.plannerFigure;
    var width = el.clientWidth || 600;
    var height = el.clientHeight || 360;
    return Plotly.react(el, fitData(fig.data), fit(fig.layout || {}, width, height, fig.data), config(el.plannerName));
  }

  // Name the chart for screen readers by its title, unless the page already names it.
  function label(el, layout) {
    var text = layout && layout.title && layout.title.text;
    if (!text || el.hasAttribute("aria-labelledby") || (el.hasAttribute("aria-label") && !el.dataset.autoLabel)) { return; }
    el.setAttribute("role", "figure");
    el.setAttribute("aria-label", text.replace(/<[^>]*>/g, " ").replace(/\s+/g, " ").trim());
    el.dataset.autoLabel = "1";
  }

  function draw(el, fig, name) {
    label(el, fig.layout);
    el.plannerFigure = fig;
    el.plannerName = name;
    if (drawn.indexOf(el) < 0) { drawn.push(el); }
    return render(el);
  }

  var resizeTimer = null;
  var lastWidth = window.innerWidth;
  window.addEventListener("resize", function () {
    if (window.innerWidth === lastWidth) { return; }
    lastWidth = window.innerWidth;
    clearTimeout(resizeTimer);
    resizeTimer = setTimeout(function () { drawn.forEach(render); }, 200);
  });

  window.PlannerCharts = { draw: draw, config: config, fit: fit };
})();
