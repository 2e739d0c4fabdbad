// Scenario form: show the inputs the chosen laws need and preview the kind's law as it is typed.
// The form's data-preview-state says where the preview is: busy, shown, waiting (inputs missing) or error.
// A kind's preview may name its own x axis (x_title) and hover label (x_name).
(function () {
  "use strict";
  var form = document.getElementById("scenario-form");
  if (!form) { return; }
  var chart = document.getElementById("preview-chart");
  var summary = document.getElementById("preview-summary");
  // The preview gets every filled-in input but the plan's name and notes: its form takes what it
  // needs (step law, deliveries, period) and ignores the rest, whatever the scenario kind.
  var NOT_SENT = ["csrfmiddlewaretoken", "title", "notes"];
  var pending = null;
  var sequence = 0;
  var running = null;
  var touched = false; // an untouched form shows the hint, never an error
  var hint = summary.textContent;

  function value(name) {
    var checked = form.querySelector("[name='" + name + "']:checked");
    var field = checked || form.elements.namedItem(name);
    return field ? field.value : "";
  }

  function showGroups() {
    // A group shows when the choice it belongs to (data-switch, by default step_method) is its data-method.
    form.querySelectorAll(".method-group").forEach(function (group) {
      group.hidden = group.dataset.method !== value(group.dataset.switch || "step_method");
    });
    form.querySelectorAll(".count-law").forEach(function (law) {
      var family = value(law.dataset.prefix + "_family");
      law.querySelectorAll(".family").forEach(function (part) {
        part.hidden = part.dataset.family.split(" ").indexOf(family) < 0;
      });
    });
  }

  function preview() {
    var params = new URLSearchParams();
    new FormData(form).forEach(function (v, name) {
      if (NOT_SENT.indexOf(name) < 0 && String(v).trim() !== "") { params.append(name, v); }
    });
    var mine = ++sequence;
    form.dataset.previewState = "busy";
    if (running) { running.abort(); }
    running = new AbortController();
    fetch(form.dataset.previewUrl + "?" + params.toString(), { credentials: "same-origin", signal: running.signal })
      .then(function (response) {
        var json = (response.headers.get("Content-Type") || "").indexOf("json") >= 0;
        return (json ? response.json() : Promise.resolve({})).then(function (body) { return { ok: response.ok, body: body }; });
      })
      .then(function (reply) {
        if (mine !== sequence) { return; }
        running = null;
        if (!reply.ok) {
          var errors = reply.body.errors || {};
          var first = Object.keys(errors)[0];
          summary.textContent = touched && first ? errors[first][0] : hint;
          summary.className = touched && first ? "field-error" : "muted";
          form.dataset.previewState = touched && first ? "error" : "waiting";
          return;
        }
        var law = reply.body;
        summary.className = "muted";
        if (law.ready === false) { // required inputs still empty: the server's hint, no chart
          summary.textContent = law.message || hint;
          Plotly.purge(chart);
          form.dataset.previewState = "waiting";
          return;
        }
        var period = law.period || "period";
        summary.textContent = law.summary || ("Mean change " + law.mean.toFixed(3) + " units, variance " +
          law.variance.toFixed(3) + (law.cycle > 1 ? "; over the " + law.cycle + "-" + period +
          " cycle the mean change is " + law.cycle_mean.toFixed(3) + " units per " + period +
          " (first " + period + " shown)." : "."));
        Plotly.react(chart, [{ type: "bar", x: law.steps, y: law.probs, marker: { color: "#2b7a84" },
          hovertemplate: (law.x_name || "change") + " %{x}: %{y:.4g}<extra></extra>" }], {
          margin: { l: 44, r: 8, t: 8, b: 36 }, height: 200, paper_bgcolor: "rgba(0,0,0,0)", plot_bgcolor: "#fffdf8",
          xaxis: { title: { text: law.x_title || ("change in one " + period + " (units)") },
            dtick: law.steps.length > 25 ? undefined : 1 },
          yaxis: { title: { text: "probability" }, rangemode: "tozero" },
          font: { size: 11, color: "#24303f" }
        }, Object.assign(PlannerCharts.config("step-law"), { displayModeBar: false }));
        form.dataset.previewState = "shown";
      })
      .catch(function () {
        // aborted by a newer preview (which owns the state now), or offline: the next input tries again
        if (mine === sequence) { form.dataset.previewState = "error"; }
      });
  }

  form.addEventListener("input", function () {
    touched = true;
    showGroups();
    clearTimeout(pending);
    pending = setTimeout(preview, 200);
  });
  form.addEventListener("change", showGroups);
  showGroups();
  preview();
})();
