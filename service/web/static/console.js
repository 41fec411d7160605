/* Nightjar console: enhancements only; every page works without this file.
 * - live pages (body[data-live-url]) poll a small JSON endpoint every 2 s and,
 *   when its "sig" changes, fetch the page again and swap each
 *   [data-live-region] element; polling stops once the JSON says "finished".
 * - times are shown in the reader's local zone.
 * - on a proof page, choosing a graph node marks the step and its edges. */
(function () {
  "use strict";

  function localTimes(root) {
    root.querySelectorAll("time[datetime]").forEach(function (t) {
      var d = new Date(t.getAttribute("datetime"));
      if (!isNaN(d)) { t.title = t.textContent; t.textContent = d.toLocaleString(); }
    });
  }

  function swapRegions(html) {
    var doc = new DOMParser().parseFromString(html, "text/html");
    document.querySelectorAll("[data-live-region]").forEach(function (el) {
      var fresh = doc.getElementById(el.id);
      if (fresh) { el.replaceWith(fresh); localTimes(fresh); }
    });
    var body = doc.body;
    if (body && !body.hasAttribute("data-live-url")) {
      document.body.removeAttribute("data-live-url");
    } else if (body) {
      document.body.setAttribute("data-live-sig", body.getAttribute("data-live-sig"));
    }
  }

  var delay = 2000;

  function poll() {
    var url = document.body.getAttribute("data-live-url");
    if (!url) { return; }
    fetch(url, {credentials: "same-origin", headers: {"Accept": "application/json"}})
      .then(function (r) { if (!r.ok) { throw new Error(r.status); } return r.json(); })
      .then(function (data) {
        if (data.sig !== document.body.getAttribute("data-live-sig")) {
          var started = Date.now();
          return fetch(location.href, {credentials: "same-origin"})
            .then(function (r) { return r.text(); })
            .then(function (html) {
              swapRegions(html);
              document.body.setAttribute("data-live-sig", data.sig);
              // a page that is slow to make (a huge batch) is fetched less often
              delay = Math.min(30000, Math.max(2000, 5 * (Date.now() - started)));
              return data;
            });
        }
        return data;
      })
      .then(function (data) {
        if (data && data.finished) { document.body.removeAttribute("data-live-url"); return; }
        setTimeout(poll, delay);
      })
      .catch(function () { setTimeout(poll, 5000); });
  }

  function proofGraph() {
    var svg = document.getElementById("proof-graph");
    if (!svg) { return; }
    function pick(id) {
      document.querySelectorAll(".picked").forEach(function (e) { e.classList.remove("picked"); });
      svg.querySelectorAll(".edge.lit").forEach(function (e) { e.classList.remove("lit"); });
      var node = document.getElementById("node-" + id), row = document.getElementById("step-" + id);
      if (node) { node.classList.add("picked"); }
      if (row) { row.classList.add("picked"); }
      svg.querySelectorAll('.edge[data-to="' + id + '"], .edge[data-from="' + id + '"]')
        .forEach(function (e) { e.classList.add("lit"); });
    }
    svg.addEventListener("click", function (ev) {
      var a = ev.target.closest("a.node");
      if (a) { pick(a.getAttribute("data-step")); }
    });
    window.addEventListener("hashchange", function () {
      var m = /^#step-(\d+)$/.exec(location.hash);
      if (m) { pick(m[1]); }
    });
    var m = /^#step-(\d+)$/.exec(location.hash);
    if (m) { pick(m[1]); }
  }

  document.addEventListener("DOMContentLoaded", function () {
    localTimes(document);
    proofGraph();
    if (document.body.getAttribute("data-live-url")) { setTimeout(poll, 1500); }
  });
})();
