// speccheck bench page: drop or choose trace files; each is sent on its own and the verdict
// panel is replaced by the server's answer. Without this script the forms still work.
"use strict";
(function () {
  function token() {
    var m = document.querySelector('meta[name="csrf-token"]');
    return m ? m.getAttribute("content") : "";
  }
  function work() { return document.getElementById("work"); }
  function show(html) {
    var w = work();
    if (!w) { window.location.reload(); return; }
    w.innerHTML = html;
    var first = w.querySelector("[autofocus]");
    if (first) { first.focus(); }
  }
  function post(url, body) {
    return fetch(url, {
      method: "POST",
      body: body,
      credentials: "same-origin",
      headers: { "X-CSRF-Token": token(), "X-Bench-Fetch": "1" }
    }).then(function (r) { return r.text().then(function (t) { return { status: r.status, text: t }; }); });
  }
  function upload(files) {
    var list = Array.prototype.slice.call(files);
    var i = 0;
    function progress(text) {
      var p = document.getElementById("progress");
      if (p) { p.textContent = text; }
    }
    function next() {
      if (i >= list.length) { return; }
      var f = list[i];
      progress("Reading and judging trace " + (i + 1) + " of " + list.length + ": " + f.name + " …");
      var fd = new FormData();
      fd.append("trace", f, f.name);
      post("/traces", fd).then(function (r) {
        i += 1;
        if (r.status === 403 || r.status === 413 || r.status === 411 || r.status === 401) {
          progress(r.text.trim());
          return;
        }
        show(r.text);
        next();
      }).catch(function () { progress("The server did not answer: is speccheck serve still running?"); });
    }
    next();
  }
  document.addEventListener("change", function (e) {
    if (e.target && e.target.id === "trace" && e.target.files.length) { upload(e.target.files); }
  });
  ["dragenter", "dragover"].forEach(function (name) {
    document.addEventListener(name, function (e) {
      var z = e.target.closest && e.target.closest("[data-drop]");
      if (z) { e.preventDefault(); z.classList.add("over"); }
    });
  });
  document.addEventListener("dragleave", function (e) {
    var z = e.target.closest && e.target.closest("[data-drop]");
    if (z) { z.classList.remove("over"); }
  });
  document.addEventListener("drop", function (e) {
    var z = e.target.closest && e.target.closest("[data-drop]");
    if (!z) { return; }
    e.preventDefault();
    z.classList.remove("over");
    if (e.dataTransfer && e.dataTransfer.files.length) { upload(e.dataTransfer.files); }
  });
  document.addEventListener("submit", function (e) {
    var f = e.target;
    if (f.id === "signform") {
      var b = f.querySelector("button");
      if (b) { b.disabled = true; b.textContent = "Signing and recording …"; }
    }
  });
})();
