// Every page: give each cell of a data table the text of its column heading (data-label), which the
// narrow-screen stylesheet shows beside the value when table rows become cards. Cells that already
// carry a data-label keep it.
(function () {
  "use strict";
  document.querySelectorAll("table.grid").forEach(function (table) {
    var headings = Array.prototype.map.call(table.querySelectorAll("thead th"), function (th) {
      return th.textContent.trim();
    });
    table.querySelectorAll("tbody tr").forEach(function (row) {
      Array.prototype.forEach.call(row.cells, function (cell, index) {
        if (!cell.hasAttribute("data-label") && headings[index]) { cell.setAttribute("data-label", headings[index]); }
      });
    });
  });
})();
