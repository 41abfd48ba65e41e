package optimize

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/internal/densecheck"
)

// exampleSpec is the built-in example (chain/specfile,
// example.go): 122.88 MS/s to 1.92 MS/s I/Q, 480 kHz passband, 640 kHz
// protected, 0.2 dB ripple, 90 dB rejection, 16-bit input, 24-bit output,
// 18-bit coefficients; its search settings are max_stages 5, CIC orders 3
// to 6, delay 1.
func exampleSpec() (chain.Spec, Settings) {
	return chain.Spec{InputRate: 122.88e6, OutputRate: 1.92e6, Passband: 480e3, Protected: 640e3,
			RippleDB: 0.2, RejectionDB: 90, Complex: true, InputBits: 16, OutputBits: 24, CoefBits: 18},
		Settings{MaxStages: 5, CICOrders: []int{3, 4, 5, 6}, CICDelays: []int{1}}
}

// roundingCases are invented specs with small ratios (D = 8 and 16), so
// that each plan takes about a second or less.
var roundingCases = []struct {
	name string
	spec chain.Spec
}{
	// A 200 MS/s to 25 MS/s front end, 9 MHz passband, 90 dB, 14-bit taps.
	{"D8 90dB 14b", chain.Spec{InputRate: 200e6, OutputRate: 25e6, Passband: 9e6, RippleDB: 0.1, RejectionDB: 90, CoefBits: 14}},
	// The same at 95 dB with 16-bit taps.
	{"D8 95dB 16b", chain.Spec{InputRate: 200e6, OutputRate: 25e6, Passband: 9e6, RippleDB: 0.1, RejectionDB: 95, CoefBits: 16}},
	// A 48 kS/s to 3 kS/s audio decimator, 1.2 kHz passband, 100 dB, 18 bits.
	{"D16 100dB 18b", chain.Spec{InputRate: 48e3, OutputRate: 3e3, Passband: 1.2e3, RippleDB: 0.05, RejectionDB: 100, CoefBits: 18}},
}

// TestFrontSurvivesRounding: with a fixed coefficient width every chain on
// the front meets the rejection and ripple targets with the taps fixed
// plans for it. The check is independent of chain.Analyze: each FIR and
// half-band stage's taps are rebuilt from the integers fixed chose
// (Ints / 2^Frac, package fixed's doc), checked against that rule (a
// Bits-wide code, the largest Frac that fits the largest tap, each code
// within one step of plain rounding since the local search only takes the
// other rounding), and the cascade's |H| is evaluated by brute force (the
// DTFT of each stage, the CIC in closed form, Hogenauer 1981) on a grid of
// 64 points per ripple of its longest stage over the alias bands and the
// passband.
func TestFrontSurvivesRounding(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	type run struct {
		name string
		spec chain.Spec
		s    Settings
	}
	ex, exS := exampleSpec()
	runs := []run{{"example 18b", ex, exS}}
	for _, c := range roundingCases {
		runs = append(runs, run{c.name, c.spec, Settings{MaxStages: 3}})
	}
	for _, r := range runs {
		res, err := Plan(context.Background(), r.spec, r.s)
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Front) == 0 {
			t.Errorf("%s: empty front: %s", r.name, res.Reason)
			continue
		}
		for _, c := range res.Front {
			rej, rip := roundedFigures(t, r.spec, c.Chain)
			// Tolerances: the search's own (0.01 dB, 1e-4 dB) plus 0.01 dB
			// for a grid of 64 points per ripple (cos(pi/64): 0.01 dB).
			if rej < r.spec.RejectionDB-0.02 || rip > r.spec.RippleDB+2e-4 {
				t.Errorf("%s: %s rounded to %d bits: rejection %.3f dB (target %g), ripple %.5f dB (target %g)",
					r.name, chain.Notation(c.Plan), r.spec.CoefBits, rej, r.spec.RejectionDB, rip, r.spec.RippleDB)
			}
			if math.Abs(rej-c.Quantised.AliasRejectionDB) > 0.05 {
				t.Errorf("%s: %s: brute-force rejection %.3f dB, Candidate.Quantised %.3f dB", r.name, chain.Notation(c.Plan), rej, c.Quantised.AliasRejectionDB)
			}
		}
		t.Logf("%s: front %d, dropped %v", r.name, len(res.Front), res.Dropped)
	}
}

// roundedFigures returns the alias rejection and passband ripple of c with
// its taps as fixed.PlanChain rounds them, by brute force.
func roundedFigures(t *testing.T, spec chain.Spec, c *chain.Chain) (rejDB, rippleDB float64) {
	t.Helper()
	ws, _, err := fixed.PlanChain(spec, c, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	var st []densecheck.Stage
	for i, s := range c.Stages {
		switch s := s.(type) {
		case chain.CICStage:
			st = append(st, densecheck.Stage{CIC: true, N: s.N, M: s.M, R: s.R})
		case chain.FIRStage:
			co := ws.Stages[i].Coefficients
			if co.Bits != spec.CoefBits || len(co.Ints) != len(s.Taps) {
				t.Fatalf("stage %d: %d codes of %d bits for %d taps at %d bits", i+1, len(co.Ints), co.Bits, len(s.Taps), spec.CoefBits)
			}
			lim := int64(1)<<(co.Bits-1) - 1
			big := 0.0
			for _, h := range s.Taps {
				big = math.Max(big, math.Abs(h))
			}
			if math.Round(math.Ldexp(big, co.Frac+1)) <= float64(lim) {
				t.Errorf("stage %d: Frac %d is not the largest that fits the largest tap %g in %d bits", i+1, co.Frac, big, co.Bits)
			}
			taps := make([]float64, len(co.Ints))
			for k, v := range co.Ints {
				if v > lim || v < -lim {
					t.Fatalf("stage %d: code %d outside %d bits", i+1, v, co.Bits)
				}
				if d := math.Abs(float64(v) - math.Ldexp(s.Taps[k], co.Frac)); d >= 1 {
					t.Errorf("stage %d tap %d: code %d is %.2f steps from the tap", i+1, k, v, d)
				}
				taps[k] = math.Ldexp(float64(v), -co.Frac)
			}
			st = append(st, densecheck.Stage{R: s.R, Taps: taps})
		default:
			t.Fatalf("stage %d: %T", i+1, s)
		}
	}
	rejDB, rippleDB, err = densecheck.Figures(spec, st)
	if err != nil {
		t.Fatal(err)
	}
	return rejDB, rippleDB
}

// TestNoChainAtWidth: at 8 bits no chain reaches 100 dB (the rounding
// error of a few dozen taps at 2^-10 or so is near -70 dB, common
// practice): the front is empty, the reason names a width, and at that
// width the search finds chains that meet.
func TestNoChainAtWidth(t *testing.T) {
	spec := chain.Spec{InputRate: 200e6, OutputRate: 25e6, Passband: 9e6, RippleDB: 0.1, RejectionDB: 100, CoefBits: 8}
	s := Settings{MaxStages: 3}
	res, err := Plan(context.Background(), spec, s)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%s (dropped %v)", res.Reason, res.Dropped)
	if len(res.Front) != 0 {
		t.Fatalf("%d chains meet 100 dB with 8-bit taps", len(res.Front))
	}
	w := res.NeededCoefBits
	if w <= 8 || w > 32 || !strings.Contains(res.Reason, fmt.Sprintf("from %d bits", w)) && !strings.Contains(res.Reason, fmt.Sprintf("fewest bits, %d", w)) {
		t.Fatalf("NeededCoefBits %d; reason %q", w, res.Reason)
	}
	if res.Dropped[ReasonMissQuantised] == 0 {
		t.Errorf("no chain counted under %q: %v", ReasonMissQuantised, res.Dropped)
	}
	spec.CoefBits = w
	at, err := Plan(context.Background(), spec, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(at.Front) == 0 {
		t.Fatalf("no chain at the named width %d: %s", w, at.Reason)
	}
	for _, c := range at.Front {
		if rej, rip := roundedFigures(t, spec, c.Chain); rej < spec.RejectionDB-0.02 || rip > spec.RippleDB+2e-4 {
			t.Errorf("%s at %d bits: %.3f dB, ripple %.5f dB", chain.Notation(c.Plan), w, rej, rip)
		}
	}
}

// TestRoundingDropsCounted: at 14 bits and 90 dB chains are lost to
// rounding, and each loss is counted under its reason; the floating-point
// search (the switch the table compares against) counts none.
func TestRoundingDropsCounted(t *testing.T) {
	spec := roundingCases[0].spec
	res, err := Plan(context.Background(), spec, Settings{MaxStages: 3})
	if err != nil {
		t.Fatal(err)
	}
	if res.Dropped[ReasonMissQuantised] == 0 {
		t.Errorf("nothing dropped for rounding: %v", res.Dropped)
	}
	flt, err := Plan(context.Background(), spec, Settings{MaxStages: 3, floatOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	if flt.Dropped[ReasonMissQuantised] != 0 {
		t.Errorf("float-only search dropped for rounding: %v", flt.Dropped)
	}
	t.Logf("dropped %v; %s", res.Dropped, res.Reason)
}

// TestCheapChainNotPrunedByRoundingEstimate: no candidate is dropped on a
// predicted rounding floor (q sqrt(N/12), an expectation, not a bound). On
// invented specs a short compensator after a large CIC rounds far better
// than that prediction: cic6m2r40 > fir2 meets 79 dB with 12-bit taps
// (82.1 dB rounded), cic6m2r50 > fir2 meets 72 dB at 11 bits and
// cic5m2r8 > fir2 meets 62 dB at 9 bits, while a prune on the prediction
// left fronts 2 to 2.4 times as costly (19, 24 and 32 multiplies per
// output). The plan's cheapest chain must cost no more than the chain
// named, and every front chain is checked by brute force on its rounded
// taps (roundedFigures). It runs in CI's long step (STEPDOWN_LONG), to keep
// go test under a minute.
func TestCheapChainNotPrunedByRoundingEstimate(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("4 s: STEPDOWN_LONG (CI's long step)")
	}
	type named struct {
		spec chain.Spec
		mpo  float64 // the named chain's multiplies per output
	}
	cases := []named{
		{chain.Spec{InputRate: 100e6, OutputRate: 1.25e6, Passband: 400e3, RippleDB: 0.1, RejectionDB: 79, InputBits: 14, OutputBits: 20, CoefBits: 12}, 8},
		{chain.Spec{InputRate: 80e6, OutputRate: 0.8e6, Passband: 300e3, RippleDB: 0.15, RejectionDB: 72, InputBits: 14, OutputBits: 20, CoefBits: 11}, 11},
		{chain.Spec{InputRate: 32e6, OutputRate: 2e6, Passband: 0.7e6, RippleDB: 0.4, RejectionDB: 62, Complex: true, InputBits: 14, OutputBits: 20, CoefBits: 9}, 14},
	}
	for _, tc := range cases {
		res := planRoundedMeets(t, tc.spec)
		if res == nil {
			continue
		}
		if got := res.Front[0].Figures.MultipliesPerOutput; got > tc.mpo {
			t.Errorf("%g dB at %d bits: cheapest chain %s costs %g multiplies per output, want at most %g", tc.spec.RejectionDB, tc.spec.CoefBits, chain.Notation(res.Front[0].Plan), got, tc.mpo)
		}
	}
}

// TestRoundingDeterministic: with a fixed width the result is the same
// whatever the number of design goroutines.
func TestRoundingDeterministic(t *testing.T) {
	spec := roundingCases[1].spec
	var out [2][]byte
	for i, jobs := range []int{1, 3} {
		r, err := Plan(context.Background(), spec, Settings{MaxStages: 3, Jobs: jobs})
		if err != nil {
			t.Fatal(err)
		}
		if out[i], err = json.Marshal(r); err != nil {
			t.Fatal(err)
		}
	}
	if !bytes.Equal(out[0], out[1]) {
		t.Errorf("results differ between 1 and 3 jobs (%d and %d bytes)", len(out[0]), len(out[1]))
	}
}

// TestRoundingRedesignsReach: at a coefficient width close to the target's
// own, each rounding re-design's longer taps may round worse, so a chain
// that meets a stricter target can be lost at a looser one. A chain that
// meets 68 dB meets 66 dB: on an invented 80 to 2.5 MS/s receiver with
// 10-bit taps, cic6m2r16 > fir2 meets 67, 68 and 70 dB rounded, and the
// plan must find a chain at 66, 69 and 72 dB too. Three re-designs found
// none at these three. Every front chain is checked by brute force on its
// rounded taps (roundedFigures). It runs in CI's long step (STEPDOWN_LONG).
func TestRoundingRedesignsReach(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	targets := []float64{66, 69, 72}
	for _, rej := range targets {
		spec := chain.Spec{InputRate: 80e6, OutputRate: 2.5e6, Passband: 1e6, RippleDB: 0.1, RejectionDB: rej, CoefBits: 10}
		planRoundedMeets(t, spec)
	}
}

// TestRoundingLadder: where rounding moves the ripple by about the whole
// budget from one design to the next (an invented 40 to 5 MS/s receiver,
// 1.8 MHz passband, 0.05 dB ripple, 10-bit taps), the measured re-design
// rule runs out and found no chain at 66, 69, 71 or 73 dB, while 67, 70
// and 72 dB found one (which meets the looser targets too). The fixed
// margins tried after it find one; every front chain is checked by brute
// force on its rounded taps. It runs in CI's long step (STEPDOWN_LONG).
func TestRoundingLadder(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	targets := []float64{66, 69, 71, 73}
	for _, rej := range targets {
		spec := chain.Spec{InputRate: 40e6, OutputRate: 5e6, Passband: 1.8e6, RippleDB: 0.05, RejectionDB: rej, InputBits: 14, OutputBits: 20, CoefBits: 10}
		planRoundedMeets(t, spec)
	}
}

// TestRoundingNotGivenUpOnOneDesign: a re-design whose own rounding comes
// out 6 dB or more under the target does not end the chain's re-designs
// (the chain as first designed does): on an invented 50 to 2 MS/s
// receiver with 12-bit taps at 74 dB, cic4m2r5 > fir5 rounded to 72.25 dB,
// its re-design to 67.28 dB, and the plan found no chain, where a fixed
// margin meets; likewise an invented 120 to 0.96 MS/s receiver at 77 dB
// (CI's long step). Every front chain is checked by brute force on its
// rounded taps.
func TestRoundingNotGivenUpOnOneDesign(t *testing.T) {
	specs := []chain.Spec{{InputRate: 50e6, OutputRate: 2e6, Passband: 750e3, RippleDB: 0.1, RejectionDB: 74, InputBits: 14, OutputBits: 22, CoefBits: 12}}
	if os.Getenv("STEPDOWN_LONG") != "" {
		specs = append(specs, chain.Spec{InputRate: 120e6, OutputRate: 0.96e6, Passband: 360e3, RippleDB: 0.2, RejectionDB: 77, InputBits: 14, OutputBits: 22, CoefBits: 12})
	}
	for _, spec := range specs {
		planRoundedMeets(t, spec)
	}
}

// TestRoundingSiblings: the siblings of a chain dropped for its rounded
// taps (the other layout of its FIR stages, its CIC at every order and
// delay) are designed too. On the invented 50 to 2 MS/s receiver with
// 12-bit taps, the plan found no chain at 75, 77 or 79 dB, while
// cic4m2r5 > fir5L, searched alone (cic_orders = [4], cic_delays = [2]),
// meets 77 dB rounded: the estimate tier kept neither the lowpass layout
// beside the cheaper multiband one nor a CIC beaten by another order or
// delay. Every front chain is checked by brute force on its rounded taps,
// and the result is the same with one design goroutine and three; 75 and
// 79 dB run in CI's long step.
//
// So are the siblings of a chain that met only after re-designs for
// rounding, priced as first designed (CI's long step, two specs an
// independent reviewer invented): a 72 to 6 MS/s receiver at 11 bits
// recommended cic5m2r4 > fir3 at 21 multiplies per output, and a
// 245.76 to 3.072 MS/s I/Q one at 13 bits cic5m2r20 > fir2 > fir2 at 46,
// while cic6m2r6 > fir2 (15) and cic7m2r40 > fir2 (24), siblings of
// cic6m1r6 > fir2 and cic7m1r40 > fir2 that met after four or more
// re-designs (28 and 52), meet.
func TestRoundingSiblings(t *testing.T) {
	targets := []float64{77}
	if os.Getenv("STEPDOWN_LONG") != "" {
		targets = append(targets, 75, 79)
	}
	for _, rej := range targets {
		spec := chain.Spec{InputRate: 50e6, OutputRate: 2e6, Passband: 750e3, RippleDB: 0.1, RejectionDB: rej, InputBits: 14, OutputBits: 22, CoefBits: 12}
		planRoundedMeets(t, spec)
		var out [2][]byte
		for i, jobs := range []int{1, 3} {
			r, err := Plan(context.Background(), spec, Settings{Jobs: jobs})
			if err != nil {
				t.Fatal(err)
			}
			if out[i], err = json.Marshal(r); err != nil {
				t.Fatal(err)
			}
		}
		if !bytes.Equal(out[0], out[1]) {
			t.Errorf("%g dB: results differ between 1 and 3 jobs (%d and %d bytes)", rej, len(out[0]), len(out[1]))
		}
	}
	if os.Getenv("STEPDOWN_LONG") == "" {
		return
	}
	for _, tc := range []struct {
		spec chain.Spec
		mpo  float64 // the sibling's multiplies per output
	}{
		{chain.Spec{InputRate: 72e6, OutputRate: 6e6, Passband: 2.1e6, Protected: 2.6e6, RippleDB: 0.05, RejectionDB: 66, InputBits: 12, CoefBits: 11}, 15},
		{chain.Spec{InputRate: 245.76e6, OutputRate: 3.072e6, Passband: 1e6, Protected: 1.3e6, RippleDB: 0.1, RejectionDB: 83, Complex: true, InputBits: 16, CoefBits: 13}, 24},
	} {
		res := planRoundedMeets(t, tc.spec)
		if res != nil && res.Front[0].Figures.MultipliesPerOutput > tc.mpo {
			t.Errorf("%g to %g MS/s: cheapest chain %s costs %g multiplies per output, want at most %g", tc.spec.InputRate/1e6, tc.spec.OutputRate/1e6, chain.Notation(res.Front[0].Plan), res.Front[0].Figures.MultipliesPerOutput, tc.mpo)
		}
	}
}

// planRoundedMeets plans spec with default settings and checks that the
// front is not empty and that every front chain meets the spec with its
// taps as fixed.PlanChain rounds them, by brute force (roundedFigures;
// the tolerances of TestFrontSurvivesRounding). It returns the result, nil
// when the front is empty.
func planRoundedMeets(t *testing.T, spec chain.Spec) *Result {
	t.Helper()
	name := fmt.Sprintf("%g to %g MS/s, %g dB at %d bits", spec.InputRate/1e6, spec.OutputRate/1e6, spec.RejectionDB, spec.CoefBits)
	res, err := Plan(context.Background(), spec, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Front) == 0 {
		t.Errorf("%s: empty front: %s", name, res.Reason)
		return nil
	}
	for _, c := range res.Front {
		rej, rip := roundedFigures(t, spec, c.Chain)
		if rej < spec.RejectionDB-0.02 || rip > spec.RippleDB+2e-4 {
			t.Errorf("%s: %s rounded: rejection %.3f dB, ripple %.5f dB", name, chain.Notation(c.Plan), rej, rip)
		}
	}
	return res
}
