package optimize

import (
	"context"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// TestHintsPrimeRatio: a prime D = 53 plans one long FIR (456 multiplies
// per output on this invented spec); the nearby ratios 50 and 54 and the
// same output rate through a fractional stage are named, each at most 80 %
// of it, with the figures of their own recommended chains. A D whose prime
// factors are at most 7 gets no hint. It plans four specs: the long run
// (STEPDOWN_LONG) only.
func TestHintsPrimeRatio(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("plans four specs: STEPDOWN_LONG")
	}
	spec := chain.Spec{InputRate: 53e6, OutputRate: 1e6, Passband: 0.4e6, RippleDB: 0.1, RejectionDB: 80}
	s := Settings{MaxStages: 2}
	r, err := Plan(context.Background(), spec, s)
	if err != nil {
		t.Fatal(err)
	}
	base := r.Front[r.Recommended].Figures.MultipliesPerOutput
	h, err := Hints(context.Background(), spec, s, r)
	if err != nil {
		t.Fatal(err)
	}
	var ratios []string
	for _, x := range h {
		ratios = append(ratios, x.Ratio)
		if !(x.MultipliesPerOutput <= hintSaving*base) || !strings.Contains(x.Text, "D = 53 has the prime factor 53") || x.Chain == "" {
			t.Errorf("hint %+v (base %g)", x, base)
		}
		t.Log(x.Text)
	}
	if got := strings.Join(ratios, " "); got != "50 54 53" {
		t.Errorf("hints for ratios %q, want 50, 54 and the fractional route (53)", got)
	}
	spec.InputRate = 50e6
	r, err = Plan(context.Background(), spec, s)
	if err != nil {
		t.Fatal(err)
	}
	if h, err := Hints(context.Background(), spec, s, r); err != nil || h != nil {
		t.Errorf("D = 50: hints %v, %v", h, err)
	}
}

// TestHintsQuiet: no hint (and no planning) for a ratio whose prime
// factors are at most 7, a fractional ratio or an interpolation; the
// largest prime factor by trial division (worked by hand).
func TestHintsQuiet(t *testing.T) {
	for _, c := range []struct{ n, p int }{{1, 1}, {2, 2}, {50, 5}, {53, 53}, {4096, 2}, {1000, 5}, {5120, 5}, {2 * 3 * 5 * 7 * 11, 11}, {1021 * 3, 1021}} {
		if got := largestPrime(c.n); got != c.p {
			t.Errorf("largestPrime(%d) = %d, want %d", c.n, got, c.p)
		}
	}
	for _, spec := range []chain.Spec{
		{InputRate: 50e6, OutputRate: 1e6, Passband: 0.4e6, RippleDB: 0.1, RejectionDB: 80},
		{InputRate: 100e6, OutputRate: 3.84e6, Passband: 1.2e6, RippleDB: 0.1, RejectionDB: 80},
		{InputRate: 1e6, OutputRate: 53e6, Passband: 0.4e6, RippleDB: 0.1, RejectionDB: 80},
	} {
		if h, err := Hints(context.Background(), spec, Settings{}, nil); err != nil || h != nil {
			t.Errorf("%+v: hints %v, %v", spec, h, err)
		}
	}
}
