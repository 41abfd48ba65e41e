package cost

import (
	"math"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
)

// TestPriceFractional counts a chain ending in a fractional stage by hand
// (the rules of the package doc): a symmetric 41-tap FIR decimating by 5
// costs 21 multiplies per its own output; each chain output needs Down/Up
// of them. A polyphase 24/25 stage of 480 taps costs ceil(480/24) = 20 per
// output; a Farrow stage of degree 3 and 8 taps (3+1) 8 + 3 = 35
// (farrow.Cost). 100 MHz in: the FIR's output runs at 20 MHz, the chain's
// at 20 * 24/25 = 19.2 MHz.
func TestPriceFractional(t *testing.T) {
	spec := chain.Spec{InputRate: 100e6, OutputRate: 19.2e6, Passband: 5e6, RippleDB: 0.2, RejectionDB: 60}
	fir := chain.FIRStage{R: 5, Length: 41}
	plan := []chain.StagePlan{{Kind: chain.FIR, Factor: 5}, {}}
	for _, tc := range []struct {
		name  string
		last  chain.Stage
		kind  chain.Kind
		wantF float64 // the fractional stage's multiplies per output
	}{
		{"polyphase", chain.PolyphaseStage{Up: 24, Down: 25, Length: 480}, chain.Polyphase, 20},
		{"farrow", chain.FarrowStage{Up: 24, Down: 25, Degree: 3, Length: 8}, chain.Farrow, float64(farrow.Cost(3, 8))},
	} {
		plan[1] = chain.StagePlan{Kind: tc.kind, Factor: 1, Up: 24, Down: 25}
		c := &chain.Chain{InputRate: 100e6, Plan: plan, Stages: []chain.Stage{fir, tc.last}}
		if got := c.OutputRate(); math.Abs(got-19.2e6) > 1e-6 {
			t.Fatalf("%s: output rate %g", tc.name, got)
		}
		f, err := Price(spec, c, Settings{})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		want := []float64{21 * 25.0 / 24, tc.wantF}
		for i, w := range want {
			if g := f.Stages[i].MultipliesPerOutput; math.Abs(g-w) > 1e-12 {
				t.Errorf("%s: stage %d: %g multiplies per output, want %g", tc.name, i+1, g, w)
			}
		}
		if math.Abs(f.MultipliesPerOutput-(want[0]+want[1])) > 1e-12 {
			t.Errorf("%s: total %g", tc.name, f.MultipliesPerOutput)
		}
	}
}
