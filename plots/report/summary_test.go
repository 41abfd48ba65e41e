package report

import (
	"bytes"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// The word-length lines name a recursive CIC's register range and a
// non-recursive CIC's sub-stage widths, Bin + N i (chain.NonRecursiveBits;
// hand-worked for order 5 on 16 bits and R = 8: 21, 26, 31).
func TestWordLengthsCICForms(t *testing.T) {
	nr := chain.NonRecursiveBits(5, 8, 16)
	rep := &Report{Front: []Chain{{
		Notation:    "cic5m1r8nr > cic3m1r4",
		ChainReport: &fixed.ChainReport{},
		Stages: []Stage{
			{Kind: "cic", CICForm: "nonrecursive", StageReport: &fixed.StageReport{InputBits: 16, AccumulatorBits: 31, RegisterBits: nr, OutputBits: 24}},
			{Kind: "cic", CICForm: "recursive", StageReport: &fixed.StageReport{InputBits: 24, AccumulatorBits: 31, RegisterBits: []int{31, 30, 29, 28, 27, 26}, OutputBits: 24}},
		},
	}}}
	rep.Spec.Words.CoefficientsMode = "fixed"
	var b bytes.Buffer
	WriteWordLengths(&b, rep)
	for _, want := range []string{
		"1 cic      in 16 bits, sub-stages 21, 26, 31 bits, out 24 bits",
		"2 cic      in 24 bits, registers 31..26 bits, out 24 bits",
	} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("the summary lacks %q:\n%s", want, b.String())
		}
	}
}
