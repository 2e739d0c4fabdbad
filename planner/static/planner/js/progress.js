// Background work's progress bar (a portfolio run, or a plan too large for one page): while the work is
// open, ask the status endpoint once a second and move the bar (share done, rows done and not worked out
// when the work has rows, time left); when it closes, reload the page so it shows every result. No inline
// scripts: the endpoint's address is a data-attribute. data-state on #run-progress is the work's status
// ("error" when a poll fails).
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
        if (status.rows !== null && status.rows !== undefined) {
          text("progress-done", status.done.toLocaleString("en-GB"));
          text("progress-failed", status.failed.toLocaleString("en-GB"));
        }
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
