// polewright workbench: the converter helper fills the stopband edge and
// attenuation in place, without a round trip, and a long Monte Carlo run
// shows that it is running and can be stopped. Without this script the
// helper's button asks the server to do the same, and the browser's own
// stop button stops a run (the server drops a run whose client has gone).
(function () {
  "use strict";
  var status = document.getElementById("run-status");
  var stop = document.getElementById("run-stop");
  var text = document.getElementById("run-text");
  if (!status || !stop || !text || !status.closest("form")) {
    return;
  }
  var form = status.closest("form");
  var slow = Number(status.getAttribute("data-slow-trials")) || 20000;
  var timer = null;
  function reset() {
    if (timer !== null) {
      clearInterval(timer);
      timer = null;
    }
    status.hidden = true;
    stop.hidden = false;
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
    var t0 = Date.now();
    var say = function () {
      text.textContent = "Running " + trials + " Monte Carlo trials; this may take a few seconds (" +
        ((Date.now() - t0) / 1000).toFixed(1) + " s so far).";
    };
    say();
    status.hidden = false;
    stop.hidden = false;
    timer = setInterval(say, 200);
  });
  stop.addEventListener("click", function () {
    // Stopping the page's load closes the request; the server's context is
    // cancelled and the run ends.
    window.stop();
    if (timer !== null) {
      clearInterval(timer);
      timer = null;
    }
    stop.hidden = true;
    text.textContent = "Stopped. Change the spec (fewer trials, say) and design again.";
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
