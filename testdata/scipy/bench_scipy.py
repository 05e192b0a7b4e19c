#!/usr/bin/python3
"""Times scipy.signal on the specs of synth's BenchmarkSynthesize: the
analog zpk design (passband edge 1 kHz, Amax 1 dB, Amin 60 dB; Bessel with
its -3 dB point there) plus freqs_zpk on 500 log-spaced points.

Run with Debian's interpreter, /usr/bin/python3 (python3-scipy). Prints one
line per spec with the median time over repeated runs, in microseconds.
It writes nothing; testdata/bench/compare.sh runs it beside the Go
benchmark so both figures come from one run on one machine.
"""
import statistics
import sys
import timeit

import numpy as np
import scipy
from scipy import signal

WP = 2 * np.pi * 1000.0
W = 2 * np.pi * np.logspace(1, 5, 500)


def design(kind, n):
    if kind == "butterworth":
        # buttap has -3 dB at 1 rad/s; scale so the loss at WP is 1 dB.
        eps = np.sqrt(10 ** 0.1 - 1)
        z, p, k = signal.butter(n, WP * eps ** (-1.0 / n), analog=True, output="zpk")
    elif kind == "chebyshev1":
        z, p, k = signal.cheby1(n, 1, WP, analog=True, output="zpk")
    elif kind == "elliptic":
        z, p, k = signal.ellip(n, 1, 60, WP, analog=True, output="zpk")
    else:
        z, p, k = signal.bessel(n, WP, analog=True, output="zpk", norm="mag")
    return signal.freqs_zpk(z, p, k, worN=W)


def main():
    print("scipy %s, numpy %s, python %s" % (scipy.__version__, np.__version__, sys.version.split()[0]))
    for kind, n in [("butterworth", 8), ("chebyshev1", 8), ("elliptic", 8), ("bessel", 8), ("bessel", 20)]:
        number = 20
        runs = timeit.repeat(lambda: design(kind, n), number=number, repeat=15)
        median = statistics.median(runs) / number
        print("scipy %-12s order %2d: %9.1f us per design + 500-point freqs_zpk" % (kind, n, median * 1e6))


if __name__ == "__main__":
    main()
