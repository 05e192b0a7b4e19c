#!/usr/bin/python3
"""Dense reference step responses for the step figures of synth/step.

Run from anywhere:  testdata/scipy/gen_stepfig.py
Writes stepfig.json next to this script. The output is deterministic (fixed
inputs, sorted keys, rounded floats), so running it again with the same
SciPy gives the same file.

Each case is an analog filter from scipy.signal in zpk form (a lowpass, two
highpasses, among them an even-order elliptic one whose DC gain is its
stopband level, a bandpass and two bandstops), with its poles, zeros and
gain rounded to 14 significant digits first. Its step response is
scipy.signal.step of the zpk2sos(analog=True) sections, each made a
state-space block by scipy.signal.tf2ss and chained into one model (as in
gen_step.py), on n equally spaced times from 0 to t_end: dense enough for
at least 100 points per period of the fastest ringing pole, and long enough
to settle, 1.3 times the last time the response is outside ±2^-13 (½ LSB
of 12 bits of a full scale of 1) of its final value H(0) on a first pass of
200,001 points over 40/min|Re p|. The response is written with 10
significant digits (the last bits of expm depend on the BLAS and the CPU).
The Go test works out the figures from these samples itself.
"""

import json
import os
import sys

import numpy as np
import scipy
from scipy import signal

sys.dont_write_bytecode = True  # no __pycache__ beside the scripts
from gen_step import cpx, rnd, sos_ss  # noqa: E402

CASES = [
    ("cheby1_5_lowpass", lambda: signal.cheby1(5, 0.5, 1.0, analog=True, output="zpk")),
    ("butter5_highpass", lambda: signal.butter(5, 1.0, btype="highpass", analog=True, output="zpk")),
    ("ellip4_highpass", lambda: signal.ellip(4, 1.0, 46.0, 1.0, btype="highpass", analog=True, output="zpk")),
    ("cheby1_3_bandpass", lambda: signal.cheby1(3, 0.5, [0.8, 1.25], btype="bandpass", analog=True, output="zpk")),
    ("ellip3_bandstop", lambda: signal.ellip(3, 1.0, 40.0, [0.7, 1.4], btype="bandstop", analog=True, output="zpk")),
    ("cheby2_4_bandstop", lambda: signal.cheby2(4, 40.0, [0.8, 1.25], btype="bandstop", analog=True, output="zpk")),
]

BAND = 2.0 ** -13
POINTS_PER_PERIOD = 100


def main():
    out = {
        "generator": "testdata/scipy/gen_stepfig.py",
        "scipy": scipy.__version__,
        "cases": [],
    }
    for name, design in CASES:
        z, p, k = design()
        zr, pr = cpx(z), cpx(p)
        kr = rnd(float(np.real(k)), 14)
        zc = np.array([complex(a, b) for a, b in zr], dtype=complex)
        pc = np.array([complex(a, b) for a, b in pr], dtype=complex)
        ss = sos_ss(zc, pc, kr)
        final = float(np.real(kr * np.prod(-zc) / np.prod(-pc)))
        t = np.linspace(0.0, 40.0 / np.min(-pc.real), 200001)
        _, y = signal.step(ss, T=t)
        outside = np.nonzero(np.abs(y - final) > BAND)[0]
        t_end = 1.3 * t[outside[-1]]
        n = int(np.ceil(t_end * np.max(np.abs(pc.imag)) / (2 * np.pi) * POINTS_PER_PERIOD)) + 1
        n = max(n, 2001)
        t = np.linspace(0.0, t_end, n)
        _, y = signal.step(ss, T=t)
        out["cases"].append({
            "name": name,
            "zeros": zr,
            "poles": pr,
            "gain": kr,
            "t_end": float(t_end),
            "n": n,
            "y": [rnd(float(v), 10) for v in y],
        })
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "stepfig.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
