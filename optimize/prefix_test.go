package optimize

import (
	"context"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// prefixPlan splits d into two to four ordered factors: a CIC (order 3..5,
// delay 1 or 2) first for a factor of at least 4, half-bands for some
// factors of 2, FIR stages (multiband or lowpass) otherwise.
func prefixPlan(rng *rand.Rand, d int) []chain.StagePlan {
	var plan []chain.StagePlan
	for d > 1 {
		var divs []int
		for f := 2; f <= d; f++ {
			if d%f == 0 && (f < d || len(plan) > 0) {
				divs = append(divs, f)
			}
		}
		f := divs[rng.IntN(len(divs))]
		if len(plan) == 3 {
			f = d
		}
		p := chain.StagePlan{Kind: chain.FIR, Factor: f}
		switch {
		case len(plan) == 0 && f >= 4 && rng.IntN(3) > 0:
			p = chain.StagePlan{Kind: chain.CIC, Factor: f, CICOrder: 3 + rng.IntN(3), CICDelay: 1 + rng.IntN(2)}
		case f == 2 && rng.IntN(2) == 0:
			p.Kind = chain.HalfBand
		case rng.IntN(3) == 0:
			p.Variant = chain.Lowpass
		}
		plan = append(plan, p)
		d /= f
	}
	return plan
}

// TestDesignPrefixAsWhole checks the premise of learn's partial designs
// on seeded random invented specs (decimation and interpolation, real and
// complex, a third judged on taps rounded to 14 to 20 bits) and plans: the first n stages of chain.DesignPrefixContext are
// those of chain.DesignContext, tap for tap, and cost.Price gives them the
// same figures (realDesigner.designPrefix against realDesigner.design),
// for every n below the plan's length.
func TestDesignPrefixAsWhole(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 1203))
	ds := []int{8, 12, 16, 24, 32, 48, 64, 96, 128}
	checked := 0
	for trial := 0; trial < 60 && checked < 25; trial++ {
		d := ds[rng.IntN(len(ds))]
		fk := 1e6
		fp := fk * (0.05 + 0.3*rng.Float64())
		sp := chain.Spec{InputRate: fk * float64(d), OutputRate: fk, Passband: fp,
			RippleDB: 0.05 + 0.5*rng.Float64(), RejectionDB: 50 + 40*rng.Float64(), Complex: rng.IntN(4) == 0}
		if rng.IntN(4) == 0 {
			sp.InputRate, sp.OutputRate = sp.OutputRate, sp.InputRate
		}
		if rng.IntN(3) == 0 {
			sp.CoefBits = 14 + rng.IntN(7) // judged on rounded taps
		}
		plan := prefixPlan(rng, d)
		if len(plan) < 2 {
			continue
		}
		ns, err := sp.Normalize()
		if err != nil {
			t.Fatal(err)
		}
		s := Settings{}
		r := realDesigner{ctx: context.Background(), spec: ns, s: &s}
		whole, why := r.design(plan)
		if why != "" || whole.redesigns > 0 {
			// The plan fails, whole or in part (learn designs it whole),
			// or its rounded taps had it re-designed whole, all stages
			// raised: no part is then the stage as built.
			continue
		}
		checked++
		for n := 1; n < len(plan); n++ {
			part, ok := r.designPrefix(plan, n)
			if !ok {
				if r.rounded(ns) && r.atRisk(whole.Chain) {
					continue // a stage at risk from rounding: designed whole
				}
				t.Errorf("%s %+v: the first %d stages failed alone, not whole", chain.Notation(plan), sp, n)
				continue
			}
			if part.Chain.Designed || part.Figures.Designed {
				t.Errorf("%s, %d stages: a partial chain is marked designed", chain.Notation(plan), n)
			}
			for i := 0; i < n; i++ {
				a, b := whole.Chain.Stages[i], part.Chain.Stages[i]
				if fa, ok := a.(chain.FIRStage); ok {
					fb := b.(chain.FIRStage)
					if !slices.Equal(fa.Taps, fb.Taps) {
						t.Errorf("%s, %d stages: stage %d's taps differ (%d vs %d)", chain.Notation(plan), n, i+1, len(fa.Taps), len(fb.Taps))
					}
				}
				if g, h := stageFigs(&whole.Figures, i), stageFigs(&part.Figures, i); g != h {
					t.Errorf("%s %+v, %d stages: stage %d priced %+v alone, %+v whole", chain.Notation(plan), sp, n, i+1, h, g)
				}
			}
		}
	}
	t.Logf("%d plans checked", checked)
	if checked < 15 {
		t.Fatalf("only %d plans designed: the test checks too little", checked)
	}
}

// TestDesignPrefixRefuses checks chain.DesignPrefixContext's refusals.
func TestDesignPrefixRefuses(t *testing.T) {
	sp := chain.Spec{InputRate: 16e6, OutputRate: 1e6, Passband: 2e5, RippleDB: 0.1, RejectionDB: 60}
	plan := []chain.StagePlan{{Kind: chain.CIC, Factor: 4, CICOrder: 4, CICDelay: 1}, {Kind: chain.FIR, Factor: 4}}
	for _, n := range []int{-1, 0, 3} {
		if _, err := chain.DesignPrefixContext(context.Background(), sp, plan, n, chain.Settings{}); err == nil {
			t.Errorf("n = %d: no error", n)
		}
	}
	fr := chain.Spec{InputRate: 16e6, OutputRate: 1e6 * 48 / 50, Passband: 2e5, RippleDB: 0.1, RejectionDB: 60}
	fplan := []chain.StagePlan{{Kind: chain.FIR, Factor: 16}, {Kind: chain.Polyphase, Up: 48, Down: 50}}
	if _, err := chain.DesignPrefixContext(context.Background(), fr, fplan, 1, chain.Settings{}); err == nil {
		t.Error("fractional plan: no error")
	}
	if c, err := chain.DesignPrefixContext(context.Background(), sp, plan, 2, chain.Settings{}); err != nil || !c.Designed {
		t.Errorf("n = len(plan): %v, designed %v; want the whole design", err, c != nil && c.Designed)
	}
}
