#!/usr/bin/python3
"""Reference data for synth/proto (and the order tests of synth), from SciPy.

Run from anywhere:  testdata/scipy/gen_proto.py
Writes testdata/scipy/proto.json next to this script. The output is
deterministic (sorted keys, floats written with repr, fixed inputs and a
seeded random.Random for the extra specs), so running it again with the same
SciPy gives a byte-identical file.

Debian's python3-scipy (1.10.1 when this was written) is installed for
/usr/bin/python3 only, hence the shebang.

Every record carries "function", the SciPy function that produced it.

prototypes  analog lowpass prototypes, orders 1..20, as SciPy normalises them:
              buttap(n)                     -3 dB at 1 rad/s
              cheb1ap(n, rp)                loss rp at 1 rad/s (ripple edge)
              cheb2ap(n, rs)                loss rs at 1 rad/s (stopband edge)
              besselap(n, norm)             norm 'phase', 'mag' (-3 dB at
                                            1 rad/s) and 'delay' (unit delay)
              ellipap(n, rp, rs)            loss rp at 1 rad/s
            fields: order, rp/rs/norm where used, zeros and poles as lists of
            [re, im], gain.
orders      buttord, cheb1ord, cheb2ord, ellipord with analog=True:
              btype        "lowpass", "highpass", "bandpass" or "bandstop"
              wp, ws       edge lists in rad/s (length 1 or 2)
              gpass, gstop dB
              order, wn    what SciPy returns (wn always a list)
              fractional_order  the bound before rounding up, recomputed here
                           with SciPy's own expressions (for bandstop after
                           the same fminbound edge search); specs whose bound
                           is within 1e-6 of an integer are left out.
            A lowpass spec's frequency ratio is ws/wp.
bessel_orders
            the lowest Bessel order meeting a lowpass spec, found here from
            besselap(n, 'delay') and brentq: for n = 1, 2, ... the frequency
            w1 where the loss is gpass (brentq, xtol 1e-14), then the loss at
            w1*ratio. function "besselap+brentq"; "loss_db" lists the loss at
            ratio for orders 1..order; specs where a loss is within 1e-6 dB of
            gstop are left out.
"""

import json
import math
import os
import random

import numpy as np
import scipy
from scipy import optimize, signal
from scipy.signal import _filter_design as fd

ORDERS = range(1, 21)
RPS = [0.1, 0.5, 1.0, 3.0]
RSS = [40.0, 60.0, 80.0]
BORDER = 1e-6


def cpx(values):
    """Complex array -> list of [re, im] pairs of Python floats."""
    return [[float(np.real(v)), float(np.imag(v))] for v in np.atleast_1d(values)]


def zpk_record(function, n, z, p, k, **params):
    rec = {"function": function, "order": n, "zeros": cpx(z), "poles": cpx(p),
           "gain": float(np.real(k))}
    rec.update(params)
    return rec


def prototypes():
    out = []
    for n in ORDERS:
        out.append(zpk_record("buttap", n, *signal.buttap(n)))
    for rp in RPS:
        for n in ORDERS:
            out.append(zpk_record("cheb1ap", n, *signal.cheb1ap(n, rp), rp=rp))
    for rs in RSS:
        for n in ORDERS:
            out.append(zpk_record("cheb2ap", n, *signal.cheb2ap(n, rs), rs=rs))
    for norm in ["phase", "mag", "delay"]:
        for n in ORDERS:
            out.append(zpk_record("besselap", n, *signal.besselap(n, norm=norm), norm=norm))
    for rp in RPS:
        for rs in RSS:
            for n in ORDERS:
                out.append(zpk_record("ellipap", n, *signal.ellipap(n, rp, rs), rp=rp, rs=rs))
    return out


# --- order selection -------------------------------------------------------

ORD_FUNCS = {
    "buttord": (signal.buttord, "butter"),
    "cheb1ord": (signal.cheb1ord, "cheby"),
    "cheb2ord": (signal.cheb2ord, "cheby"),
    "ellipord": (signal.ellipord, "ellip"),
}


def nat_of(btype, wp, ws, gpass, gstop, kind):
    """SciPy's analog 'nat' (lowpass-prototype stopband frequency), with the
    same expressions and, for bandstop, the same fminbound calls."""
    passb = np.array(wp, dtype=float)
    stopb = np.array(ws, dtype=float)
    if btype == "lowpass":
        nat = stopb / passb
    elif btype == "highpass":
        nat = passb / stopb
    elif btype == "bandstop":
        wp0 = optimize.fminbound(fd.band_stop_obj, passb[0], stopb[0] - 1e-12,
                                 args=(0, passb, stopb, gpass, gstop, kind), disp=0)
        passb[0] = wp0
        wp1 = optimize.fminbound(fd.band_stop_obj, stopb[1] + 1e-12, passb[1],
                                 args=(1, passb, stopb, gpass, gstop, kind), disp=0)
        passb[1] = wp1
        nat = (stopb * (passb[0] - passb[1])) / (stopb ** 2 - passb[0] * passb[1])
    else:
        nat = (stopb ** 2 - passb[0] * passb[1]) / (stopb * (passb[0] - passb[1]))
    return min(abs(nat))


def fractional_order(name, nat, gpass, gstop):
    """The order bound before ceil, with SciPy's expressions."""
    GSTOP = 10 ** (0.1 * abs(gstop))
    GPASS = 10 ** (0.1 * abs(gpass))
    if name == "buttord":
        return math.log10((GSTOP - 1.0) / (GPASS - 1.0)) / (2 * math.log10(nat))
    if name in ("cheb1ord", "cheb2ord"):
        return float(np.arccosh(np.sqrt((GSTOP - 1.0) / (GPASS - 1.0))) / np.arccosh(nat))
    arg1_sq = fd._pow10m1(0.1 * gpass) / fd._pow10m1(0.1 * gstop)
    arg0 = 1.0 / nat
    d0 = scipy.special.ellipk(arg0 ** 2), scipy.special.ellipkm1(arg0 ** 2)
    d1 = scipy.special.ellipk(arg1_sq), scipy.special.ellipkm1(arg1_sq)
    return float(d0[0] * d1[1] / (d0[1] * d1[0]))


def specs():
    """(btype, wp, ws, gpass, gstop) in rad/s and dB, fixed then random."""
    out = []
    gains = [(0.1, 40.0), (0.5, 60.0), (1.0, 20.0), (1.0, 80.0), (3.0, 40.0), (3.0, 60.0)]
    ratios = [1.05, 1.2, 1.5, 2.0, 3.0, 5.0, 10.0]
    for wp in [1.0, 2 * math.pi * 1000]:
        for r in ratios:
            for gp, gs in gains:
                out.append(("lowpass", [wp], [wp * r], gp, gs))
    for r in [1.3, 2.5, 7.0]:
        for gp, gs in gains[:4]:
            out.append(("highpass", [2 * math.pi * 500], [2 * math.pi * 500 / r], gp, gs))
    bands = [([1.0, 2.0], [0.5, 4.0]), ([2 * math.pi * 900, 2 * math.pi * 1100],
             [2 * math.pi * 700, 2 * math.pi * 1500]), ([10.0, 30.0], [8.0, 50.0])]
    for wp, ws in bands:
        for gp, gs in gains[:4]:
            out.append(("bandpass", wp, ws, gp, gs))
            out.append(("bandstop", ws, wp, gp, gs))
    rnd = random.Random(20240601)
    for _ in range(60):
        wp = 10 ** rnd.uniform(-1, 5)
        r = 10 ** rnd.uniform(0.01, 1.2)
        gp = 10 ** rnd.uniform(-2, math.log10(6))
        gs = gp + 10 ** rnd.uniform(0.5, 2.1)
        out.append(("lowpass", [wp], [wp * r], gp, gs))
    return out


def orders():
    out = []
    for btype, wp, ws, gp, gs in specs():
        for name in sorted(ORD_FUNCS):
            func, kind = ORD_FUNCS[name]
            nat = nat_of(btype, wp, ws, gp, gs, kind)
            frac = fractional_order(name, nat, gp, gs)
            if abs(frac - round(frac)) < BORDER:
                continue
            arg_wp = wp[0] if len(wp) == 1 else wp
            arg_ws = ws[0] if len(ws) == 1 else ws
            n, wn = func(arg_wp, arg_ws, gp, gs, analog=True)
            if int(n) != math.ceil(frac):
                raise SystemExit("fractional order %r does not give %s's order %d for %r"
                                 % (frac, name, n, (btype, wp, ws, gp, gs)))
            out.append({"function": name, "btype": btype, "wp": list(wp), "ws": list(ws),
                        "gpass": gp, "gstop": gs, "analog": True, "order": int(n),
                        "wn": [float(x) for x in np.atleast_1d(wn)],
                        "fractional_order": frac})
    return out


def bessel_loss_at(n, gpass, ratio):
    z, p, k = signal.besselap(n, norm="delay")

    def loss(w):
        return -20 * math.log10(abs(k / np.prod(1j * w - p)))

    hi = 1.0
    while loss(hi) < gpass:
        hi *= 2
    w1 = optimize.brentq(lambda w: loss(w) - gpass, 0.0 + 1e-300, hi, xtol=1e-14, rtol=1e-15)
    return loss(w1 * ratio)


def bessel_orders():
    out = []
    cases = [(gp, gs, r) for gp, gs in [(0.5, 20.0), (1.0, 30.0), (3.0, 20.0), (3.0, 40.0),
                                        (3.0103, 30.0), (6.0, 60.0), (0.1, 10.0)]
             for r in [2.0, 3.0, 4.0, 6.0, 10.0]]
    cases += [(3.0, 60.0, 4.0), (3.0, 55.0, 4.0), (6.0, 100.0, 4.0), (6.0, 110.0, 4.0),
              (1.0, 17.0, 4.0), (10.0, 100.0, 3.0)]
    for gp, gs, r in cases:
        losses = []
        for n in range(1, 31):
            losses.append(bessel_loss_at(n, gp, r))
            if losses[-1] >= gs:
                break
        else:
            continue
        if min(abs(v - gs) for v in losses) < BORDER:
            continue
        out.append({"function": "besselap+brentq", "btype": "lowpass", "gpass": gp,
                    "gstop": gs, "ratio": r, "order": len(losses), "loss_db": losses})
    return out


def bessel_curves():
    """Loss at ratio of the gpass-normalised Bessel prototype for orders
    1..30: it rises to a maximum and falls back toward gpass*ratio**2."""
    out = []
    for gp, r in [(0.1, 2.0), (1.0, 2.0), (3.0, 3.0), (3.0, 4.0), (6.0, 2.0), (6.0, 4.0)]:
        losses = [bessel_loss_at(n, gp, r) for n in range(1, 31)]
        out.append({"function": "besselap+brentq", "btype": "lowpass", "gpass": gp,
                    "ratio": r, "loss_db": losses})
    return out


def main():
    data = {
        "generator": "testdata/scipy/gen_proto.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "prototypes": prototypes(),
        "orders": orders(),
        "bessel_orders": bessel_orders(),
        "bessel_curves": bessel_curves(),
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "proto.json")
    with open(path, "w") as f:
        json.dump(data, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
