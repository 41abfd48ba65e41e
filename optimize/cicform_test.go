package optimize_test

import (
	"context"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// TestNonRecursiveSelected plans an invented radar receiver, 2.4 GS/s of
// 12-bit samples down to 37.5 MS/s (D = 64), with both CIC forms allowed:
// with a 400 MHz clock (6 lanes at the input) the non-recursive form's
// shared delay lines beat the recursive integrators registered per lane,
// so every front chain that starts with a power-of-two CIC of M = 1 uses
// it; without a clock the recursive CIC's 2N registers win from R = 8 on
// (measured: the front keeps cic3m1r8, cic3m1r16, cic5m1r32 recursive),
// while at R = 2 and 4 the non-recursive delay line of N input words is
// still the smaller (cic2m1r2nr: 2 x 12 bits against 4 x 14).
func TestNonRecursiveSelected(t *testing.T) {
	needDesigns(t)
	spec := chain.Spec{InputRate: 2.4e9, OutputRate: 37.5e6, Passband: 12e6, RippleDB: 0.2, RejectionDB: 60, InputBits: 12, OutputBits: 18}
	forms := []chain.CICForm{chain.Recursive, chain.NonRecursive}
	count := func(clock float64) (nr, nrBig int, front []string) {
		res, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 3, CICForms: forms, Cost: cost.Settings{Clock: clock}})
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range res.Front {
			n := chain.Notation(c.Plan)
			front = append(front, n)
			if cs, ok := c.Chain.Stages[0].(chain.CICStage); ok {
				if cs.Form == chain.NonRecursive {
					nr++
					if cs.R >= 8 {
						nrBig++
					}
					if !strings.HasSuffix(strings.SplitN(n, " ", 2)[0], "nr") {
						t.Errorf("%s: non-recursive CIC without the suffix", n)
					}
				}
			}
		}
		return nr, nrBig, front
	}
	nr, _, front := count(400e6)
	t.Logf("400 MHz clock: %d front chains with a non-recursive CIC: %v", nr, front)
	if nr < 8 {
		t.Errorf("with a 400 MHz clock no front chain uses the non-recursive CIC: %v", front)
	}
	_, big, front := count(0)
	t.Logf("no clock: %v", front)
	if big != 0 {
		t.Errorf("without a clock %d front chains use a non-recursive CIC of R >= 8: %v", big, front)
	}
}
