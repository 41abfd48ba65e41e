#!/usr/bin/python3
"""Golden outputs of polyphase L/M stages for stepdown/chain tests.

Each case is an invented rate change up/down with a prototype lowpass
designed here (scipy.signal.remez or firwin) at up times the input rate, unit
gain at 0 Hz. The stage's output is scipy.signal.upfirdn(h * up, x, up, down):
zeros between the input samples, the prototype with gain up, every down-th
sample kept, cut to the samples whose time lies inside the input. Inputs are a seeded Gaussian noise and a
two-tone signal. Run with Debian's /usr/bin/python3 from the repository root:

    /usr/bin/python3 chain/testdata/fractional/gen_resample.py > chain/testdata/fractional/resample.json
"""
import json

import numpy as np
import scipy
from scipy import signal

rng = np.random.default_rng(1414)
cases = []
for up, down, n, kind in [(24, 25, 481, "remez"), (3, 2, 61, "firwin"), (5, 7, 95, "remez"),
                          (96, 125, 1153, "firwin"), (2, 3, 40, "firwin"), (7, 4, 127, "remez")]:
    cut = 0.5 / max(up, down)  # of the prototype's rate, up x input
    if kind == "remez":
        h = signal.remez(n, [0, 0.8 * cut, 1.2 * cut, 0.5], [1, 0], fs=1.0)
    else:
        h = signal.firwin(n, cut, fs=1.0)
    h = h / h.sum()
    sigs = []
    x = rng.standard_normal(400)
    t = np.arange(300)
    x2 = 0.7 * np.cos(2 * np.pi * 0.031 * t + 0.3) + 0.2 * np.sin(2 * np.pi * 0.37 * t)
    for name, xs in [("noise", x), ("tones", x2)]:
        nout = (len(xs) * up - 1) // down + 1
        y = signal.upfirdn(h * up, xs, up, down)[:nout]
        sigs.append({"name": name, "x": xs.tolist(), "y": y.tolist()})
    cases.append({"up": up, "down": down, "taps": h.tolist(), "signals": sigs})

json.dump({"scipy": scipy.__version__, "cases": cases}, __import__("sys").stdout, indent=None)
