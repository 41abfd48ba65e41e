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

// A stage's headroom point (package chain/fixed, Headroom) is printed
// under its word-length line; the other rounding points are not.
func TestWordLengthsHeadroomLine(t *testing.T) {
	h := "headroom: an input tone at 1 MHz in the passband can peak at +4.011 dB of this output's full scale"
	rep := &Report{Front: []Chain{{
		Notation:    "fir2 > cic7m1r64",
		ChainReport: &fixed.ChainReport{},
		Stages: []Stage{
			{Kind: "fir", StageReport: &fixed.StageReport{InputBits: 16, CoefficientBits: 15, AccumulatorBits: 31, MultiplierSize: "16 x 15", OutputBits: 14,
				QuantisedMeetsBands: true, RoundingPoints: []string{"output: round half up, dropping 15 LSBs, then saturate to 14 bits", h}}},
		},
	}}}
	rep.Spec.Words.CoefficientsMode = "auto"
	var b bytes.Buffer
	WriteWordLengths(&b, rep)
	if !strings.Contains(b.String(), "\n    "+h+"\n") || strings.Contains(b.String(), "round half up") {
		t.Errorf("the summary:\n%s", b.String())
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

// A chain judged on its rounded taps whose word lengths could not be
// planned shows its float design's figures, and the table says so: on its
// row and in the footnote, which otherwise promises the worse of float and
// rounded; CheckReason names the widths that would fit when AddWordLengths
// found them.
func TestTableUnjudgedRoundedTaps(t *testing.T) {
	coef := 36
	judged := Chain{Notation: "cic5m1r16 > fir4", VerdictBasis: "rounded taps", MeetsTargets: true, FloatMeetsTargets: true,
		AliasRejectionDB: 96, PassbandRippleDB: 0.05, ChainReport: &fixed.ChainReport{QuantisedRejectionDB: 95.5, QuantisedRippleDB: 0.06}, Designed: true}
	unjudged := Chain{Notation: "cic7m1r32 > fir2", VerdictBasis: "rounded taps", FloatMeetsTargets: true,
		AliasRejectionDB: 98.6, PassbandRippleDB: 0.0673, Designed: true,
		WordLengthsError: "stage 2: accumulator of 28-bit data and 36-bit coefficients needs 64 bits; at most 63 are supported"}
	for _, tc := range []struct {
		front      []Chain
		row, foot  string
		worseFirst bool
	}{
		{[]Chain{unjudged}, "misses spec (float figures: rounded taps not judged)", "* the float design's figures: its taps rounded to 36 bits, as they will be built, were not judged", false},
		{[]Chain{judged, unjudged}, "misses spec (float figures: rounded taps not judged)", "(the float design's where the rounded taps were not judged)", true},
		{[]Chain{judged}, "designed", "the verdict needs both to meet\n", true},
	} {
		rep := &Report{Front: tc.front}
		rep.Spec.Words.Coefficients = &coef
		rep.Spec.Words.CoefficientsMode = "fixed"
		var b bytes.Buffer
		WriteTable(&b, rep)
		got := b.String()
		if !strings.Contains(got, tc.row) || !strings.Contains(got, tc.foot) {
			t.Errorf("front of %d: want %q and %q in\n%s", len(tc.front), tc.row, tc.foot, got)
		}
		if worse := strings.Contains(got, "* the worse of the float design"); worse != tc.worseFirst {
			t.Errorf("front of %d: footnote promises the worse of float and rounded: %v, want %v\n%s", len(tc.front), worse, tc.worseFirst, got)
		}
	}
	// In a stopped run, only a chain stopped before its word lengths is
	// "not judged (stopped)"; one whose words could not be planned says so.
	stopped := unjudged
	stopped.WordLengthsError = StoppedBeforeWordLengths
	rep := &Report{Front: []Chain{stopped, unjudged}, Partial: true}
	rep.Spec.Words.Coefficients = &coef
	var b bytes.Buffer
	WriteTable(&b, rep)
	if got := b.String(); strings.Count(got, "not judged (stopped)") != 1 || strings.Count(got, "float figures: rounded taps not judged") != 1 ||
		!strings.Contains(got, "were not judged") {
		t.Errorf("stopped run: want one stopped row, one unplanned row and the float footnote:\n%s", got)
	}
	// The figures of an unjudged chain are its float design's.
	if rej, rip := unjudged.BuiltFigures(); rej != 98.6 || rip != 0.0673 {
		t.Errorf("unjudged BuiltFigures = %v, %v: want the float design's", rej, rip)
	}
	if rej, rip := judged.BuiltFigures(); rej != 95.5 || rip != 0.06 {
		t.Errorf("judged BuiltFigures = %v, %v: want the worse of float and rounded", rej, rip)
	}
	if got := CheckReason(unjudged, Spec{RejectionDB: 95, RippleDB: 0.1}); !strings.Contains(got, "cannot be judged with its taps rounded: stage 2: accumulator") {
		t.Errorf("CheckReason = %q", got)
	}
}

// A ripple the analysis caps (a null inside the passband) is written as
// such, never as a figure, and a gain that rounds to zero has no sign
// (an adversarial review saw "ripple 300.0000 dB" and "-0.00 dB").
func TestFigureTexts(t *testing.T) {
	for _, tc := range []struct {
		got, want string
	}{
		{RippleText(chain.MaxFigureDB), "null in passband"},
		{RippleText(0.12345), "0.1235 dB"},
		{GainText(-0.001), "0.00 dB"},
		{GainText(0.001), "0.00 dB"},
		{GainText(-0.006), "-0.01 dB"},
		{GainText(-5.93), "-5.93 dB"},
	} {
		if tc.got != tc.want {
			t.Errorf("%q, want %q", tc.got, tc.want)
		}
	}
}

// With floating-point taps the memory column counts coefficient words at
// the cost model's 18 bits, which the word lengths' chosen widths differ
// from (a truth audit found 2% more built): the table says so under it,
// and says nothing of it with a fixed width, where the two agree.
func TestTableFloatCoefficientMemoryNote(t *testing.T) {
	for _, mode := range []string{"float", "fixed"} {
		rep := &Report{Front: []Chain{{Notation: "fir2 > cic6m1r6", MultipliesPerOutput: 10, MemoryBits: 849,
			LatencyS: 5.75e-6, LatencySamples: 5.8, Designed: true, MeetsTargets: true}}}
		rep.Spec.Words.CoefficientsMode = mode
		var b bytes.Buffer
		WriteTable(&b, rep)
		has := strings.Contains(b.String(), "memory bits count 18-bit coefficient words (the taps have no fixed width)")
		if has != (mode == "float") {
			t.Errorf("%s coefficients: the note is there %v:\n%s", mode, has, b.String())
		}
	}
}
