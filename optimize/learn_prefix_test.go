package optimize

import (
	"context"
	"fmt"
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
)

// scriptDesigner designs from a script: per plan (by notation) one figure
// v per stage, priced v multiplies, 100 v bits and v ms; the plans in fail
// fail (whole and in part), those in miss miss the spec when analysed. It
// designs in part too (prefixDesigner), its estimated stages priced 99,
// and logs every call.
type scriptDesigner struct {
	stages map[string][]float64
	fail   map[string]bool
	miss   map[string]bool
	calls  *[]string
}

func scripted(plan []chain.StagePlan, vs []float64, designed bool) Candidate {
	var f cost.Figures
	for _, v := range vs {
		st := cost.StageFigures{MultipliesPerOutput: v, MemoryBits: int(100 * v), LatencyS: v / 1000}
		f.Stages = append(f.Stages, st)
		f.MultipliesPerOutput += st.MultipliesPerOutput
		f.MemoryBits += st.MemoryBits
		f.LatencyS += st.LatencyS
	}
	f.Designed = designed
	return Candidate{Plan: clonePlan(plan), Figures: f}
}

func (d scriptDesigner) design(plan []chain.StagePlan) (Candidate, Reason) {
	n := chain.Notation(plan)
	*d.calls = append(*d.calls, "whole "+n)
	if d.fail[n] {
		return Candidate{}, ReasonDesignFailed
	}
	return scripted(plan, d.stages[n], true), ""
}

func (d scriptDesigner) designPrefix(plan []chain.StagePlan, k int) (Candidate, bool) {
	n := chain.Notation(plan)
	*d.calls = append(*d.calls, fmt.Sprintf("part %s %d", n, k))
	if d.fail[n] {
		return Candidate{}, false
	}
	vs := slices.Clone(d.stages[n][:k])
	for len(vs) < len(plan) {
		vs = append(vs, 99)
	}
	return scripted(plan, vs, false), true
}

func (d scriptDesigner) analyze(c Candidate) (Candidate, Reason) {
	if d.miss[chain.Notation(c.Plan)] {
		return Candidate{}, ReasonMissRejection
	}
	return c, ""
}

// learnScript runs the design tier's learn on band (in that order) at
// decimation dec with d, on one worker, and returns the front's notations.
func learnScript(t *testing.T, dec int, band [][]chain.StagePlan, d scriptDesigner) ([]string, *Result) {
	t.Helper()
	sp := rxSpec()
	sp.InputRate = sp.OutputRate * float64(dec)
	est := newEstimator(newParams(sp, false), 0)
	est.keepBeaten = true
	s := Settings{}
	res := &Result{Dropped: map[Reason]int{}}
	tr := newDesignTier(context.Background(), 1, d, est, &s, res)
	var b []scored
	for _, pl := range band {
		est.score(pl) // a scripted band: what the estimate drops is designed all the same
		b = append(b, scored{plan: pl})
	}
	if ok, _ := tr.learn(b); !ok {
		t.Fatal("learn cancelled")
	}
	var fr []string
	for _, c := range tr.front() {
		fr = append(fr, chain.Notation(c.Plan))
	}
	return fr, res
}

func firPlan(f int) chain.StagePlan { return chain.StagePlan{Kind: chain.FIR, Factor: f} }

// TestLearnFinishesPastFailures: a representative designed in part
// (hb > fir4, its fir4 learnt from fir2 > fir4's script at 5 but 4.4 in
// it) is designed whole and beats fir2 > fir4 whether or not a failing
// chain (fir4 > fir2, whose stages are never learnt) is in the band: a
// failed chain is no front point for the finishing rule.
func TestLearnFinishesPastFailures(t *testing.T) {
	failing := []chain.StagePlan{firPlan(4), firPlan(2)}
	a := []chain.StagePlan{firPlan(2), firPlan(4)}
	p := []chain.StagePlan{{Kind: chain.HalfBand, Factor: 2}, firPlan(4)}
	for _, band := range [][][]chain.StagePlan{{a, p}, {failing, a, p}} {
		var calls []string
		d := scriptDesigner{
			stages: map[string][]float64{"fir2 > fir4": {5, 5}, "hb > fir4": {5.5, 4.4}},
			fail:   map[string]bool{"fir4 > fir2": true},
			calls:  &calls,
		}
		fr, _ := learnScript(t, 8, band, d)
		if !slices.Equal(fr, []string{"hb > fir4"}) {
			t.Errorf("band of %d: front %v, want [hb > fir4]; calls %q", len(band), fr, calls)
		}
	}
}

// TestLearnCICWhole: a representative taken for a CIC not seen before is
// designed whole, even when a later stage of it is wanted too.
func TestLearnCICWhole(t *testing.T) {
	cic := func(n int) chain.StagePlan {
		return chain.StagePlan{Kind: chain.CIC, Factor: 4, CICOrder: n, CICDelay: 1}
	}
	hb := chain.StagePlan{Kind: chain.HalfBand, Factor: 2}
	q := []chain.StagePlan{cic(3), hb, firPlan(2)}
	r := []chain.StagePlan{cic(4), hb, firPlan(2)}
	var calls []string
	d := scriptDesigner{
		stages: map[string][]float64{chain.Notation(q): {1, 3, 4}, chain.Notation(r): {1, 3, 6}},
		calls:  &calls,
	}
	learnScript(t, 16, [][]chain.StagePlan{q, r}, d)
	for _, c := range calls {
		if c == "part "+chain.Notation(r)+" 2" || c == "part "+chain.Notation(q)+" 2" {
			t.Errorf("a representative taken for its CIC was designed in part: %q", calls)
		}
	}
}

// TestLearnCountsOnce: a representative designed in part and later whole
// (when the front's other member misses the spec) counts once in
// Result.Designed.
func TestLearnCountsOnce(t *testing.T) {
	a := []chain.StagePlan{firPlan(2), firPlan(4)}
	p := []chain.StagePlan{{Kind: chain.HalfBand, Factor: 2}, firPlan(4)}
	var calls []string
	d := scriptDesigner{
		stages: map[string][]float64{"fir2 > fir4": {5, 5}, "hb > fir4": {7, 5}},
		miss:   map[string]bool{"fir2 > fir4": true},
		calls:  &calls,
	}
	fr, res := learnScript(t, 8, [][]chain.StagePlan{a, p}, d)
	if !slices.Equal(fr, []string{"hb > fir4"}) || res.Designed != 2 {
		t.Errorf("front %v, Designed %d; want [hb > fir4], 2 (calls %q)", fr, res.Designed, calls)
	}
}
