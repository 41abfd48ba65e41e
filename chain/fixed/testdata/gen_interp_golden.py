#!/usr/bin/python3
"""Golden integer outputs of interpolating stages for chain/fixed's
TestInterpolationGoldenSciPy.

Invented interpolators (windowed-sinc FIRs from scipy.signal.firwin, a
half-band, CIC interpolators and one cascade of the three kinds) on seeded
random integer input codes, run by scipy.signal.upfirdn with INTEGER taps
(exact: every sum stays far below 2^53), then rounded, truncated and
saturated by the rules of the interpolation contract
(stated in chain/fixed's package doc, "Interpolation"), written
out here from the rules, not from the Go code:

  * taps: quantised to B bits as the package doc states: Frac is the
    largest scale 2^Frac that keeps round(max|h| 2^Frac) <= 2^(B-1) - 1,
    each tap rounded to nearest, halves away from zero; a half-band's
    centre is exactly 1/2 and its other even-offset taps exactly 0;
  * FIR interpolator by L on a Bin-bit input into a Bout-bit output:
    y[m] = sum_j h_int[j] u[m - j], u the input zero-stuffed by L
    (upfirdn(h_int, x, up=L)); output shift s = Frac + Bin - Bout -
    floor(log2 L); s > 0: (y + 2^(s-1)) >> s (round half up), s < 0:
    y << -s; then saturated to [-2^(Bout-1), 2^(Bout-1) - 1];
  * CIC interpolator (N, M, R) on a Bin-bit input: its equivalent integer
    FIR, a boxcar of R M ones convolved N times, by upfirdn with up=R; the
    last integrator is W = Bin + ceil(log2((RM)^N / R)) bits wide
    (Hogenauer 1981, the interpolator's growth G_2N = (RM)^N / R); the
    output keeps its top min(W, Bout) bits, floor (y >> (W - out));
  * a cascade: each stage's output word is the next one's input word.

Outputs are the first L * len(x) samples of each stage (the model's R
outputs per input sample; inputs before the first are zero).

Each case also carries the float chain's output (RunCodes' float half, in
fractions of full scale): the input codes over 2^(Bin-1), each FIR by
upfirdn with its float taps h_int / 2^Frac times 2^floor(log2 L), each CIC
by upfirdn with its boxcars times 2^-(W - Bin), nothing rounded.

Run with Debian's /usr/bin/python3 (apt-get install python3-scipy); it
writes interp_golden.json next to itself.
"""
import json
import os

import numpy as np
import scipy
from scipy import signal

rng = np.random.default_rng(20261202)


def quantise(h, bits):
    """Round float taps to bits-bit integers with the largest fitting Frac."""
    m = float(np.max(np.abs(h)))
    _, e = np.frexp(m)  # m in [2^(e-1), 2^e)
    frac = bits - 1 - int(e)
    lim = 2 ** (bits - 1) - 1

    def rnd(v):
        return np.sign(v) * np.floor(np.abs(v) + 0.5)

    while rnd(m * 2.0**frac) > lim:
        frac -= 1
    ints = [int(v) for v in rnd(np.asarray(h) * 2.0**frac)]
    return ints, frac


def lowpass(n, l, beta):
    h = signal.firwin(n, 1.0 / l, window=("kaiser", beta))
    return h / np.sum(h)


def halfband(k, beta):
    n = 4 * k - 1
    h = signal.firwin(n, 0.5, window=("kaiser", beta))
    h = h / np.sum(h)
    mid = n // 2
    for j in range(n):
        if j != mid and (j - mid) % 2 == 0:
            h[j] = 0.0
    h[mid] = 0.5
    return h


def run_int(h, x, up):
    """upfirdn with integer taps on integer inputs, exact in float64."""
    y = signal.upfirdn(np.asarray(h, dtype=np.float64), np.asarray(x, dtype=np.float64), up=up)
    y = y[: up * len(x)]
    assert np.all(np.abs(y) < 2.0**52)
    return [int(v) for v in np.rint(y)]


def fir_stage(x, ints, frac, l, bin_, bout):
    s = frac + bin_ - bout - (l.bit_length() - 1)
    lo, hi = -(2 ** (bout - 1)), 2 ** (bout - 1) - 1
    out = []
    for v in run_int(ints, x, l):
        if s > 0:
            v = (v + (1 << (s - 1))) >> s
        elif s < 0:
            v = v << -s
        out.append(min(hi, max(lo, v)))
    return out, s


def ceil_log2_ratio(a, b):
    k = 0
    while b << k < a:
        k += 1
    return k


def cic_stage(x, n, m, r, bin_, bout):
    h = np.ones(1, dtype=np.int64)
    for _ in range(n):
        h = np.convolve(h, np.ones(r * m, dtype=np.int64))
    full = bin_ + ceil_log2_ratio((r * m) ** n, r)
    out_bits = min(full, bout)
    sh = full - out_bits
    return [v >> sh for v in run_int(h, x, r)], full, out_bits


def codes(n, bits, extremes=0):
    lo, hi = -(2 ** (bits - 1)), 2 ** (bits - 1) - 1
    x = [int(v) for v in rng.integers(lo, hi + 1, size=n)]
    # Runs of full-scale codes of alternating sign, to reach the
    # accumulators' extremes and the saturation.
    for i in range(extremes):
        x[n // 3 + i] = hi if (i // 2) % 2 == 0 else lo
    return x


cases = []


def add_case(name, in_bits, out_bits, data_bits, coef_bits, nin, stages):
    x = codes(nin, in_bits, extremes=24)
    case = {"name": name, "input_bits": in_bits, "output_bits": out_bits, "data_bits": data_bits,
            "coef_bits": coef_bits, "input": x, "stages": [], "outputs": []}
    cur, b = x, in_bits
    fl = np.asarray(x, dtype=np.float64) / 2.0 ** (in_bits - 1)
    for k, st in enumerate(stages):
        bout = out_bits if k == len(stages) - 1 else data_bits
        if st[0] in ("fir", "halfband"):
            kind, h, l = st
            ints, frac = quantise(h, coef_bits)
            cur, s = fir_stage(cur, ints, frac, l, b, bout)
            hf = np.asarray(ints, dtype=np.float64) * 2.0 ** (-frac + l.bit_length() - 1)
            fl = signal.upfirdn(hf, fl, up=l)[: l * len(fl)]
            case["stages"].append({"kind": kind, "l": l, "frac": frac, "ints": ints,
                                   "input_bits": b, "output_bits": bout, "shift": s})
            b = bout
        else:
            _, n, m, r = st
            cur, full, ob = cic_stage(cur, n, m, r, b, bout)
            hb = np.ones(1)
            for _ in range(n):
                hb = np.convolve(hb, np.ones(r * m))
            fl = signal.upfirdn(hb * 2.0 ** -(full - b), fl, up=r)[: r * len(fl)]
            case["stages"].append({"kind": "cic", "l": r, "n": n, "m": m,
                                   "input_bits": b, "output_bits": ob, "full_bits": full,
                                   "shift": full - ob})
            b = ob
        case["outputs"].append(cur)
    case["float_output"] = [float(v) for v in fl]
    cases.append(case)


add_case("fir3", 14, 18, 18, 16, 120, [("fir", lowpass(33, 3, 8.0), 3)])
add_case("fir4", 16, 16, 16, 18, 100, [("fir", lowpass(48, 4, 9.0), 4)])
add_case("halfband", 16, 20, 20, 16, 120, [("halfband", halfband(6, 8.0), 2)])
# Overshoot past full scale: a sharp L = 5 lowpass on full-scale runs.
add_case("fir5 saturating", 12, 12, 12, 14, 100, [("fir", lowpass(45, 5, 4.0), 5)])
# Few coefficient bits on a narrow input into a wide output: a left shift.
add_case("fir2 left shift", 8, 22, 22, 6, 120, [("fir", lowpass(11, 2, 5.0), 2)])
# A two-bit output shift: many sums end in exactly half an output LSB, so
# the rounding's direction at a tie (half up) shows.
add_case("fir2 ties", 8, 10, 10, 6, 120, [("fir", lowpass(11, 2, 5.0), 2)])
add_case("cic3m1r8", 12, 14, 14, 16, 80, [("cic", 3, 1, 8)])
add_case("cic4m2r5", 10, 24, 24, 16, 80, [("cic", 4, 2, 5)])
add_case("fir3 > hb > cic3m1r8", 12, 16, 16, 16, 48,
         [("fir", lowpass(27, 3, 7.0), 3), ("halfband", halfband(4, 7.0), 2), ("cic", 3, 1, 8)])

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "interp_golden.json"), "w") as f:
    json.dump({"scipy": scipy.__version__, "numpy": np.__version__, "cases": cases}, f, separators=(",", ":"))
    f.write("\n")
