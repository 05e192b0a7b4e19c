#!/usr/bin/python3
"""Reference transfer functions for the fully differential designs, from SciPy.

Run from anywhere:  testdata/scipy/gen_fdiff.py
Writes testdata/scipy/fdiff.json next to this script. The output is
deterministic (a fixed table, sorted keys, floats written with repr), so
running it again with the same SciPy gives a byte-identical file.

Debian's python3-scipy is installed for /usr/bin/python3 only, hence the
shebang.

For each case (a spec of our own, built fully differentially by
polewright) SciPy's analog design function gives the ideal filter as
zeros, poles and gain (rad/s):

    butter(N, Wn, btype, analog=True, output="zpk")
    cheby1(N, rp, Wn, btype, analog=True, output="zpk")
    ellip(N, rp, rs, Wn, btype, analog=True, output="zpk")

with Wn = 2*pi*passband_hz. polewright's Butterworth edge is where the loss
equals passband_ripple_db, so the cases give 10*log10(2) dB, SciPy's
half-power edge; an elliptic case's rs is its stopband_atten_db. The
elliptic lowpass and the bandstop cases have sections with jw-axis zeros,
which polewright builds single-ended and converts to differential after
the last section. The synth test evaluates this transfer function at
ngspice's frequencies and compares the differential deck's v(out) with it.

Records: name, spec (the JSON spec the test designs), zeros and poles as
[re, im] pairs, gain.
"""

import json
import math
import os

import numpy as np
import scipy
from scipy import signal

HALF_POWER_DB = 10 * math.log10(2)

CASES = [
    # name, response, approximation, order, passband (Hz), ripple (dB), extra spec fields
    ("lowpass-butterworth-4-auto", "lowpass", "butterworth", 4, [1000.0], HALF_POWER_DB,
     {"converter": {"bits": 24, "sample_rate_hz": 256000, "output_rate_hz": 4000,
                    "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"}}),
    ("lowpass-butterworth-5", "lowpass", "butterworth", 5, [2000.0], HALF_POWER_DB,
     {"topology": "fully-differential"}),
    ("highpass-chebyshev1-3", "highpass", "chebyshev1", 3, [1000.0], 1.0,
     {"topology": "fully-differential"}),
    ("bandpass-butterworth-2", "bandpass", "butterworth", 2, [800.0, 1250.0], HALF_POWER_DB,
     {"topology": "fully-differential"}),
    # Sections with jw-axis zeros have no fully differential form: these
    # are built single-ended and converted to differential after the last
    # section.
    ("lowpass-elliptic-4-auto", "lowpass", "elliptic", 4, [1000.0], 0.5,
     {"stopband_atten_db": 40.0,
      "converter": {"bits": 24, "sample_rate_hz": 256000, "output_rate_hz": 4000,
                    "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"}}),
    ("bandstop-butterworth-2-auto", "bandstop", "butterworth", 2, [800.0, 1250.0], HALF_POWER_DB,
     {"converter": {"bits": 24, "sample_rate_hz": 256000, "output_rate_hz": 4000,
                    "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"}}),
]


def cpx(values):
    return [[float(np.real(v)), float(np.imag(v))] for v in np.atleast_1d(values)]


def main():
    out = []
    for name, resp, approx, order, pb, ripple, extra in CASES:
        wn = [2 * math.pi * f for f in pb]
        wn = wn[0] if len(wn) == 1 else wn
        if approx == "butterworth":
            z, p, k = signal.butter(order, wn, btype=resp, analog=True, output="zpk")
        elif approx == "elliptic":
            z, p, k = signal.ellip(order, ripple, extra["stopband_atten_db"], wn, btype=resp,
                                   analog=True, output="zpk")
        else:
            z, p, k = signal.cheby1(order, ripple, wn, btype=resp, analog=True, output="zpk")
        spec = {"response": resp, "approximation": approx, "order": order,
                "passband_hz": pb if len(pb) > 1 else pb[0], "passband_ripple_db": ripple,
                "values": "exact", "opamp": {"ideal": True}}
        spec.update(extra)
        out.append({"name": name, "spec": spec, "zeros": cpx(z), "poles": cpx(p), "gain": float(np.real(k))})
    doc = {"generator": "testdata/scipy/gen_fdiff.py", "scipy_version": scipy.__version__,
           "numpy_version": np.__version__, "cases": out}
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "fdiff.json")
    with open(path, "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
