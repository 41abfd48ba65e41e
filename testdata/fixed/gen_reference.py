#!/usr/bin/python3
"""Reference data for stepdown/chain/fixed, made with SciPy (run with Debian's
/usr/bin/python3). Writes reference.json next to this script.

For each filter: taps from scipy.signal.remez, the taps quantised to `bits`
by the package's documented convention (scale 2^frac, frac the largest such
that every rounded |tap| <= 2^(bits-1)-1, round half away from zero), and
|H(f)| of the quantised taps from scipy.signal.freqz at the listed
frequencies."""
import json, math, os
import numpy as np
import scipy
from scipy import signal

def quantise(h, bits):
    m = float(np.max(np.abs(h)))
    _, e = math.frexp(m)           # m in [2^(e-1), 2^e)
    frac = bits - 1 - e
    lim = 2 ** (bits - 1) - 1
    rnd = lambda x: math.floor(abs(x) + 0.5) * (1 if x >= 0 else -1)
    while rnd(m * 2 ** frac) > lim:
        frac -= 1
    return [int(rnd(v * 2 ** frac)) for v in h], frac

filters = []
# Lowpass decimate-by-4 stage at 1 MHz: passband 0-50 kHz, stopband 200-500 kHz.
cases = [
    dict(name="lowpass63", n=63, rate=1e6, bands=[0, 50e3, 200e3, 500e3], desired=[1, 0], weight=[1, 10], bits=[10, 14, 18]),
    dict(name="lowpass40", n=40, rate=48e3, bands=[0, 4e3, 8e3, 24e3], desired=[1, 0], weight=[1, 1], bits=[8, 12, 16]),
]
for c in cases:
    h = signal.remez(c["n"], c["bands"], c["desired"], weight=c["weight"], fs=c["rate"])
    freqs = list(np.linspace(0, c["rate"] / 2, 41))
    q = []
    for b in c["bits"]:
        ints, frac = quantise(h, b)
        hq = np.array(ints, dtype=float) * 2.0 ** (-frac)
        _, H = signal.freqz(hq, worN=np.array(freqs), fs=c["rate"])
        q.append(dict(bits=b, frac=frac, ints=ints, mag=[float(abs(v)) for v in H]))
    filters.append(dict(name=c["name"], rate=c["rate"], bands=c["bands"], desired=c["desired"],
                        weight=c["weight"], taps=[float(v) for v in h], freqs=[float(f) for f in freqs], quantised=q))

out = dict(generator="testdata/fixed/gen_reference.py", scipy=scipy.__version__, numpy=np.__version__, filters=filters)
with open(os.path.join(os.path.dirname(os.path.abspath(__file__)), "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
