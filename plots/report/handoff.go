package report

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff/vectors"
)

// handoffPlan is what the hand-off files need of a chain's word-length
// plan: the cascade in chain/fixed's terms, its widths, and the rounded
// chain's worst alias (the tone_alias stimulus).
type handoffPlan struct {
	cascade      fixed.Cascade
	widths       *fixed.Widths
	worstAliasHz float64
}

// HandoffFiles returns the files the RTL team needs to prove an
// implementation of chain c (one of a report's front, with its word
// lengths planned by AddWordLengths): the test vectors (package
// handoff/vectors) under vectors/. A chain without a word-length plan, or
// whose registers are too wide for the integer model, gets none and the
// reason.
func HandoffFiles(c Chain) ([]File, string) {
	if c.plan == nil {
		if c.WordLengthsError != "" {
			return nil, "no word-length plan: " + c.WordLengthsError
		}
		return nil, "no word-length plan"
	}
	p := c.plan
	v, err := vectors.Generate(p.cascade, p.widths, vectors.Options{AliasHz: p.worstAliasHz, Notation: c.Notation})
	if err != nil {
		return nil, fmt.Sprintf("no test vectors: %v", err)
	}
	return v.Files(), ""
}
