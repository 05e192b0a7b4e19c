#!/usr/bin/python3
"""Reference orders for converter-derived lowpass masks, from SciPy.

Run from anywhere:  testdata/scipy/gen_alias.py
Writes testdata/scipy/alias.json next to this script. The output is
deterministic (a fixed table, sorted keys, floats written with repr), so
running it again with the same SciPy gives a byte-identical file.

Debian's python3-scipy (1.10.1 when this was written) is installed for
/usr/bin/python3 only, hence the shebang.

A lowpass spec with a converter and no stopband_hz takes its stopband from
the converter (INTERFACE.md, "Verdicts on the board as built"): the edge is
fs - fp and the attenuation converter.alias_atten_db, whose default is
6.02*bits + 1.76 dB (common practice). For a table of converters of our own
invention (bits 8..24, sample rates 8 kHz..10 MHz, the passband edge a
fraction of the sample rate, passband ripples 0.01..3 dB, some with
alias_atten_db given) this script asks SciPy's analog order functions for
the lowest order of that mask:

    buttord, cheb1ord, cheb2ord, ellipord(wp=fp, ws=fs - fp, gpass=Amax,
                                          gstop=alias attenuation, analog=True)

with the edges in Hz (the order depends only on their ratio). Records:

    function          the SciPy function
    bits, sample_rate_hz, passband_hz, passband_ripple_db
                      the spec's fields
    alias_atten_db    the converter's alias_atten_db when the spec gives it,
                      else null (the default applies)
    stopband_hz       fs - fp, as the spec derives it
    gstop             the attenuation passed to SciPy (given or 6.02*bits + 1.76)
    order             what SciPy returns (may exceed polewright's limit of 20)
    fractional_order  the bound before rounding up, with SciPy's expressions;
                      masks whose bound is within 1e-6 of an integer are left out
"""

import json
import math
import os
import sys

import numpy as np
import scipy
from scipy import signal

sys.dont_write_bytecode = True  # no __pycache__ beside the scripts
from gen_proto import fractional_order  # noqa: E402  (one copy of SciPy's order bound)

BORDER = 1e-6

ORD_FUNCS = {
    "buttord": signal.buttord,
    "cheb1ord": signal.cheb1ord,
    "cheb2ord": signal.cheb2ord,
    "ellipord": signal.ellipord,
}

BITS = [8, 10, 12, 14, 16, 18, 20, 22, 24]
SAMPLE_RATES = [8e3, 22.05e3, 44.1e3, 48e3, 96e3, 192e3, 500e3, 1e6, 2.5e6, 10e6]
FRACTIONS = [0.02, 0.05, 0.1, 0.2, 0.25, 0.3, 0.4, 0.45]
RIPPLES = [0.01, 0.1, 0.5, 1.0, 3.0]
GIVEN_ATTEN = [40.0, 60.0, 80.0, 100.0, 120.0]


def converters():
    """(bits, fs, fp, Amax, alias_atten_db or None): every bit depth with
    every passband fraction, the sample rate and ripple cycling through
    their lists, and one converter in four giving alias_atten_db."""
    out = []
    for i, bits in enumerate(BITS):
        for j, frac in enumerate(FRACTIONS):
            fs = SAMPLE_RATES[(3 * i + j) % len(SAMPLE_RATES)]
            ripple = RIPPLES[(i + j) % len(RIPPLES)]
            given = None
            if (i + j) % 4 == 3:
                given = GIVEN_ATTEN[(i + 2 * j) % len(GIVEN_ATTEN)]
            out.append((bits, fs, frac * fs, ripple, given))
    return out


def records():
    out = []
    for bits, fs, fp, ripple, given in converters():
        gstop = given if given is not None else 6.02 * bits + 1.76
        ws = fs - fp
        for name in sorted(ORD_FUNCS):
            frac = fractional_order(name, ws / fp, ripple, gstop)
            if abs(frac - round(frac)) < BORDER:
                continue
            n, _ = ORD_FUNCS[name](fp, ws, ripple, gstop, analog=True)
            if int(n) != math.ceil(frac):
                raise SystemExit("fractional order %r does not give %s's order %d for %r"
                                 % (frac, name, n, (bits, fs, fp, ripple, given)))
            out.append({"function": name, "bits": bits, "sample_rate_hz": fs,
                        "passband_hz": fp, "passband_ripple_db": ripple,
                        "alias_atten_db": given, "stopband_hz": ws, "gstop": gstop,
                        "order": int(n), "fractional_order": frac})
    return out


def main():
    data = {
        "generator": "testdata/scipy/gen_alias.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "orders": records(),
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "alias.json")
    with open(path, "w") as f:
        json.dump(data, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
