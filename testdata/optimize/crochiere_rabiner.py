#!/usr/bin/python3
"""Check values for optimize's Crochiere-Rabiner test.

Decimation by 100 (10 kHz to 100 Hz, passband 45 Hz, stopband 50 Hz,
dp = 0.01, ds = 0.001; spec from memory) with FIR stages only, no symmetry:
multiplies per second from Herrmann-Rabiner-Chan (1973) lengths, with stage i
keeping [0, fp], its stopband from Fi - fs and ripple dp/K (Crochiere and
Rabiner 1975), and their closed-form optimal first factor of two stages.

Run: /usr/bin/python3 testdata/optimize/crochiere_rabiner.py > testdata/optimize/crochiere_rabiner.txt
"""
import math
import sys

A = [0.005309, 0.07114, -0.4761, 0.00266, 0.5941, 0.4278]


def herrmann(dp, ds, df):
    if dp < ds:
        dp, ds = ds, dp
    l1, l2 = math.log10(dp), math.log10(ds)
    d = (A[0] * l1 * l1 + A[1] * l1 + A[2]) * l2 - (A[3] * l1 * l1 + A[4] * l1 + A[5])
    f = 11.01217 + 0.51244 * (l1 - l2)
    return d / df - f * df + 1


F0, FP, FS, DP, DS = 10e3, 45.0, 50.0, 0.01, 0.001


def rate(factors):
    r, total = F0, 0.0
    for d in factors:
        out = r / d
        total += herrmann(DP / len(factors), DS, (out - FS - FP) / r) * out
        r = out
    return total


print("# python", sys.version.split()[0], "(no library beyond math)")
for fs in ([100], [50, 2], [25, 4], [20, 5], [10, 10], [10, 5, 2]):
    print(" x ".join(map(str, fs)), "%.1f" % rate(fs))
D, dF = 100.0, (FS - FP) / FS
print("D1 %.4f" % (2 * D * (1 - math.sqrt(D * dF / (2 - dF))) / (2 - dF * (D + 1))))
