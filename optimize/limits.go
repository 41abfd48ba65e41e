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
	case ReasonOverRegisterBits, ReasonOverCICFactor, ReasonOverMultipliers, ReasonOverMemory, ReasonOverAccumulatorBits, ReasonOverNativeMultipliers:
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

// BuiltOverLimits returns the limits of l that a chain's word-length plan
// ws breaks as the chain would be built, each as the Reason the search
// drops a chain for: a FIR, half-band or fractional accumulator wider than
// MaxRegisterBits (AccumulatorsOverLimit), memory (ws.MemoryBits, the
// report's fixed_memory_bits) above MaxMemoryBits, and, with a native
// multiplier size and a clock, native multiplier blocks at the clock
// (ws.HardwareMultipliers) above MaxMultipliers. Nil when it breaks none.
//
// With a fixed coefficient width the search holds every designed chain to
// these (its memory figure is then ws's; a native block count is at least
// the multipliers at the clock the estimate holds to MaxMultipliers); with
// "auto" or floating-point coefficients it cannot, and the report flags a
// chain that breaks one.
func BuiltOverLimits(ws *fixed.Widths, l Limits) []Reason {
	if ws == nil {
		return nil
	}
	var out []Reason
	if slices.Contains(AccumulatorsOverLimit(ws, l), true) {
		out = append(out, ReasonOverAccumulatorBits)
	}
	if l.MaxMemoryBits > 0 && ws.MemoryBits > l.MaxMemoryBits {
		out = append(out, ReasonOverMemory)
	}
	if l.MaxMultipliers > 0 && ws.HardwareMultipliers > l.MaxMultipliers {
		out = append(out, ReasonOverNativeMultipliers)
	}
	return out
}
