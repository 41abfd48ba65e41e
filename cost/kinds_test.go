package cost

import (
	"slices"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// everyKind returns an invented spec and an estimated chain with a stage of
// every kind in chain.Kinds, or fails when the plan no longer covers them.
func everyKind(t *testing.T) (chain.Spec, *chain.Chain) {
	t.Helper()
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3, RippleDB: 0.2, RejectionDB: 85}
	plan, err := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Estimate(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	var got []chain.Kind
	for _, k := range chain.Kinds() {
		if slices.ContainsFunc(c.Stages, func(s chain.Stage) bool { return s.Kind() == k }) {
			got = append(got, k)
		}
	}
	if !slices.Equal(got, chain.Kinds()) {
		t.Fatalf("the plan has the kinds %v, want every kind %v: add the missing ones to it", got, chain.Kinds())
	}
	return spec, c
}

func TestPriceEveryKind(t *testing.T) {
	spec, c := everyKind(t)
	f, err := Evaluate(spec, c, Settings{Clock: 100e6})
	if err != nil {
		t.Fatal(err)
	}
	for i, st := range c.Stages {
		sf := f.Stages[i]
		if !(sf.AddsPerOutput > 0) || sf.MemoryWords <= 0 || sf.MemoryBits <= 0 || !(sf.LatencyS > 0) {
			t.Errorf("stage %d (%s): %+v, want adds, memory and latency", i+1, st.Kind(), sf)
		}
		// Every kind but the CIC multiplies.
		if mul := sf.MultipliesPerOutput > 0; mul != (st.Kind() != chain.CIC) {
			t.Errorf("stage %d (%s): %v multiplies per output", i+1, st.Kind(), sf.MultipliesPerOutput)
		}
	}
}

func TestPriceRefusesPointerStage(t *testing.T) {
	spec, c := everyKind(t)
	fs := c.Stages[3].(chain.FIRStage)
	c.Stages[3] = &fs
	_, err := Price(spec, c, Settings{})
	if err == nil || !strings.Contains(err.Error(), "stage 4 is a *chain.FIRStage") {
		t.Errorf("a pointer stage: error %v, want one naming stage 4", err)
	}
}
