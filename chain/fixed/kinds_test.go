package fixed

import (
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// A designed chain with a stage of every kind in chain.Kinds goes through
// FromChain and QuantisedChain, values and pointers alike, each stage keeping
// its kind.
func TestFromChainEveryKind(t *testing.T) {
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3, RippleDB: 0.2, RejectionDB: 85}
	plan, err := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	var kinds []chain.Kind
	for _, k := range chain.Kinds() {
		if slices.ContainsFunc(c.Stages, func(s chain.Stage) bool { return s.Kind() == k }) {
			kinds = append(kinds, k)
		}
	}
	if !slices.Equal(kinds, chain.Kinds()) {
		t.Fatalf("the plan has the kinds %v, want every kind %v: add the missing ones to it", kinds, chain.Kinds())
	}

	ptr := *c
	ptr.Stages = slices.Clone(c.Stages)
	for i, s := range ptr.Stages {
		switch st := s.(type) {
		case chain.CICStage:
			ptr.Stages[i] = &st
		case chain.FIRStage:
			ptr.Stages[i] = &st
		}
	}
	for _, cc := range []*chain.Chain{c, &ptr} {
		cas, words, err := FromChain(spec, cc)
		if err != nil {
			t.Fatal(err)
		}
		w, err := Plan(cas, words, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		q := QuantisedChain(cc, w)
		for i, s := range c.Stages {
			k := s.Kind()
			fs := cas.Stages[i]
			if fs.CIC != (k == chain.CIC) || fs.HalfBand != (k == chain.HalfBand) || fs.R != s.Factor() {
				t.Errorf("stage %d (%s): planner stage CIC %v, half-band %v, R %d", i+1, k, fs.CIC, fs.HalfBand, fs.R)
			}
			if q.Stages[i].Kind() != k {
				t.Errorf("stage %d (%s): quantised stage is a %s", i+1, k, q.Stages[i].Kind())
			}
			if k == chain.CIC {
				continue
			}
			qf, ok := q.Stages[i].(chain.FIRStage)
			if !ok || !slices.Equal(qf.Taps, w.Stages[i].Coefficients.Float()) {
				t.Errorf("stage %d (%s): quantised stage %T does not carry the quantised taps", i+1, k, q.Stages[i])
			}
		}
		if _, err := chain.Analyze(q, spec); err != nil {
			t.Error(err)
		}
	}
}
