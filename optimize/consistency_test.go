package optimize

import (
	"math"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
)

// TestEstimatorMatchesChain: the estimate tier's fast figures must be the
// ones chain.Estimate and cost.Price give for the same plan, since the
// faint cloud is drawn beside designed figures priced by cost.
// The fourth case runs its input at three times a fabric clock, so its
// CICs are priced three lanes wide; the fifth prices it multiplierless,
// the cost axis then the chains' adders (cost.EstimateAdders' blocks).
func TestEstimatorMatchesChain(t *testing.T) {
	for ci, spec := range []chain.Spec{rxSpec(), {
		InputRate: 10e3, OutputRate: 100, Passband: 45, Protected: 50, Stopband: 50,
		RippleDB: 20 * math.Log10(1.01/0.99), RejectionDB: 60,
	}, func() chain.Spec { s := rxSpec(); s.Complex = true; s.Protected = 12e3; return s }(), rxSpec(),
		func() chain.Spec { s := rxSpec(); s.Complex = true; s.CoefBits = 16; return s }()} {
		ns, err := spec.Normalize()
		if err != nil {
			t.Fatal(err)
		}
		cs := cost.Settings{}
		if ci >= 3 {
			cs.Clock = ns.InputRate / 3
		}
		cs.Multiplierless = ci == 4
		p := newParams(ns, false)
		p.clock, p.adders = cs.Clock, cs.Multiplierless
		est := newEstimator(p, 0)
		est.keepBeaten = true
		sp := newSpace(&p, &Settings{})
		n, checked := 0, 0
		sp.walk(func(plan []chain.StagePlan) bool {
			n++
			if n%97 != 0 {
				return true
			}
			f, drop := est.score(plan)
			c, err := chain.Estimate(ns, plan, chain.Settings{})
			if drop == dropCICNull || drop == dropCICDroop {
				if err == nil {
					t.Errorf("%s: dropped (%s) but chain estimates it", chain.Notation(plan), dropNames[drop])
				}
				return true
			}
			if err != nil {
				if drop == dropNone {
					t.Errorf("%s: chain.Estimate: %v", chain.Notation(plan), err)
				}
				return true
			}
			if drop != dropNone {
				return true
			}
			g, err := cost.Price(ns, c, cs)
			if err != nil {
				t.Fatal(err)
			}
			checked++
			if cs.Multiplierless {
				if float64(g.Adders) != f.mpo || !g.Multiplierless {
					t.Errorf("%s: estimate tier %g adders, chain+cost %d", chain.Notation(plan), f.mpo, g.Adders)
				}
				g.MultipliesPerOutput = f.mpo // compared above
			}
			if math.Abs(g.MultipliesPerOutput-f.mpo) > 1e-9*f.mpo || float64(g.MemoryBits) != f.bits ||
				math.Abs(g.LatencyS-f.lat) > 1e-9*f.lat {
				t.Errorf("%s: estimate tier %.6g %.0f %.6g, chain+cost %.6g %d %.6g", chain.Notation(plan),
					f.mpo, f.bits, f.lat, g.MultipliesPerOutput, g.MemoryBits, g.LatencyS)
			}
			return !t.Failed()
		})
		t.Logf("D = %d: %d plans compared", p.d, checked)
	}
}
