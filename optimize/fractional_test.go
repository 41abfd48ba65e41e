package optimize

import (
	"context"
	"fmt"
	"os"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// TestPlanFractional plans an invented fractional spec (100 MHz down to
// 3.84 MHz, 625/24): the front is not empty, every chain on it ends in a
// fractional stage, makes up the spec's ratio exactly and meets the spec
// on a fresh Analyze. The long run (STEPDOWN_LONG) allows three stages
// and checks that the front is the same with one job and with two.
func TestPlanFractional(t *testing.T) {
	spec := chain.Spec{InputRate: 100e6, OutputRate: 3.84e6, Passband: 1.2e6, Protected: 1.5e6, RippleDB: 0.3, RejectionDB: 60}
	stages, jobsList := 2, []int{2}
	if os.Getenv("STEPDOWN_LONG") != "" {
		stages, jobsList = 3, []int{1, 2}
	}
	fronts := make([]string, len(jobsList))
	for i, jobs := range jobsList {
		r, err := Plan(context.Background(), spec, Settings{MaxStages: stages, Jobs: jobs})
		if err != nil {
			t.Fatal(err)
		}
		if len(r.Front) == 0 || r.Recommended < 0 {
			t.Fatalf("empty front: %+v", r.Dropped)
		}
		for _, c := range r.Front {
			n := len(c.Chain.Stages)
			if !c.Chain.Stages[n-1].Kind().Fractional() {
				t.Errorf("%s: does not end in a fractional stage", chain.Notation(c.Plan))
			}
			if p, q := c.Chain.Fraction(); p != 625 || q != 24 {
				t.Errorf("%s: ratio %d/%d", chain.Notation(c.Plan), p, q)
			}
			a, err := chain.Analyze(c.Chain, spec)
			if err != nil || !a.Meets(spec) {
				t.Errorf("%s: %+v %v", chain.Notation(c.Plan), a, err)
			}
			fronts[i] += fmt.Sprintf("%s %.9g %.9g\n", chain.Notation(c.Plan), c.Figures.MultipliesPerOutput, a.AliasRejectionDB)
		}
	}
	if len(fronts) == 2 && fronts[0] != fronts[1] {
		t.Errorf("the front depends on Jobs:\n%s\n%s", fronts[0], fronts[1])
	}
	t.Logf("front:\n%s", fronts[0])
}
