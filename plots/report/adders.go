package report

import (
	"fmt"
	"github.com/stepdown-dsp/stepdown/chain"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
)

// AddAdders fills a multiplierless chain's adder fields (s.Multiplierless)
// from what the report writes: each FIR and half-band stage with planned
// word lengths gets the adder graph of its coefficients_int
// (cost.IntsBlock, mcm.Build proved by evaluating it), so that the counts
// are those of the coefficients it will be built with; a stage without
// them keeps the pricing's figures. The chain's totals are then the sums
// of its stages'. A graph that does not reproduce its coefficients
// exactly is an error, never a count.
//
// With a fixed coefficient width and no unity-gain correction the
// coefficients are those the search priced, and so are the counts; with
// "auto" the search priced graphs of taps rounded to cost.FloatCoefBits
// bits, and with words.unity_gain of taps before the correction, so the
// counts here may differ from the figure the front was ranked by.
func AddAdders(c *Chain, s *specfile.Spec) error {
	cx := 1
	if s.Signal == "complex" {
		cx = 2
	}
	var total, coef, structural int
	for i := range c.Stages {
		st := &c.Stages[i]
		// Lanes at the stage's high rate: its input's when it
		// decimates, its output's when it interpolates.
		lanes := cost.Lanes(max(st.InputRateHz, st.OutputRateHz), s.Clock)
		if st.Kind == "cic" {
			if st.Adders == nil || st.CICForm != "nonrecursive" {
				// A non-recursive CIC keeps the count cost priced on its
				// sub-stages (the search's figure); a recursive one is
				// its integrators per lane and its combs.
				a := cost.CICAdders(st.CICOrder, lanes) * cx
				st.Adders = &a
			}
			total += *st.Adders
			continue
		}
		// A fractional stage keeps the search's count: its integers are
		// a prototype's or a Farrow matrix's, not one FIR's block.
		frac := st.Kind == chain.Polyphase.String() || st.Kind == chain.Farrow.String()
		if w := st.StageReport; w != nil && len(w.CoefficientsInt) > 0 && !frac {
			b, err := cost.IntsBlock(w.CoefficientsInt)
			if err != nil {
				return fmt.Errorf("report: chain %s, stage %d (%s): %w", c.Notation, i+1, st.Kind, err)
			}
			a := (b.Coefficient + b.Structural) * lanes * cx
			st.CoefficientAdders, st.StructuralAdders, st.Adders = &b.Coefficient, &b.Structural, &a
			st.AddersEstimated = false
		}
		if st.Adders == nil || st.CoefficientAdders == nil || st.StructuralAdders == nil {
			return fmt.Errorf("report: chain %s, stage %d (%s): no adder count", c.Notation, i+1, st.Kind)
		}
		total += *st.Adders
		coef += *st.CoefficientAdders * lanes * cx
		structural += *st.StructuralAdders * lanes * cx
	}
	c.Adders, c.CoefficientAdders, c.StructuralAdders = &total, &coef, &structural
	return nil
}
