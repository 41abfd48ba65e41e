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
The ratio columns are SciPy's time over stepdown's: wall-clock (stepdown
using every core) and CPU time on one core (stepdown run with GOMAXPROCS=1,
user+system time of the process less that of starting it; SciPy is
single-threaded), the latter
being the fairer figure on a loaded machine. The machine
is shared: the load average is printed so noisy runs can be recognised.
"""
import argparse
import os
import re
import resource
import tempfile
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
    best, cpu, h = float("inf"), float("inf"), None
    for _ in range(runs):
        t, c = time.perf_counter(), time.process_time()
        h = signal.remez(n, edges, desired, weight=weight, fs=1.0,
                         grid_density=16, maxiter=250)
        best = min(best, time.perf_counter() - t)
        cpu = min(cpu, time.process_time() - c)
    return best, cpu, measure(h, edges)


def child_cpu():
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime


def run_bench(binary, n, procs):
    """One design of size n in the test binary: (ns/op, CPU seconds, metrics)."""
    args = [binary, "-test.run", "^$", "-test.bench", "BenchmarkDesign/n=%d$" % n,
            "-test.benchtime", "1x"]
    if procs:
        args += ["-test.cpu", str(procs)]
    before = child_cpu()
    out = subprocess.run(args, cwd=os.path.join(ROOT, "chain", "remez"),
                         capture_output=True, text=True, check=True).stdout
    cpu = child_cpu() - before
    for line in out.splitlines():
        m = re.match(r"BenchmarkDesign/n=(\d+)\S*\s+\d+\s+([\d.]+) ns/op(.*)", line)
        if m:
            metrics = dict((k, float(v)) for v, k in re.findall(r"([\d.]+) (\S+)", m.group(3)))
            return float(m.group(2)), cpu, metrics
    raise RuntimeError("no benchmark line for n=%d" % n)


def time_go(sizes, runs):
    """Best wall time with every core, and best CPU time on one core
    (GOMAXPROCS=1), per design. With -benchtime 1x the binary designs once."""
    binary = os.path.join(tempfile.mkdtemp(), "remez.test")
    subprocess.run(["go", "test", "-c", "-o", binary, "./chain/remez"], cwd=ROOT, check=True)
    # CPU time of starting the binary and running nothing, taken off below.
    base = float("inf")
    for _ in range(3):
        before = child_cpu()
        subprocess.run([binary, "-test.run", "^$", "-test.bench", "^$", "-test.cpu", "1"],
                       cwd=os.path.join(ROOT, "chain", "remez"), capture_output=True, check=True)
        base = min(base, child_cpu() - before)
    res = {}
    for n in sizes:
        wall, cpu, metrics = float("inf"), float("inf"), None
        for _ in range(runs):
            ns, _, metrics = run_bench(binary, n, 0)
            wall = min(wall, ns)
            _, c, _ = run_bench(binary, n, 1)
            cpu = min(cpu, max(c - base, 1e-6))
        res[n] = (wall, cpu, metrics)
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
    print("%6s %9s %9s %6s | %9s %9s %6s | %8s %8s | %9s %9s" % (
        "N", "SciPy ms", "ours ms", "wall", "SciPy cpu", "ours cpu", "cpu",
        "SciPy dB", "ours dB", "SciPy rpl", "ours rpl"))
    for n in sizes:
        st, sc, (srip, sdb) = sp[n]
        if n not in gores:
            print("%6d  (no Go result)" % n)
            continue
        ns, gc, met = gores[n]
        gt = ns * 1e-9
        print("%6d %9.1f %9.1f %5.2fx | %9.1f %9.1f %5.2fx | %8.2f %8.2f | %9.4f %9.4f" % (
            n, st * 1e3, gt * 1e3, st / gt, sc * 1e3, gc * 1e3, sc / gc,
            sdb, met.get("stop-dB", float("nan")), srip, met.get("ripple-dB", float("nan"))))


if __name__ == "__main__":
    sys.exit(main())
