// Results page: draw the figures, then redraw them from the what-if endpoint as values change.
(function () {
  "use strict";
  var root = document.getElementById("results");
  if (!root) { return; }
  var figures = JSON.parse(document.getElementById("figures").textContent);
  var form = document.getElementById("whatif-form");
  var status = document.getElementById("whatif-status");
  var headline = document.getElementById("headline");
  var config = { responsive: true, displaylogo: false, modeBarButtonsToRemove: ["lasso2d", "select2d"] };
  var initial = new FormData(form);
  var pending = null;
  var sequence = 0;

  function draw(all, first) {
    Object.keys(all).forEach(function (name) {
      var el = document.getElementById("fig-" + name);
      if (!el) { return; }
      var fig = all[name];
      (first ? Plotly.newPlot : Plotly.react)(el, fig.data, fig.layout, config);
    });
  }

  function query() {
    var params = new URLSearchParams();
    new FormData(form).forEach(function (value, key) {
      if (key === "csrfmiddlewaretoken") { return; }
      if (String(value).trim() !== "") { params.append(key, value); }
    });
    return params.toString();
  }

  function updateLinks(qs) {
    document.querySelectorAll(".csv-link").forEach(function (link) {
      link.href = link.href.split("?")[0] + (qs ? "?" + qs : "");
    });
  }

  function refresh() {
    var qs = query();
    var mine = ++sequence;
    status.textContent = "Updating…";
    status.className = "whatif-status busy";
    fetch(root.dataset.outlookUrl + "?" + qs, { headers: { Accept: "application/json" }, credentials: "same-origin" })
      .then(function (response) {
        return response.json().then(function (body) { return { ok: response.ok, body: body, timing: response.headers.get("Server-Timing") }; });
      })
      .then(function (reply) {
        if (mine !== sequence) { return; }
        if (!reply.ok) {
          status.textContent = reply.body.error || "These values cannot be used.";
          status.className = "whatif-status error";
          return;
        }
        draw(reply.body.figures, false);
        headline.innerHTML = reply.body.headline_html;
        updateLinks(qs);
        var ms = /dur=([0-9.]+)/.exec(reply.timing || "");
        status.textContent = "Updated" + (ms ? " in " + Math.round(parseFloat(ms[1])) + " ms" : "") + ".";
        status.className = "whatif-status done";
      })
      .catch(function () {
        if (mine !== sequence) { return; }
        status.textContent = "Could not reach the planner; check the connection.";
        status.className = "whatif-status error";
      });
  }

  function syncCapacity() {
    form.elements.namedItem("no_capacity").value = form.elements.namedItem("high").value.trim() === "" ? "on" : "";
  }

  form.addEventListener("input", function () {
    syncCapacity();
    clearTimeout(pending);
    pending = setTimeout(refresh, 250);
  });
  document.getElementById("whatif-reset").addEventListener("click", function () {
    initial.forEach(function (value, key) {
      var field = form.elements.namedItem(key);
      if (field && key !== "csrfmiddlewaretoken") { field.value = value; }
    });
    syncCapacity();
    refresh();
  });
  syncCapacity();
  draw(figures, true);
})();
