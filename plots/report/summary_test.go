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

// The lanes column sits before latency in the head as in the rows, with
// and without the multipliers column (a multiplierless spec has none).
func TestTableLanesColumn(t *testing.T) {
	clock, lanes, adders := 400e6, 6, 55
	for _, ml := range []bool{false, true} {
		rep := &Report{Spec: Spec{Hardware: Hardware{ClockHz: &clock, Multiplierless: ml}},
			Front: []Chain{{Notation: "cic3m1r16 > fir2 > hb", MultipliesPerOutput: 9, MemoryBits: 989,
				LatencyS: 153e-9, LatencySamples: 5.7, ParallelLanes: &lanes, Adders: &adders, Designed: true, MeetsTargets: true}}}
		var b bytes.Buffer
		WriteTable(&b, rep)
		lines := strings.Split(b.String(), "\n")
		head, row := lines[0], lines[1]
		// Each column is right-aligned to its head's end: the lanes value
		// ends where "lanes" ends, and the latency text where "latency" does.
		end := strings.Index(head, "lanes") + len("lanes")
		if end < len("lanes") || row[end-1:end] != "6" {
			t.Errorf("multiplierless %v: lanes column misplaced:\n%s\n%s", ml, head, row)
		}
		if strings.Index(head, "lanes") > strings.Index(head, "latency") {
			t.Errorf("multiplierless %v: lanes after latency in the head:\n%s", ml, head)
		}
	}
}
