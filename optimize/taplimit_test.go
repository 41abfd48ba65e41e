package optimize_test

import (
	"bytes"
	"context"
	"math"
	"os"
	"runtime"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// primeSpec is an invented demanding front end with a prime ratio: 101 MHz
// to 1 MHz (D = 101), 400 kHz passband, 0.1 dB ripple, 90 dB rejection.
// Its only split is one FIR stage, estimated at 1 834 taps (Herrmann,
// Rabiner and Chan 1973: dp = 0.005756, ds = 3.162e-5, transition 200 kHz
// at 101 MHz; recomputed with /usr/bin/python3), far over the 511-tap first
// step of the automatic limit.
func primeSpec() chain.Spec {
	return chain.Spec{InputRate: 101e6, OutputRate: 1e6, Passband: 400e3, RippleDB: 0.1, RejectionDB: 90}
}

// firGain is |H(f)| of taps at rate, summed directly (the DTFT), for a
// check that does not go through package chain's analysis.
func firGain(h []float64, f, rate float64) float64 {
	var re, im float64
	w := 2 * math.Pi * f / rate
	for n, v := range h {
		s, c := math.Sincos(w * float64(n))
		re += v * c
		im -= v * s
	}
	return math.Hypot(re, im)
}

// TestPrimeDemanding: the automatic tap limit gives the prime D = 101 spec
// its one-stage answer, designed for real, while an explicit 511-tap limit
// is honoured and leaves no chain.
func TestPrimeDemanding(t *testing.T) {
	needDesigns(t)
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("a 3.5 s plan: STEPDOWN_LONG (CI's long step), beside its GOMAXPROCS twin")
	}
	spec := primeSpec()
	r, err := optimize.Plan(context.Background(), spec, optimize.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Front) == 0 || r.Partial {
		t.Fatalf("no front (partial %v, unsettled %d); dropped %v", r.Partial, r.Unsettled, r.Dropped)
	}
	if r.MaxTaps <= 511 || r.MaxTaps > 16383 {
		t.Errorf("final tap limit %d: want it raised above 511, at most 16383", r.MaxTaps)
	}
	for _, c := range r.Front {
		if len(c.Plan) != 1 || c.Plan[0].Factor != 101 || c.Plan[0].Kind != chain.FIR {
			t.Fatalf("front holds %s; want one FIR stage", chain.Notation(c.Plan))
		}
		if !c.Figures.Designed || c.Chain == nil || !c.Chain.Designed {
			t.Fatalf("%s is not designed", chain.Notation(c.Plan))
		}
		st := c.Chain.Stages[0].(chain.FIRStage)
		// Within 15% of the Herrmann estimate above (a multiband design
		// with don't-care bands is usually a little shorter, the estimate
		// is an approximation either way; tolerance our choice).
		if n := float64(len(st.Taps)); math.Abs(n-1834)/1834 > 0.15 {
			t.Errorf("%d taps, estimate 1834", len(st.Taps))
		}
		// Every band that folds onto [0, 400 kHz] at 1 MHz, relative to
		// the gain at 0 Hz (docs/design.md §7), read on a 200-point grid per band:
		// at least 90 dB less 0.02 dB for the grid and the search's slack.
		h0 := firGain(st.Taps, 0, spec.InputRate)
		worst := 0.0
		for k := 1; float64(k)*1e6-400e3 <= spec.InputRate/2; k++ {
			lo, hi := float64(k)*1e6-400e3, math.Min(float64(k)*1e6+400e3, spec.InputRate/2)
			for i := 0; i <= 200; i++ {
				worst = math.Max(worst, firGain(st.Taps, lo+(hi-lo)*float64(i)/200, spec.InputRate)/h0)
			}
		}
		if rej := -20 * math.Log10(worst); rej < 90-0.02 {
			t.Errorf("%s: direct alias rejection %.3f dB, want 90", chain.Notation(c.Plan), rej)
		}
		t.Logf("%s: %d taps, rejection %.3f dB, ripple %.4f dB; limit %d; %s",
			chain.Notation(c.Plan), len(st.Taps), c.Figures.Analysis.AliasRejectionDB, c.Figures.Analysis.PassbandRippleDB, r.MaxTaps, r.Reason)
	}

	fixed, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxTaps: 511})
	if err != nil {
		t.Fatal(err)
	}
	if len(fixed.Front) != 0 || fixed.MaxTaps != 511 || fixed.Dropped[optimize.ReasonLongFIR] == 0 {
		t.Errorf("MaxTaps 511: front %d, limit %d, dropped %v; want no chain, the limit kept and long stages dropped",
			len(fixed.Front), fixed.MaxTaps, fixed.Dropped)
	}
}

// TestPrimeLax: a prime D with a lax spec finds its one-stage answer under
// the first step of the limit, which is not raised.
func TestPrimeLax(t *testing.T) {
	needDesigns(t)
	spec := chain.Spec{InputRate: 101e6, OutputRate: 1e6, Passband: 100e3, RippleDB: 1, RejectionDB: 50}
	r, err := optimize.Plan(context.Background(), spec, optimize.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Front) == 0 {
		t.Fatalf("no front; dropped %v", r.Dropped)
	}
	if r.MaxTaps != 511 {
		t.Errorf("tap limit %d: want 511 (nothing dropped by it)", r.MaxTaps)
	}
	for _, c := range r.Front {
		if len(c.Plan) != 1 || c.Plan[0].Factor != 101 || !c.Figures.Designed {
			t.Errorf("front holds %s (designed %v)", chain.Notation(c.Plan), c.Figures.Designed)
		}
	}
}

// TestPrimeDemandingGOMAXPROCS: the raised-limit search gives the same
// bytes under GOMAXPROCS 1 and 2.
func TestPrimeDemandingGOMAXPROCS(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("two 1834-tap plans: about 7 s; set STEPDOWN_LONG=1 (CI's long step)")
	}
	needDesigns(t)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	runtime.GOMAXPROCS(1)
	a := planJSON(t, primeSpec(), optimize.Settings{})
	runtime.GOMAXPROCS(2)
	b := planJSON(t, primeSpec(), optimize.Settings{})
	if !bytes.Equal(a, b) {
		t.Errorf("results differ between GOMAXPROCS 1 and 2 (%d and %d bytes)", len(a), len(b))
	}
}

// TestCancelMidRun: a context cancelled from Progress after a few designs
// stops the search there: the result is partial, holds only designed and
// measured chains, and no more designs ran than those started before the
// cancellation (Progress runs before the next check of the context).
func TestCancelMidRun(t *testing.T) {
	needDesigns(t)
	spec := rx()
	spec.InputRate = spec.OutputRate * 96
	s := optimize.Settings{MaxStages: 4}
	full, err := optimize.Plan(context.Background(), spec, s)
	if err != nil {
		t.Fatal(err)
	}
	for _, jobs := range []int{1, 2} {
		const n = 5
		ctx, cancel := context.WithCancel(context.Background())
		s := s
		s.Jobs = jobs
		s.Progress = func(done, _ int) {
			if done == n {
				cancel()
			}
		}
		r, err := optimize.Plan(ctx, spec, s)
		cancel()
		if err != nil {
			t.Fatal(err)
		}
		if !r.Partial {
			t.Errorf("jobs %d: not marked partial", jobs)
		}
		// At most n units finished by the cancellation, plus one still
		// running on each other worker.
		if r.Designed > n+jobs-1 || r.Designed >= full.Designed {
			t.Errorf("jobs %d: %d designs after cancelling at %d (full search %d)", jobs, r.Designed, n, full.Designed)
		}
		for _, c := range r.Front {
			if !c.Figures.Designed || c.Chain == nil {
				t.Errorf("jobs %d: %s on the front is not designed", jobs, chain.Notation(c.Plan))
			}
		}
		t.Logf("jobs %d: cancelled after %d of %d designs, front of %d", jobs, r.Designed, full.Designed, len(r.Front))
	}
}

// BenchmarkPlanPrime101 is the whole plan of the demanding prime spec: a
// first search at 511 taps that keeps nothing, then the one-stage FIR of
// about 1 900 taps designed and measured.
func BenchmarkPlanPrime101(b *testing.B) {
	needDesigns(b)
	for i := 0; i < b.N; i++ {
		r, err := optimize.Plan(context.Background(), primeSpec(), optimize.Settings{})
		if err != nil {
			b.Fatal(err)
		}
		if i == 0 {
			b.ReportMetric(float64(r.MaxTaps), "tap-limit")
		}
	}
}
