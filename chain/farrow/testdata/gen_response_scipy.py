#!/usr/bin/python3
"""Reference H(nu) for chain/farrow's Response, by SciPy's adaptive
quadrature (scipy.integrate.quad with weight='cos'/'sin', QUADPACK's QAWO,
which is made for oscillatory integrands), one unit segment at a time.

Run with Debian's python3-scipy:  /usr/bin/python3 gen_response_scipy.py > response_scipy.json

The filters are invented: the cubic Lagrange table (nodes -1, 0, 1, 2) and a
degree-4, length-6 table of fixed pseudo-random numbers. The convention is
the package's: segment j (j = 0..N-1) covers tau in [N/2-1-j, N/2-j) with
h(tau) = sum_i coef[i][j] mu^i, mu = tau - (N/2-1-j);
H(nu) = integral h(tau) exp(-j 2 pi nu tau) dtau.
"""
import json
import math
import random

import scipy
from scipy import integrate

lagrange = [
    [0.0, 1.0, 0.0, 0.0],
    [-1.0 / 3, -0.5, 1.0, -1.0 / 6],
    [0.5, -1.0, 0.5, 0.0],
    [-1.0 / 6, 0.5, -0.5, 1.0 / 6],
]
rng = random.Random(20261202)
invented = [[round(rng.uniform(-1, 1), 6) for _ in range(6)] for _ in range(5)]

NUS = [0.0, 0.013, 0.25, 0.5, 1.3, 2.75, 17.7, 123.456, 1234.5, 98765.4321]


def response(coef, nu):
    n = len(coef[0])
    w = 2 * math.pi * nu
    re = im = 0.0
    for j in range(n):
        s = n // 2 - 1 - j

        def h(tau, j=j, s=s):
            mu = tau - s
            return sum(coef[i][j] * mu ** i for i in range(len(coef)))

        if w == 0:
            re += integrate.quad(h, s, s + 1, epsabs=1e-14, epsrel=1e-12)[0]
            continue
        c = integrate.quad(h, s, s + 1, weight="cos", wvar=w, epsabs=1e-14, epsrel=1e-12, limit=200)[0]
        si = integrate.quad(h, s, s + 1, weight="sin", wvar=w, epsabs=1e-14, epsrel=1e-12, limit=200)[0]
        re += c
        im -= si
    return re, im


out = {
    "generator": "gen_response_scipy.py, scipy " + scipy.__version__,
    "filters": [],
}
for name, coef in [("lagrange cubic", lagrange), ("invented degree 4 length 6", invented)]:
    rows = []
    for nu in NUS:
        re, im = response(coef, nu)
        rows.append({"nu": nu, "re": re, "im": im})
    out["filters"].append({"name": name, "coef": coef, "response": rows})
print(json.dumps(out, indent=1))
