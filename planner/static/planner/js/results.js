// Results page: draw the figures, then redraw them from the what-if endpoint as values change.
// Only the newest request may land: each new one aborts the one before, and a reply that arrives
// after a newer request started is dropped. While one runs, the page says so and offers Cancel.
(function () {
  "use strict";
  var root = document.getElementById("results");
  if (!root) { return; }
  var figures = JSON.parse(document.getElementById("figures").textContent);
  var form = document.getElementById("whatif-form");
  var status = document.getElementById("whatif-status");
  var headline = document.getElementById("headline");
  if (!form) { draw(figures); return; } // a read-only page: the saved plan's charts, no what-if
  var NOT_QUERIED = ["csrfmiddlewaretoken", "title", "name"]; // the save form's own fields
  // A plan worked out in the background is too large to redraw while values change: its form only saves.
  var live = form.dataset.live !== "off";
  var HELD = "Not worked out while you type: save these values as a new plan to have them worked out.";
  var pending = null;
  var running = null; // { controller, sequence } of the request in flight
  var sequence = 0;
  var lastQuery = null;

  function element(tag, attrs, text) {
    var el = document.createElement(tag);
    Object.keys(attrs).forEach(function (key) { el.setAttribute(key, attrs[key]); });
    if (text) { el.textContent = text; }
    return el;
  }

  // Markup may provide these; otherwise they are added here so the template need not change.
  var cancel = document.getElementById("whatif-cancel");
  if (!cancel) {
    cancel = element("button", { type: "button", id: "whatif-cancel", "class": "quiet small" }, "Cancel update");
    status.insertAdjacentElement("afterend", cancel);
  }
  cancel.hidden = true;
  var saveButton = form.querySelector("button[type=submit], input[type=submit]");
  var nameField = document.getElementById("whatif-title") || form.elements.namedItem("title") ||
    form.elements.namedItem("name");
  if (!nameField) {
    var label = element("label", { "class": "whatif-name", "for": "whatif-title" }, "Name of the new scenario");
    nameField = element("input", { type: "text", name: "title", id: "whatif-title", maxlength: "120",
      required: "", autocomplete: "off" });
    var heading = document.querySelector("h1");
    nameField.value = form.dataset.variantName || (heading ? heading.textContent.trim() + " (what-if)" : "");
    label.appendChild(nameField);
    (saveButton ? saveButton.closest(".row") || saveButton : status).insertAdjacentElement("beforebegin", label);
  }
  var initial = new FormData(form);

  function figureName(name) {
    var heading = document.querySelector("h1");
    var base = heading ? heading.textContent.trim().toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "") : "";
    return (base ? base + "-" : "") + name;
  }

  function draw(all) {
    Object.keys(all).forEach(function (name) {
      var el = document.getElementById("fig-" + name);
      if (el) { PlannerCharts.draw(el, all[name], figureName(name)); }
    });
  }

  function query() {
    var params = new URLSearchParams();
    new FormData(form).forEach(function (value, key) {
      if (NOT_QUERIED.indexOf(key) >= 0) { return; }
      if (String(value).trim() !== "") { params.append(key, value); }
    });
    return params.toString();
  }

  function updateLinks(qs) {
    document.querySelectorAll(".csv-link").forEach(function (link) {
      link.href = link.href.split("?")[0] + (qs ? "?" + qs : "");
    });
  }

  function show(state, text) {
    status.textContent = text;
    status.className = "whatif-status " + state;
    form.dataset.state = state;
    var busy = state === "busy";
    root.setAttribute("aria-busy", busy ? "true" : "false");
    cancel.hidden = !busy;
  }

  // The fields a 400 reply is about: the keys of its "fields" object when the server names them,
  // else the message's first word when that is a field name ("start: ...", "start level must ...").
  function markFields(body) {
    form.querySelectorAll("[aria-invalid]").forEach(function (field) { field.removeAttribute("aria-invalid"); });
    if (!body || !body.error) { return; }
    var names = Object.keys(body.fields || {});
    var first = /^\s*([a-z_]+)/i.exec(body.error);
    if (!names.length && first) { names = [first[1].toLowerCase()]; }
    names.forEach(function (name) {
      var field = form.elements.namedItem(name);
      if (field && field.setAttribute) {
        field.setAttribute("aria-invalid", "true");
        field.setAttribute("aria-describedby", "whatif-status");
      }
    });
  }

  // Text alternatives follow the figures: {name: {summary, table}} when the server sends them.
  function updateSummaries(summaries) {
    Object.keys(summaries || {}).forEach(function (name) {
      var text = summaries[name] && summaries[name].summary;
      var caption = document.getElementById("fig-" + name + "-summary");
      var chart = document.getElementById("fig-" + name);
      if (!text) { return; }
      if (caption) { caption.textContent = text; }
      if (chart && chart.hasAttribute("aria-label") && !chart.dataset.autoLabel) { chart.setAttribute("aria-label", text); }
    });
  }

  function stop() {
    if (running) { running.controller.abort(); running = null; }
  }

  function refresh() {
    clearTimeout(pending);
    stop();
    var qs = query();
    var mine = { controller: new AbortController(), sequence: ++sequence };
    running = mine;
    show("busy", "Updating…");
    fetch(root.dataset.outlookUrl + "?" + qs, {
      headers: { Accept: "application/json" }, credentials: "same-origin", signal: mine.controller.signal
    })
      .then(function (response) {
        var json = (response.headers.get("Content-Type") || "").indexOf("json") >= 0;
        var body = json ? response.json() : Promise.resolve({});
        return body.then(function (data) {
          return { ok: response.ok, code: response.status, body: data, timing: response.headers.get("Server-Timing") };
        });
      })
      .then(function (reply) {
        if (mine.sequence !== sequence) { return; } // a newer request owns the page now
        running = null;
        if (!reply.ok) {
          var message = reply.body.error || (reply.code >= 500
            ? "The planner failed on these values (error " + reply.code + "); try again or change them."
            : "These values cannot be used.");
          markFields(reply.body);
          show("error", message);
          return;
        }
        markFields(null);
        draw(reply.body.figures);
        updateSummaries(reply.body.summaries);
        headline.innerHTML = reply.body.headline_html;
        updateLinks(qs);
        lastQuery = qs;
        offerCheck(qs);
        var ms = /dur=([0-9.]+)/.exec(reply.timing || "");
        show("done", "Updated" + (ms ? " in " + Math.round(parseFloat(ms[1])) + " ms" : "") + ".");
      })
      .catch(function (error) {
        if (mine.sequence !== sequence || (error && error.name === "AbortError")) { return; }
        running = null;
        show("error", "Could not reach the planner; check the connection.");
      });
  }

  // Cross-check panel (#cross-check): its own request after the page draws, since the simulation takes a
  // moment. After a what-if it offers to check the new values instead of rerunning on every keystroke.
  // data-state on the panel is busy, done or error; data-query holds the values it shows.
  var check = document.getElementById("cross-check");
  var checkStatus = document.getElementById("cross-check-status");
  var checkButton = document.getElementById("cross-check-run");
  var checkRunning = null;

  function runCheck(qs) {
    if (!check) { return; }
    if (checkRunning) { checkRunning.abort(); }
    var controller = new AbortController();
    checkRunning = controller;
    check.dataset.state = "busy";
    checkStatus.textContent = "Working out the cross-check…";
    checkButton.hidden = true;
    fetch(check.dataset.url + (qs ? "?" + qs : ""), {
      headers: { Accept: "application/json" }, credentials: "same-origin", signal: controller.signal
    })
      .then(function (response) {
        var json = (response.headers.get("Content-Type") || "").indexOf("json") >= 0;
        return (json ? response.json() : Promise.resolve({})).then(function (body) {
          return { ok: response.ok, code: response.status, body: body };
        });
      })
      .then(function (reply) {
        if (checkRunning !== controller) { return; }
        checkRunning = null;
        if (!reply.ok) {
          check.dataset.state = "error";
          checkStatus.textContent = reply.body.error || "The cross-check failed (error " + reply.code + ").";
          return;
        }
        PlannerCharts.draw(document.getElementById("fig-cross-check"), reply.body.figure, figureName("cross-check"));
        document.getElementById("fig-cross-check-summary").textContent = reply.body.summary;
        document.getElementById("cross-check-body").innerHTML = reply.body.table_html;
        var link = document.getElementById("cross-check-csv");
        if (link) { link.href = link.href.split("?")[0] + (qs ? "?" + qs : ""); }
        check.dataset.query = qs;
        check.dataset.state = "done";
        checkStatus.textContent = qs ? "Cross-check of the what-if values." : "Cross-check of the saved plan.";
      })
      .catch(function (error) {
        if (checkRunning !== controller || (error && error.name === "AbortError")) { return; }
        checkRunning = null;
        check.dataset.state = "error";
        checkStatus.textContent = "Could not reach the planner for the cross-check; check the connection.";
      });
  }

  function offerCheck(qs) {
    if (!check || check.dataset.query === qs || check.dataset.state === "busy") { return; }
    checkButton.hidden = false;
    checkStatus.textContent = check.dataset.query
      ? "The cross-check below is for earlier what-if values."
      : "The cross-check below is for the saved plan.";
  }

  if (check) {
    checkButton.addEventListener("click", function () { runCheck(lastQuery || ""); });
  }

  function schedule() {
    clearTimeout(pending);
    stop(); // the request in flight answers values that are no longer on screen
    show("busy", "Updating…");
    pending = setTimeout(refresh, 250);
  }

  function syncCapacity() {
    var high = form.elements.namedItem("high");
    var none = form.elements.namedItem("no_capacity");
    if (high && none) { none.value = high.value.trim() === "" ? "on" : ""; }
  }

  form.addEventListener("input", function (event) {
    if (event.target === nameField) { return; }
    syncCapacity();
    if (!live) { show("held", HELD); return; }
    schedule();
  });
  // Enter in a what-if value recomputes at once; only the Save button (or Enter in the name) saves.
  form.addEventListener("keydown", function (event) {
    if (event.key === "Enter" && event.target !== nameField && event.target.tagName === "INPUT") {
      event.preventDefault();
      if (live) { refresh(); }
    }
  });
  cancel.addEventListener("click", function () {
    clearTimeout(pending);
    sequence++;
    stop();
    show("cancelled", lastQuery === null
      ? "Update cancelled: the figures still show the saved values."
      : "Update cancelled: the figures show the last values computed.");
  });
  document.getElementById("whatif-reset").addEventListener("click", function () {
    initial.forEach(function (value, key) {
      var field = form.elements.namedItem(key);
      if (field && NOT_QUERIED.indexOf(key) < 0) { field.value = value; }
    });
    syncCapacity();
    if (live) { refresh(); } else { show("held", ""); }
  });
  syncCapacity();
  draw(figures);
  runCheck("");
})();
