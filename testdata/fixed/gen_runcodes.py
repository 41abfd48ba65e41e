#!/usr/bin/python3
"""Reference outputs for chain/fixed's TestRunCodesFloatMatchesSciPy.

Reads testdata/fixed/runcodes_case.json (written by
`go test ./chain/fixed -run TestRunCodesFloatMatchesSciPy -update-runcodes`)
and writes testdata/fixed/runcodes_scipy.json: each case's input codes,
as fractions of full scale (code / 2^(bits-1)), run through its stages in
float64:

  * a CIC of order N, delay M, factor R as N running sums (numpy.cumsum),
    then, keeping every R-th sample from the first, N combs
    y[n] = x[n] - x[n-M] (Hogenauer's recursive structure), times its
    scale;
  * an FIR by scipy.signal.lfilter, keeping every R-th sample from the
    first.

Run with Debian's /usr/bin/python3 (apt-get install python3-scipy), from
the repository root.
"""
import json

import numpy as np
import scipy
from scipy import signal

with open("testdata/fixed/runcodes_case.json") as f:
    cases = json.load(f)

outputs = []
for case in cases:
    x = np.array(case["input"], dtype=np.float64) / 2.0 ** (case["input_bits"] - 1)
    for st in case["stages"]:
        if st["cic"]:
            n, m, r = st["n"], st["m"], st["r"]
            # Exact integer-valued sums of dyadic fractions: no rounding.
            y = x.copy()
            for _ in range(n):
                y = np.cumsum(y)
            y = y[::r]
            for _ in range(n):
                y = y - np.concatenate([np.zeros(m), y[:-m]])
            x = y * st["scale"]
        else:
            x = signal.lfilter(np.array(st["taps"]), [1.0], x)[:: st["r"]]
    outputs.append([float(v) for v in x])

with open("testdata/fixed/runcodes_scipy.json", "w") as f:
    json.dump({"scipy": scipy.__version__, "numpy": np.__version__, "outputs": outputs}, f)
    f.write("\n")
