#!/usr/bin/python3
"""Reference data for synth/xform and synth/response, produced with SciPy.

Run from anywhere:  testdata/scipy/gen_xform.py
Writes testdata/scipy/xform.json next to this script. The output is
deterministic (sorted keys, floats written with repr, fixed inputs), so
running it again with the same SciPy gives a byte-identical file.

Debian's python3-scipy (1.10.1 when this was written) is installed for
/usr/bin/python3 only, hence the shebang.

Contents
  prototypes   SciPy analog lowpass prototypes (1 rad/s edge).
  transforms   lp2lp_zpk / lp2hp_zpk / lp2bp_zpk / lp2bs_zpk applied to the
               prototypes for several centre/edge/bandwidth values (rad/s),
               with inputs and outputs.
  responses    freqs_zpk on a list of frequencies (Hz, omega = 2*pi*f) for a
               few transformed filters: 20*log10|H| and np.unwrap(angle(H))
               in degrees. np.unwrap starts from the principal value at the
               first frequency and cannot know about the exact 180 degree
               steps at zeros on the j-omega axis, so its phase can differ
               from an analytic phase by a multiple of 360 degrees;
               "axis_zeros_hz" lists those zero frequencies. Frequencies
               where |H| is exactly 0 are left out.
  group_delay  tau = -d(phase)/d(omega) in seconds, from np.unwrap(angle(H))
               by a five-point central difference with step
               delta = GD_STEP*omega:
                 phi'(w) ~ (-phi(w+2d) + 8 phi(w+d) - 8 phi(w-d) + phi(w-2d)) / (12 d)
               Truncation error is about (delta/sigma)^4 relative for the
               nearest pole of real part -sigma (below 1e-8 for the filters
               here), rounding error about 1e-16*|phi|/delta. "tau_err_est"
               is |tau(delta) - tau(2*delta)|, an upper estimate of the
               truncation error. Frequencies within 2 % of a j-omega-axis
               zero are left out.
"""

import json
import os

import numpy as np
import scipy
from scipy import signal

TWO_PI = 2 * np.pi
GD_STEP = 1e-4


def cpx(values):
    """Complex array -> list of [re, im] pairs of Python floats."""
    return [[float(np.real(v)), float(np.imag(v))] for v in np.atleast_1d(values)]


def zpk_dict(z, p, k):
    return {"zeros": cpx(z), "poles": cpx(p), "gain": float(np.real(k))}


PROTOTYPES = {
    "buttap5": signal.buttap(5),
    "cheb1ap4_rp1": signal.cheb1ap(4, 1.0),
    "cheb2ap5_rs40": signal.cheb2ap(5, 40.0),
    "ellipap6_rp0.5_rs60": signal.ellipap(6, 0.5, 60.0),
    "besselap7": signal.besselap(7),
}

# (kind, wo, bw) in rad/s; bw is unused for lp and hp.
TRANSFORMS = [
    ("lp2lp", 0.5, None),
    ("lp2lp", TWO_PI * 1000, None),
    ("lp2hp", 0.5, None),
    ("lp2hp", TWO_PI * 1000, None),
    ("lp2bp", 1.0, 0.5),
    ("lp2bp", TWO_PI * 1000, TWO_PI * 200),
    ("lp2bp", 10.0, 30.0),
    ("lp2bs", 1.0, 0.5),
    ("lp2bs", TWO_PI * 1000, TWO_PI * 200),
    ("lp2bs", 10.0, 30.0),
]


def apply(kind, z, p, k, wo, bw):
    if kind == "lp2lp":
        return signal.lp2lp_zpk(z, p, k, wo)
    if kind == "lp2hp":
        return signal.lp2hp_zpk(z, p, k, wo)
    if kind == "lp2bp":
        return signal.lp2bp_zpk(z, p, k, wo, bw)
    if kind == "lp2bs":
        return signal.lp2bs_zpk(z, p, k, wo, bw)
    raise ValueError(kind)


def transforms():
    out = []
    for name in sorted(PROTOTYPES):
        z, p, k = PROTOTYPES[name]
        for kind, wo, bw in TRANSFORMS:
            zt, pt, kt = apply(kind, z, p, k, wo, bw)
            entry = {
                "name": "%s/%s/wo=%r/bw=%r" % (name, kind, wo, bw),
                "prototype": name,
                "kind": kind,
                "wo": float(wo),
                "bw": float(bw) if bw is not None else 0.0,
            }
            entry.update(zpk_dict(zt, pt, kt))
            out.append(entry)
    return out


def response_filters():
    """Transformed filters (rad/s) used for the response checks."""
    f0 = TWO_PI * 1000
    P = PROTOTYPES
    return {
        "butter5_hp_1k": signal.lp2hp_zpk(*P["buttap5"], f0),
        "cheb1_4_bp_1k_300": signal.lp2bp_zpk(*P["cheb1ap4_rp1"], f0, TWO_PI * 300),
        "ellip6_lp_1k": signal.lp2lp_zpk(*P["ellipap6_rp0.5_rs60"], f0),
        "cheb2_5_bs_1k_500": signal.lp2bs_zpk(*P["cheb2ap5_rs40"], f0, TWO_PI * 500),
        "bessel7_lp_1k": signal.lp2lp_zpk(*P["besselap7"], f0),
    }


def axis_zeros_hz(z):
    return sorted(float(np.imag(r)) / TWO_PI for r in z
                  if np.real(r) == 0 and np.imag(r) > 0)


def unwrapped_phase(z, p, k, w):
    _, h = signal.freqs_zpk(z, p, k, w)
    return np.unwrap(np.angle(h))


def responses():
    out = []
    for name, (z, p, k) in sorted(response_filters().items()):
        freq_hz = np.logspace(1, 5, 401)
        _, h = signal.freqs_zpk(z, p, k, TWO_PI * freq_hz)
        # A grid point exactly on a transmission zero (|H| = 0, -inf dB) is
        # left out; JSON has no infinities.
        keep = np.abs(h) > 0
        freq_hz, h = freq_hz[keep], h[keep]
        entry = {
            "name": name,
            "freq_hz": [float(f) for f in freq_hz],
            "mag_db": [float(v) for v in 20 * np.log10(np.abs(h))],
            "phase_deg": [float(v) for v in np.degrees(np.unwrap(np.angle(h)))],
            "axis_zeros_hz": axis_zeros_hz(z),
        }
        entry.update(zpk_dict(z, p, k))
        out.append(entry)
    return out


def stencil_tau(z, p, k, w, step):
    d = step * w
    taus = []
    for wi, di in zip(w, d):
        phi = unwrapped_phase(z, p, k, np.array([wi - 2 * di, wi - di, wi + di, wi + 2 * di]))
        dphi = (-phi[3] + 8 * phi[2] - 8 * phi[1] + phi[0]) / (12 * di)
        taus.append(-dphi)
    return np.array(taus)


def group_delays():
    out = []
    for name, (z, p, k) in sorted(response_filters().items()):
        zeros_hz = axis_zeros_hz(z)
        freq_hz = [f for f in np.logspace(1, 5, 121)
                   if all(abs(f - fz) > 0.02 * fz for fz in zeros_hz)]
        freq_hz = np.array(freq_hz)
        w = TWO_PI * freq_hz
        tau = stencil_tau(z, p, k, w, GD_STEP)
        tau2 = stencil_tau(z, p, k, w, 2 * GD_STEP)
        entry = {
            "name": name,
            "freq_hz": [float(f) for f in freq_hz],
            "tau_s": [float(v) for v in tau],
            "tau_err_est": [float(v) for v in np.abs(tau - tau2)],
            "step_rel": GD_STEP,
        }
        entry.update(zpk_dict(z, p, k))
        out.append(entry)
    return out


def main():
    doc = {
        "generator": "testdata/scipy/gen_xform.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "prototypes": {name: zpk_dict(*PROTOTYPES[name]) for name in sorted(PROTOTYPES)},
        "transforms": transforms(),
        "responses": responses(),
        "group_delay": group_delays(),
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "xform.json")
    text = json.dumps(doc, sort_keys=True, indent=1, allow_nan=False) + "\n"
    with open(path, "w") as f:
        f.write(text)


if __name__ == "__main__":
    main()
