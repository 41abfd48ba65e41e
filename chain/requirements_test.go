package chain

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// crSpec is Crochiere and Rabiner's (1975) decimate-by-100 example:
// 10 kHz to 100 Hz, fp = 45 Hz, fs = 50 Hz, dp = 0.01, ds = 0.001
// (their 1975 paper, spec from memory; docs/design.md §11). Protecting [0, 50 Hz]
// makes our default final stopband FK - fa = 50 Hz = fs.
func crSpec() Spec {
	return Spec{InputRate: 10e3, OutputRate: 100, Passband: 45, Protected: 50,
		RippleDB: DevToRipple(0.01), RejectionDB: 60}
}

func TestRequirementsCrochiereRabiner(t *testing.T) {
	// Their stage rule: stage i keeps fp, its stopband starts at Fi - fs, the
	// last at fs; dp/K per stage and the full ds each. Multiplies per second
	// without symmetry from Herrmann lengths (docs/design.md §11, computed there):
	// we recompute sum_i N_i F_i with N_i = ceil(D/df - f df + 1), which is
	// what remez.HerrmannLength returns, and compare with the published
	// (computed) figures to 1.5%: they are a little lower throughout, as if
	// written without the formula's "+1" and rounding up.
	for _, tc := range []struct {
		plan string
		ref  float64
	}{
		{"fir100L", 508238},
		{"fir50L > fir2L", 63616},
		{"fir25L > fir4L", 58281},
		{"fir20L > fir5L", 61679},
		{"fir10L > fir10L", 85704},
		{"fir10L > fir5L > fir2L", 48944},
	} {
		plan, err := ParseNotation(tc.plan)
		if err != nil {
			t.Fatal(err)
		}
		reqs, err := Requirements(crSpec(), plan)
		if err != nil {
			t.Fatal(err)
		}
		c, err := Estimate(crSpec(), plan, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		k := float64(len(plan))
		mps, hand := 0.0, 0.0
		for i, r := range reqs {
			edge := r.OutputRate - 50 // Fi - fs
			if r.Last {
				edge = 50
			}
			if len(r.Stopbands) != 1 || r.Stopbands[0].Lo != edge || r.Stopbands[0].Hi != r.InputRate/2 || r.Passband != 45 {
				t.Errorf("%s stage %d: bands %v passband %v, want [%v, %v] and 45", tc.plan, i+1, r.Stopbands, r.Passband, edge, r.InputRate/2)
			}
			// Our stopband limit (package doc, "Stopband limits") departs from
			// their full ds per stage: ds (1-dp)^K / (1+dp)^(K-1), with dp the
			// stage's exact share.
			wantDs := 0.001 * math.Pow(1-r.Dp, k) / math.Pow(1+r.Dp, k-1)
			if math.Abs(r.Dp-0.01/k) > 1e-4*0.01/k || math.Abs(r.Ds-wantDs) > 1e-15 {
				t.Errorf("%s stage %d: dp %v ds %v, want about %v and %v", tc.plan, i+1, r.Dp, r.Ds, 0.01/k, wantDs)
			}
			n := c.Stages[i].(FIRStage).Length
			mps += float64(n) * r.OutputRate
			dp, ds := 0.01/k, wantDs
			df := (edge - 45) / r.InputRate
			hand += math.Ceil(remez.HerrmannD(dp, ds)/df-remez.HerrmannF(dp, ds)*df+1) * r.OutputRate
		}
		if math.Abs(mps-hand) > 1e-9*hand {
			t.Errorf("%s: %v multiplies/s, hand formula %v", tc.plan, mps, hand)
		}
		if math.Abs(mps-tc.ref) > 0.015*tc.ref {
			t.Errorf("%s: %v multiplies/s, published (computed) %v", tc.plan, mps, tc.ref)
		}
	}
}

func TestRequirementsBands(t *testing.T) {
	// 64 MHz -> 250 kHz, fp = 80 kHz, fa = 100 kHz, fs = 125 kHz.
	sp := Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, Stopband: 125e3,
		RippleDB: 0.3, RejectionDB: 90}
	plan, _ := ParseNotation("cic4m1r16 > hb > fir4 > fir2")
	reqs, err := Requirements(sp, plan)
	if err != nil {
		t.Fatal(err)
	}
	// All hand-derived from docs/design.md §4 and the package doc.
	// CIC 64 -> 4 MHz: alias bands k 4 MHz +- 100 kHz, k = 1..8, the last
	// clipped at 32 MHz.
	cic := reqs[0]
	if len(cic.Stopbands) != 8 || cic.Stopbands[0] != (Interval{3.9e6, 4.1e6}) || cic.Stopbands[7] != (Interval{31.9e6, 32e6}) {
		t.Errorf("CIC bands %v", cic.Stopbands)
	}
	// Half-band 4 -> 2 MHz: edge max(fp, fa) = 100 kHz, stopband [1.9, 2] MHz.
	hb := reqs[1]
	if hb.Passband != 100e3 || len(hb.Stopbands) != 1 || hb.Stopbands[0] != (Interval{1.9e6, 2e6}) {
		t.Errorf("half-band %+v", hb)
	}
	// FIR by 4, 2 MHz -> 500 kHz: [400, 600] kHz and [900, 1000] kHz.
	if b := reqs[2].Stopbands; len(b) != 2 || b[0] != (Interval{400e3, 600e3}) || b[1] != (Interval{900e3, 1e6}) {
		t.Errorf("fir4 bands %v", b)
	}
	// Last FIR by 2, 500 -> 250 kHz: from fs = 125 kHz to 250 kHz; it is the
	// compensator.
	if b := reqs[3].Stopbands; len(b) != 1 || b[0] != (Interval{125e3, 250e3}) || len(reqs[3].Compensates) != 1 || reqs[3].Compensates[0] != 0 {
		t.Errorf("fir2 %+v", reqs[3])
	}
	// Ripple: the droop is corrected, three stages share 0.3 dB; the
	// half-band takes min(dp, ds_i) = ds_i = 10^(-90/20) (1-dp)^3/(1+dp)^2
	// (package doc, "Stopband limits").
	for i, want := range []float64{0, 0.1, 0.1, 0.1} {
		if math.Abs(reqs[i].RippleDB-want) > 1e-12 {
			t.Errorf("stage %d ripple share %v, want %v", i+1, reqs[i].RippleDB, want)
		}
	}
	dp1 := RippleToDev(0.1)
	if math.Abs(reqs[1].Dp-math.Pow(10, -4.5)*math.Pow(1-dp1, 3)/math.Pow(1+dp1, 2)) > 1e-15 || math.Abs(reqs[2].Dp-RippleToDev(0.1)) > 1e-15 {
		t.Errorf("deviations %v %v", reqs[1].Dp, reqs[2].Dp)
	}
	// Lowpass variant, not last: one band from Fi - fa = 400 kHz to 1 MHz.
	plan[2].Variant = Lowpass
	reqs, _ = Requirements(sp, plan)
	if b := reqs[2].Stopbands; len(b) != 1 || b[0] != (Interval{400e3, 1e6}) {
		t.Errorf("fir4L bands %v", b)
	}
}

func TestRequirementsErrors(t *testing.T) {
	sp := Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, Stopband: 125e3,
		RippleDB: 0.3, RejectionDB: 90}
	for _, tc := range []struct{ plan, why string }{
		{"fir4 > fir4", "the factors multiply to 16"},
		{"fir128 > cic5m1r2", "uncorrected CIC droop"},
		{"cic4m8r128 > fir2", "first null"},
		// Last half-band needs fs > FK/2 = 125 kHz; fs = 125 kHz is not enough.
		{"fir128 > hb", "half-band"},
	} {
		plan, err := ParseNotation(tc.plan)
		if err != nil {
			t.Fatal(err)
		}
		_, err = Requirements(sp, plan)
		var pe *PlanError
		if !errors.As(err, &pe) || !strings.Contains(err.Error(), tc.why) {
			t.Errorf("%s: got %v, want a *PlanError about %q", tc.plan, err, tc.why)
		}
	}
	bad := []StagePlan{{Kind: HalfBand, Factor: 4}, {Kind: FIR, Factor: 64}}
	if _, err := Requirements(sp, bad); err == nil || !strings.Contains(err.Error(), "half-band decimates by 2 only") {
		t.Errorf("half-band by 4: %v", err)
	}
}

func TestRequirementsKeepSlivers(t *testing.T) {
	// fa = 49.711 kHz of FK/2 = 50 kHz leaves 578 Hz don't-care gaps between
	// the alias bands [k 100 kHz - fa, k 100 kHz + fa] of a multiband FIR by 8
	// (800 kHz in), k = 1..4, the last clipped at 400 kHz; they stay open
	// (hand-derived from docs/design.md §4 and the package doc), and the stage is
	// designed on them and the chain meets its spec.
	sp := Spec{InputRate: 25.6e6, OutputRate: 100e3, Passband: 18.8e3, Protected: 49.711e3, RippleDB: 0.7, RejectionDB: 60}
	plan, _ := ParseNotation("cic4m1r16 > hb > fir8")
	reqs, err := Requirements(sp, plan)
	if err != nil {
		t.Fatal(err)
	}
	want := []Interval{{50.289e3, 149.711e3}, {150.289e3, 249.711e3}, {250.289e3, 349.711e3}, {350.289e3, 400e3}}
	b := reqs[2].Stopbands
	if len(b) != len(want) {
		t.Fatalf("bands %v, want %v", b, want)
	}
	for i := range want {
		if math.Abs(b[i].Lo-want[i].Lo) > 1e-6 || math.Abs(b[i].Hi-want[i].Hi) > 1e-6 {
			t.Errorf("band %d: %v, want %v", i+1, b[i], want[i])
		}
	}
	c, err := Design(sp, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	a, err := Analyze(c, sp)
	if err != nil {
		t.Fatal(err)
	}
	if a.AliasRejectionDB < sp.RejectionDB || a.PassbandRippleDB > sp.RippleDB {
		t.Errorf("rejection %.3f dB (target %g), ripple %.4f dB (budget %g)", a.AliasRejectionDB, sp.RejectionDB, a.PassbandRippleDB, sp.RippleDB)
	}
}
