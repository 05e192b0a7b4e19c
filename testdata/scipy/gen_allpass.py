#!/usr/bin/python3
"""Reference group delays for the delay equaliser (synth/equalize), from SciPy.

Run from anywhere:  testdata/scipy/gen_allpass.py
Writes allpass.json next to this script. The output is deterministic (fixed
inputs, sorted keys, rounded floats), so running it again with the same
SciPy gives a byte-identical file.

Debian's python3-scipy is installed for /usr/bin/python3 only, hence the
shebang.

Each case is an analog filter from scipy.signal in zpk form, its edges in
rad/s (2*pi times the Hz of the spec the Go test designs), and the group
delay of that filter on 201 equally spaced frequencies over its passband
(a lowpass's from 0 Hz). SciPy has no analog group-delay routine, so the
delay is the central difference of the phase of scipy.signal.freqs_zpk,
tau(w) = -angle(H(w + d) / H(w - d)) / (2 d), d = 1e-6 times the upper
edge (the ratio needs no unwrapping; the truncation error, of order
d^2 * tau''' / 6, and the rounding error, of order 1e-16 / 1e-6, are both
far below the 10 significant digits written). The Go test adds the closed
form delay of its all-pass sections to these and judges the spread.
"""

import json
import os

import numpy as np
import scipy
from scipy import signal

TWO_PI = 2.0 * np.pi
# A Butterworth edge at the half-power point, as scipy.signal.butter puts it.
HALF_POWER_DB = 10.0 * np.log10(2.0)

# name, spec fields the Go test uses, the scipy design, passband [lo, hi] in Hz.
CASES = [
    ("butter4_lowpass", {"response": "lowpass", "approximation": "butterworth", "order": 4,
                         "passband_hz": [1000.0], "passband_ripple_db": HALF_POWER_DB, "max_spread_pct": 2.0},
     lambda: signal.butter(4, TWO_PI * 1000.0, analog=True, output="zpk"), (0.0, 1000.0)),
    ("butter6_lowpass", {"response": "lowpass", "approximation": "butterworth", "order": 6,
                         "passband_hz": [1000.0], "passband_ripple_db": HALF_POWER_DB, "max_spread_pct": 1.0},
     lambda: signal.butter(6, TWO_PI * 1000.0, analog=True, output="zpk"), (0.0, 1000.0)),
    ("cheby1_5_lowpass", {"response": "lowpass", "approximation": "chebyshev1", "order": 5,
                          "passband_hz": [2000.0], "passband_ripple_db": 0.5, "max_spread_pct": 5.0},
     lambda: signal.cheby1(5, 0.5, TWO_PI * 2000.0, analog=True, output="zpk"), (0.0, 2000.0)),
    ("butter3_bandpass", {"response": "bandpass", "approximation": "butterworth", "order": 3,
                          "passband_hz": [800.0, 1250.0], "passband_ripple_db": HALF_POWER_DB, "max_spread_pct": 3.0},
     lambda: signal.butter(3, [TWO_PI * 800.0, TWO_PI * 1250.0], btype="bandpass", analog=True, output="zpk"),
     (800.0, 1250.0)),
]


def rnd(x, digits):
    return float(f"{x:.{digits - 1}e}")


def cpx(values):
    return [[rnd(np.real(v), 14), rnd(np.imag(v), 14)] for v in np.atleast_1d(values)]


def delay(z, p, k, w, d):
    """Group delay by the central difference of the phase of freqs_zpk."""
    _, hp = signal.freqs_zpk(z, p, k, worN=w + d)
    _, hm = signal.freqs_zpk(z, p, k, worN=w - d)
    return -np.angle(hp / hm) / (2.0 * d)


def main():
    out = {"scipy": scipy.__version__, "points": 201, "cases": []}
    for name, spec, design, (lo, hi) in CASES:
        z, p, k = design()
        f = np.linspace(lo, hi, 201)
        w = TWO_PI * f
        tau = delay(z, p, k, w, 1e-6 * TWO_PI * hi)
        out["cases"].append({
            "name": name,
            "spec": spec,
            "poles": cpx(p),
            "zeros": cpx(z),
            "freq_hz": [rnd(float(v), 14) for v in f],
            "delay_s": [rnd(float(v), 10) for v in tau],
        })
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "allpass.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
