// A portfolio run's page: while the run is open, ask the status endpoint once a second and move the
// progress bar (rows done, rows not worked out, time left); when the run closes, reload the page so the
// results table and the chart show every row. No inline scripts: the endpoint's address is a data-
// attribute. data-state on #run-progress is the run's status ("error" when a poll fails).
(function () {
  "use strict";
  var box = document.getElementById("run-progress");
  if (!box) { return; }
  var OPEN = { queued: true, running: true };
  if (!OPEN[box.dataset.state]) { return; }
  var bar = document.getElementById("progress-bar");
  function text(id, value) {
    var el = document.getElementById(id);
    if (el) { el.textContent = value; }
  }
  function left(seconds) {
    if (seconds === null || seconds === undefined) { return ""; }
    if (seconds < 60) { return "; about " + Math.max(1, Math.round(seconds)) + " s left"; }
    return "; about " + Math.round(seconds / 60) + " min left";
  }
  function poll() {
    fetch(box.dataset.statusUrl, { headers: { Accept: "application/json" }, credentials: "same-origin" })
      .then(function (response) {
        if (!response.ok) { throw new Error("status " + response.status); }
        return response.json();
      })
      .then(function (status) {
        bar.value = status.percent;
        bar.textContent = Math.floor(status.percent) + " %";
        text("progress-percent", Math.floor(status.percent));
        text("progress-done", status.done.toLocaleString("en-GB"));
        text("progress-failed", status.failed.toLocaleString("en-GB"));
        text("progress-state", status.status_text);
        text("progress-left", left(status.seconds_left));
        box.dataset.state = status.status;
        if (status.open) {
          window.setTimeout(poll, 1000);
        } else {
          window.location.reload();
        }
      })
      .catch(function () {
        box.dataset.state = "error";
        text("progress-state", "Progress could not be read; retrying");
        window.setTimeout(poll, 3000);
      });
  }
  window.setTimeout(poll, 500);
})();
