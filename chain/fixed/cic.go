package fixed

import "github.com/stepdown-dsp/stepdown/chain"

// CICPruning is a CIC decimator's register plan: Hogenauer's (1981) pruning
// widened so that no input can wrap its output. The rule has one owner,
// chain.PruneCIC, which also gives chain.CICStage its RegisterBits (the
// report's register_bits and package cost's CIC memory), so the widths
// planned and run bit-true here are those.
type CICPruning = chain.CICPruning
