package chain

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strings"
	"testing"
)

// TestResampleSciPy holds Resample, the polyphase L/M stage's run, to
// SciPy's scipy.signal.upfirdn(h*L, x, L, M) (chain/testdata/fractional/
// gen_resample.py, SciPy version in the file) on six invented rate changes
// and prototypes, noise and tones: every sample to 1e-12 of the input's
// peak (the sums differ only in their order).
func TestResampleSciPy(t *testing.T) {
	b, err := os.ReadFile("testdata/fractional/resample.json")
	if err != nil {
		t.Fatal(err)
	}
	var g struct {
		SciPy string `json:"scipy"`
		Cases []struct {
			Up, Down int
			Taps     []float64
			Signals  []struct {
				Name string
				X, Y []float64
			}
		}
	}
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	if len(g.Cases) < 6 {
		t.Fatalf("%d cases in resample.json", len(g.Cases))
	}
	worst := 0.0
	for _, c := range g.Cases {
		for _, s := range c.Signals {
			y := Resample(c.Taps, c.Up, c.Down, s.X)
			if len(y) != len(s.Y) {
				t.Fatalf("%d/%d %s: %d outputs, SciPy %d", c.Up, c.Down, s.Name, len(y), len(s.Y))
			}
			peak := 0.0
			for _, v := range s.X {
				peak = math.Max(peak, math.Abs(v))
			}
			for i := range y {
				d := math.Abs(y[i]-s.Y[i]) / peak
				worst = math.Max(worst, d)
				if d > 1e-12 {
					t.Fatalf("%d/%d %s: y[%d] = %.17g, SciPy %.17g", c.Up, c.Down, s.Name, i, y[i], s.Y[i])
				}
			}
		}
	}
	t.Logf("SciPy %s: worst difference %.3g of the input's peak", g.SciPy, worst)
}

// randomFractional returns a seeded invented fractional spec and plan: an
// integer part of up to two stages (FIR, or CIC then FIR) decimating by
// dint, then a polyphase stage up/down.
func randomFractional(rng interface {
	IntN(int) int
	Float64() float64
}) (Spec, []StagePlan) {
	for {
		up := 2 + rng.IntN(23)
		down := up/2 + 1 + rng.IntN(2*up)
		if gcd(up, down) != 1 || down == up {
			continue
		}
		dint := 1 + rng.IntN(12)
		num, den := dint*down, up
		if num <= den {
			continue
		}
		f0 := 1.0
		fm := f0 / float64(dint)
		fk := fm * float64(up) / float64(down)
		lo := math.Min(fm, fk)
		fp := lo * (0.05 + 0.3*rng.Float64())
		fa := fp + (lo/2-fp)*0.5*rng.Float64()
		spec := Spec{InputRate: f0, OutputRate: f0 * float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 40*rng.Float64()}
		var plan []StagePlan
		switch {
		case dint == 1:
		case dint >= 4 && dint%2 == 0 && rng.IntN(2) == 0:
			plan = append(plan, StagePlan{Kind: CIC, Factor: 2, CICOrder: 3, CICDelay: 1}, StagePlan{Kind: FIR, Factor: dint / 2})
		case dint%2 == 0 && dint > 2:
			plan = append(plan, StagePlan{Kind: FIR, Factor: 2}, StagePlan{Kind: FIR, Factor: dint / 2})
		default:
			plan = append(plan, StagePlan{Kind: FIR, Factor: dint})
		}
		if len(plan) > 0 && rng.IntN(2) == 0 {
			plan[len(plan)-1].Variant = Lowpass
		}
		plan = append(plan, StagePlan{Kind: Polyphase, Factor: 1, Up: up, Down: down})
		if _, err := spec.Normalize(); err != nil {
			continue
		}
		return spec, plan
	}
}

// bruteFractional is the worst alias of a fractional chain by a dense scan
// that does not use the band formulas of measureFractional: for every path
// k and every input frequency g on a grid over [0, F0/2] (steps of fa/40),
// the output frequency fold(g + k Fm mod FK) is computed, and the points
// that land in [0, fa] (except the tone itself) are kept; the integer
// stages' gain and the prototype's DTFT, summed directly, give the path's
// gain, and the best grid points are refined by golden section inside the
// landing band. It returns the worst gain over the gain at 0 Hz.
func bruteFractional(c *Chain, spec Spec) (worst, at float64) {
	n := len(c.Stages)
	f := slices.IndexFunc(c.Stages, func(s Stage) bool { return s.Kind().Fractional() })
	ic := &Chain{InputRate: c.InputRate, Stages: c.Stages[:f]}
	rates := c.Rates()
	fm, fk := rates[f], rates[n]
	// The stages after the fractional stage (a polyphase stage after the
	// CIC): their gain at a path's frequency h, periodic at their input
	// rate.
	tail := &Chain{InputRate: rates[f+1], Stages: c.Stages[f+1:]}
	fa := spec.Protected
	var proto0 func(h float64) float64
	var ks []int
	switch st := c.Stages[f].(type) {
	case PolyphaseStage:
		proto0 = func(h float64) float64 { // |sum_j p_j e^{-i 2 pi h j / (L Fm)}|
			var re, im float64
			w := 2 * math.Pi * h / (float64(st.Up) * fm)
			for j, v := range st.Taps {
				re += v * math.Cos(w*float64(j))
				im -= v * math.Sin(w*float64(j))
			}
			return math.Hypot(re, im)
		}
		for k := 0; k < st.Up; k++ {
			ks = append(ks, k)
		}
	case FarrowStage:
		// At its output times m Down/Up the structure computes
		// y = sum_n x[n] h(m Down/Up - n): a polyphase stage whose
		// prototype is h sampled at 1/Up (scaled by 1/Up), summed here
		// from the impulse response directly, so that the paths k and
		// k + Up, which land together, add.
		n := st.Filter.Len()
		taps := make([]float64, st.Up*n)
		for j := range taps {
			taps[j] = st.Filter.Impulse(float64(j-st.Up*n/2)/float64(st.Up)) / float64(st.Up)
		}
		proto0 = func(h float64) float64 {
			var re, im float64
			w := 2 * math.Pi * h / (float64(st.Up) * fm)
			for j, v := range taps {
				re += v * math.Cos(w*float64(j))
				im -= v * math.Sin(w*float64(j))
			}
			return math.Hypot(re, im)
		}
		for k := 0; k < st.Up; k++ {
			ks = append(ks, k)
		}
	}
	proto := func(h float64) float64 { return proto0(h) * tail.Gain(h) }
	h0 := ic.Gain(0) * proto(0)
	fold := func(f float64) float64 {
		f = math.Mod(f, fk)
		if f < 0 {
			f += fk
		}
		return math.Min(f, fk-f)
	}
	step := fa / 40
	half := c.InputRate / 2
	for _, k := range ks {
		sh := float64(k) * fm
		path := func(g float64) float64 { return ic.Gain(g) * proto(g+sh) }
		unwanted := func(g float64) bool { return fold(g+sh) <= fa && !(k == 0 && g <= fa) }
		prev := false
		for i := 0; float64(i)*step <= half; i++ {
			g := float64(i) * step
			in := unwanted(g)
			if in != prev && i > 0 {
				// A landing band's edge between two grid points, found by
				// bisection and evaluated: the gain can be steep there.
				a, b := g-step, g
				for it := 0; it < 60; it++ {
					if m := a + (b-a)/2; unwanted(m) == in {
						b = m
					} else {
						a = m
					}
				}
				e := b
				if !in {
					e = a
				}
				if v := path(e); v > worst {
					worst, at = v, e
				}
			}
			prev = in
			if !in {
				continue
			}
			v := path(g)
			if v < worst*0.9 {
				continue
			}
			// Refine inside the landing band around g, its edges found
			// by bisection.
			edge := func(out, in float64) float64 {
				for it := 0; it < 60; it++ {
					m := out + (in-out)/2
					if unwanted(m) {
						in = m
					} else {
						out = m
					}
				}
				return in
			}
			a, b := math.Max(0, g-step), math.Min(half, g+step)
			if !unwanted(a) {
				a = edge(a, g)
			}
			if !unwanted(b) {
				b = edge(b, g)
			}
			for _, e := range []float64{a, b} {
				if v := path(e); v > worst {
					worst, at = v, e
				}
			}
			x, gv := goldenAt(path, a, b, 1)
			if gv < v {
				x, gv = g, v
			}
			if gv > worst {
				worst, at = gv, x
			}
		}
	}
	if !c.Complex {
		// A real tone's paths that land on one output frequency add:
		// 2 g = n FK - (k1 + k2) Fm with FK = Fm L / (M Db), L coprime
		// with M Db (Db the stages after the fractional stage), so only
		// at multiples g of Fm / (2 M Db) can two meet. Their complex
		// responses are summed here by magnitude, grouped by where they
		// land, from the direct sums above.
		up, down := stageRatio(c.Stages[f])
		step := fm / float64(2*down*tail.Decimation())
		for j := 0; float64(j)*step <= half; j++ {
			g := float64(j) * step
			land := map[int64]float64{}
			for k := 0; k < up; k++ {
				if k == 0 && g <= fa {
					continue
				}
				y := fold(g + float64(k)*fm)
				if y > fa*(1+1e-12) {
					continue
				}
				land[int64(math.Round(y/fk*1e8))] += proto(g + float64(k)*fm)
			}
			for _, v := range land {
				if v *= ic.Gain(g); v > worst {
					worst, at = v, g
				}
			}
		}
	}
	return worst / h0, at
}

// randomAfterCIC returns a seeded invented spec and plan whose polyphase
// stage comes just after a CIC, with one or two FIR stages after it whose
// decimation shares no factor with its L.
func randomAfterCIC(rng interface {
	IntN(int) int
	Float64() float64
}) (Spec, []StagePlan) {
	for {
		r := 2 + rng.IntN(7)
		up := 2 + rng.IntN(23)
		down := up/2 + 1 + rng.IntN(2*up)
		db := 2 + rng.IntN(5)
		if gcd(up, down) != 1 || down == up || gcd(db, up) != 1 {
			continue
		}
		num, den := r*down*db, up
		if g := gcd(num, den); g != 1 {
			num, den = num/g, den/g
		}
		f1 := 1 / float64(r)
		f2 := f1 * float64(up) / float64(down)
		fk := f2 / float64(db)
		fp := fk * (0.05 + 0.3*rng.Float64())
		fa := fp + (fk/2-fp)*0.5*rng.Float64()
		spec := Spec{InputRate: 1, OutputRate: float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 40*rng.Float64(), Complex: rng.IntN(2) == 0}
		if _, err := spec.Normalize(); err != nil {
			continue
		}
		if p, q := spec.Fraction(); p != num || q != den {
			continue
		}
		plan := []StagePlan{{Kind: CIC, Factor: r, CICOrder: 3 + rng.IntN(3), CICDelay: 1}, {Kind: Polyphase, Factor: 1, Up: up, Down: down}}
		if db == 4 && rng.IntN(2) == 0 {
			plan = append(plan, StagePlan{Kind: HalfBand, Factor: 2}, StagePlan{Kind: FIR, Factor: 2})
		} else {
			plan = append(plan, StagePlan{Kind: FIR, Factor: db})
		}
		return spec, plan
	}
}

// TestAfterCICAnalyzeBruteForce holds Analyze of chains whose polyphase
// stage follows the CIC to bruteFractional, as
// TestFractionalAnalyzeBruteForce does for chains that end in it.
func TestAfterCICAnalyzeBruteForce(t *testing.T) {
	n := 12
	if os.Getenv("STEPDOWN_LONG") != "" {
		n = 150
	}
	checkAgainstBrute(t, rand.New(rand.NewPCG(14, 9)), randomAfterCIC, n, 400)
}

// TestFractionalAnalyzeBruteForce holds Analyze of chains ending in a
// polyphase stage to bruteFractional on seeded random invented specs and
// plans: never optimistic, and within 0.01 dB.
func TestFractionalAnalyzeBruteForce(t *testing.T) {
	n := 12
	if os.Getenv("STEPDOWN_LONG") != "" {
		n = 150
	}
	checkAgainstBrute(t, rand.New(rand.NewPCG(14, 2)), randomFractional, n, 400)
}

// randomGen makes a seeded invented fractional spec and plan.
type randomGen func(interface {
	IntN(int) int
	Float64() float64
}) (Spec, []StagePlan)

// checkAgainstBrute designs n chains of gen (FIR stages of at most
// maxTaps) and holds Analyze's rejection to bruteFractional's over the
// never optimistic, at most 0.01 dB below.
func checkAgainstBrute(t *testing.T, rng *rand.Rand, gen randomGen, n, maxTaps int) {
	t.Helper()
	checked, meets, worstGap := 0, 0, 0.0
	for trial := 0; checked < n && trial < 10*n; trial++ {
		spec, plan := gen(rng)
		c, err := Design(spec, plan, Settings{MaxTaps: maxTaps})
		if err != nil {
			continue
		}
		a, err := Analyze(c, spec)
		if err != nil {
			t.Fatalf("%s: %v", Notation(plan), err)
		}
		w, at := bruteFractional(c, spec)
		ref := -20 * math.Log10(w)
		gap := ref - a.AliasRejectionDB // >= 0: Analyze is on the safe side
		if gap < -1e-9 || gap > 0.01 {
			t.Errorf("%s (%+v): Analyze %.5f dB at %g Hz, brute force %.5f dB at %g Hz", Notation(plan), spec, a.AliasRejectionDB, a.WorstAliasHz, ref, at)
		}
		worstGap = math.Max(worstGap, gap)
		checked++
		if a.Meets(spec) {
			meets++
		} else {
			t.Logf("misses: %s: %.2f dB (target %.2f), ripple %.3f dB (budget %.3f)", Notation(plan), a.AliasRejectionDB, spec.RejectionDB, a.PassbandRippleDB, spec.RippleDB)
		}
	}
	if checked < n {
		t.Fatalf("only %d of %d random chains designed", checked, n)
	}
	t.Logf("%d chains (%d meet their spec): Analyze at most %.4f dB below the brute force", checked, meets, worstGap)
}

// randomFarrow returns a seeded invented spec and plan ending in a Farrow
// stage after a lowpass FIR: Fm between 2.2 and 6 times FK, the ratio a
// fraction with a large denominator.
func randomFarrow(rng interface {
	IntN(int) int
	Float64() float64
}) (Spec, []StagePlan) {
	return randomFarrowOf(rng, 2, 40)
}

// randomFarrowLargeL is randomFarrow with 257 to MaxFarrowUp phases
// before reduction: more than a polyphase stage may have.
func randomFarrowLargeL(rng interface {
	IntN(int) int
	Float64() float64
}) (Spec, []StagePlan) {
	return randomFarrowOf(rng, MaxFractionalUp+1, MaxFarrowUp-MaxFractionalUp)
}

// randomFarrowOf is randomFarrow with Up drawn from [lo, lo + n) before
// the fraction is reduced (draws that reduce below lo are drawn again).
func randomFarrowOf(rng interface {
	IntN(int) int
	Float64() float64
}, lo, n int) (Spec, []StagePlan) {
	for {
		dint := 2 + rng.IntN(6)
		up := lo + rng.IntN(n)
		down := int(float64(up) * (2.2 + 3.8*rng.Float64()))
		if g := gcd(up, down); g != 1 {
			up, down = up/g, down/g
		}
		if up < lo {
			continue
		}
		num, den := dint*down, up
		if g := gcd(num, den); g != 1 {
			num, den = num/g, den/g
		}
		fm := 1 / float64(dint)
		fk := fm * float64(up) / float64(down)
		fp := fk * (0.05 + 0.25*rng.Float64())
		fa := fp + (fk/2-fp)*0.5*rng.Float64()
		spec := Spec{InputRate: 1, OutputRate: float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 30*rng.Float64()}
		if _, err := spec.Normalize(); err != nil {
			continue
		}
		if p, q := spec.Fraction(); p != num || q != den {
			continue
		}
		plan := []StagePlan{{Kind: FIR, Factor: dint, Variant: Lowpass}, {Kind: Farrow, Factor: 1, Up: up, Down: down}}
		return spec, plan
	}
}

// TestFarrowAnalyzeBruteForce holds Analyze of chains ending in a Farrow
// stage to bruteFractional (the structure's response by quadrature of its
// impulse response) on seeded random invented specs:
// never optimistic, and within 0.01 dB.
func TestFarrowAnalyzeBruteForce(t *testing.T) {
	n := 4
	if os.Getenv("STEPDOWN_LONG") != "" {
		n = 40
	}
	checkAgainstBrute(t, rand.New(rand.NewPCG(14, 3)), randomFarrow, n, 600)
}

// TestFractionalTones confirms Analyze in the time domain: a cosine at
// the worst alias frequency Analyze names is run through the designed
// chain (Run: the real polyphase and Farrow structures), and the output's
// amplitude at the frequency where that alias lands, measured with a
// 4-term Blackman-Harris window over a stretch long enough to part it from
// every other path's tone by 12 bins, must match the path's gain
// (PathGains) within 0.05 dB, and the figure Analyze states within
// 0.05 dB plus its certify margin. Seeded random invented chains of both
// kinds.
func TestFractionalTones(t *testing.T) {
	if n := fractionalTones(t, rand.New(rand.NewPCG(14, 4)), []randomGen{randomFractional, randomFarrow, randomAfterCIC}); n < 4 {
		t.Fatalf("only %d chains checked", n)
	}
}

// TestFarrowLargeLTones is TestFractionalTones for Farrow stages of 257 to
// MaxFarrowUp phases (more than a polyphase stage may have). CI's long
// step only (STEPDOWN_LONG): about 15 s.
func TestFarrowLargeLTones(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("Farrow stages of hundreds of phases (15 s): STEPDOWN_LONG (CI's long step)")
	}
	if n := fractionalTones(t, rand.New(rand.NewPCG(14, 40)), []randomGen{randomFarrowLargeL}); n < 2 {
		t.Fatalf("only %d chains checked", n)
	}
}

// fractionalTones runs TestFractionalTones' check on up to three chains
// of each generator and returns how many it checked.
func fractionalTones(t *testing.T, rng *rand.Rand, gens []randomGen) int {
	t.Helper()
	checked := 0
	for _, g := range gens {
		for n, trial := 0, 0; n < 3 && trial < 40; trial++ {
			spec, plan := g(rng)
			c, err := Design(spec, plan, Settings{MaxTaps: 600})
			if err != nil {
				continue
			}
			a, err := Analyze(c, spec)
			if err != nil {
				t.Fatal(err)
			}
			fk, fa := c.OutputRate(), spec.Protected
			paths := PathGains(c, a.WorstAliasHz, 64)
			var worst PathGain
			for _, p := range paths {
				if p.OutputHz <= fa*(1+1e-9) && !(p.K == 0 && a.WorstAliasHz <= fa) && p.Gain > worst.Gain {
					worst = p
				}
			}
			if worst.Gain == 0 {
				t.Fatalf("%s: no path of %g Hz lands in [0, %g]", Notation(plan), a.WorstAliasHz, fa)
			}
			// Two paths that meet on one output frequency may be equal
			// within rounding: either names the pair.
			tie := false
			for _, p := range paths {
				if p.K == a.WorstPath && math.Abs(p.Gain-worst.Gain) <= 1e-9*worst.Gain {
					tie = true
				}
			}
			if (worst.K != a.WorstPath && !tie) || math.Abs(worst.OutputHz-a.WorstOutputHz) > 1e-9*fk {
				t.Errorf("%s: Analyze's worst path %d to %g Hz, PathGains' %d to %g Hz", Notation(plan), a.WorstPath, a.WorstOutputHz, worst.K, worst.OutputHz)
			}
			// The window must part the alias from every other tone.
			gap := fk / 2
			for _, p := range paths {
				if p.K != worst.K && p.Gain > 1e-9 {
					gap = math.Min(gap, math.Abs(p.OutputHz-worst.OutputHz))
				}
			}
			// A real tone near 0 Hz or half the rate also meets its own
			// mirror.
			gap = math.Min(gap, 2*math.Min(worst.OutputHz, fk/2-worst.OutputHz))
			nout := int(math.Ceil(12 * fk / gap))
			if gap == 0 || nout > 1<<15 {
				continue
			}
			nout = max(nout, 2048)
			p0, q0 := c.Fraction()
			skip := 2048 // outputs of transient
			nin := (nout+skip)*p0/q0 + 1
			x := make([]float64, nin)
			w := 2 * math.Pi * a.WorstAliasHz / c.InputRate
			for i := range x {
				x[i] = math.Cos(w*float64(i) + 0.3)
			}
			y := Run(c, x)
			if len(y) < skip+nout {
				t.Fatalf("%s: %d outputs", Notation(plan), len(y))
			}
			y = y[skip : skip+nout]
			amp := toneAmplitude(y, worst.OutputHz/fk)
			measured := -20 * math.Log10(amp/c.Gain(0))
			path := -20 * math.Log10(worst.Gain/c.Gain(0))
			if math.Abs(measured-path) > 0.05 || measured < a.AliasRejectionDB-0.05 || measured > a.AliasRejectionDB+aliasCertifyDB+0.05 {
				t.Errorf("%s: tone at %g Hz, path %d to %g Hz: measured %.3f dB, path gain %.3f dB, Analyze %.3f dB",
					Notation(plan), a.WorstAliasHz, worst.K, worst.OutputHz, measured, path, a.AliasRejectionDB)
			}
			t.Logf("%s: measured %.3f dB, Analyze %.3f dB (%d outputs)", Notation(plan), measured, a.AliasRejectionDB, nout)
			n++
			checked++
		}
	}
	return checked
}

// TestFractionalInterpolationTones runs the transposes: an interpolation
// spec with the rates of a random decimation spec swapped is designed on
// the same plan (held in decimation order), Analyze gives the decimation
// twin's figures (a real chain's DC images aside, which count twice), and
// a channel tone at the frequency where the worst image lands (a DC input
// when that is 0 Hz) is run up through the real transposed structures
// (the polyphase stage up M, prototype, down L; the Farrow stage
// scattered at its input times): the image must match the path's gain
// (twice it for a DC input) within 0.05 dB.
func TestFractionalInterpolationTones(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 5))
	checked := 0
	for _, g := range []randomGen{randomFractional, randomFarrow, randomAfterCIC} {
		for n, trial := 0, 0; n < 3 && trial < 40; trial++ {
			down, plan := g(rng)
			up := down
			up.InputRate, up.OutputRate = down.OutputRate, down.InputRate
			if _, err := Design(down, plan, Settings{MaxTaps: 600}); err != nil {
				continue
			}
			c, err := Design(up, plan, Settings{MaxTaps: 600})
			if err != nil {
				t.Fatalf("%s: the transpose does not design: %v", Notation(plan), err)
			}
			// The twin: the same stages as a decimation chain (a real
			// interpolation spec is designed deeper, for the images of a
			// DC input, so the twin is not designed anew).
			cd := &Chain{InputRate: c.InputRate, Complex: c.Complex, Direction: Decimate, Plan: c.Plan, Designed: true}
			for _, st := range c.Stages {
				if cs, ok := st.(CICStage); ok {
					cs.Interpolator = false
					st = cs
				}
				cd.Stages = append(cd.Stages, st)
			}
			if c.Direction != Interpolate {
				t.Fatalf("%s: direction %s", Notation(plan), c.Direction)
			}
			ad, err := Analyze(cd, down)
			if err != nil {
				t.Fatal(err)
			}
			a, err := Analyze(c, up)
			if err != nil {
				t.Fatal(err)
			}
			fk, fa := c.OutputRate(), up.Protected // the channel rate
			// The same figures as the twin's, but for a real chain's
			// images of a DC input, at twice their path's gain: a lower
			// rejection, then worst on the channel's 0 Hz.
			dc := a.AliasRejectionDB < ad.AliasRejectionDB-1e-9
			if dc && (down.Complex || a.WorstOutputHz > 1e-9*fk) || a.AliasRejectionDB > ad.AliasRejectionDB+1e-9 || a.PassbandRippleDB != ad.PassbandRippleDB || !dc && a != ad {
				t.Errorf("%s: interpolation %+v, decimation twin %+v", Notation(plan), a, ad)
			}
			paths := PathGains(c, a.WorstAliasHz, 64)
			var worst PathGain
			for _, p := range paths {
				if p.OutputHz <= fa*(1+1e-9) && !(p.K == 0 && a.WorstAliasHz <= fa) && p.Gain > worst.Gain {
					worst = p
				}
			}
			// The channel tone at worst.OutputHz comes out at every
			// frequency whose path lands there; the window must part the
			// image at WorstAliasHz from the others (those of the tone's
			// other paths: g' with some path landing on it).
			hi := c.InputRate
			nout := 1 << 15
			if edge := math.Min(a.WorstAliasHz, hi/2-a.WorstAliasHz); edge < 12*hi/float64(nout) {
				// A real signal's image within 12 bins of 0 Hz or of
				// half the rate meets its own mirror in the window.
				continue
			}
			p0, q0 := c.Fraction()
			skip := 4096
			nin := (nout+skip)*q0/p0 + 1
			x := make([]float64, nin)
			w, phase := 2*math.Pi*worst.OutputHz/fk, 0.3
			if dc {
				w, phase = 0, 0 // a DC input of 1
			}
			for i := range x {
				x[i] = math.Cos(w*float64(i) + phase)
			}
			y := Run(c, x)
			if len(y) < skip+nout {
				t.Fatalf("%s: %d outputs for %d inputs", Notation(plan), len(y), nin)
			}
			y = y[skip : skip+nout]
			amp := toneAmplitude(y, a.WorstAliasHz/hi)
			measured := -20 * math.Log10(amp/c.Gain(0))
			path := -20 * math.Log10(worst.Gain/c.Gain(0))
			// Where two paths meet (a real tone's, see coincidentPaths),
			// the image is their sum at some phases: between the
			// difference and the sum of their gains, never above
			// Analyze's figure.
			sum, diff, meet := 0.0, 0.0, 0
			for _, p := range paths {
				if math.Abs(p.OutputHz-worst.OutputHz) <= 1e-9*fk && !(p.K == 0 && a.WorstAliasHz <= fa) {
					sum += p.Gain
					diff = math.Abs(diff - p.Gain)
					meet++
				}
			}
			switch {
			case dc:
				// The DC's image and its mirror: twice the path.
				if math.Abs(measured-(path-20*math.Log10(2))) > 0.05 || math.Abs(measured-a.AliasRejectionDB) > 0.05 {
					t.Errorf("%s: DC input, image at %g Hz: measured %.3f dB, twice the path %.3f dB, Analyze %.3f dB",
						Notation(plan), a.WorstAliasHz, measured, path-20*math.Log10(2), a.AliasRejectionDB)
				}
			case meet > 1:
				if measured < -20*math.Log10(sum/c.Gain(0))-0.05 || measured > -20*math.Log10(diff/c.Gain(0))+0.05 || measured < a.AliasRejectionDB-0.05 {
					t.Errorf("%s: channel tone at %g Hz, image at %g Hz where %d paths meet: measured %.3f dB, paths' sum %.3f dB, Analyze %.3f dB",
						Notation(plan), worst.OutputHz, a.WorstAliasHz, meet, measured, -20*math.Log10(sum/c.Gain(0)), a.AliasRejectionDB)
				}
			case math.Abs(measured-path) > 0.05:
				t.Errorf("%s: channel tone at %g Hz, image at %g Hz: measured %.3f dB, path %.3f dB, Analyze %.3f dB",
					Notation(plan), worst.OutputHz, a.WorstAliasHz, measured, path, a.AliasRejectionDB)
			}
			t.Logf("%s (signal order %s): image measured %.3f dB, Analyze %.3f dB", Notation(plan), Interpolate.Notation(plan), measured, a.AliasRejectionDB)
			n++
			checked++
		}
	}
	if checked < 4 {
		t.Fatalf("only %d chains checked", checked)
	}
}

// toneAmplitude is the amplitude of y's component at nu cycles per
// sample, through a 4-term Blackman-Harris window (Harris 1978).
func toneAmplitude(y []float64, nu float64) float64 {
	var re, im, sw float64
	w := 2 * math.Pi * nu
	for m, v := range y {
		u := 2 * math.Pi * float64(m) / float64(len(y)-1)
		win := 0.35875 - 0.48829*math.Cos(u) + 0.14128*math.Cos(2*u) - 0.01168*math.Cos(3*u)
		re += win * v * math.Cos(w*float64(m))
		im += win * v * math.Sin(w*float64(m))
		sw += win
	}
	return 2 * math.Hypot(re, im) / sw
}

// TestFractionalDCSpurs runs a constant (an ADC's offset) through random
// real polyphase chains with Run: the output repeats every L samples, its
// spurs at multiples of FK/L inside [0, fa] are measured exactly by a DFT
// over whole periods, and none may be above what Analyze states (never
// optimistic). Each such spur is two paths, k and L-k, landing together:
// the figure of one path alone would be 6 dB too kind.
func TestFractionalDCSpurs(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 7))
	checked, doubled := 0, 0
	for trial := 0; checked < 12 && trial < 90; trial++ {
		// Chains that end in a polyphase stage, and a third whose
		// polyphase stage follows the CIC.
		gen := randomFractional
		if checked%3 == 2 {
			gen = randomAfterCIC
		}
		spec, plan := gen(rng)
		spec.Complex = false
		c, err := Design(spec, plan, Settings{MaxTaps: 600})
		if err != nil {
			continue
		}
		a, err := Analyze(c, spec)
		if err != nil {
			t.Fatal(err)
		}
		up, _ := stageRatio(c.Stages[slices.IndexFunc(c.Stages, func(s Stage) bool { return s.Kind().Fractional() })])
		p0, q0 := c.Fraction()
		periods := 64
		skip := 4096
		nout := periods * up
		x := make([]float64, (nout+skip)*p0/q0+2)
		for i := range x {
			x[i] = 1
		}
		y := Run(c, x)[skip : skip+nout]
		fk, fa := c.OutputRate(), spec.Protected
		var dc float64
		for _, v := range y {
			dc += v
		}
		dc /= float64(nout)
		worst, single := 0.0, 0.0
		for q := 1; q < up; q++ {
			f := float64(q) * fk / float64(up)
			if math.Min(f, fk-f) > fa {
				continue
			}
			var re, im float64
			for m, v := range y {
				s, co := math.Sincos(2 * math.Pi * float64(q*m) / float64(up))
				re += v * co
				im -= v * s
			}
			amp := 2 * math.Hypot(re, im) / float64(nout)
			if 2*q == up {
				amp /= 2 // the one real component at FK/2
			}
			worst = math.Max(worst, amp/math.Abs(dc))
			for _, pg := range PathGains(c, 0, 0) {
				if math.Abs(pg.OutputHz-math.Min(f, fk-f)) < 1e-9*fk {
					single = math.Max(single, pg.Gain/c.Gain(0))
				}
			}
		}
		if worst == 0 {
			continue
		}
		measured := -20 * math.Log10(worst)
		if measured < a.AliasRejectionDB-0.01 {
			t.Errorf("%s: a DC input's spur measured at %.3f dB, Analyze states %.3f dB", Notation(plan), measured, a.AliasRejectionDB)
		}
		if single > 0 && -20*math.Log10(single)-measured > 5.9 {
			doubled++
		}
		t.Logf("%s: DC spur %.3f dB (one path %.3f dB), Analyze %.3f dB", Notation(plan), measured, -20*math.Log10(single), a.AliasRejectionDB)
		checked++
	}
	if checked < 4 {
		t.Fatalf("only %d chains checked", checked)
	}
	if doubled == 0 {
		t.Errorf("no DC spur came out at twice its path's gain")
	}
}

// A Farrow stage after a multiband FIR is refused naming the lowpass
// layout to write, on the side where the FIR sits: before it in a
// decimation chain, after it in an interpolation chain (an adversarial
// review saw a rate rule quoted that held). Invented 200 to 27.3 MS/s.
func TestFarrowNeedsLowpassMessage(t *testing.T) {
	spec := Spec{InputRate: 200e6, OutputRate: 27.3e6, Passband: 10e6, Protected: 11e6, RippleDB: 0.2, RejectionDB: 65}
	for _, tc := range []struct {
		notation, want string
	}{
		{"cic5m1r3 > fir2 > farrow819/1000", "a farrow stage needs the FIR just before it in its lowpass layout: write fir2L, not fir2"},
	} {
		plan, err := ParseNotation(tc.notation)
		if err != nil {
			t.Fatal(err)
		}
		_, err = Design(spec, plan, Settings{MaxTaps: 600})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.notation, err, tc.want)
		}
	}
}
