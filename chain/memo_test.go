package chain

import (
	"reflect"
	"sync"
	"testing"
)

// TestStageMemo: chains designed through one StageMemo, shared by
// concurrent goroutines, equal the chains designed without it, field for
// field; the plans share half-bands, FIR stages and a compensator between
// CICs of different orders but the same R M (which the key tells apart), and
// one fails (its stage over MaxTaps) the same way both times.
func TestStageMemo(t *testing.T) {
	sp := Spec{InputRate: 16e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.2, RejectionDB: 70}
	notations := []string{
		"cic5m1r16 > fir4", "cic4m1r16 > fir4", "cic5m2r8 > hb > fir4", "cic4m1r16 > hb > hb",
		"cic5m1r8 > hb > hb > hb", "cic4m1r8 > hb > hb > hb", "cic5m1r16 > hb > hb", "fir8 > fir8", "hb > fir32",
	}
	set := Settings{MaxTaps: 201}
	want := make([]*Chain, len(notations))
	wantErr := make([]string, len(notations))
	plans := make([][]StagePlan, len(notations))
	for i, n := range notations {
		p, err := ParseNotation(n)
		if err != nil {
			t.Fatal(err)
		}
		plans[i] = p
		want[i], err = Design(sp, p, set)
		if err != nil {
			wantErr[i] = err.Error()
		}
	}
	if wantErr[len(wantErr)-1] == "" {
		t.Fatalf("%s designed within %d taps: the failing case is lost", notations[len(notations)-1], set.MaxTaps)
	}
	memo := set
	memo.Memo = NewStageMemo()
	var wg sync.WaitGroup
	got := make([]*Chain, 2*len(notations))
	gotErr := make([]string, 2*len(notations))
	for i := range got {
		wg.Add(1)
		go func() {
			defer wg.Done()
			c, err := Design(sp, plans[i%len(plans)], memo)
			got[i] = c
			if err != nil {
				gotErr[i] = err.Error()
			}
		}()
	}
	wg.Wait()
	for i := range got {
		j := i % len(plans)
		if gotErr[i] != wantErr[j] {
			t.Errorf("%s: error %q with the memo, %q without", notations[j], gotErr[i], wantErr[j])
		}
		// The cascade rule's credit tables are built on first use (a
		// stage met in the memo is not designed, so its table is not
		// built yet): build them on both sides before comparing.
		builtTables(got[i])
		builtTables(want[j])
		if !reflect.DeepEqual(got[i], want[j]) {
			t.Errorf("%s: the chain designed with the memo differs", notations[j])
		}
	}
	// Each chain owns its taps.
	if c := got[0]; c != nil {
		c.Stages[1].(FIRStage).Taps[0] = 42
		if got[len(plans)].Stages[1].(FIRStage).Taps[0] == 42 {
			t.Error("two chains share a tap slice")
		}
	}
	// Fewer stages remembered than designed: they repeat.
	stages := 0
	for _, p := range plans {
		for _, st := range p {
			if st.Kind != CIC {
				stages++
			}
		}
	}
	if n := memo.Memo.Len(); n >= stages {
		t.Errorf("%d stages remembered of %d designed: nothing repeated", n, stages)
	}
}

// builtTables builds the credit table of every FIR stage of c and
// forgets the memo's share of the tables (the tables' values, which are
// compared, are the same with or without it).
func builtTables(c *Chain) {
	if c == nil {
		return
	}
	for _, s := range c.Stages {
		if st, ok := s.(FIRStage); ok {
			st.Req.StopbandLimitFunc()
			for _, cr := range []*stopCredit{st.Req.credit, st.Req.protect} {
				if cr != nil {
					cr.share = nil
				}
			}
		}
	}
}

// A StageMemo serves a fractional stage met again (the same kind, rate
// change, requirement and settings: here the same integer decimation in
// front, by other stages) with the stage designed the first time, equal
// to a design without the memo, and the memo keeps one entry for it.
func TestFractionalMemo(t *testing.T) {
	spec := Spec{InputRate: 100e6, OutputRate: 3.84e6, Passband: 1.2e6, Protected: 1.5e6, RippleDB: 0.2, RejectionDB: 60}
	poly := StagePlan{Kind: Polyphase, Factor: 1, Up: 24, Down: 125}
	farrow := StagePlan{Kind: Farrow, Factor: 1, Up: 24, Down: 125}
	for _, plans := range [][][]StagePlan{
		{{{Kind: FIR, Factor: 5, Variant: Lowpass}, poly}, {{Kind: FIR, Factor: 5, Variant: Multiband}, poly}},
		{{{Kind: FIR, Factor: 5, Variant: Lowpass}, farrow}},
	} {
		m := NewStageMemo()
		for round := 0; round < 2; round++ {
			for _, pl := range plans {
				with, err := Design(spec, pl, Settings{Memo: m})
				if err != nil {
					t.Fatalf("%s: %v", Notation(pl), err)
				}
				without, err := Design(spec, pl, Settings{})
				if err != nil {
					t.Fatal(err)
				}
				got, want := with.Stages[len(with.Stages)-1], without.Stages[len(without.Stages)-1]
				if !reflect.DeepEqual(got, want) {
					t.Fatalf("%s: the memo's stage differs from a design without it", Notation(pl))
				}
			}
		}
		if n := len(m.frac); n != 1 {
			t.Errorf("%s: the memo holds %d fractional stages, want 1", Notation(plans[0]), n)
		}
	}
}

// A Farrow stage's estimate is its design (farrowStage), so an estimate
// through a StageMemo designs it once for the design after it: the memo
// holds one entry after Estimate, Design then returns the same stage, equal
// to a design without the memo; a polyphase stage's estimate (Herrmann
// lengths) stays out of the memo.
func TestFarrowEstimateShared(t *testing.T) {
	spec := Spec{InputRate: 100e6, OutputRate: 3.84e6, Passband: 1.2e6, Protected: 1.5e6, RippleDB: 0.2, RejectionDB: 60}
	pl := []StagePlan{{Kind: FIR, Factor: 5, Variant: Lowpass}, {Kind: Farrow, Factor: 1, Up: 24, Down: 125}}
	m := NewStageMemo()
	est, err := Estimate(spec, pl, Settings{Memo: m})
	if err != nil {
		t.Fatal(err)
	}
	if n := len(m.frac); n != 1 {
		t.Fatalf("after the estimate the memo holds %d fractional stages, want 1", n)
	}
	with, err := Design(spec, pl, Settings{Memo: m})
	if err != nil {
		t.Fatal(err)
	}
	without, err := Design(spec, pl, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	last := len(pl) - 1
	if !reflect.DeepEqual(with.Stages[last], without.Stages[last]) || !reflect.DeepEqual(est.Stages[last], without.Stages[last]) {
		t.Fatal("the Farrow stage of the estimate or of the memo's design differs from a design without the memo")
	}
	if n := len(m.frac); n != 1 {
		t.Errorf("after the design the memo holds %d fractional stages, want 1", n)
	}
	poly := []StagePlan{pl[0], {Kind: Polyphase, Factor: 1, Up: 24, Down: 125}}
	pm := NewStageMemo()
	if _, err := Estimate(spec, poly, Settings{Memo: pm}); err != nil {
		t.Fatal(err)
	}
	if n := len(pm.frac); n != 0 {
		t.Errorf("a polyphase estimate left %d entries in the memo, want 0", n)
	}
}
