#!/usr/bin/python3
"""Golden CIC magnitude responses for stepdown/chain tests.

The CIC of order N, differential delay M and factor R is, at its input rate,
the FIR made of N boxcars of length R*M convolved, divided by (R*M)^N for unit
DC gain. SciPy's signal.freqz evaluates that FIR at frequencies given as
fractions of the input rate. Run with Debian's /usr/bin/python3:

    /usr/bin/python3 testdata/chain/cic_freqz.py > testdata/chain/cic_freqz.json
"""
import json
import sys

import numpy as np
import scipy
from scipy import signal

CASES = [(3, 1, 8), (4, 1, 25), (5, 2, 16), (2, 1, 7), (6, 1, 64)]


def main():
    out = {"generator": "testdata/chain/cic_freqz.py", "scipy": scipy.__version__,
           "numpy": np.__version__, "cases": []}
    for n, m, r in CASES:
        h = np.ones(1)
        for _ in range(n):
            h = np.convolve(h, np.ones(r * m))
        h /= float(r * m) ** n
        # Frequencies as fractions of the input rate: a regular grid plus
        # points close to the nulls at multiples of 1/(R M).
        f = list(np.linspace(0.0, 0.5, 101))
        for k in range(1, 4):
            f += [k / (r * m) - 1e-3, k / (r * m) + 1e-3]
        f = sorted(x for x in f if 0 <= x <= 0.5)
        _, resp = signal.freqz(h, worN=2 * np.pi * np.array(f))
        out["cases"].append({"N": n, "M": m, "R": r, "freq": f,
                             "mag": [float(abs(v)) for v in resp]})
    json.dump(out, sys.stdout, indent=1)


if __name__ == "__main__":
    main()
