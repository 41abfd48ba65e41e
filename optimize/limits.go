package optimize

import "github.com/stepdown-dsp/stepdown/chain/fixed"

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

// accumulatorOverLimit reports whether a FIR or half-band stage of the
// word-length plan ws has an accumulator wider than l.MaxRegisterBits: the
// fabric's accumulator holds the exact sum of products of the rounded taps
// (fixed.AccumulatorBits), as it holds a CIC's registers.
func accumulatorOverLimit(ws *fixed.Widths, l Limits) bool {
	if l.MaxRegisterBits <= 0 || ws == nil {
		return false
	}
	for _, sw := range ws.Stages {
		if !sw.CIC && sw.AccumulatorBits > l.MaxRegisterBits {
			return true
		}
	}
	return false
}
