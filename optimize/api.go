package optimize

// This file fixes the public API of the optimize package so that the command
// line can be written against it in parallel. The owner fills in the bodies and
// may add to it; signatures change only by agreement.

import (
	"context"
	"errors"

	"stepdown/chain"
	"stepdown/cost"
)

// Settings bounds and steers the search. The zero value is the default.
type Settings struct {
	MaxStages int          // zero means 6
	Kinds     []chain.Kind // nil means CIC, half-band and FIR
	CICOrders []int        // nil means 1..7
	CICDelays []int        // nil means 1, 2
	Jobs      int          // parallel designs; zero means runtime.GOMAXPROCS(0)

	// Rule picks the recommendation; the zero value is Knee.
	Rule Rule
	// Weights for the WeightedCost rule: multiplies, memory bits, latency.
	// Zero values mean 1 each, applied to figures normalised by the front's best.
	WeightMultiplies, WeightMemory, WeightLatency float64

	// Progress, when not nil, is called as designs finish (done of total);
	// calls come from one goroutine at a time.
	Progress func(done, total int)

	Chain chain.Settings // how stages are designed
	Cost  cost.Settings  // how chains are priced
}

// Rule is a recommendation rule.
type Rule int

const (
	// Knee picks the chain at the knee of the front.
	Knee Rule = iota
	// WeightedCost picks the least weighted cost.
	WeightedCost
)

// Candidate is one evaluated chain.
type Candidate struct {
	Plan    []chain.StagePlan
	Chain   *chain.Chain
	Figures cost.Figures // Figures.Designed says whether it came from a real design
	// MarginDB is the alias-rejection margin over the target, dB.
	MarginDB float64
}

// Result is the outcome of a search.
type Result struct {
	Candidates  int            // enumerated
	Feasible    []Candidate    // every feasible candidate, estimated figures (for the faint cloud)
	Designed    int            // how many were designed for real
	Dropped     map[string]int // reason -> count
	Front       []Candidate    // the final non-dominated set, all designed, sorted by multiplies
	Recommended int            // index into Front
	Reason      string         // one or two sentences on why
	Partial     bool           // stopped early by ctx; Front is the best so far
}

// Plan searches every split of the spec's ratio.
func Plan(ctx context.Context, spec chain.Spec, s Settings) (*Result, error) {
	return nil, errors.New("optimize: not implemented yet")
}
