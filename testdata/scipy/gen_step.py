#!/usr/bin/python3
"""Reference step responses for synth/step, produced with SciPy.

Run from anywhere:  testdata/scipy/gen_step.py
Writes step.json next to this script. The output is deterministic (fixed
inputs, sorted keys, rounded floats), so running it again with the same
SciPy gives a byte-identical file.

Debian's python3-scipy (1.10.1 when this was written) is installed for
/usr/bin/python3 only, hence the shebang.

Each case is an analog filter from scipy.signal in zpk form, with its
poles, zeros and gain rounded to 14 significant digits first; the step
response is scipy.signal.step of the rounded (z, p, k) on 201 equally
spaced times from 0 to 10/min|Re p| (SciPy converts to state space and
discretises with a zero-order hold through scipy.linalg.expm), written
with 13 significant digits. The filters have their edges near 1 rad/s,
where SciPy's transfer-function form stays well scaled.
"""

import json
import os

import numpy as np
import scipy
from scipy import signal

CASES = [
    ("butter4_lowpass", lambda: signal.butter(4, 1.0, analog=True, output="zpk")),
    ("cheby1_5_lowpass", lambda: signal.cheby1(5, 0.5, 2.0, analog=True, output="zpk")),
    ("bessel3_lowpass", lambda: signal.bessel(3, 1.0, analog=True, norm="phase", output="zpk")),
    ("ellip4_lowpass", lambda: signal.ellip(4, 1.0, 40.0, 1.0, analog=True, output="zpk")),
    ("cheby2_3_highpass", lambda: signal.cheby2(3, 30.0, 1.0, btype="highpass", analog=True, output="zpk")),
    ("butter2_bandpass", lambda: signal.butter(2, [0.8, 1.25], btype="bandpass", analog=True, output="zpk")),
]


def rnd(x, digits):
    return float(f"{x:.{digits - 1}e}")


def cpx(values):
    return [[rnd(np.real(v), 14), rnd(np.imag(v), 14)] for v in np.atleast_1d(values)]


def main():
    out = {
        "generator": "testdata/scipy/gen_step.py",
        "scipy": scipy.__version__,
        "cases": [],
    }
    for name, design in CASES:
        z, p, k = design()
        zr, pr = cpx(z), cpx(p)
        kr = rnd(float(np.real(k)), 14)
        zc = np.array([complex(a, b) for a, b in zr], dtype=complex)
        pc = np.array([complex(a, b) for a, b in pr], dtype=complex)
        span = 10.0 / np.min(-pc.real)
        t = np.linspace(0.0, span, 201)
        _, y = signal.step((zc, pc, kr), T=t)
        out["cases"].append({
            "name": name,
            "zeros": zr,
            "poles": pr,
            "gain": kr,
            "t": [float(v) for v in t],
            "y": [rnd(float(v), 13) for v in y],
        })
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "step.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
