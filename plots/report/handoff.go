package report

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff"
	"github.com/stepdown-dsp/stepdown/handoff/headers"
	"github.com/stepdown-dsp/stepdown/handoff/rtl"
	"github.com/stepdown-dsp/stepdown/handoff/vectors"
)

// handoffPlan is what the hand-off files need of a chain's word-length
// plan: the cascade in chain/fixed's terms, its widths, and the rounded
// chain's worst alias (the tone_alias stimulus; for an interpolation chain
// its worst image at the output rate, which package vectors folds to the
// channel tone that makes it).
type handoffPlan struct {
	cascade      fixed.Cascade
	widths       *fixed.Widths
	worstAliasHz float64
}

// HandoffFiles returns the files the RTL team needs to prove an
// implementation of chain c (one of a report's front, with its word
// lengths planned by AddWordLengths): the C, VHDL and Verilog
// declarations of its coefficients and widths under headers/ (package
// handoff/headers) and the test vectors under vectors/ (package
// handoff/vectors), and a Verilog reference model with its self-checking
// testbench under rtl/ (package handoff/rtl), for a decimation or an
// interpolation chain (whose model streams with valid/ready handshakes,
// L outputs per input). A chain with a fractional stage gets none
// (NoHandoff), nor does one without a word-length plan, and
// one whose registers are too wide for the integer model gets no vectors
// or model; the second result then says why.
func HandoffFiles(c Chain) ([]File, string) {
	if c.Fractional() {
		return nil, NoHandoff
	}
	if c.plan == nil {
		if c.WordLengthsError != "" {
			return nil, "no word-length plan: " + c.WordLengthsError
		}
		return nil, "no word-length plan"
	}
	p := c.plan
	files, err := headers.Files(p.cascade, p.widths, headers.Options{Notation: c.Notation})
	if err != nil {
		return nil, fmt.Sprintf("no headers: %v", err)
	}
	v, err := vectors.Generate(p.cascade, p.widths, vectors.Options{AliasHz: p.worstAliasHz, Notation: c.Notation})
	if err != nil {
		return files, fmt.Sprintf("no test vectors: %v", err)
	}
	model, err := rtl.Model(p.cascade, p.widths, rtl.Options{})
	if err != nil {
		return append(files, v.Files()...), fmt.Sprintf("no reference model: %v", err)
	}
	tb, err := rtl.Testbench(p.cascade, p.widths, rtl.Options{}, vectors.Signals)
	if err != nil {
		return append(files, v.Files()...), fmt.Sprintf("no testbench: %v", err)
	}
	files = append(files, handoff.File{Name: "rtl/stepdown_chain.v", Data: model}, handoff.File{Name: "rtl/stepdown_tb.v", Data: tb})
	return append(files, v.Files()...), ""
}
