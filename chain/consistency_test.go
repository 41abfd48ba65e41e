package chain

import (
	"math"
	"os"
	"strings"
	"testing"
)

// nothingToSpare are designed chains with little or nothing to spare. Before
// each stage's stopband limit took the cascade's passband gains into account
// (Requirement.StopbandScale), the FIR-only ones missed their targets by up
// to the ripple: fir101 measured 89.957 dB, fir5 > fir8 72.07 dB for 72.2 dB,
// fir4 > fir3 > fir4 75.29 dB for 75.33 dB (our own measurements with
// Analyze, before the change). CIC chains had slack of their own (the CIC's
// droop over the FIR's stopband adds to it) and are here to show that they
// still meet.
var nothingToSpare = []struct {
	name, plan string
	spec       Spec
}{
	// 101 MHz -> 1 MHz, fp 400 kHz, 90 dB, 0.1 dB in one stage.
	{"d101", "fir101", Spec{InputRate: 101e6, OutputRate: 1e6, Passband: 400e3, RippleDB: 0.1, RejectionDB: 90}},
	{"twofir", "fir5 > fir8", Spec{InputRate: 40e6, OutputRate: 1e6, Passband: 300e3, RippleDB: 1, RejectionDB: 72.2}},
	{"threefir", "fir4 > fir3 > fir4", Spec{InputRate: 48e3, OutputRate: 1e3, Passband: 350, Protected: 400, RippleDB: 0.5, RejectionDB: 75.33}},
	{"cic", "cic5m1r8 > fir5L", Spec{InputRate: 40e6, OutputRate: 1e6, Passband: 300e3, RippleDB: 1, RejectionDB: 72}},
	{"cichb", "cic4m1r16 > hb > fir4 > fir2", Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.3, RejectionDB: 82}},
}

func TestRejectionMeetsTargetWithoutRedesign(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("4 s: STEPDOWN_LONG (CI's long step)")
	}
	for _, dc := range nothingToSpare {
		t.Run(dc.name, func(t *testing.T) {
			c := designOrSkip(t, dc.spec, dc.plan)
			a, err := Analyze(c, dc.spec)
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("%s: rejection %.4f dB (target %g), ripple %.4f dB", dc.plan, a.AliasRejectionDB, dc.spec.RejectionDB, a.PassbandRippleDB)
			// docs/design.md §7's figure, measured on the designed taps, against the
			// spec's own target: no slack.
			if a.AliasRejectionDB < dc.spec.RejectionDB {
				t.Errorf("%s: rejection %.4f dB below the target %g dB", dc.plan, a.AliasRejectionDB, dc.spec.RejectionDB)
			}
			if a.PassbandRippleDB > dc.spec.RippleDB {
				t.Errorf("%s: ripple %.4f dB over the budget %g dB", dc.plan, a.PassbandRippleDB, dc.spec.RippleDB)
			}
		})
	}
}

// TestStopbandScale checks each stage's absolute stopband limit against the
// rule in the package doc, recomputed here from the ripple shares: ds times
// prod_j (1 - dp_j) / prod_{j != i} (1 + dp_j) over the ripple-bearing
// stages, and that the estimated analysis reads the relative figure (the
// target) rather than the absolute limit.
func TestStopbandScale(t *testing.T) {
	for _, dc := range nothingToSpare {
		plan, err := ParseNotation(dc.plan)
		if err != nil {
			t.Fatal(err)
		}
		reqs, err := Requirements(dc.spec, plan)
		if err != nil {
			t.Fatal(err)
		}
		ds := math.Pow(10, -dc.spec.RejectionDB/20) // docs/design.md §2
		n := 0
		var share float64
		for _, r := range reqs {
			if r.Kind != CIC {
				n++
				share = r.RippleDB
			}
		}
		// dp from ripple_db = 20 log10((1+dp)/(1-dp)) (docs/design.md §2).
		g := math.Pow(10, share/20)
		dp := (g - 1) / (g + 1)
		for i, r := range reqs {
			want := ds * math.Pow(1-dp, float64(n)) / math.Pow(1+dp, float64(n-1))
			if r.Kind == CIC {
				want /= 1 + dp
			}
			if r.Kind == HalfBand {
				want = math.Min(want, dp)
			}
			if math.Abs(r.Ds-want) > 1e-12*want {
				t.Errorf("%s stage %d: Ds %.6g, want %.6g", dc.plan, i+1, r.Ds, want)
			}
		}
		if n == len(plan) {
			c, err := Estimate(dc.spec, plan, Settings{})
			if err != nil {
				t.Fatal(err)
			}
			a, err := Analyze(c, dc.spec)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(a.AliasRejectionDB-dc.spec.RejectionDB) > 1e-9 {
				t.Errorf("%s: estimated rejection %.6f dB, want the target %g dB", dc.plan, a.AliasRejectionDB, dc.spec.RejectionDB)
			}
		}
	}
}

func TestDesignMaxTaps(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("long designs at the tap limit: about 6 s; set STEPDOWN_LONG=1 (CI's long step)")
	}
	dc := nothingToSpare[0] // fir101 at 90 dB: Herrmann's estimate is about 1900 taps
	plan, _ := ParseNotation(dc.plan)
	free, err := Design(dc.spec, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	n := len(free.Stages[0].(FIRStage).Taps)
	// A bound at the answer gives the same filter.
	c, err := Design(dc.spec, plan, Settings{MaxTaps: n})
	if err != nil {
		t.Fatalf("MaxTaps %d: %v", n, err)
	}
	if m := len(c.Stages[0].(FIRStage).Taps); m != n {
		t.Errorf("MaxTaps %d: %d taps, unbounded %d", n, m, n)
	}
	// A bound well below it fails, naming the bound.
	if _, err := Design(dc.spec, plan, Settings{MaxTaps: 511}); err == nil || !strings.Contains(err.Error(), "maxTaps = 511") {
		t.Errorf("MaxTaps 511: error %v, want one naming maxTaps = 511", err)
	}
	for _, bad := range []int{-1, 2} {
		if _, err := Design(dc.spec, plan, Settings{MaxTaps: bad}); err == nil || !strings.Contains(err.Error(), "Settings.MaxTaps") {
			t.Errorf("MaxTaps %d: error %v", bad, err)
		}
	}
	// A half-band longer than the bound is refused: the D = 4096 case's
	// 90 dB half-bands have 11 taps or more.
	hb := designedCases[3]
	hplan, _ := ParseNotation(hb.plan)
	if _, err := Design(hb.spec, hplan, Settings{MaxTaps: 7}); err == nil || !strings.Contains(err.Error(), "Settings.MaxTaps = 7") {
		t.Errorf("half-band under MaxTaps 7: error %v", err)
	}
}
