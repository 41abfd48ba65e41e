package report

import (
	"bytes"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
)

// NewResources on a hand-built chain, counted by hand: a CIC 4 lanes wide
// and a FIR whose planned memory is just above BlockMemoryBits.
func TestNewResources(t *testing.T) {
	ip := func(v int) *int { return &v }
	c := Chain{Notation: "cic3m1r8 > fir4", Stages: []Stage{
		// CIC: 3 x 8 + 3 = 27 adds per its output, x 4 later = 108 per final
		// output; at 1 MS/s out and a 100 MHz clock: 108e6 / 100e6 -> 2.
		{Kind: "cic", AddsPerOutput: 108, MemoryBits: 315, Multipliers: ip(0), ParallelLanes: ip(4), RegisterBits: []int{21, 21, 21, 20, 19, 18}},
		// FIR: 30 adds per output: 30e6 / 100e6 -> 1; planned memory 744 + 288.
		{Kind: "fir", AddsPerOutput: 30, MemoryBits: 1032, Multipliers: ip(1), ParallelLanes: ip(1),
			StageReport: &fixed.StageReport{AccumulatorBits: 44, DataMemoryBits: 744, CoefMemoryBits: 288, HardwareMultipliers: ip(2)}},
	}}
	r := NewResources(&c, 100e6, 1e6, 1)
	want := Resources{Multipliers: 2, Adders: 3, RegisterBits: 315, BlockMemoryBits: 1032, Lanes: 4, Stages: []StageResources{
		{Stage: 1, Kind: "cic", Lanes: 4, Adders: 2, AdderBits: 21, RegisterBits: 315},
		{Stage: 2, Kind: "fir", Lanes: 1, Multipliers: 2, Adders: 1, AdderBits: 44, BlockMemoryBits: 1032},
	}}
	if r == nil {
		t.Fatal("no resources with a clock")
	}
	if r.Multipliers != want.Multipliers || r.Adders != want.Adders || r.RegisterBits != want.RegisterBits ||
		r.BlockMemoryBits != want.BlockMemoryBits || r.Lanes != want.Lanes {
		t.Errorf("totals %+v, want %+v", *r, want)
	}
	for i := range want.Stages {
		if r.Stages[i] != want.Stages[i] {
			t.Errorf("stage %d: %+v, want %+v", i+1, r.Stages[i], want.Stages[i])
		}
	}
	if NewResources(&c, 0, 1e6, 1) != nil {
		t.Error("resources without a clock")
	}
	c.Resources = r
	var b bytes.Buffer
	WriteResources(&b, &Report{Front: []Chain{c}})
	for _, frag := range []string{"resources of cic3m1r8 > fir4", "block memory bits", "total"} {
		if !strings.Contains(b.String(), frag) {
			t.Errorf("table lacks %q:\n%s", frag, b.String())
		}
	}
}

// With no lanes (the example's clock is above its input rate) a chain's
// bill holds exactly its planned memory, I and Q data paths both: register
// and block memory bits add up to fixed_memory_bits (chain/fixed's count of
// data and coefficients) on every front chain of the example, a complex
// chain.
func TestResourcesHoldBothPaths(t *testing.T) {
	_, _, rep := planned(t, specfile.ExampleText)
	for _, c := range rep.Front {
		r := c.Resources
		if r == nil || c.ChainReport == nil {
			t.Fatalf("%s: no resources or word lengths", c.Notation)
		}
		if got := r.RegisterBits + r.BlockMemoryBits; got != c.FixedMemoryBits {
			t.Errorf("%s: the bill holds %d memory bits, the plan %d", c.Notation, got, c.FixedMemoryBits)
		}
	}
}
