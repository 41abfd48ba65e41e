package report

import (
	"slices"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// NewChain reports a stage of every kind in chain.Kinds with its kind's
// fields, and refuses a stage that is not a chain.CICStage or
// chain.FIRStage value with an error naming it.
func TestNewChainEveryKind(t *testing.T) {
	spec, err := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3, RippleDB: 0.2, RejectionDB: 85}.Normalize()
	if err != nil {
		t.Fatal(err)
	}
	plan, err := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	f, err := cost.Evaluate(spec, c, cost.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	cand := optimize.Candidate{Plan: plan, Chain: c, Figures: f}
	out, err := NewChain(spec, cand, false)
	if err != nil {
		t.Fatal(err)
	}
	var kinds []chain.Kind
	for i, st := range c.Stages {
		k := st.Kind()
		if !slices.Contains(kinds, k) {
			kinds = append(kinds, k)
		}
		s := out.Stages[i]
		if s.Kind != k.String() {
			t.Errorf("stage %d: kind %q, want %q", i+1, s.Kind, k)
		}
		cic := s.CICOrder > 0 && s.CICDelay > 0 && len(s.RegisterBits) > 0
		fir := s.Taps > 0 && len(s.Coefficients) == s.Taps && s.CompensatesCIC != nil
		if cic != (k == chain.CIC) || fir != (k != chain.CIC) || (s.Variant != "") != (k == chain.FIR) {
			t.Errorf("stage %d (%s): CIC fields %v, FIR fields %v, variant %q", i+1, k, cic, fir, s.Variant)
		}
	}
	slices.Sort(kinds)
	if !slices.Equal(kinds, chain.Kinds()) {
		t.Fatalf("the plan has the kinds %v, want every kind %v: add the missing ones to it", kinds, chain.Kinds())
	}

	ptr := *c
	ptr.Stages = slices.Clone(c.Stages)
	cs := ptr.Stages[0].(chain.CICStage)
	ptr.Stages[0] = &cs
	cand.Chain = &ptr
	if _, err := NewChain(spec, cand, false); err == nil || !strings.Contains(err.Error(), "stage 1 is a *chain.CICStage") {
		t.Errorf("a pointer stage: error %v, want one naming stage 1", err)
	}
}
