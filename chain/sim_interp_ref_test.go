package chain

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"sort"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

// This file checks Analyze on interpolation chains against a brute-force
// reference that shares no code with it or with Chain.Gain: the whole
// chain's impulse response at its output (high) rate, built by passing a
// unit impulse through the real structure (each stage in signal order:
// zero stuffing by its factor, then its taps times the factor; a CIC's taps
// from its combs, stuffing and integrators run on an impulse), and that
// response's DTFT on a dense FFT grid with the extrema refined by golden
// section on a direct DTFT sum.

// interpRef is an interpolation chain's impulse response h at its output
// rate fOut (DC gain about L: each stage carries the factor that makes up
// for its zero stuffing, and stuffing the impulse itself divides by L).
type interpRef struct {
	h    []float64
	fOut float64
}

// upFilter is x stuffed with l-1 zeros after every sample and convolved with
// h, in full.
func upFilter(x []float64, l int, h []float64) []float64 {
	y := make([]float64, (len(x)-1)*l+len(h))
	for n, v := range x {
		if v == 0 {
			continue
		}
		for j, hv := range h {
			y[n*l+j] += v * hv
		}
	}
	return y
}

// cicImpulse runs a unit impulse through a CIC interpolator's structure in
// float64: N combs of delay M at the input rate, stuffing by R, N
// integrators at the output rate (every value an integer below 2^53 for the
// orders and factors the tests use, so exact), scaled by R/(RM)^N.
func cicImpulse(n, m, r int) []float64 {
	c := make([]float64, n*m+1)
	c[0] = 1
	for j := 0; j < n; j++ {
		for k := len(c) - 1; k >= m; k-- {
			c[k] -= c[k-m]
		}
	}
	h := make([]float64, n*(r*m-1)+1)
	for k, v := range c {
		if k*r < len(h) {
			h[k*r] = v
		}
	}
	for j := 0; j < n; j++ {
		for k := 1; k < len(h); k++ {
			h[k] += h[k-1]
		}
	}
	s := float64(r) / math.Pow(float64(r*m), float64(n))
	for k := range h {
		h[k] *= s
	}
	return h
}

// newInterpRef builds c's impulse response: Stages from the last (the
// channel side) to the first, as the signal passes them.
func newInterpRef(c *Chain) interpRef {
	x := []float64{1}
	for i := len(c.Stages) - 1; i >= 0; i-- {
		switch st := c.Stages[i].(type) {
		case FIRStage:
			h := make([]float64, len(st.Taps))
			for k, v := range st.Taps {
				h[k] = v * float64(st.R)
			}
			x = upFilter(x, st.R, h)
		case CICStage:
			x = upFilter(x, st.R, cicImpulse(st.N, st.M, st.R))
		default:
			panic("newInterpRef: a stage of an unknown kind")
		}
	}
	return interpRef{h: x, fOut: c.InputRate}
}

// at is |H(f)| by a direct DTFT sum; the phasor is recomputed exactly every
// 16 taps.
func (r interpRef) at(f float64) float64 {
	x := math.Mod(math.Abs(f)/r.fOut, 1)
	var re, im float64
	sw, cw := math.Sincos(2 * math.Pi * x)
	for n0 := 0; n0 < len(r.h); n0 += 16 {
		s, c := math.Sincos(2 * math.Pi * math.Mod(x*float64(n0), 1))
		for n := n0; n < min(n0+16, len(r.h)); n++ {
			re += r.h[n] * c
			im -= r.h[n] * s
			c, s = c*cw-s*sw, s*cw+c*sw
		}
	}
	return math.Hypot(re, im)
}

// grid returns |H| at j fOut / p, j = 0..p/2, by an FFT of length p >=
// len(h).
func (r interpRef) grid(p int) []float64 {
	seq := make([]float64, p)
	copy(seq, r.h)
	coef := fourier.NewFFT(p).Coefficients(nil, seq)
	out := make([]float64, p/2+1)
	for j := range out {
		out[j] = cmplx.Abs(coef[j])
	}
	return out
}

// goldenAt maximises sign*f on [a, b] (golden section, 60 steps) and
// returns the point and f there.
func goldenAt(f func(float64) float64, a, b, sign float64) (float64, float64) {
	const g = 0.6180339887498949
	x1, x2 := b-g*(b-a), a+g*(b-a)
	f1, f2 := f(x1), f(x2)
	for it := 0; it < 60; it++ {
		if sign*f1 > sign*f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - g*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + g*(b-a)
			f2 = f(x2)
		}
	}
	if sign*f1 > sign*f2 {
		return x1, f1
	}
	return x2, f2
}

// extreme returns the largest (sign > 0) or smallest (sign < 0) |H| over
// the bands and where it is: band ends exactly, the grid's local extrema
// within 1 dB of the most extreme (at most 24) refined by golden section on
// [f - step, f + step] within the band. A band spanning fewer than 64 grid
// steps is sampled directly instead, at 2m + 8 points for m steps.
func (r interpRef) extreme(g []float64, step float64, bands []Interval, sign float64) (at, v float64) {
	type cand struct{ f, v, h, lo, hi float64 }
	var cs []cand
	v = math.Inf(int(-sign))
	for _, b := range bands {
		for _, f := range []float64{b.Lo, b.Hi} {
			if u := r.at(f); sign*u > sign*v {
				at, v = f, u
			}
		}
		var fs, vs []float64
		h := step
		j0, j1 := int(math.Ceil(b.Lo/step)), int(math.Floor(b.Hi/step))
		if j1-j0 < 64 {
			m := 2*max(j1-j0, 0) + 8
			h = (b.Hi - b.Lo) / float64(m)
			for i := 0; i <= m; i++ {
				f := b.Lo + float64(i)*h
				fs, vs = append(fs, f), append(vs, r.at(f))
			}
		} else {
			for j := max(j0-1, 0); j <= j1+1 && j < len(g); j++ {
				fs, vs = append(fs, float64(j)*step), append(vs, g[j])
			}
		}
		for i := 1; i+1 < len(vs); i++ {
			if sign*vs[i] >= sign*vs[i-1] && sign*vs[i] >= sign*vs[i+1] && fs[i] >= b.Lo && fs[i] <= b.Hi {
				cs = append(cs, cand{fs[i], vs[i], h, b.Lo, b.Hi})
			}
		}
	}
	sort.Slice(cs, func(i, j int) bool { return sign*cs[i].v > sign*cs[j].v })
	win := math.Pow(10, -sign/20)
	for i, c := range cs {
		if i >= 24 || sign*c.v < sign*cs[0].v*win {
			break
		}
		f, u := goldenAt(r.at, math.Max(c.lo, c.f-c.h), math.Min(c.hi, c.f+c.h), sign)
		if sign*u > sign*v {
			at, v = f, u
		}
	}
	return at, v
}

// interpFigures are the reference's image rejection and passband ripple
// of an interpolation chain and where its extremes lie.
type interpFigures struct {
	rejDB, rippleDB       float64
	worstHz, maxHz, minHz float64
}

// imageBands are [k F_in - fa, k F_in + fa], k >= 1, within [0, F_out/2],
// for a spec as the user writes it (InputRate the channel rate).
func imageBands(sp Spec) []Interval {
	var bands []Interval
	fin, fout := sp.InputRate, sp.OutputRate
	for k := 1; float64(k)*fin-sp.Protected <= fout/2; k++ {
		lo, hi := float64(k)*fin-sp.Protected, math.Min(float64(k)*fin+sp.Protected, fout/2)
		if hi > lo {
			bands = append(bands, Interval{lo, hi})
		}
	}
	return bands
}

// figures measures r against the user's spec sp: 32 grid points per
// 1/len(h) of the output rate, the extremes refined.
func (r interpRef) figures(sp Spec) interpFigures {
	p := nextPow2(max(32*len(r.h), 4096))
	g := r.grid(p)
	step := r.fOut / float64(p)
	h0 := r.at(0)
	var f interpFigures
	var worst float64
	f.worstHz, worst = r.extreme(g, step, imageBands(sp), 1)
	pass := []Interval{{0, sp.Passband}}
	var hi, lo float64
	f.maxHz, hi = r.extreme(g, step, pass, 1)
	f.minHz, lo = r.extreme(g, step, pass, -1)
	if !sp.Complex {
		// A real chain's DC input is one component, whose images at
		// k F_in, each with its mirror, come out at twice the response
		// against the DC's own output (amplitudes); at half the output
		// rate the image is its own mirror.
		for k := 1; float64(k)*sp.InputRate < r.fOut/2*(1-1e-12); k++ {
			if v := 2 * r.at(float64(k)*sp.InputRate); v > worst {
				worst, f.worstHz = v, float64(k)*sp.InputRate
			}
		}
	}
	f.rejDB = -20 * math.Log10(worst/h0)
	f.rippleDB = 20 * math.Log10(hi/lo)
	return f
}

// randomInterpCase draws an invented interpolation spec and a plan for it
// (from the high rate down, as every plan is written): an optional CIC
// (order 1-5, delay 1-2, factor 2-16) at the DAC's side and one to three
// FIR or half-band stages, L = 2..64; a channel rate from 10 kHz to 10 MHz,
// fa from 5 % to 40 % of it, fp 50-100 % of fa, sometimes a stopband edge
// inside (fp, F_in - fa], ripple 0.05-1 dB, rejection 40-90 dB.
func randomInterpCase(rng *rand.Rand) (Spec, []StagePlan) {
	for {
		var plan []StagePlan
		if rng.IntN(2) == 0 {
			r := []int{2, 3, 4, 5, 8, 16}[rng.IntN(6)]
			plan = append(plan, StagePlan{Kind: CIC, Factor: r, CICOrder: 1 + rng.IntN(5), CICDelay: 1 + rng.IntN(2)})
		}
		for n := 1 + rng.IntN(3); n > 0; n-- {
			f := []int{2, 2, 3, 4, 5, 8}[rng.IntN(6)]
			p := StagePlan{Kind: FIR, Factor: f}
			if f == 2 && rng.IntN(2) == 0 {
				p.Kind = HalfBand
			} else if rng.IntN(3) == 0 {
				p.Variant = Lowpass
			}
			plan = append(plan, p)
		}
		l := 1
		for _, p := range plan {
			l *= p.Factor
		}
		if l > 64 {
			continue
		}
		fin := 1e4 * math.Pow(1000, rng.Float64())
		fa := fin * (0.05 + 0.35*rng.Float64())
		fp := fa * (0.5 + 0.5*rng.Float64())
		sp := Spec{InputRate: fin, OutputRate: fin * float64(l), Passband: fp, Protected: fa,
			RippleDB: 0.05 + 0.95*rng.Float64(), RejectionDB: 40 + 50*rng.Float64()}
		if rng.IntN(3) == 0 {
			sp.Stopband = fp + (fin-fa-fp)*(0.3+0.7*rng.Float64())
		}
		return sp, plan
	}
}

// TestInterpolationAnalyzeBruteForce holds Analyze's image rejection and
// passband ripple of designed interpolation chains to the brute-force
// reference above, on seeded random invented specs: never optimistic
// (beyond 1e-6 dB, the reference's own rounding: its response is a sum of
// about 10^4 products near -100 dB, good to 1e-10 of that), and pessimistic
// by at most 0.01 dB, the tolerance Analyze's certified search promises
// (it stops within 0.002 dB for the rejection, 1e-5 dB for the ripple).
// 150 chains by default; STEPDOWN_LONG=1 runs 1000.
// Analyze's WorstAliasHz must be where the reference finds the worst image
// too: the reference's response there is within 0.01 dB of its worst.
func TestInterpolationAnalyzeBruteForce(t *testing.T) {
	want := 150
	if os.Getenv("STEPDOWN_LONG") != "" {
		want = 1000
	}
	rng := rand.New(rand.NewPCG(7, 1981))
	checked, failed := 0, 0
	worstOpt, worstPess := math.Inf(-1), 0.0
	for trial := 0; checked < want && trial < 20*want; trial++ {
		sp, plan := randomInterpCase(rng)
		c, err := Design(sp, plan, Settings{MaxTaps: 600})
		if err != nil {
			var pe *PlanError
			if !errors.As(err, &pe) {
				t.Fatalf("%s: %v", Notation(plan), err)
			}
			failed++
			continue
		}
		if c.Direction != Interpolate {
			t.Fatalf("%s: Design gave a %s chain for an interpolation spec", Notation(plan), c.Direction)
		}
		a, err := Analyze(c, sp)
		if err != nil {
			t.Fatalf("%s: %v", Notation(plan), err)
		}
		r := newInterpRef(c)
		ref := r.figures(sp)
		ref.rejDB = math.Min(ref.rejDB, MaxFigureDB)
		checked++
		for _, d := range []struct {
			name       string
			got, ref   float64
			optimistic float64
		}{
			{"image rejection", a.AliasRejectionDB, ref.rejDB, a.AliasRejectionDB - ref.rejDB},
			{"ripple", a.PassbandRippleDB, ref.rippleDB, ref.rippleDB - a.PassbandRippleDB},
		} {
			worstOpt = math.Max(worstOpt, d.optimistic)
			worstPess = math.Max(worstPess, -d.optimistic)
			if d.optimistic > 1e-6 || d.optimistic < -0.01 {
				t.Errorf("%s L=%d fa=%.6g fp=%.6g F_in=%.6g: %s %.5f dB, brute force %.5f dB",
					Notation(plan), c.Ratio(), sp.Protected, sp.Passband, sp.InputRate, d.name, d.got, d.ref)
			}
		}
		if testing.Verbose() && checked <= 12 {
			t.Logf("%s L=%d: %d taps at the output rate; rejection %.4f dB (reference %.4f), ripple %.5f dB (reference %.5f)",
				Notation(plan), c.Ratio(), len(r.h), a.AliasRejectionDB, ref.rejDB, a.PassbandRippleDB, ref.rippleDB)
		}
		h0 := r.at(0)
		at := r.at(a.WorstAliasHz)
		if k := math.Round(a.WorstAliasHz / sp.InputRate); !sp.Complex && k >= 1 && math.Abs(a.WorstAliasHz-k*sp.InputRate) <= 1e-9*sp.InputRate {
			at *= 2 // a DC input's image (see figures)
		}
		if lvl := -20 * math.Log10(at/h0); lvl > ref.rejDB+0.01 {
			t.Errorf("%s: WorstAliasHz %.6g Hz has the reference's image at -%.4f dB; its worst is -%.4f dB at %.6g Hz",
				Notation(plan), a.WorstAliasHz, lvl, ref.rejDB, ref.worstHz)
		}
	}
	t.Logf("%d interpolation chains checked (%d plans refused); most optimistic %.2g dB, most pessimistic %.4f dB", checked, failed, worstOpt, worstPess)
	if checked < want {
		t.Errorf("only %d of %d chains could be designed", checked, want)
	}
}
