// polewright workbench: the converter helper fills the stopband edge and
// attenuation in place, without a round trip. Without this script the
// helper's button asks the server to do the same.
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
  button.addEventListener("click", function (ev) {
    var fs = number("adc_rate_hz");
    var bits = number("adc_bits");
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
