#!/usr/bin/python3
"""Golden data for package sigmadelta's tests, from SciPy.

Run from the repository root with Debian's interpreter:

    /usr/bin/python3 sigmadelta/testdata/gen_golden.py > sigmadelta/testdata/golden.json

- butter: the poles of scipy.signal.butter(order, 2 fc, 'high', output='zpk')
  (a digital Butterworth highpass, corner fc in cycles per sample), which
  the Go NTF's denominator must equal;
- freqz: |B(e^jw)/A(e^jw)| of given NTF polynomials by scipy.signal.freqz,
  against the Go NTF.Gain;
- welch: nothing here (the modulator is simulated in Go); the Go test
  compares its spectrum with the NTF itself.
"""
import json
import numpy as np
import scipy
import scipy.signal as sig

out = {"scipy": scipy.__version__, "numpy": np.__version__, "butter": [], "freqz": []}
for order, fc in [(1, 0.05), (2, 0.07), (3, 0.11), (4, 0.093), (5, 0.2), (8, 0.04)]:
    z, p, k = sig.butter(order, 2 * fc, btype="high", output="zpk")
    p = sorted(p, key=lambda c: (round(c.real, 12), c.imag))
    out["butter"].append({"order": order, "fc": fc,
                          "poles_re": [float(c.real) for c in p], "poles_im": [float(c.imag) for c in p]})
# NTF polynomials: (1 - z^-1)^2 over a Butterworth-like denominator, and
# a pair of zeros at +-0.01 with a third-order denominator.
cases = [
    ([1, -2, 1], [1, -1.2, 0.45]),
    (list(np.poly([1, np.exp(2j * np.pi * 0.01), np.exp(-2j * np.pi * 0.01)]).real),
     list(np.poly([0.6, 0.55 + 0.3j, 0.55 - 0.3j]).real)),
]
f = np.linspace(0, 0.5, 101)
for b, a in cases:
    _, h = sig.freqz(b, a, worN=2 * np.pi * f)
    out["freqz"].append({"b": [float(x) for x in b], "a": [float(x) for x in a],
                         "f": [float(x) for x in f], "mag": [float(abs(x)) for x in h]})
print(json.dumps(out, indent=1))
