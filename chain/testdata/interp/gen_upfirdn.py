#!/usr/bin/python3
"""Golden outputs of invented interpolation chains for stepdown/chain tests.

Each chain is a list of stages in signal order, every one raising the rate by
its factor L. A FIR or half-band stage is SciPy's scipy.signal.upfirdn with
up=L on the stage's taps times L (zero stuffing divides the DC gain by L;
the taps sum to 1 at the high rate). A CIC interpolator of order N, delay M
and factor R is upfirdn with up=R on its equivalent FIR, N boxcars of length
R*M convolved, times R/(R*M)^N (unit DC gain). Each stage's output is cut to
len(input)*L samples: the chain starts from zero state and adds no delay, so
the first samples of the full convolution are the hardware's outputs.

The taps are designed here with scipy.signal.remez and firwin; the inputs are
seeded Gaussian noise and a tone. Run with Debian's /usr/bin/python3 from the
repository root:

    /usr/bin/python3 chain/testdata/interp/gen_upfirdn.py > chain/testdata/interp/upfirdn.json
"""
import json
import sys

import numpy as np
import scipy
from scipy import signal


def halfband(n, beta):
    """A windowed-sinc half-band of n = 4K-1 taps: centre 1/2, every other
    odd offset exactly 0, the rest scaled so that the taps sum to 1."""
    c = (n - 1) // 2
    k = np.arange(n) - c
    h = 0.5 * np.sinc(k / 2.0) * signal.windows.kaiser(n, beta)
    h[(k % 2 == 0) & (k != 0)] = 0.0
    h[c] = 0.0
    h *= 0.5 / h.sum()
    h[c] = 0.5
    return h


def fir_remez(n, fp, fs):
    """A remez lowpass, edges as fractions of its (high) rate, sum 1."""
    h = signal.remez(n, [0, fp, fs, 0.5], [1, 0], fs=1.0)
    return h / h.sum()


def fir_firwin(n, fc):
    h = signal.firwin(n, fc, fs=1.0)
    return h / h.sum()


def cic_taps(n, m, r):
    h = np.ones(1)
    for _ in range(n):
        h = np.convolve(h, np.ones(r * m))
    return h * (r / float(r * m) ** n)


def stage_fir(kind, l, h):
    return {"kind": kind, "factor": l, "taps": [float(v) for v in h]}


def stage_cic(n, m, r):
    return {"kind": "cic", "factor": r, "N": n, "M": m}


def run(stages, x):
    y = np.asarray(x, dtype=float)
    for s in stages:
        l = s["factor"]
        if s["kind"] == "cic":
            h = cic_taps(s["N"], s["M"], l)
        else:
            h = np.asarray(s["taps"]) * l
        y = signal.upfirdn(h, y, up=l)[: len(y) * l]
    return y


CHAINS = [
    # name, stages in signal order, input length
    ("fir3 > hb", [stage_fir("fir", 3, fir_remez(33, 0.08, 0.25)),
                   stage_fir("halfband", 2, halfband(23, 6.0))], 48),
    ("fir5 (23 taps)", [stage_fir("fir", 5, fir_firwin(23, 0.09))], 40),
    ("cic4m1r8", [stage_cic(4, 1, 8)], 48),
    ("cic3m2r5", [stage_cic(3, 2, 5)], 48),
    # Growth ceil(log2(128^7 / 64)) = 43 bits: Run takes the equivalent FIR.
    ("cic7m2r64", [stage_cic(7, 2, 64)], 12),
    ("fir2 > hb > cic3m1r4", [stage_fir("fir", 2, fir_firwin(41, 0.22)),
                              stage_fir("halfband", 2, halfband(31, 7.0)),
                              stage_cic(3, 1, 4)], 40),
    ("cic2m1r3 > fir2", [stage_cic(2, 1, 3),
                         stage_fir("fir", 2, fir_remez(20, 0.15, 0.35))], 40),
]


def main():
    rng = np.random.default_rng(20260417)
    out = {"generator": "chain/testdata/interp/gen_upfirdn.py", "scipy": scipy.__version__,
           "numpy": np.__version__, "chains": []}
    for name, stages, n in CHAINS:
        sigs = []
        noise = 0.3 * rng.standard_normal(n)
        tone = 0.9 * np.cos(2 * np.pi * 0.071 * np.arange(n) + 0.3)
        for sname, x in (("noise", noise), ("tone", tone)):
            y = run(stages, x)
            sigs.append({"name": sname, "x": [float(v) for v in x], "y": [float(v) for v in y]})
        out["chains"].append({"name": name, "stages": stages, "signals": sigs})
    json.dump(out, sys.stdout, separators=(",", ":"))
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
