package chain

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
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
	ps := c.Stages[n-1].(PolyphaseStage)
	ic := &Chain{InputRate: c.InputRate, Stages: c.Stages[:n-1]}
	rates := c.Rates()
	fm, fk := rates[n-1], rates[n]
	fa := spec.Protected
	proto := func(h float64) float64 { // |sum_j p_j e^{-i 2 pi h j / (L Fm)}|
		var re, im float64
		w := 2 * math.Pi * h / (float64(ps.Up) * fm)
		for j, v := range ps.Taps {
			re += v * math.Cos(w*float64(j))
			im -= v * math.Sin(w*float64(j))
		}
		return math.Hypot(re, im)
	}
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
	for k := 0; k < ps.Up; k++ {
		sh := float64(k) * fm
		path := func(g float64) float64 { return ic.Gain(g) * proto(g+sh) }
		unwanted := func(g float64) bool { return fold(g+sh) <= fa && !(k == 0 && g <= fa) }
		for i := 0; float64(i)*step <= half; i++ {
			g := float64(i) * step
			if !unwanted(g) {
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
	return worst / h0, at
}

// TestFractionalAnalyzeBruteForce holds Analyze of chains ending in a
// polyphase stage to bruteFractional on seeded random invented specs and
// plans: never optimistic, and within 0.01 dB.
func TestFractionalAnalyzeBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 2))
	n := 24
	if os.Getenv("STEPDOWN_LONG") != "" {
		n = 150
	}
	checked, meets, worstGap := 0, 0, 0.0
	for trial := 0; checked < n && trial < 10*n; trial++ {
		spec, plan := randomFractional(rng)
		c, err := Design(spec, plan, Settings{MaxTaps: 400})
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
