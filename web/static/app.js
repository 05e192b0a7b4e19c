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
    if (!(trials > slow)) {
      return;
    }
    ev.preventDefault();
    close();
    var query = new URLSearchParams(new FormData(form)).toString();
    // The run is followed as it goes; closing the stream (Cancel, or
    // leaving the page) cancels it on the server, unless another request
    // waits for the same design. Its result is kept, so the page loaded on
    // "done" is not designed again.
    source = new EventSource(endpoint + "?" + query);
    bar.removeAttribute("value");
    bar.removeAttribute("max");
    bar.hidden = false;
    stop.hidden = false;
    status.hidden = false;
    text.textContent = "Monte Carlo: starting " + trials + " trials";
    source.addEventListener("progress", function (e) {
      var p = data(e);
      if (!p || !(p.total > 0)) {
        return;
      }
      bar.max = p.total;
      bar.value = p.done;
      text.textContent = "Monte Carlo: " + p.done + " of " + p.total + " trials";
    });
    source.addEventListener("done", function (e) {
      var d = data(e);
      close();
      stop.hidden = true;
      text.textContent = "Monte Carlo: done; loading the result";
      window.location.assign(d && d.url ? d.url : form.action + "?" + query);
    });
    source.addEventListener("error", function (e) {
      var d = e.data ? data(e) : null;
      close();
      if (!d) {
        // The stream could not be opened or broke (the server is busy,
        // say): design the plain way, which explains any failure.
        window.location.assign(form.action + "?" + query);
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
    if (value("passband_hz") === "") {
      set("passband_hz", String(fb));
    }
    var note = document.getElementById("fill-status");
    if (note) {
      note.textContent = "Filled: stopband edge " + String(fs - fb) + " Hz, attenuation " +
        String(Math.round((6.02 * bits + 1.76) * 100) / 100) + " dB. Edit them if you like, then design.";
    }
  });
})();
