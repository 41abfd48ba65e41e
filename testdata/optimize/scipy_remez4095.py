#!/usr/bin/python3
"""One 4095-tap lowpass by scipy.signal.remez, the yardstick of
speed_compare.sh: the design of testdata/remez/bench_compare.py at N = 4095
(rate 1, passband 0-0.2, stopband 0.2+3/N to 0.5, weights 1:10, grid
density 16, at most 250 iterations). Run with Debian's /usr/bin/python3."""
import sys

from scipy import signal

N = 4095
h = signal.remez(N, [0, 0.2, 0.2 + 3.0 / N, 0.5], [1, 0], weight=[1, 10],
                 fs=1.0, grid_density=16, maxiter=250)
if len(h) != N:
    sys.exit("remez returned %d taps" % len(h))
