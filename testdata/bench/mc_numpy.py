#!/usr/bin/python3
"""Closed-form, numpy-vectorised Monte Carlo of polewright's reference chain.

The chain of synth/verify/internal/mcbench: an 8th-order Butterworth
lowpass at 1 kHz as four unity-gain Sallen-Key stages with ideal op-amps,
R1 = R2 = R, C2 = 10 nF, C1 = 4Q^2 C2, resistors 1 %, capacitors 5 %,
uniform. Each stage is H(s) = 1/(1 + s C2 (R1 + R2) + s^2 R1 R2 C1 C2)
(Sallen & Key 1955), so |H(jw)|^2 = 1/((1 - w^2 a)^2 + (w b)^2) with
a = R1 R2 C1 C2 and b = C2 (R1 + R2), in real arithmetic on a
(trials x points) array. One run computes what polewright's MonteCarlo
reports: the magnitude in dB, min/max and 1st/99th percentiles per
frequency, the yield against the mask of mcbench, and each stage's f0 and
Q spread.

Usage: mc_numpy.py [TRIALS] [POINTS] [REPEATS]  (defaults 10000 200 7)
Prints the median wall time of REPEATS runs and the time per trial-point.
"""
import sys
import time

import numpy as np

F0 = 1000.0
START, STOP = 10.0, 100e3
PASS_EDGE, PASS_RIPPLE = 800.0, 1.0
STOP_EDGE, STOP_LOSS = 2000.0, 48.5
R_TOL, C_TOL = 0.01, 0.05


def nominal():
    qs = [1 / (2 * np.cos((2 * k - 1) * np.pi / 16)) for k in range(1, 5)][::-1]
    w0 = 2 * np.pi * F0
    stages = []
    for q in qs:
        c2 = 10e-9
        c1 = 4 * q * q * c2
        r = 1 / (w0 * np.sqrt(c1 * c2))
        stages.append((r, r, c1, c2))
    return stages


def monte_carlo(rng, stages, freq, trials):
    w = 2 * np.pi * freq
    w2 = w * w
    mag2 = np.ones((trials, freq.size))
    f0s, qs = [], []
    for r1, r2, c1, c2 in stages:
        u = rng.uniform(-1.0, 1.0, size=(4, trials))
        R1 = r1 * (1 + R_TOL * u[0])
        R2 = r2 * (1 + R_TOL * u[1])
        C1 = c1 * (1 + C_TOL * u[2])
        C2 = c2 * (1 + C_TOL * u[3])
        a = R1 * R2 * C1 * C2
        b = C2 * (R1 + R2)
        re = 1.0 - np.outer(a, w2)
        im = np.outer(b, w)
        mag2 /= re * re + im * im
        f0s.append(1 / (2 * np.pi * np.sqrt(a)))
        qs.append(np.sqrt(a) / b)
    db = 10 * np.log10(mag2)
    env = (db.min(axis=0), np.percentile(db, 1, axis=0), np.percentile(db, 99, axis=0), db.max(axis=0))
    pb = freq <= PASS_EDGE
    sb = freq >= STOP_EDGE
    ok = (np.abs(db[:, pb]) <= PASS_RIPPLE).all(axis=1) & (db[:, sb] <= -STOP_LOSS).all(axis=1)
    spread = [(f.mean(), 100 * f.std(ddof=1) / f.mean(), q.mean(), 100 * q.std(ddof=1) / q.mean()) for f, q in zip(f0s, qs)]
    return ok.mean(), env, spread


def main():
    trials = int(sys.argv[1]) if len(sys.argv) > 1 else 10000
    points = int(sys.argv[2]) if len(sys.argv) > 2 else 200
    repeats = int(sys.argv[3]) if len(sys.argv) > 3 else 7
    freq = np.logspace(np.log10(START), np.log10(STOP), points)
    stages = nominal()
    rng = np.random.default_rng(1)
    monte_carlo(rng, stages, freq, trials)  # warm up
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        yld, env, spread = monte_carlo(rng, stages, freq, trials)
        times.append(time.perf_counter() - t0)
    med = float(np.median(times))
    print(f"numpy {np.__version__}: {trials} trials x {points} points, median of {repeats}: {med * 1e3:.1f} ms, "
          f"{med / (trials * points) * 1e9:.2f} ns per trial-point (yield {yld:.4f}, "
          f"stage 1 sigma_f0 {spread[0][1]:.3f} %)")
    print(f"NUMPY_NS_PER_TRIAL_POINT {med / (trials * points) * 1e9:.4f}")


if __name__ == "__main__":
    main()
