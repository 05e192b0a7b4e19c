// polewright workbench: the converter helper fills the stopband edge and
// attenuation in place, without a round trip, and a long Monte Carlo run
// shows its progress and can be cancelled. Without this script the form is
// a plain GET to /design, the helper's button asks the server to fill the
// fields, and the browser's own stop button stops a run (the server drops a
// run whose client has gone).
(function () {
  "use strict";
  var status = document.getElementById("run-status");
  var stop = document.getElementById("run-stop");
  var text = document.getElementById("run-text");
  var bar = document.getElementById("run-progress");
  if (!status || !stop || !text || !bar || !status.closest("form") || !window.EventSource) {
    return;
  }
  var form = status.closest("form");
  var slow = Number(status.getAttribute("data-slow-trials")) || 20000;
  var endpoint = status.getAttribute("data-progress") || "/design/progress";
  var source = null;
  function close() {
    if (source !== null) {
      source.close();
      source = null;
    }
  }
  function reset() {
    close();
    status.hidden = true;
    bar.hidden = true;
    stop.hidden = false;
  }
  function data(ev) {
    try {
      return JSON.parse(ev.data);
    } catch (e) {
      return null;
    }
  }
  form.addEventListener("submit", function (ev) {
    if (ev.submitter && ev.submitter.id === "fill") {
      return;
    }
    var el = form.elements.namedItem("montecarlo_trials");
    var trials = el ? Number(String(el.value).trim()) : 0;
    // An exploration designs many candidates: it is always followed.
    var exploring = ev.submitter && ev.submitter.id === "explore";
    if (!exploring && !(trials > slow)) {
      return;
    }
    ev.preventDefault();
    close();
    var action = exploring ? ev.submitter.formAction : form.action;
    var what = exploring ? "Exploring" : "Monte Carlo";
    var unit = exploring ? " candidates" : " trials";
    var query = new URLSearchParams(new FormData(form)).toString();
    // The run is followed as it goes; closing the stream (Cancel, or
    // leaving the page) cancels it on the server, unless another request
    // waits for the same design. Its result is kept, so the page loaded on
    // "done" is not designed again.
    source = new EventSource((exploring ? "/explore/progress" : endpoint) + "?" + query);
    bar.removeAttribute("value");
    bar.removeAttribute("max");
    bar.hidden = false;
    stop.hidden = false;
    status.hidden = false;
    text.textContent = exploring ? "Exploring: starting" : "Monte Carlo: starting " + trials + " trials";
    source.addEventListener("progress", function (e) {
      var p = data(e);
      if (!p || !(p.total > 0)) {
        return;
      }
      bar.max = p.total;
      bar.value = p.done;
      text.textContent = what + ": " + p.done + " of " + p.total + unit;
    });
    source.addEventListener("done", function (e) {
      var d = data(e);
      close();
      stop.hidden = true;
      text.textContent = what + ": done; loading the result";
      window.location.assign(d && d.url ? d.url : action + "?" + query);
    });
    source.addEventListener("error", function (e) {
      var d = e.data ? data(e) : null;
      close();
      if (!d) {
        // The stream could not be opened or broke (the server is busy,
        // say): design the plain way, which explains any failure.
        window.location.assign(action + "?" + query);
        return;
      }
      bar.hidden = true;
      stop.hidden = true;
      text.textContent = d.message || "The design failed.";
      if (d.field && d.url) {
        // A field at fault: the form shows the message beside it.
        window.location.assign(d.url);
      }
    });
  });
  stop.addEventListener("click", function () {
    close();
    bar.hidden = true;
    stop.hidden = true;
    text.textContent = "Cancelled. Change the spec (fewer trials, say) and design again.";
  });
  // Coming back to the page from the history shows no stale note.
  window.addEventListener("pageshow", reset);
})();

(function () {
  "use strict";
  var button = document.getElementById("fill");
  if (!button || !button.form) {
    return;
  }
  var form = button.form;
  function value(name) {
    var el = form.elements.namedItem(name);
    return el ? String(el.value).trim() : "";
  }
  function number(name) {
    var v = value(name);
    return v === "" ? NaN : Number(v);
  }
  function set(name, v) {
    var el = form.elements.namedItem(name);
    if (el) {
      el.value = v;
    }
  }
  // An empty helper field takes the converter's (as the server does).
  function numberOr(name, fallback) {
    var v = number(name);
    return value(name) === "" ? number(fallback) : v;
  }
  button.addEventListener("click", function (ev) {
    var fs = numberOr("adc_rate_hz", "converter_sample_rate_hz");
    var bits = numberOr("adc_bits", "converter_bits");
    var fb = number("adc_band_hz");
    var response = value("response");
    // Anything doubtful goes to the server, which explains what is wrong.
    if (!(fs > 0 && bits >= 1 && bits <= 32 && fb > 0 && fb < fs / 2) || (response !== "" && response !== "lowpass")) {
      return;
    }
    ev.preventDefault();
    set("stopband_hz", String(fs - fb));
    // 6.02·N + 1.76 dB: the quantisation SNR of an ideal N-bit converter
    // for a full-scale sine (common practice), rounded to 0.01 dB.
    set("stopband_atten_db", String(Math.round((6.02 * bits + 1.76) * 100) / 100));
    // The signal band is the passband, and the converter fields take the
    // rate and resolution (as the server does).
    set("passband_hz", String(fb));
    set("converter_sample_rate_hz", String(fs));
    set("converter_bits", String(bits));
    var note = document.getElementById("fill-status");
    if (note) {
      var text = "Filled: passband edge " + String(fb) + " Hz, stopband edge " + String(fs - fb) + " Hz, attenuation " +
        String(Math.round((6.02 * bits + 1.76) * 100) / 100) + " dB, and the converter's sample rate and resolution.";
      if (value("converter_full_scale_vpp") === "") {
        text += " Give the converter's full scale too (its three fields go together).";
      }
      note.textContent = text + " Edit them if you like, then design.";
    }
  });
})();

// The exploration's table sorts by a column when its heading is clicked
// (again: the other way). Each cell carries its sort key in data-sort: a
// number, or words. Without this script it is a plain table.
(function () {
  "use strict";
  var tables = document.querySelectorAll("table.sortable");
  Array.prototype.forEach.call(tables, function (table) {
    var body = table.tBodies[0];
    var heads = table.tHead ? table.tHead.rows[0].cells : [];
    Array.prototype.forEach.call(heads, function (th, col) {
      if (!th.hasAttribute("data-key")) {
        return;
      }
      th.tabIndex = 0;
      th.setAttribute("aria-sort", "none");
      function sort() {
        var up = th.getAttribute("aria-sort") !== "ascending";
        Array.prototype.forEach.call(heads, function (h) {
          if (h.hasAttribute("aria-sort")) {
            h.setAttribute("aria-sort", "none");
          }
        });
        th.setAttribute("aria-sort", up ? "ascending" : "descending");
        var rows = Array.prototype.slice.call(body.rows);
        rows.sort(function (a, b) {
          var x = a.cells[col].getAttribute("data-sort") || "";
          var y = b.cells[col].getAttribute("data-sort") || "";
          var nx = Number(x), ny = Number(y);
          var c = x !== "" && y !== "" && !isNaN(nx) && !isNaN(ny) ? nx - ny : x.localeCompare(y);
          return up ? c : -c;
        });
        rows.forEach(function (r) {
          body.appendChild(r);
        });
      }
      th.addEventListener("click", sort);
      th.addEventListener("keydown", function (e) {
        if (e.key === "Enter" || e.key === " ") {
          e.preventDefault();
          sort();
        }
      });
    });
  });
})();

// The form of a result page holds the spec of the design shown. Whenever
// the page is shown, also from the history (back/forward, which may
// restore the page as it was left), the form is reset to the values the
// server rendered, so that edits made before leaving never sit beside a
// result they did not make. Escape closes an enlarged schematic.
(function () {
  "use strict";
  var form = document.querySelector("form[data-reset-on-show]");
  if (form) {
    window.addEventListener("pageshow", function () {
      form.reset();
      var note = document.getElementById("fill-status");
      if (note) {
        note.textContent = "";
      }
    });
  }
  document.addEventListener("keydown", function (e) {
    var id = window.location.hash.slice(1);
    if (e.key !== "Escape" || !/-schematic$/.test(id)) {
      return;
    }
    var fig = document.getElementById(id);
    if (fig) {
      window.location.hash = "#" + id.replace(/-schematic$/, "");
    }
  });
})();
