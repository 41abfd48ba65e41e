#!/usr/bin/python3
"""Outside check of `stepdown design` (minimum-length search).

For seeded random invented specs:
  1. run `sd design ... --json`, read N and the taps;
  2. measure the taps independently (scipy.signal.freqz on >= 64 points per
     tap over [0, rate/2], band edges added, local refinement of the worst
     points by direct DTFT evaluation): peak-to-peak passband ripple
     20 log10(max|H|/min|H|) and attenuation -20 log10(max|H| in stopbands),
     relative to gain 1 (the tool's convention: chain.RippleToDev /
     RejectionToDev on deviations about gain 1 / 0);
  3. minimality: scipy.signal.remez at N-1 and N-2 with weights 1/dp, 1/ds,
     grid_density 48, maxiter 250; a shorter SciPy design meeting both targets
     within 1e-3 dB is a counterexample. As a side check, `sd design --taps
     N-1` is also asked whether it meets the targets.

Usage: /usr/bin/python3 lencheck.py [n_specs] [seed]
"""
import json
import os
import subprocess
import sys
import time
import warnings

import numpy as np
import scipy.signal as sig

SD = os.environ.get("STEPDOWN", "stepdown")  # the binary under test
RATE = 1.0e6
TOL_MEET = 1e-4    # tool's own taps vs its own targets
TOL_MIN = 1e-3     # SciPy shorter design "meets" targets within this
MAX_EST = 560      # keep estimated lengths under ~600


def r2dp(r):
    g = 10 ** (r / 20)
    return (g - 1) / (g + 1)


def a2ds(a):
    return 10 ** (-a / 20)


def est_len(dp, ds, tw):
    # Kaiser-style rough estimate, only used to keep lengths small.
    return (-20 * np.log10(np.sqrt(dp * ds)) - 13) / (14.6 * tw / RATE) + 1


def gen_spec(rng, i):
    while True:
        ripple = float(np.exp(rng.uniform(np.log(0.01), np.log(1.0))))
        atten = float(rng.uniform(40, 100))
        tw = float(rng.uniform(0.01, 0.10)) * RATE
        multi = (i % 3 == 2)
        fp = float(rng.uniform(0.02, 0.30)) * RATE
        fs = fp + tw
        if multi:
            w1 = float(rng.uniform(0.03, 0.12)) * RATE   # first stopband width
            gap = float(rng.uniform(0.02, 0.08)) * RATE  # don't-care gap
            a = fs + w1
            b = a + gap
            if b > 0.47 * RATE:
                continue
            stops = [(fs, a), (b, RATE / 2)]
        else:
            if fs > 0.48 * RATE:
                continue
            stops = [(fs, RATE / 2)]
        dp, ds = r2dp(ripple), a2ds(atten)
        if est_len(dp, ds, tw) > MAX_EST:
            continue
        # round edges to whole Hz so the CLI text is exact
        fp = round(fp)
        stops = [(round(lo), round(hi)) for lo, hi in stops]
        return dict(ripple=round(ripple, 4), atten=round(atten, 2), fp=fp,
                    stops=stops, multi=multi)


def sd_args(sp, taps=None):
    a = [SD, "design", "--rate", str(int(RATE)), "--pass", f"0:{sp['fp']}",
         "--ripple", repr(sp["ripple"]), "--atten", repr(sp["atten"]), "--json"]
    for lo, hi in sp["stops"]:
        a += ["--stop", f"{lo}:{hi}"]
    if taps is not None:
        a += ["--taps", str(taps)]
    return a


def dtft_mag(h, f):
    n = np.arange(len(h))
    w = 2 * np.pi * np.asarray(f) / RATE
    return np.abs(np.exp(-1j * np.outer(w, n)) @ h)


def refine(h, f0, lo, hi, step, want_max):
    """Dense local search around f0 within [lo, hi]; returns extreme |H|."""
    best = None
    a, b = max(lo, f0 - step), min(hi, f0 + step)
    for _ in range(3):
        f = np.linspace(a, b, 201)
        m = dtft_mag(h, f)
        k = int(np.argmax(m) if want_max else np.argmin(m))
        best = m[k] if best is None else (max(best, m[k]) if want_max else min(best, m[k]))
        d = (b - a) / 200
        a, b = max(lo, f[k] - 2 * d), min(hi, f[k] + 2 * d)
    return best


def measure(h, sp):
    h = np.asarray(h, float)
    npts = max(64 * len(h), 16384)
    # include_nyquist=True is NOT used: in SciPy 1.10 its FFT path returns
    # values for spacing pi/N against a frequency vector of spacing pi/(N-1)
    # (checked against direct DTFT). rate/2 is added below as a band edge.
    f, H = sig.freqz(h, 1, worN=npts, fs=RATE)
    m = np.abs(H)
    step = f[1] - f[0]
    bands = [(0.0, float(sp["fp"]), True)] + [(float(lo), float(hi), False) for lo, hi in sp["stops"]]
    pmax = pmin = None
    smax = 0.0
    for lo, hi, is_pass in bands:
        sel = (f >= lo) & (f <= hi)
        fb = np.concatenate([f[sel], [lo, hi]])
        mb = np.concatenate([m[sel], dtft_mag(h, [lo, hi])])
        cand = lambda idx: fb[idx]  # noqa: E731
        if is_pass:
            imax = np.argsort(-mb)[:8]
            imin = np.argsort(mb)[:8]
            vmax = max(mb.max(), max(refine(h, cand(i), lo, hi, step, True) for i in imax))
            vmin = min(mb.min(), min(refine(h, cand(i), lo, hi, step, False) for i in imin))
            pmax = vmax if pmax is None else max(pmax, vmax)
            pmin = vmin if pmin is None else min(pmin, vmin)
        else:
            imax = np.argsort(-mb)[:8]
            vmax = max(mb.max(), max(refine(h, cand(i), lo, hi, step, True) for i in imax))
            smax = max(smax, vmax)
    ripple = 20 * np.log10(pmax / pmin)
    atten = -20 * np.log10(smax) if smax > 0 else 400.0
    return float(ripple), float(atten)


def scipy_design(n, sp, gd=48):
    dp, ds = r2dp(sp["ripple"]), a2ds(sp["atten"])
    edges = [0, sp["fp"]]
    desired = [1]
    weight = [1 / dp]
    for lo, hi in sp["stops"]:
        edges += [lo, hi]
        desired.append(0)
        weight.append(1 / ds)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return sig.remez(n, edges, desired, weight=weight, fs=RATE,
                         grid_density=gd, maxiter=250)


def lp_bound(n, sp, density=16):
    """Optimal weighted Chebyshev error of a linear-phase length-n filter on a
    finite grid (weights 1/dp, 1/ds), by linear programming (HiGHS). A grid
    optimum is a LOWER bound on the continuous optimum, so a value > 1 proves
    no length-n linear-phase filter meets both targets (independent of any
    Remez convergence). Returns the optimum delta (<= 1 means grid-feasible)."""
    from scipy.optimize import linprog
    dp, ds = r2dp(sp["ripple"]), a2ds(sp["atten"])
    odd = n % 2 == 1
    M = (n + 1) // 2 if odd else n // 2
    bands = [(0.0, float(sp["fp"]), 1.0, 1 / dp)] + [(float(lo), float(hi), 0.0, 1 / ds) for lo, hi in sp["stops"]]
    rows, rhs = [], []
    for lo, hi, d, w in bands:
        k = max(20, int(np.ceil(density * M * (hi - lo) / (RATE / 2))))
        f = np.linspace(lo, hi, k)
        om = 2 * np.pi * f / RATE
        if odd:
            C = np.cos(np.outer(om, np.arange(M)))
        else:
            C = np.cos(np.outer(om, np.arange(M) + 0.5))
        # w(Cx - d) <= delta ; -w(Cx - d) <= delta
        rows.append(np.hstack([w * C, -np.ones((k, 1))]))
        rhs.append(np.full(k, w * d))
        rows.append(np.hstack([-w * C, -np.ones((k, 1))]))
        rhs.append(np.full(k, -w * d))
    A = np.vstack(rows)
    b = np.concatenate(rhs)
    c = np.zeros(M + 1)
    c[-1] = 1
    r = linprog(c, A_ub=A, b_ub=b, bounds=[(None, None)] * M + [(0, None)], method="highs")
    if r.status != 0:
        return None
    return float(r.x[-1])


def main():
    nspec = int(sys.argv[1]) if len(sys.argv) > 1 else 72
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 20240611
    rng = np.random.default_rng(seed)
    t0 = time.time()
    rows = []
    counts = dict(specs=0, met=0, missed=0, json_disagree=0, sd_not_meets_flag=0,
                  counterexamples=0, scipy_skipped=0, sd_shorter_meets=0, sd_errors=0, scipy_garbage=0, lp_proved_infeasible=0, lp_feasible_shorter=0, lp_failed=0)
    closest = []
    lpmin = []
    worst_opt = (0.0, None)
    for i in range(nspec):
        sp = gen_spec(rng, i)
        counts["specs"] += 1
        p = subprocess.run(sd_args(sp), capture_output=True, text=True)
        if p.returncode != 0:
            counts["sd_errors"] += 1
            print(f"[{i}] SD ERROR {sp}: {p.stderr.strip()[:300]}")
            continue
        d = json.loads(p.stdout)
        h = d["coefficients"]
        N = d["taps"]
        assert N == len(h)
        rip, att = measure(h, sp)
        meets = rip <= sp["ripple"] + TOL_MEET and att >= sp["atten"] - TOL_MEET
        counts["met" if meets else "missed"] += 1
        if not d["meets_targets"] or not d["converged"]:
            counts["sd_not_meets_flag"] += 1
        # tool's stated figures vs our dense measure (stated should not be optimistic)
        jd = (d["passband_ripple_db"] < rip - 1e-4) or (d["stopband_atten_db"] > att + 1e-4)
        if jd:
            counts["json_disagree"] += 1
        opt = max(rip - d["passband_ripple_db"], d["stopband_atten_db"] - att)
        if opt > worst_opt[0]:
            worst_opt = (opt, i)
        row = dict(i=i, spec=sp, N=N, meas_ripple=rip, meas_atten=att,
                   json_ripple=d["passband_ripple_db"], json_atten=d["stopband_atten_db"],
                   json_meets=d["meets_targets"], converged=d["converged"], meets=meets,
                   json_optimistic=jd, shorter=[])
        # side check: the tool itself at N-1
        q = subprocess.run(sd_args(sp, N - 1), capture_output=True, text=True)
        if q.returncode == 0:
            dq = json.loads(q.stdout)
            r1, a1 = measure(dq["coefficients"], sp)
            row["sd_N-1"] = dict(json_meets=dq["meets_targets"], ripple=r1, atten=a1)
            if r1 <= sp["ripple"] + TOL_MIN and a1 >= sp["atten"] - TOL_MIN:
                counts["sd_shorter_meets"] += 1
        for n in (N - 1, N - 2):
            # SciPy's remez sometimes returns a diverged design without an
            # error (seen with a don't-care gap); retry other grid densities.
            got = None
            err = ""
            for gd in (48, 32, 64, 24, 16):
                try:
                    hs = scipy_design(n, sp, gd)
                except (ValueError, RuntimeWarning, Warning) as e:
                    err = str(e)[:120]
                    continue
                r2, a2 = measure(hs, sp)
                got = (r2, a2, gd)
                if not (r2 > 10 * sp["ripple"] + 1 or a2 < 0.5 * sp["atten"]):
                    break
            if got is None:
                counts["scipy_skipped"] += 1
                row["shorter"].append(dict(n=n, skipped=err))
                continue
            r2, a2, gd = got
            if r2 > 10 * sp["ripple"] + 1 or a2 < 0.5 * sp["atten"]:
                # SciPy returned without error but far from a levelled design
                counts["scipy_garbage"] += 1
                row["shorter"].append(dict(n=n, garbage=True, ripple=r2, atten=a2))
                continue
            ok = r2 <= sp["ripple"] + TOL_MIN and a2 >= sp["atten"] - TOL_MIN
            # margin in dB of the worse target (positive = meets)
            marg = min(sp["ripple"] - r2, a2 - sp["atten"])
            closest.append((marg, i, n))
            row["shorter"].append(dict(n=n, ripple=r2, atten=a2, meets=ok, margin_db=marg, grid_density=gd))
            if ok:
                counts["counterexamples"] += 1
        # rigorous lower bound by LP at N-1 and N-2 (shorter lengths are nested
        # inside these two: same-parity linear-phase filters pad with zeros)
        row["lp_delta"] = {}
        for n in (N - 1, N - 2):
            dl = lp_bound(n, sp)
            row["lp_delta"][n] = dl
            if dl is None:
                counts["lp_failed"] += 1
            elif dl <= 1 + 1e-6:
                counts["lp_feasible_shorter"] += 1
            else:
                counts["lp_proved_infeasible"] += 1
            lpmin.append((dl if dl is not None else 99, i, n))
        rows.append(row)
        flag = "" if meets else "  <-- MISSES TARGETS"
        ce = [s for s in row["shorter"] if s.get("meets")]
        if any(s.get("garbage") for s in row["shorter"]):
            flag += "  (SciPy diverged silently at a shorter length)"
        if ce:
            flag += f"  <-- COUNTEREXAMPLE {[(s['n'], round(s['ripple'], 5), round(s['atten'], 4)) for s in ce]}"
        if jd:
            flag += "  <-- JSON figures optimistic"
        sh = " ".join(f"n={s['n']}:" + (("GARBAGE " if s.get("garbage") else "") + f"r={s['ripple']:.4f},a={s['atten']:.3f}" if 'ripple' in s else "skip")
                      for s in row["shorter"])
        sh += " | LP delta " + " ".join(f"{k}:{v:.4f}" if v is not None else f"{k}:fail" for k, v in row["lp_delta"].items())
        print(f"[{i:3d}] {'multi' if sp['multi'] else 'lp   '} r={sp['ripple']:<7} A={sp['atten']:<6} "
              f"fp={sp['fp']} stops={sp['stops']} N={N} meas r={rip:.5f} A={att:.4f} "
              f"(json r={d['passband_ripple_db']:.5f} A={d['stopband_atten_db']:.4f}) | {sh}{flag}",
              flush=True)
    closest.sort(reverse=True)
    print("\nclosest shorter SciPy designs (margin dB of worse target; >0 would meet):")
    for m, i, n in closest[:8]:
        print(f"  spec {i} n={n}: margin {m:+.5f} dB")
    lpmin.sort()
    print("smallest LP lower bounds at shorter lengths (>1 proves infeasible):")
    for dl, i, n in lpmin[:8]:
        print(f"  spec {i} n={n}: delta {dl:.5f}")
    print(f"largest optimism of JSON figures vs dense measure: {worst_opt[0]:.6f} dB (spec {worst_opt[1]})")
    print("\nsummary:", json.dumps(counts))
    print(f"elapsed {time.time() - t0:.1f} s")
    with open(f"results_seed{seed}.json", "w") as fh:
        json.dump(dict(seed=seed, counts=counts, rows=rows), fh, indent=1)


if __name__ == "__main__":
    main()
