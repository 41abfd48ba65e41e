#!/usr/bin/python3
"""recompute.py -- independent re-computation of the figures in stepdown's report.json.

WHAT THIS IS
    A reviewer's check, written without using or reading stepdown's Go code.
    It takes only what report.json states (stage kinds, rates, CIC order /
    delay / decimation, FIR and half-band float taps `coefficients`, the
    rounded taps `coefficients_int` x 2^-coefficient_frac, CIC register widths)
    and recomputes, with NumPy and SciPy only, for every chain on the front:

    1. alias rejection   = -20 log10( max |H(g)| / |H(0)| ) over
                           g in [k Fout - fa, k Fout + fa], k >= 1, g <= Fin/2
       passband ripple   = 20 log10( max |H| / min |H| ) over [0, fp]
       where H is the cascade (product of |H_i(g)|, each stage evaluated at its
       own input rate F_i):
           CIC : |sin(pi g R M / F_i) / (R M sin(pi g / F_i))|^N
           FIR : |sum_n h[n] exp(-j 2 pi n g / F_i)|
       on a dense grid (>= 32 points per ripple of the finest stage: F_i/taps
       for a FIR, F_i/(R M) for a CIC) followed by a bounded scalar
       maximisation/minimisation (scipy.optimize.minimize_scalar) around every
       local extremum within 1 dB of the worst one. Done for the float taps
       (vs alias_rejection_db, passband_ripple_db) and for the rounded taps
       (vs quantised_alias_rejection_db, quantised_passband_ripple_db).
       Every value found here is the response at a real frequency, so a
       reported figure BETTER than ours (rejection higher, ripple lower) is a
       certain OPTIMISTIC error; a reported figure worse than ours is
       pessimism (or a peak our search missed).
    2. meets_targets / float_meets_targets against our own figures:
       rejection >= target - 0.01 dB and ripple <= budget + 1e-4 dB, on rounded
       AND float taps when a coefficient width (or "auto") is set.
    3. dc_gain_db: CIC (RM)^N / 2^(register_bits[0] - input_bits); FIR
       sum(coefficients_int) 2^-coefficient_frac; the chain's is the product;
       with unity_gain it must be within 0.01 dB of 0.
    4. (--sim) time domain: the float cascade simulated with scipy.signal.lfilter
       plus downsampling (a CIC as its equivalent FIR: boxcar of length R M
       convolved N times, unit DC gain) on complex tones at 0 Hz, at
       worst_alias_hz and in the passband; the measured output amplitude ratios
       are compared with the reported rejection and with |H| computed here.

    It never imports or runs stepdown; exit status 1 when it has findings.
    run.sh (beside it) builds stepdown, makes the reports from specs/ and runs it. Usage:
        /usr/bin/python3 recompute.py [--sim] [--density=N] report.json [report.json ...]
    (--density: grid points per ripple of the finest stage, default 32)
"""
import json
import math
import sys

import numpy as np
import scipy
from scipy import signal
from scipy.optimize import minimize_scalar

REJ_TOL_CLAIM = 0.01     # dB: the brief's "at most 0.01 dB pessimistic"
REJ_TOL_README = 0.002   # dB: README's claim for rejection
RIP_TOL_README = 2e-5    # dB: README's claim for ripple
OPT_EPS = 1e-6           # dB: numerical noise allowed before calling a figure optimistic
PTS_PER_RIPPLE = 32


# ---------------------------------------------------------------- responses
def cic_mag(g, F, R, M, N):
    """|H| of a unit-DC-gain CIC at input frequencies g (Hz), input rate F."""
    L = R * M
    x = np.pi * (np.asarray(g, dtype=float) / F)
    x = np.mod(x + np.pi / 2, np.pi) - np.pi / 2          # |H| has period pi in x
    den = L * np.sin(x)
    num = np.sin(L * x)
    small = np.abs(x) < 1e-13
    out = np.empty_like(x)
    out[~small] = np.abs(num[~small] / den[~small])
    out[small] = 1.0
    return out ** N


def fir_mag(g, F, h, chunk=2_000_000):
    """|DTFT of taps h| at g/F, evaluated directly (no interpolation)."""
    h = np.asarray(h, dtype=float)
    f = np.mod(np.asarray(g, dtype=float) / F, 1.0)
    n = np.arange(len(h))
    out = np.empty(f.shape)
    step = max(1, chunk // len(h))
    for i in range(0, len(f), step):
        ff = f[i:i + step]
        E = np.exp(-2j * np.pi * np.outer(ff, n))
        out[i:i + step] = np.abs(E @ h)
    return out


class Cascade:
    def __init__(self, stages, quantised):
        self.parts = []
        self.steps = []
        for s in stages:
            F = float(s["input_rate_hz"])
            if s["kind"] == "cic":
                R, M, N = int(s["decimation"]), int(s.get("cic_delay", 1) or 1), int(s["cic_order"])
                self.parts.append(("cic", F, (R, M, N)))
                self.steps.append(F / (R * M))
            else:
                if quantised:
                    frac = int(s.get("coefficient_frac", 0) or 0)
                    h = np.asarray(s["coefficients_int"], dtype=float) * 2.0 ** (-frac)
                else:
                    h = np.asarray(s["coefficients"], dtype=float)
                self.parts.append(("fir", F, h))
                self.steps.append(F / max(len(h), 1))
        self.step = min(self.steps) / PTS_PER_RIPPLE

    def mag(self, g):
        g = np.atleast_1d(np.asarray(g, dtype=float))
        out = np.ones_like(g)
        for kind, F, p in self.parts:
            if kind == "cic":
                out *= cic_mag(g, F, *p)
            else:
                out *= fir_mag(g, F, p)
        return out

    def mag1(self, g):
        return float(self.mag(np.array([g]))[0])


def band_grid(lo, hi, step, minpts=65):
    n = max(minpts, int(math.ceil((hi - lo) / step)) + 1)
    return np.linspace(lo, hi, n)


def local_ext(v, want_max):
    """indices of local maxima (or minima) of v, endpoints included."""
    w = v if want_max else -v
    if len(w) == 1:
        return np.array([0])
    left = np.concatenate(([True], w[1:] >= w[:-1]))
    right = np.concatenate((w[:-1] >= w[1:], [True]))
    return np.nonzero(left & right)[0]


def refine(cas, bands, want_max, within_db=1.0, cap=20000):
    """max (or min) of |H| over the union of [lo, hi] bands: grid + local refinement."""
    grids = [band_grid(lo, hi, cas.step) for lo, hi in bands]
    cand = []   # (value, g_prev, g, g_next)
    best = None
    for g in grids:
        v = cas.mag(g)
        idx = local_ext(v, want_max)
        for i in idx:
            cand.append((v[i], g[max(i - 1, 0)], g[i], g[min(i + 1, len(g) - 1)]))
    vals = np.array([c[0] for c in cand])
    best = vals.max() if want_max else vals.min()
    fac = 10 ** (-within_db / 20) if want_max else 10 ** (within_db / 20)
    keep = [c for c in cand if (c[0] >= best * fac if want_max else c[0] <= best * fac)]
    keep.sort(key=lambda c: -c[0] if want_max else c[0])
    keep = keep[:cap]
    best_g = keep[0][2]
    for v0, a, g0, b in keep:
        if b > a:
            sgn = -1.0 if want_max else 1.0
            r = minimize_scalar(lambda x: sgn * cas.mag1(x), bounds=(a, b), method="bounded",
                                options={"xatol": max((b - a) * 1e-7, 1e-9)})
            val = sgn * r.fun
            if (want_max and val > best) or (not want_max and val < best):
                best, best_g = val, r.x
    return best, best_g, len(keep)


def passband_null(cas, fp):
    """A frequency in [0, fp] where |H| is exactly 0, or None.

    A minimiser only gets close to a null, so exact zeros are found from sign
    changes: of the zero-phase amplitude of a (anti)symmetric FIR, and from
    the first null F/(R M) of a CIC."""
    g = band_grid(0.0, fp, cas.step / 4, minpts=4097)
    for kind, F, p in cas.parts:
        if kind == "cic":
            R, M, N = p
            if F / (R * M) <= fp:
                return F / (R * M)
            continue
        h = p
        if np.allclose(h, h[::-1], rtol=0, atol=0):
            sym = 1
        elif np.allclose(h, -h[::-1], rtol=0, atol=0):
            sym = -1
        else:
            continue
        f = g / F
        n = np.arange(len(h))
        z = np.exp(-2j * np.pi * np.outer(f, n)) @ h * np.exp(1j * np.pi * f * (len(h) - 1))
        A = z.real if sym == 1 else z.imag
        sc = np.nonzero(np.sign(A[1:]) * np.sign(A[:-1]) < 0)[0]
        if len(sc):
            return float(g[sc[0]])
    return None


def figures(cas, fin, fout, fa, fp):
    h0 = cas.mag1(0.0)
    bands = []
    k = 1
    while k * fout - fa <= fin / 2:
        bands.append((k * fout - fa, min(k * fout + fa, fin / 2)))
        k += 1
    amax, gmax, n1 = refine(cas, bands, True)
    rej = -20 * math.log10(amax / h0)
    pmax, _, _ = refine(cas, [(0.0, fp)], True)
    pmin, _, _ = refine(cas, [(0.0, fp)], False)
    cas.null = passband_null(cas, fp)
    if cas.null is not None:
        pmin = 0.0                      # an exact zero of |H| inside [0, fp]
    rip = 20 * math.log10(pmax / pmin) if pmin > 0 else math.inf
    return rej, rip, gmax, h0, len(bands)


# ---------------------------------------------------------------- dc gain
def dc_gain(stages):
    tot = 1.0
    per = []
    for s in stages:
        if s["kind"] == "cic":
            R, M, N = int(s["decimation"]), int(s.get("cic_delay", 1) or 1), int(s["cic_order"])
            gval = float((R * M) ** N) / 2.0 ** (int(s["register_bits"][0]) - int(s["input_bits"]))
        else:
            frac = int(s.get("coefficient_frac", 0) or 0)
            gval = sum(int(c) for c in s["coefficients_int"]) * 2.0 ** (-frac)
        per.append(20 * math.log10(abs(gval)))
        tot *= gval
    return 20 * math.log10(abs(tot)), per


# ---------------------------------------------------------------- time domain
def stage_fir(s):
    if s["kind"] == "cic":
        R, M, N = int(s["decimation"]), int(s.get("cic_delay", 1) or 1), int(s["cic_order"])
        h = np.ones(1)
        box = np.ones(R * M) / (R * M)
        for _ in range(N):
            h = np.convolve(h, box)
        return h
    return np.asarray(s["coefficients"], dtype=float)


def simulate(stages, fin, freqs, nout=256):
    firs = [(stage_fir(s), int(s["decimation"])) for s in stages]
    D = int(np.prod([d for _, d in firs]))
    # transient: every stage's length at its own rate, counted in input samples
    trans, scale = 0, 1
    for h, d in firs:
        trans += (len(h) - 1) * scale
        scale *= d
    skip = trans // D + 2
    nin = (nout + skip) * D
    n = np.arange(nin)
    res = {}
    for f in freqs:
        # exact phase: reduce f/fin before multiplying by n
        x = np.exp(2j * np.pi * np.mod(np.mod(f / fin, 1.0) * n, 1.0))
        y = x
        for h, d in firs:
            y = signal.lfilter(h, [1.0], y)[::d]
        y = y[skip:skip + nout]
        m = np.arange(skip, skip + nout)
        ref = np.exp(2j * np.pi * np.mod(np.mod(f / fin, 1.0) * D * m, 1.0))
        a = np.vdot(ref, y) / nout              # least-squares complex amplitude
        resid = np.linalg.norm(y - a * ref) / max(np.linalg.norm(y), 1e-300)
        res[f] = (abs(a), resid)
    return res


# ---------------------------------------------------------------- main
class Worst:
    def __init__(self):
        self.d = {}

    def add(self, key, val, where):
        cur = self.d.get(key)
        if cur is None or val > cur[0]:
            self.d[key] = (val, where)


def main(argv):
    global PTS_PER_RIPPLE
    sim = "--sim" in argv
    for a in argv:
        if a.startswith("--density="):
            PTS_PER_RIPPLE = int(a.split("=", 1)[1])
    paths = [a for a in argv if not a.startswith("--")]
    print(f"SciPy {scipy.__version__}, NumPy {np.__version__}")
    print(f"grid density {PTS_PER_RIPPLE} points per ripple of the finest stage")
    print(__doc__.split("WHAT THIS IS")[0].strip() or "recompute.py")
    glob = Worst()
    failures = []
    for path in paths:
        r = json.load(open(path))
        sp = r["spec"]
        fin, fout = float(sp["input_rate_hz"]), float(sp["output_rate_hz"])
        fa, fp = float(sp["protected_hz"]), float(sp["passband_hz"])
        tgt, bud = float(sp["rejection_db"]), float(sp["ripple_db"])
        words = sp.get("words", {})
        mode = words.get("coefficients_mode", "float")
        unity = bool(words.get("unity_gain", False))
        print()
        print(f"=== {path}  [{r.get('command')}]")
        print(f"    {fin:g} Hz -> {fout:g} Hz (D={sp['decimation']}), {sp['signal']}; fp={fp:g} fa={fa:g}; "
              f"ripple {bud:g} dB, rejection {tgt:g} dB; coefficients {mode}"
              f"{' (' + str(words.get('coefficients')) + ' bits)' if mode == 'fixed' else ''}, "
              f"input {words.get('input')} bits, unity_gain {unity}")
        loc = Worst()
        hdr = ("    chain                          | rej rep   rej ours  d(rep-ours) | rip rep   rip ours  d(ours-rep)"
               " | qrej rep  qrej ours d        | qrip rep  qrip ours d         | dc rep   dc ours | meets")
        print(hdr)
        for ci, c in enumerate(r["front"]):
            note = []
            st = c["stages"]
            name = c["notation"]
            tag = f"{path}#{ci + 1} {name}"
            fc = Cascade(st, quantised=False)
            frej, frip, fg, _, nb = figures(fc, fin, fout, fa, fp)
            has_q = all(s["kind"] == "cic" or "coefficients_int" in s for s in st)
            if has_q:
                qc = Cascade(st, quantised=True)
                qrej, qrip, qg, _, _ = figures(qc, fin, fout, fa, fp)
            rr, rp = c["alias_rejection_db"], c["passband_ripple_db"]
            d_rej = rr - frej            # > 0: report optimistic
            d_rip = frip - rp            # > 0: report optimistic
            for key, d in (("alias_rejection_db", d_rej), ("passband_ripple_db", d_rip)):
                for wk in (loc, glob):
                    wk.add(key + " optimistic", d, tag)
                    wk.add(key + " pessimistic", -d, tag)
            line = f"    {name:30s} | {rr:8.4f} {frej:9.4f} {d_rej:+10.2e} | {rp:8.5f} {frip:9.5f} {d_rip:+10.2e}"
            if has_q:
                qr, qp = c["quantised_alias_rejection_db"], c["quantised_passband_ripple_db"]
                dq_rej = qr - qrej
                dq_rip = qrip - qp
                # stepdown caps a figure at 300 dB (chain.MaxFigureDB) and the
                # terminal writes such a ripple as "null in passband": an
                # unbounded true ripple reported at the cap is not optimistic.
                if math.isinf(qrip) and qp >= 300:
                    dq_rip = 0.0
                for key, d in (("quantised_alias_rejection_db", dq_rej), ("quantised_passband_ripple_db", dq_rip)):
                    for wk in (loc, glob):
                        wk.add(key + " optimistic", d, tag)
                        wk.add(key + " pessimistic", -d, tag)
                line += f" | {qr:8.4f} {qrej:9.4f} {dq_rej:+9.2e} | {qp:8.5f} {qrip:9.5f} {dq_rip:+10.2e}"
            else:
                line += " | (no rounded taps in report)" + " " * 26
            # worst_alias_hz is a frequency where the float response should reach the reported figure
            wa = c.get("worst_alias_hz")
            if wa is not None:
                at = -20 * math.log10(fc.mag1(wa) / fc.mag1(0.0))
                if abs(at - rr) > 0.01:
                    note.append(f"|H(worst_alias_hz={wa:g})| is {at:.4f} dB down, report says {rr:.4f} dB "
                                f"(our worst is at {fg:.6g} Hz)")
            # dc gain
            try:
                dcg, per = dc_gain(st)
                dr = c["dc_gain_db"]
                line += f" | {dr:+7.3f} {dcg:+7.3f}"
                glob.add("dc_gain_db |diff|", abs(dr - dcg), tag)
                loc.add("dc_gain_db |diff|", abs(dr - dcg), tag)
                if abs(dr - dcg) > 0.01:
                    note.append(f"dc_gain_db {dr:.4f} vs recomputed {dcg:.4f}")
                for i, (s, pg) in enumerate(zip(st, per)):
                    if abs(s.get("dc_gain_db", pg) - pg) > 0.01:
                        note.append(f"stage {i + 1} dc_gain_db {s['dc_gain_db']:.4f} vs recomputed {pg:.4f}")
                if unity and abs(dcg) > 0.01 and not c.get("dc_gain_note"):
                    note.append(f"unity_gain set but chain gain is {dcg:.4f} dB")
            except (KeyError, ValueError) as e:
                line += f" | dc: missing {e}"
            # verdicts
            fmeets = frej >= tgt - 0.01 and frip <= bud + 1e-4
            if mode in ("fixed", "auto") and has_q:
                qmeets = qrej >= tgt - 0.01 and qrip <= bud + 1e-4
                want = fmeets and qmeets
                basis = "rounded taps"
            else:
                want = fmeets
                basis = "float taps"
            got = c["meets_targets"]
            line += f" | {'yes' if got else 'NO '}"
            if got != want:
                note.append(f"meets_targets={got} but recomputed figures say {want} "
                            f"(float {frej:.4f} dB/{frip:.5f} dB"
                            + (f", rounded {qrej:.4f} dB/{qrip:.5f} dB" if has_q else "") + ")")
            if c.get("float_meets_targets", fmeets) != fmeets:
                note.append(f"float_meets_targets={c.get('float_meets_targets')} but float figures say {fmeets}")
            if c.get("verdict_basis") not in (None, basis):
                note.append(f"verdict_basis {c.get('verdict_basis')!r}, expected {basis!r}")
            if r.get("command") == "plan" and mode == "fixed" and not got:
                note.append("plan with a fixed width kept a chain that misses on rounded taps")
            print(line)
            if fc.null is not None:
                note.append(f"float taps: |H| has an exact null in the passband near {fc.null:.6g} Hz; "
                            f"report says {rp:g} dB")
            for key, d in (("alias rejection", d_rej), ("passband ripple", d_rip)):
                if d > OPT_EPS:
                    note.append(f"OPTIMISTIC float {key} by {d:.3g} dB")
                elif -d > REJ_TOL_CLAIM:
                    note.append(f"pessimistic float {key} by {-d:.3g} dB (> 0.01 dB)")
            if has_q:
                if qc.null is not None and qp < 300:
                    note.append(f"rounded taps: |H| has an exact null in the passband near {qc.null:.6g} Hz "
                                f"(zero-phase amplitude changes sign), so the true ripple is infinite; "
                                f"report says {qp:g} dB")
                for key, d in (("alias rejection", dq_rej), ("passband ripple", dq_rip)):
                    if d > OPT_EPS:
                        note.append(f"OPTIMISTIC rounded {key} by {d:.3g} dB")
                    elif -d > REJ_TOL_CLAIM:
                        note.append(f"pessimistic rounded {key} by {-d:.3g} dB (> 0.01 dB)")
            if r.get("command") == "check":
                reason = str(r.get("reason", ""))
                says_meets = "meets the rejection target and the ripple budget" in reason
                if says_meets != bool(got):
                    note.append(f"check's reason says {reason!r} but meets_targets={got}")
            for n_ in note:
                print(f"      ! {n_}")
                failures.append(f"{tag}: {n_}")
            if sim and ci == r.get("recommended", 0):
                h0 = fc.mag1(0.0)
                ftone = fp * 0.61803
                res = simulate(st, fin, [0.0, float(wa), ftone])
                a0 = res[0.0][0]
                meas_rej = -20 * math.log10(res[float(wa)][0] / a0)
                meas_pb = 20 * math.log10(res[ftone][0] / a0)
                calc_pb = 20 * math.log10(fc.mag1(ftone) / h0)
                print(f"      time domain (lfilter + downsample, complex tones, unit-DC CIC):"
                      f" tone at worst_alias_hz {wa:g} Hz down {meas_rej:.4f} dB (report {rr:.4f} dB,"
                      f" diff {meas_rej - rr:+.2e});"
                      f" passband tone {ftone:.6g} Hz {meas_pb:+.5f} dB (|H| here {calc_pb:+.5f} dB,"
                      f" diff {meas_pb - calc_pb:+.2e}); fit residuals {max(v[1] for v in res.values()):.1e}")
                glob.add("time-domain |diff|", max(abs(meas_rej - rr), abs(meas_pb - calc_pb)), tag)
                if abs(meas_rej - rr) > 0.1 or abs(meas_pb - calc_pb) > 0.1:
                    failures.append(f"{tag}: time-domain disagreement")
        print("    worst differences in this report (dB; optimistic = report better than the response):")
        for k in sorted(loc.d):
            v, w = loc.d[k]
            print(f"      {k:45s} {v:+.3e}   ({w.split(' ', 1)[1]})")
    print()
    print("=== SUMMARY over all reports (dB; a positive 'optimistic' value is an error, "
          "'pessimistic' should be <= 0.01 (README: 0.002 rejection, 2e-5 ripple))")
    for k in sorted(glob.d):
        v, w = glob.d[k]
        print(f"  {k:45s} {v:+.3e}   {w}")
    print()
    print(f"=== {len(failures)} finding(s)")
    for f in failures:
        print("  - " + f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
