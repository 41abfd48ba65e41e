package cost

// This file fixes the public API of the cost package so that optimize and the
// command line can be written against it in parallel. The owner fills in the
// bodies and may add to it; signatures change only by agreement.

import (
	"errors"

	"stepdown/chain"
)

// Settings selects how a chain is priced. The zero value is the default:
// symmetric coefficients are folded and no clock is given.
type Settings struct {
	NoSymmetry bool    // count every tap's multiply (DESIGN §5 default folds symmetry)
	Clock      float64 // Hz; zero means no multipliers-at-clock figure
}

// StageFigures is one stage's share, counted per final output sample.
type StageFigures struct {
	MultipliesPerOutput float64
	AddsPerOutput       float64
	MemoryWords         int
	MemoryBits          int
	LatencyS            float64
	Multipliers         int // hardware multipliers at Settings.Clock; 0 without a clock
}

// Figures is what a chain costs (DESIGN §5) and, for a designed chain, what it achieves (§7).
type Figures struct {
	MultipliesPerOutput float64
	AddsPerOutput       float64
	MemoryWords         int
	MemoryBits          int
	LatencyS            float64
	LatencySamples      float64 // in output samples
	MultipliersAtClock  int     // 0 without a clock
	Stages              []StageFigures

	Designed bool
	// Analysis is the measured truth of a designed chain; for an estimated
	// chain it is the per-stage estimate of the same figures.
	Analysis chain.Analysis
}

// Evaluate turns a chain into all of its figures. It is the one call the
// optimiser and the command line both use.
func Evaluate(spec chain.Spec, c *chain.Chain, s Settings) (Figures, error) {
	return Figures{}, errors.New("cost: not implemented yet")
}
