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
with 10 significant digits (see below). The filters have their edges near 1 rad/s,
where SciPy's transfer-function form stays well scaled.

The cases marked "sos-ss" (highpass, bandpass and bandstop filters of up
to 8 poles) are not expanded into one transfer function: the rounded
(z, p, k) is split into sections by scipy.signal.zpk2sos(analog=True),
each section becomes a state-space block by scipy.signal.tf2ss, the
blocks are chained into one state-space model (section i's output drives
section i+1), and the step response is scipy.signal.step of that model,
which stays well conditioned whatever the order. Every response is
written with 10 significant digits: the last bits of SciPy's expm depend
on the BLAS and the CPU (13 digits differed in their last digit between
machines), and 10 digits keep the file the same on any of them in all
likelihood.
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

# Highpass, bandpass and bandstop filters of up to 8 poles, by sections.
SOS_CASES = [
    ("butter5_highpass", lambda: signal.butter(5, 1.0, btype="highpass", analog=True, output="zpk")),
    ("bessel4_highpass", lambda: signal.bessel(4, 1.0, btype="highpass", analog=True, norm="phase", output="zpk")),
    ("ellip4_highpass", lambda: signal.ellip(4, 1.0, 46.0, 1.0, btype="highpass", analog=True, output="zpk")),
    ("cheby1_3_bandpass", lambda: signal.cheby1(3, 0.5, [0.8, 1.25], btype="bandpass", analog=True, output="zpk")),
    ("ellip2_bandpass", lambda: signal.ellip(2, 1.0, 30.0, [0.9, 1.1], btype="bandpass", analog=True, output="zpk")),
    ("ellip3_bandstop", lambda: signal.ellip(3, 1.0, 40.0, [0.7, 1.4], btype="bandstop", analog=True, output="zpk")),
    ("cheby2_4_bandstop", lambda: signal.cheby2(4, 40.0, [0.8, 1.25], btype="bandstop", analog=True, output="zpk")),
]


def rnd(x, digits):
    return float(f"{x:.{digits - 1}e}")


def cpx(values):
    return [[rnd(np.real(v), 14), rnd(np.imag(v), 14)] for v in np.atleast_1d(values)]


def sos_ss(z, p, k):
    """The chained state-space model of the sections of (z, p, k)."""
    sos = signal.zpk2sos(z, p, k, analog=True)
    a_m = np.zeros((0, 0))
    b_m = np.zeros((0, 1))
    c_m = np.zeros((1, 0))
    d_m = np.ones((1, 1))
    for row in sos:
        num, den = row[:3], row[3:]
        lead = 0
        while den[lead] == 0:
            lead += 1
        num = num[lead:]
        while len(num) > 1 and num[0] == 0:
            num = num[1:]  # leading zeros: a section of lower degree on top
        ai, bi, ci, di = signal.tf2ss(num, den[lead:])
        n, m = a_m.shape[0], ai.shape[0]
        a = np.zeros((n + m, n + m))
        a[:n, :n] = a_m
        a[n:, :n] = bi @ c_m
        a[n:, n:] = ai
        a_m = a
        b_m = np.vstack([b_m, bi @ d_m])
        c_m = np.hstack([di @ c_m, ci])
        d_m = di @ d_m
    return a_m, b_m, c_m, d_m


def rounded(design):
    """(z, p, k) of design rounded to 14 digits, as written and as arrays."""
    z, p, k = design()
    zr, pr = cpx(z), cpx(p)
    kr = rnd(float(np.real(k)), 14)
    zc = np.array([complex(a, b) for a, b in zr], dtype=complex)
    pc = np.array([complex(a, b) for a, b in pr], dtype=complex)
    return zr, pr, kr, zc, pc


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
            "y": [rnd(float(v), 10) for v in y],
        })
    for name, design in SOS_CASES:
        zr, pr, kr, zc, pc = rounded(design)
        span = 10.0 / np.min(-pc.real)
        t = np.linspace(0.0, span, 201)
        _, y = signal.step(sos_ss(zc, pc, kr), T=t)
        out["cases"].append({
            "name": name,
            "method": "sos-ss",
            "zeros": zr,
            "poles": pr,
            "gain": kr,
            "t": [float(v) for v in t],
            "y": [rnd(float(v), 10) for v in y],
        })
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "step.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
