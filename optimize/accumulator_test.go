package optimize_test

import (
	"context"
	"math/big"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// accBits is the width of a two's-complement accumulator that holds every
// sum of products of the integer taps h with inputs of in bits: the
// extreme sums are -2^(in-1) sum|h| and its negation less sum|h|, so the
// width is the smallest b with 2^(b-1) >= 2^(in-1) sum|h| (common practice,
// worked from the two's-complement ranges; apart from fixed.AccumulatorBits).
func accBits(h []int64, in int) int {
	s := new(big.Int)
	for _, v := range h {
		s.Add(s, new(big.Int).Abs(big.NewInt(v)))
	}
	s.Lsh(s, uint(in-1)) // the most negative input times sum|h|
	b := 1
	for new(big.Int).Lsh(big.NewInt(1), uint(b-1)).Cmp(s) < 0 {
		b++
	}
	return b
}

// Hardware.max_register_bits holds FIR and half-band accumulators too: on
// an invented receiver (16-bit input, 24-bit data, 18-bit coefficients,
// D = 16) a limit of 41 bits, which the CICs' registers meet and the
// accumulators of 24-bit data times 18-bit taps (about 42 bits) do not all
// meet, drops chains counted as fir_accumulator_over_limit, and every
// front chain's accumulators, recomputed from its rounded taps, fit. A
// limit no accumulator can meet names Limits.MaxRegisterBits; Check says
// why it drops a chain.
func TestAccumulatorLimit(t *testing.T) {
	needDesigns(t)
	spec := chain.Spec{InputRate: 15.36e6, OutputRate: 960e3, Passband: 300e3, RippleDB: 0.1, RejectionDB: 70,
		InputBits: 16, OutputBits: 24, CoefBits: 18}
	const limit = 41
	set := optimize.Settings{MaxStages: 2, Limits: optimize.Limits{MaxRegisterBits: limit}}
	r, err := optimize.Plan(context.Background(), spec, set)
	if err != nil {
		t.Fatal(err)
	}
	if r.Dropped[optimize.ReasonOverAccumulatorBits] == 0 || len(r.Front) == 0 {
		t.Fatalf("front %d, dropped %v: the case needs accumulators over %d bits and a front", len(r.Front), r.Dropped, limit)
	}
	ns, _ := spec.Normalize()
	for _, c := range r.Front {
		ws, _, err := fixed.PlanChain(ns, c.Chain, set.Fixed)
		if err != nil {
			t.Fatal(err)
		}
		for k, sw := range ws.Stages {
			if sw.CIC {
				continue
			}
			if b := accBits(sw.Coefficients.Ints, sw.InputBits); b > limit || sw.AccumulatorBits > limit {
				t.Errorf("%s stage %d: accumulator %d bits (recomputed %d) over the %d-bit limit", chain.Notation(c.Plan), k+1, sw.AccumulatorBits, b, limit)
			}
		}
	}
	plan := r.Front[0].Plan // a chain that meets the spec under the 41-bit limit
	t.Logf("limit %d bits: front %d, dropped %d for accumulators", limit, len(r.Front), r.Dropped[optimize.ReasonOverAccumulatorBits])
	if !optimize.ReasonOverAccumulatorBits.OverLimit() || string(optimize.ReasonOverAccumulatorBits) != "fir_accumulator_over_limit" {
		t.Error("the reason's name or its kind changed")
	}

	// 24-bit data times any 18-bit taps needs more than 40 bits: nothing
	// with a FIR or half-band fits 36, and the CICs alone cannot meet the
	// spec.
	tight := optimize.Settings{MaxStages: 2, Limits: optimize.Limits{MaxRegisterBits: 36}}
	r, err = optimize.Plan(context.Background(), spec, tight)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Front) != 0 || !strings.Contains(r.Reason, "Limits.MaxRegisterBits binds") {
		t.Errorf("36-bit limit: front %d, reason %q", len(r.Front), r.Reason)
	}
	_, why, err := optimize.Check(context.Background(), spec, plan, tight)
	if err != nil {
		t.Fatal(err)
	}
	if why != optimize.ReasonOverAccumulatorBits {
		t.Errorf("Check of %s under a 36-bit limit: reason %q", chain.Notation(plan), why)
	}
}
