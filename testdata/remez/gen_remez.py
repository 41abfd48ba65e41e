#!/usr/bin/python3
"""Generate SciPy reference designs for stepdown's Remez engine.

Run with Debian's own interpreter (it has SciPy 1.10):

    /usr/bin/python3 testdata/remez/gen_remez.py > testdata/remez/scipy_remez.json

Each case is designed with scipy.signal.remez (band edges in Hz with fs=,
grid_density=16, maxiter=250). A case is kept only when SciPy reports no
warning. For each case the script also records SciPy's per-band maximum
|A(f) - D| measured on a dense FFT grid (2**18 points over [0, fs/2]), so the
Go tests can check that stepdown is never worse.
"""
import json
import sys
import warnings

import numpy as np
import scipy
from scipy import signal

# (name, numtaps, fs, band edges in Hz, desired per band, weight per band)
CASES = [
    ("lp31", 31, 1000.0, [0, 100, 150, 500], [1, 0], [1, 1]),
    ("lp32w10", 32, 1000.0, [0, 100, 150, 500], [1, 0], [1, 10]),
    ("bp51", 51, 48000.0, [0, 4000, 6000, 12000, 14000, 24000], [0, 1, 0], [10, 1, 10]),
    ("lp64w2", 64, 2.0, [0, 0.3, 0.4, 1.0], [1, 0], [2, 1]),
    ("hp101", 101, 8000.0, [0, 1500, 2000, 4000], [0, 1], [1, 1]),
    ("lp127w100", 127, 1.0, [0, 0.1, 0.12, 0.5], [1, 0], [1, 100]),
    ("step128", 128, 1.0, [0, 0.1, 0.12, 0.3, 0.35, 0.5], [1, 0.5, 0], [1, 3, 10]),
    ("lp201", 201, 100e6, [0, 10e6, 12.5e6, 50e6], [1, 0], [1, 30]),
    ("lp256w10", 256, 1.0, [0, 0.2, 0.21, 0.5], [1, 0], [1, 10]),
    ("bs25", 25, 1.0, [0, 0.1, 0.2, 0.3, 0.4, 0.5], [1, 0, 1], [1, 5, 1]),
    ("lp400", 400, 10000.0, [0, 1000, 1100, 5000], [1, 0], [1, 10]),
]


def dense_devs(h, fs, edges, desired):
    n = 1 << 18
    w, H = signal.freqz(h, worN=n + 1, include_nyquist=True)
    f = w / (2 * np.pi) * fs
    mag = np.abs(H)
    devs = []
    for b in range(len(desired)):
        lo, hi = edges[2 * b], edges[2 * b + 1]
        sel = (f >= lo) & (f <= hi)
        devs.append(float(np.max(np.abs(mag[sel] - desired[b]))))
    return devs


def main():
    out = {
        "generator": "testdata/remez/gen_remez.py",
        "library": "scipy.signal.remez",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "grid_density": 16,
        "cases": [],
    }
    for name, n, fs, edges, desired, weight in CASES:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            try:
                h = signal.remez(n, edges, desired, weight=weight, fs=fs,
                                 grid_density=16, maxiter=250)
            except Exception as exc:  # SciPy did not converge: skip
                print("skip", name, exc, file=sys.stderr)
                continue
        out["cases"].append({
            "name": name,
            "numtaps": n,
            "fs": fs,
            "edges": edges,
            "desired": desired,
            "weight": weight,
            "taps": [float(v) for v in h],
            "dense_deviation": dense_devs(h, fs, edges, desired),
        })
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
