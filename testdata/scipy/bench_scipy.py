#!/usr/bin/python3
"""Times scipy.signal on the specs of synth's BenchmarkSynthesize: the
analog zpk design (passband edge 1 kHz, Amax 1 dB, Amin 60 dB; Bessel with
its -3 dB point there) plus freqs_zpk on 500 log-spaced points.

Run with Debian's interpreter, /usr/bin/python3 (python3-scipy). Prints one
line per spec with the median time over repeated runs, in microseconds.
It writes nothing; testdata/bench/compare.sh runs it beside the Go
benchmark so both figures come from one run on one machine. With
`--one KIND ORDER NUMBER` it times one spec NUMBER times and prints the wall
and CPU microseconds per design (testdata/bench/peers.sh interleaves those
runs with the Go benchmark's).
"""
import statistics
import sys
import time
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


def one(kind, n, number):
    """Times number designs of one spec; prints wall and CPU microseconds
    per design (for testdata/bench/peers.sh, which interleaves runs)."""
    design(kind, n)  # warm up
    w0, c0 = time.perf_counter(), time.process_time()
    for _ in range(number):
        design(kind, n)
    w1, c1 = time.perf_counter(), time.process_time()
    print("%.3f %.3f" % ((w1 - w0) / number * 1e6, (c1 - c0) / number * 1e6))


def main():
    if len(sys.argv) == 5 and sys.argv[1] == "--one":
        one(sys.argv[2], int(sys.argv[3]), int(sys.argv[4]))
        return
    print("scipy %s, numpy %s, python %s" % (scipy.__version__, np.__version__, sys.version.split()[0]))
    for kind, n in [("butterworth", 8), ("chebyshev1", 8), ("elliptic", 8), ("bessel", 8), ("bessel", 20)]:
        number = 20
        runs = timeit.repeat(lambda: design(kind, n), number=number, repeat=15)
        median = statistics.median(runs) / number
        print("scipy %-12s order %2d: %9.1f us per design + 500-point freqs_zpk" % (kind, n, median * 1e6))


if __name__ == "__main__":
    main()
