#!/usr/bin/python3
"""Time the same Remez designs in SciPy and in stepdown, in one run.

Usage (from the repository root, with Debian's python, which has SciPy 1.10):

    /usr/bin/python3 testdata/remez/bench_compare.py [--long] [--runs K]

The designs are BenchmarkDesign's in chain/remez/bench_test.go: rate 1,
passband 0-0.2, stopband 0.2+3/N to 0.5, weights 1:10, grid density 16, for
N = 255, 1023, 2047, 4095 (and 16383 with --long). SciPy's signal.remez is
timed in this process (best of K runs); stepdown's engine through
`go test -bench` (best of K runs, one design each). Both filters are then
measured the same way: |H| on a 2**18-point FFT grid (SciPy's freqz) gives
the passband ripple (peak-to-peak dB) and the stopband attenuation (dB).
The ratio column is SciPy's time over stepdown's. The machine is shared:
the load average is printed so noisy runs can be recognised.
"""
import argparse
import os
import re
import subprocess
import sys
import time

import numpy as np
import scipy
from scipy import signal

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def spec(n):
    return [0, 0.2, 0.2 + 3.0 / n, 0.5], [1, 0], [1, 10]


def measure(h, edges):
    w, H = signal.freqz(h, worN=(1 << 18) + 1, include_nyquist=True)
    f = w / (2 * np.pi)
    mag = np.abs(H)
    pb = mag[(f >= edges[0]) & (f <= edges[1])]
    sb = mag[(f >= edges[2]) & (f <= edges[3])]
    dp = np.max(np.abs(pb - 1))
    ripple = 20 * np.log10((1 + dp) / (1 - dp))
    return ripple, -20 * np.log10(np.max(sb))


def time_scipy(n, runs):
    edges, desired, weight = spec(n)
    best, h = float("inf"), None
    for _ in range(runs):
        t = time.perf_counter()
        h = signal.remez(n, edges, desired, weight=weight, fs=1.0,
                         grid_density=16, maxiter=250)
        best = min(best, time.perf_counter() - t)
    return best, measure(h, edges)


def time_go(sizes, runs):
    pat = "BenchmarkDesign/n=(%s)$" % "|".join(str(n) for n in sizes)
    cmd = ["go", "test", "-run", "^$", "-bench", pat, "-benchtime", "1x",
           "-count", str(runs), "./chain/remez"]
    out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, check=True).stdout
    res = {}
    for line in out.splitlines():
        m = re.match(r"BenchmarkDesign/n=(\d+)\S*\s+\d+\s+([\d.]+) ns/op(.*)", line)
        if not m:
            continue
        n, ns, rest = int(m.group(1)), float(m.group(2)), m.group(3)
        metrics = dict((k, float(v)) for v, k in re.findall(r"([\d.]+) (\S+)", rest))
        prev = res.get(n)
        if prev is None or ns < prev[0]:
            res[n] = (ns, metrics)
    return res


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--long", action="store_true", help="also N = 16383 (slow in SciPy)")
    ap.add_argument("--runs", type=int, default=3)
    args = ap.parse_args()
    sizes = [255, 1023, 2047, 4095] + ([16383] if args.long else [])
    print("SciPy %s, numpy %s; load average before: %.2f %.2f %.2f" % (
        (scipy.__version__, np.__version__) + os.getloadavg()))
    sp = {n: time_scipy(n, args.runs) for n in sizes}
    gores = time_go(sizes, args.runs)
    print("load average after: %.2f %.2f %.2f" % os.getloadavg())
    print("%6s %11s %11s %7s | %9s %9s | %10s %10s" % (
        "N", "SciPy ms", "ours ms", "ratio", "SciPy dB", "ours dB", "SciPy rpl", "ours rpl"))
    for n in sizes:
        st, (srip, sdb) = sp[n]
        if n not in gores:
            print("%6d  (no Go result)" % n)
            continue
        ns, met = gores[n]
        gt = ns * 1e-9
        print("%6d %11.1f %11.1f %6.2fx | %9.2f %9.2f | %10.4f %10.4f" % (
            n, st * 1e3, gt * 1e3, st / gt, sdb, met.get("stop-dB", float("nan")),
            srip, met.get("ripple-dB", float("nan"))))


if __name__ == "__main__":
    sys.exit(main())
