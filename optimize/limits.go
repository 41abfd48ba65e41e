package optimize

import (
	"slices"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// OverLimit reports whether r is one of the reasons a chain is dropped for
// breaking Settings.Limits (the *_over_limit reasons but the tap limit,
// which is the search's own).
func (r Reason) OverLimit() bool {
	switch r {
	case ReasonOverRegisterBits, ReasonOverCICFactor, ReasonOverMultipliers, ReasonOverMemory, ReasonOverAccumulatorBits:
		return true
	}
	return false
}

// AccumulatorsOverLimit reports, for each stage of the word-length plan
// ws, whether it is a FIR, half-band or fractional stage whose accumulator
// is wider than l.MaxRegisterBits: the fabric's accumulator holds the exact
// sum of products of the rounded taps (fixed.AccumulatorBits), as it holds
// a CIC's registers. It is nil without a limit or a plan. The search holds
// chains to it only with a fixed coefficient width (see
// Limits.MaxRegisterBits); the report flags the others' plans with it.
func AccumulatorsOverLimit(ws *fixed.Widths, l Limits) []bool {
	if l.MaxRegisterBits <= 0 || ws == nil {
		return nil
	}
	over := make([]bool, len(ws.Stages))
	for i, sw := range ws.Stages {
		over[i] = !sw.CIC && sw.AccumulatorBits > l.MaxRegisterBits
	}
	return over
}

// accumulatorOverLimit reports whether some stage of ws is
// AccumulatorsOverLimit.
func accumulatorOverLimit(ws *fixed.Widths, l Limits) bool {
	return slices.Contains(AccumulatorsOverLimit(ws, l), true)
}
