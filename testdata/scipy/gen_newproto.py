#!/usr/bin/python3
"""Reference poles for the optimum-L (Legendre) and Gaussian prototypes of
synth/proto, computed independently with Python's exact fractions, NumPy
and SciPy (neither has these filters; their defining formulas are built
here from scratch).

Run from anywhere:  testdata/scipy/gen_newproto.py
Writes testdata/scipy/newproto.json next to this script: sorted keys, floats
written with repr, fixed inputs, so a second run with the same NumPy/SciPy
is byte-identical. Debian's python3-scipy (1.10.1) lives under
/usr/bin/python3 only, hence the shebang.

legendre  |H(jw)|^2 = 1/(1 + eps^2 L_n(w^2)), eps^2 = 10^(rp/10) - 1, with
          Papoulis's L_n from its defining integral in exact fractions:
            n = 2k+1: L_n = int_{-1}^{2w^2-1} (sum_{i<=k} a_i P_i(x))^2 dx,
                      a_i a_j = (2i+1)(2j+1)/(2(k+1)^2)
            n = 2k+2: L_n = int_{-1}^{2w^2-1} (1+x)(sum_{i=k mod 2} a_i P_i)^2 dx,
                      a_i a_j = (2i+1)(2j+1)/((k+1)(k+2))
          poles: the left-half-plane roots (numpy.roots, companion matrix)
          of 1 + eps^2 L_n(-s^2), each polished by three Newton steps.
gaussian  |H(jw)|^2 = 1/sum_{k<=n} (a w^2)^k / k!, a from scipy brentq on
          sum_{k<=n} a^k/k! = 10^(rp/10) (loss rp at 1 rad/s); poles: the
          left-half-plane roots of sum_k (-a s^2)^k / k! (numpy.roots,
          polished).
Both have |H(0)| = 1, so gain = prod |p|. Orders 1..12 (the power-basis
polynomial of degree 2n is still well conditioned there), rp 0.5, 1 and
10 log10 2 dB. Fields: function, order, rp, poles ([re, im], upper member
of each pair first, by increasing imaginary part, real pole last), gain.
"""

import json
import math
import os
from fractions import Fraction

import numpy as np
import scipy
from scipy import optimize

ORDERS = range(1, 13)
RPS = [0.5, 1.0, 10 * math.log10(2)]


def pmul(a, b):
    out = [Fraction(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            out[i + j] += x * y
    return out


def legendre_p(i):
    """Legendre polynomial P_i, power basis (lowest first), exact."""
    p0, p1 = [Fraction(1)], [Fraction(0), Fraction(1)]
    if i == 0:
        return p0
    for k in range(1, i):
        nxt = [Fraction(0)] * (k + 2)
        for j, c in enumerate(p1):
            nxt[j + 1] += c * (2 * k + 1)
        for j, c in enumerate(p0):
            nxt[j] -= c * k
        p0, p1 = p1, [c / (k + 1) for c in nxt]
    return p1


def optimum_l(n):
    """Coefficients of L_n in w = omega^2, lowest first, exact."""
    k = (n - 1) // 2 if n % 2 else (n - 2) // 2
    sq = [Fraction(0)]
    for i in range(k + 1):
        for j in range(k + 1):
            if n % 2:
                w = Fraction((2 * i + 1) * (2 * j + 1), 2 * (k + 1) ** 2)
            else:
                if i % 2 != k % 2 or j % 2 != k % 2:
                    continue
                w = Fraction((2 * i + 1) * (2 * j + 1), (k + 1) * (k + 2))
            prod = pmul(legendre_p(i), legendre_p(j))
            if len(prod) > len(sq):
                sq += [Fraction(0)] * (len(prod) - len(sq))
            for d, c in enumerate(prod):
                sq[d] += w * c
    if n % 2 == 0:
        sq = pmul(sq, [Fraction(1), Fraction(1)])
    f = [Fraction(0)] + [c / (d + 1) for d, c in enumerate(sq)]
    f[0] -= sum(c * (-1) ** d for d, c in enumerate(f))  # F(-1) = 0
    out = [Fraction(0)]
    for c in reversed(f):  # substitute x = 2w - 1
        out = pmul(out, [Fraction(-1), Fraction(2)])
        out[0] += c
    return out[: n + 1]


def lhp_poles(coef_s):
    """Left-half-plane roots of the polynomial in s (lowest first), polished,
    in the package's canonical order."""
    hi_first = [float(c) for c in reversed(coef_s)]
    poly = np.poly1d(hi_first)
    dpoly = poly.deriv()
    roots = []
    for r in np.roots(hi_first):
        for _ in range(3):
            r = r - poly(r) / dpoly(r)
        if r.real < 0:
            roots.append(complex(r))
    upper = sorted([r for r in roots if r.imag > 1e-9 * abs(r)], key=lambda r: r.imag)
    reals = sorted([r.real for r in roots if abs(r.imag) <= 1e-9 * abs(r)])
    out = []
    for r in upper:
        out += [[r.real, r.imag], [r.real, -r.imag]]
    out += [[x, 0.0] for x in reals]
    return out


def record(function, n, rp, poles):
    g = 1.0
    for re, im in poles:
        g *= math.hypot(re, im)
    return {"function": function, "order": n, "rp": rp, "poles": poles, "gain": g}


def legendre(n, rp):
    e2 = Fraction(10 ** (rp / 10) - 1)
    ln = optimum_l(n)
    # 1 + e2 * L_n(w) with w = -s^2: coefficient of s^(2d) is e2*c_d*(-1)^d.
    coef = [Fraction(0)] * (2 * n + 1)
    coef[0] = Fraction(1)
    for d, c in enumerate(ln):
        coef[2 * d] += e2 * c * (-1) ** d
    return record("legendre", n, rp, lhp_poles(coef))


def gaussian(n, rp):
    target = 10 ** (rp / 10)
    a = optimize.brentq(lambda a: sum(a ** k / math.factorial(k) for k in range(n + 1)) - target,
                        0.0, 100.0, xtol=1e-15, rtol=4 * np.finfo(float).eps, maxiter=500)
    coef = [0.0] * (2 * n + 1)
    for k in range(n + 1):
        coef[2 * k] = (-a) ** k / math.factorial(k)
    return record("gaussian", n, rp, lhp_poles(coef))


def main():
    out = []
    for rp in RPS:
        for n in ORDERS:
            out.append(legendre(n, rp))
            out.append(gaussian(n, rp))
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "newproto.json")
    with open(path, "w") as f:
        json.dump({"generator": "testdata/scipy/gen_newproto.py", "scipy_version": scipy.__version__,
                   "numpy_version": np.__version__, "prototypes": out}, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
