// Sluice dashboard enhancements. Every page works without this file.
//  - <time datetime> elements show the viewer's local date and time.
//  - Tables with class "sortable" sort by a column when its header is
//    activated (click or Enter/Space); numbers sort as numbers.
(function () {
  "use strict";
  function localTimes() {
    document.querySelectorAll("time[datetime]").forEach(function (el) {
      var d = new Date(el.getAttribute("datetime"));
      if (isNaN(d)) return;
      el.title = el.getAttribute("datetime");
      el.textContent = el.hasAttribute("data-date") ? d.toLocaleDateString() :
        d.toLocaleString([], {dateStyle: "medium", timeStyle: "short"});
    });
  }
  function key(cell) {
    var v = cell.getAttribute("data-sort");
    if (v === null) v = cell.textContent.trim();
    var n = parseFloat(v.replace("−", "-").replace(/^[<>]\s*/, ""));
    return isNaN(n) ? v.toLowerCase() : n;
  }
  function sortable(table) {
    var heads = table.querySelectorAll("thead th");
    heads.forEach(function (th, col) {
      th.tabIndex = 0;
      th.setAttribute("aria-sort", "none");
      function sort() {
        var asc = th.getAttribute("aria-sort") !== "ascending";
        heads.forEach(function (h) { h.setAttribute("aria-sort", "none"); });
        th.setAttribute("aria-sort", asc ? "ascending" : "descending");
        var body = table.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        rows.sort(function (a, b) {
          var x = key(a.cells[col]), y = key(b.cells[col]);
          if (typeof x !== typeof y) { x = String(x); y = String(y); }
          return (x < y ? -1 : x > y ? 1 : 0) * (asc ? 1 : -1);
        });
        rows.forEach(function (r) { body.appendChild(r); });
      }
      th.addEventListener("click", sort);
      th.addEventListener("keydown", function (e) {
        if (e.key === "Enter" || e.key === " ") { e.preventDefault(); sort(); }
      });
    });
  }
  document.addEventListener("DOMContentLoaded", function () {
    localTimes();
    document.querySelectorAll("table.sortable").forEach(sortable);
  });
})();
