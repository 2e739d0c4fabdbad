// Upload page: a file larger than a history may be is refused here, before the browser sends it
// (the server refuses it too, from the size the request declares, without reading it).
(function () {
  "use strict";
  var form = document.getElementById("upload-form");
  if (!form) { return; }
  var input = form.querySelector("input[type=file]");
  var limit = Number(form.dataset.maxBytes);
  var note = document.getElementById("upload-size-error");

  function check() {
    var file = input.files && input.files[0];
    var tooLarge = Boolean(file && limit && file.size > limit);
    note.hidden = !tooLarge;
    if (tooLarge) {
      note.textContent = "The file " + file.name + " is " + (file.size / 1048576).toFixed(1) +
        " MB; a history file may be at most " + (limit / 1048576) + " MB. Send a shorter stretch of the history, or weekly rows.";
    }
    input.setAttribute("aria-invalid", tooLarge ? "true" : "false");
    return !tooLarge;
  }

  input.addEventListener("change", check);
  form.addEventListener("submit", function (event) {
    if (!check()) { event.preventDefault(); input.focus(); }
  });
})();
