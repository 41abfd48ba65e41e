package fixed

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// handChain builds an invented chain without the remez engine: 12.8 MHz to
// 400 kHz, fp = 50 kHz, FIR by 8 (lowpass), half-band, FIR by 2, with
// Kaiser-window taps and the chain package's own requirements.
func handChain(t *testing.T) (chain.Spec, *chain.Chain) {
	t.Helper()
	spec := chain.Spec{InputRate: 12.8e6, OutputRate: 400e3, Passband: 50e3, RippleDB: 0.1, RejectionDB: 80, InputBits: 14, OutputBits: 20}
	plan := []chain.StagePlan{{Kind: chain.FIR, Factor: 8, Variant: chain.Lowpass}, {Kind: chain.HalfBand, Factor: 2}, {Kind: chain.FIR, Factor: 2}}
	reqs, err := chain.Requirements(spec, plan)
	if err != nil {
		t.Fatal(err)
	}
	taps := [][]float64{kaiserLowpass(61, 800e3, 12.8e6, 9), kaiserHalfBand(5, 9), kaiserLowpass(41, 200e3, 800e3, 9)}
	c := &chain.Chain{InputRate: spec.InputRate, Plan: plan, Designed: true}
	for i, p := range plan {
		c.Stages = append(c.Stages, chain.FIRStage{R: p.Factor, Taps: taps[i], Length: len(taps[i]), HalfBand: p.Kind == chain.HalfBand, Variant: p.Variant, Req: reqs[i]})
	}
	return spec, c
}

func TestFromChainAgainstChainPackage(t *testing.T) {
	// The chain package owns the response (docs/design.md §7): the bit-true run's
	// worst alias on the cascade must be chain.Analyze's on QuantisedChain,
	// and this package's float run must agree with chain.Run.
	spec, c := handChain(t)
	cas, words, err := FromChain(spec, c)
	if err != nil {
		t.Fatal(err)
	}
	w, err := Plan(cas, words, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for i, sw := range w.Stages {
		if !sw.FloatMeets || !sw.MeetsBands {
			t.Errorf("stage %d: float meets %v (%v), quantised meets %v (%v)", i+1, sw.FloatMeets, sw.FloatDeviations, sw.MeetsBands, sw.Deviations)
		}
		t.Logf("stage %d: %d-bit coefficients (%d moved), accumulator %d, output %d", i+1, sw.Coefficients.Bits, sw.Coefficients.Adjusted, sw.AccumulatorBits, sw.OutputBits)
	}
	a, err := chain.Analyze(c, spec)
	if err != nil {
		t.Fatal(err)
	}
	// The quantised response: chain.Analyze on a copy with quantised taps.
	aq, err := chain.Analyze(QuantisedChain(c, w), spec)
	if err != nil {
		t.Fatal(err)
	}
	r, err := BitTrue(cas, w, Signal{})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("alias: chain.Analyze float %.2f quantised %.2f; here worst %.2f, bit-true %.2f at %.0f Hz (response %.2f); SNR %.1f dB",
		a.AliasRejectionDB, aq.AliasRejectionDB, r.WorstAliasResponseDB, r.AliasRejectionDB, r.AliasHz, r.AliasResponseDB, r.SNRDB)
	if math.Abs(r.WorstAliasResponseDB-aq.AliasRejectionDB) > 0.05 {
		t.Errorf("quantised alias rejection %.3f dB here, chain.Analyze %.3f dB", r.WorstAliasResponseDB, aq.AliasRejectionDB)
	}
	if !r.AliasValid || math.Abs(r.AliasRejectionDB-aq.AliasRejectionDB) > 1 {
		t.Errorf("bit-true alias %.2f dB vs chain.Analyze on quantised taps %.2f dB (valid %v)", r.AliasRejectionDB, aq.AliasRejectionDB, r.AliasValid)
	}
	// The float run: chain.Run against this package's float chain.
	x := make([]float64, 32*300)
	addTone(x, 37e3, 0.5, 0.1, spec.InputRate)
	addTone(x, 1.63e6, 0.3, 0.7, spec.InputRate)
	ref := chain.Run(c, x)
	_, yf, _, _ := runBoth(cas, w, x)
	for m := range ref {
		if math.Abs(ref[m]-yf[m]) > 1e-12 {
			t.Fatalf("float run sample %d: chain.Run %g, here %g", m, ref[m], yf[m])
		}
	}
}

func TestEvaluateDesignedChain(t *testing.T) {
	// End to end with the remez engine: invented CIC chains whose
	// compensating FIR corrects the droop.
	for _, tc := range []struct {
		fp   float64
		plan string
	}{{200e3, "cic4m1r16 > hb > fir2"}, {300e3, "cic4m1r8 > hb > fir4"}, {300e3, "cic5m1r16 > fir4"}} {
		t.Run(tc.plan, func(t *testing.T) { evaluateDesigned(t, tc.fp, tc.plan) })
	}
}

func evaluateDesigned(t *testing.T, fp float64, notation string) {
	spec := chain.Spec{InputRate: 64e6, OutputRate: 1e6, Passband: fp, RippleDB: 0.1, RejectionDB: 80, InputBits: 14, OutputBits: 18}
	plan, err := chain.ParseNotation(notation)
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Evaluate(spec, c, Settings{NativeA: 18, NativeB: 27, Clock: 200e6}, Signal{})
	if err != nil {
		t.Fatal(err)
	}
	for i, sw := range res.Widths.Stages {
		if !sw.MeetsBands {
			t.Errorf("stage %d misses its bands: %v (float %v)", i+1, sw.Deviations, sw.FloatDeviations)
		}
	}
	// Every stage meets its own bands after quantisation, so the quantised
	// cascade meets the spec's targets (docs/design.md §4, §7), by chain.Analyze.
	a, err := chain.Analyze(QuantisedChain(c, res.Widths), spec)
	if err != nil {
		t.Fatal(err)
	}
	if a.AliasRejectionDB < spec.RejectionDB || a.PassbandRippleDB > spec.RippleDB {
		t.Errorf("quantised chain: rejection %.2f dB (target %g), ripple %.4f dB (budget %g)", a.AliasRejectionDB, spec.RejectionDB, a.PassbandRippleDB, spec.RippleDB)
	}
	bt := res.BitTrue
	t.Logf("quantised chain: rejection %.2f dB, ripple %.4f dB; SNR %.1f dB, ENOB %.2f, alias bit-true %.2f vs response %.2f (valid %v)",
		a.AliasRejectionDB, a.PassbandRippleDB, bt.SNRDB, bt.ENOB, bt.AliasRejectionDB, bt.AliasResponseDB, bt.AliasValid)
	if !bt.AliasValid || math.Abs(bt.AliasRejectionDB-bt.AliasResponseDB) > 1 {
		t.Errorf("bit-true alias %.2f dB vs response %.2f dB (valid %v)", bt.AliasRejectionDB, bt.AliasResponseDB, bt.AliasValid)
	}
}

func TestReportFields(t *testing.T) {
	// Issue 6: report.json carries per stage coefficient_bits, coefficients_int
	// (full impulse response), accumulator_bits, output_bits; per chain
	// bittrue_snr_db. Same input, same bytes.
	spec, c := handChain(t)
	var first []byte
	for run := 0; run < 2; run++ {
		res, err := Evaluate(spec, c, Settings{NativeA: 18, NativeB: 27, Clock: 100e6}, Signal{})
		if err != nil {
			t.Fatal(err)
		}
		b, err := json.Marshal(res.Report(true))
		if err != nil {
			t.Fatal(err)
		}
		if run == 0 {
			first = b
			continue
		}
		if string(b) != string(first) {
			t.Fatal("report differs between two runs")
		}
	}
	var m map[string]any
	if err := json.Unmarshal(first, &m); err != nil {
		t.Fatal(err)
	}
	if _, ok := m["bittrue_snr_db"].(float64); !ok {
		t.Errorf("no bittrue_snr_db in %s", first)
	}
	stages := m["stages"].([]any)
	for i, s := range stages {
		st := s.(map[string]any)
		for _, k := range []string{"coefficient_bits", "coefficients_int", "accumulator_bits", "output_bits"} {
			if _, ok := st[k]; !ok {
				t.Errorf("stage %d: no %s", i+1, k)
			}
		}
		fir := c.Stages[i].(chain.FIRStage)
		if n := len(st["coefficients_int"].([]any)); n != len(fir.Taps) {
			t.Errorf("stage %d: %d integer coefficients, %d taps", i+1, n, len(fir.Taps))
		}
	}
	t.Logf("%s", first)
}

func TestPruningMatchesChainPackage(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	// The CIC widths the report shows and package cost prices
	// (chain.NewCICStage: register_bits, output width) must be the widths
	// this package plans and runs bit-true (Plan, StageWidths.Pruning):
	// Hogenauer's (1981) pruning (E. B. Hogenauer, "An economical class of
	// digital filters for decimation and interpolation", IEEE Trans. ASSP
	// 29(2)) with the guard bits of chain.PruneCIC, for orders 1-7, M 1-2,
	// R 2..64, input 2..16 bits and output 8..32 bits.
	cases, guarded, widened := 0, 0, 0
	for n := 1; n <= 7; n++ {
		for m := 1; m <= 2; m++ {
			for r := 2; r <= 64; r++ {
				for in := 2; in <= 16; in++ {
					for out := 8; out <= 32; out += 1 + (n+r+in)%3 {
						cs := chain.NewCICStage(n, m, r, in, out)
						w, err := Plan(Cascade{InputRate: 1e6, Passband: 1e3, Stages: []Stage{{CIC: true, N: n, M: m, R: r}}},
							Words{InputBits: in, OutputBits: out}, Settings{})
						if err != nil {
							t.Fatalf("N=%d M=%d R=%d in %d out %d: %v", n, m, r, in, out, err)
						}
						sw := w.Stages[0]
						if fmt.Sprint(sw.Pruning.RegisterBits) != fmt.Sprint(cs.RegisterBits) ||
							sw.OutputBits != cs.OutputBits || sw.AccumulatorBits != cs.Width() || sw.Pruning.GuardBits != cs.GuardBits {
							t.Fatalf("N=%d M=%d R=%d in %d out %d: plan registers %v output %d full %d guard %d; chain %v, %d, %d, %d",
								n, m, r, in, out, sw.Pruning.RegisterBits, sw.OutputBits, sw.AccumulatorBits, sw.Pruning.GuardBits,
								cs.RegisterBits, cs.OutputBits, cs.Width(), cs.GuardBits)
						}
						cases++
						if cs.GuardBits > 0 {
							guarded++
						}
						if h, err := chain.HogenauerPruning(n, m, r, in, out); err != nil || fmt.Sprint(h.RegisterBits) != fmt.Sprint(cs.RegisterBits) {
							widened++
						}
					}
				}
			}
		}
	}
	t.Logf("%d CICs agree; %d carry guard bits; %d differ from Hogenauer's plain plan", cases, guarded, widened)
}

func TestEvaluateWithoutBitTrue(t *testing.T) {
	// A CIC whose full register is beyond the bit-true run's 127 bits
	// (Hogenauer 1981: 24 + ceil(10 log2 2048) = 134 bits, plus the guard
	// bit a power-of-two (RM)^N needs): Evaluate still returns the widths and the
	// quantised figures, says why there is no bit-true run, and the report
	// keeps the rest: bittrue_error says why, bittrue_snr_valid is false and
	// the run's own figures (bittrue_alias_valid among them) are left out
	// (Result.Report).
	spec := chain.Spec{InputRate: 122.88e6, OutputRate: 30e3, Passband: 12e3, RippleDB: 0.1, RejectionDB: 100, InputBits: 24}
	plan, err := chain.ParseNotation("cic10m1r2048 > fir2")
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Evaluate(spec, c, Settings{}, Signal{})
	if err != nil {
		t.Fatal(err)
	}
	if res.BitTrueErr == nil || !strings.Contains(res.BitTrueErr.Error(), "127 bits") {
		t.Fatalf("BitTrueErr %v, want the 127-bit limit", res.BitTrueErr)
	}
	if res.Widths == nil || res.Widths.Stages[0].AccumulatorBits != 135 || !(res.Quantised.AliasRejectionDB > 0) {
		t.Fatalf("widths %+v, quantised %+v", res.Widths, res.Quantised)
	}
	b, err := json.Marshal(res.Report(false))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"quantised_alias_rejection_db", "quantised_passband_ripple_db", "dc_gain_db", "bittrue_error"} {
		if _, ok := m[k]; !ok {
			t.Errorf("report lacks %s: %s", k, b)
		}
	}
	if _, ok := m["bittrue_alias_valid"]; m["bittrue_snr_valid"] != false || ok {
		t.Errorf("bit-true figures not marked invalid: %s", b)
	}
	st := m["stages"].([]any)
	if len(st) != 2 || st[0].(map[string]any)["accumulator_bits"].(float64) != 135 || st[1].(map[string]any)["coefficient_bits"] == nil {
		t.Errorf("stage widths missing: %s", b)
	}
}

// "auto" coefficient widths go up to MaxBits (40), the widest
// words.coefficients takes: an invented 80 to 5 MS/s I/Q receiver at
// 150 dB through one fir16 needs more than 32 bits, where the search used
// to stop and leave the chain without word lengths. The rounded chain,
// measured by chain.Analyze on its quantised taps, meets the spec.
func TestAutoWidthPast32(t *testing.T) {
	spec := chain.Spec{InputRate: 80e6, OutputRate: 5e6, Passband: 2e6, RippleDB: 0.1, RejectionDB: 150, Complex: true}
	c := designed(t, spec, "fir16")
	ws, _, err := PlanChain(spec, c, Settings{})
	if err != nil {
		t.Fatalf("auto widths: %v", err)
	}
	if b := ws.Stages[0].Coefficients.Bits; b <= 32 || b > MaxBits {
		t.Errorf("width %d bits: want between 33 and %d for this case", b, MaxBits)
	}
	a, err := chain.Analyze(QuantisedChain(c, ws), spec)
	if err != nil {
		t.Fatal(err)
	}
	if !a.Meets(spec) {
		t.Errorf("rounded taps: %.3f dB, %.4f dB ripple; the spec asks %g dB, %g dB", a.AliasRejectionDB, a.PassbandRippleDB, spec.RejectionDB, spec.RippleDB)
	}
}
