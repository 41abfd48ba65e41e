package remez

import (
	"math"
	"testing"
)

func TestHerrmannDF(t *testing.T) {
	// Expected values: computed values (docs/design.md §11), recomputed by hand
	// from the published Herrmann-Rabiner-Chan (1973) coefficients, e.g.
	// D(0.01, 0.001): L1 = -2, L2 = -3,
	// (0.021236 - 0.14228 - 0.4761)(-3) - (0.01064 - 1.1882 + 0.4278)
	// = 1.791432 + 0.74976 = 2.541192.
	for _, tc := range []struct {
		dp, ds, d, f float64
	}{
		{0.01, 0.001, 2.54119, 11.52461},
		{0.005, 0.001, 2.76021, 11.01217 + 0.51244*math.Log10(5)},
		{0.01, 1e-4, 3.13834, 12.03705},
		{0.01, 0.01, 1.94405, 11.01217},
		{1e-4, 1e-4, 4.60890, 11.01217},
		// dp < ds is swapped, as the formula was fitted for dp >= ds.
		{0.001, 0.01, 2.54119, 11.52461},
	} {
		if got := HerrmannD(tc.dp, tc.ds); math.Abs(got-tc.d) > 5e-6 {
			t.Errorf("HerrmannD(%v, %v) = %.6f, want %.5f", tc.dp, tc.ds, got, tc.d)
		}
		if got := HerrmannF(tc.dp, tc.ds); math.Abs(got-tc.f) > 5e-6 {
			t.Errorf("HerrmannF(%v, %v) = %.6f, want %.5f", tc.dp, tc.ds, got, tc.f)
		}
	}
}

func TestLengthEstimates(t *testing.T) {
	// Hand values from the published formulas (docs/design.md §11), rounded up to whole taps.
	for _, tc := range []struct {
		name             string
		fn               func(dp, ds, tr, rate float64) int
		dp, ds, tr, rate float64
		want             int
	}{
		// Herrmann: df = 5/10000, 2.541192/0.0005 - 11.52461*0.0005 + 1
		// = 5082.384 - 0.00576 + 1 = 5083.38 -> 5084 (docs/design.md §11: one
		// stage of the 10 kHz / 100 Hz example ~5 082 + 1 taps).
		{"herrmann", HerrmannLength, 0.01, 0.001, 5, 10000, 5084},
		// Herrmann: df = 0.1: 25.41192 - 1.152461 + 1 = 25.26 -> 26.
		{"herrmann-wide", HerrmannLength, 0.01, 0.001, 0.1, 1, 26},
		// Kaiser: -20 log10 sqrt(1e-5) = 50; (50-13)/(14.6*0.0005) + 1
		// = 5068.49 + 1 = 5069.49 -> 5070.
		{"kaiser", KaiserLength, 0.01, 0.001, 5, 10000, 5070},
		// Kaiser: (50-13)/(14.6*0.1) + 1 = 25.342 + 1 = 26.34 -> 27.
		{"kaiser-wide", KaiserLength, 0.01, 0.001, 0.1, 1, 27},
		// Bellanger: (2/3) log10(1/(10*1e-5)) / 0.0005 = (2/3)*4/0.0005
		// = 5333.33 -> 5334.
		{"bellanger", BellangerLength, 0.01, 0.001, 5, 10000, 5334},
		// Bellanger: (2/3)*log10(1/(10*1e-4*1e-4))/0.05 = (2/3)*7/0.05
		// = 93.33 -> 94.
		{"bellanger-tight", BellangerLength, 1e-4, 1e-4, 0.05, 1, 94},
		// Out of domain gives 0 (documented "no estimate").
		{"zero-transition", HerrmannLength, 0.01, 0.001, 0, 1, 0},
		{"negative-dev", KaiserLength, -0.01, 0.001, 0.1, 1, 0},
		{"dev-one", BellangerLength, 0.01, 1, 0.1, 1, 0},
		{"nan-rate", HerrmannLength, 0.01, 0.001, 0.1, math.NaN(), 0},
		{"wide-transition", KaiserLength, 0.01, 0.001, 0.6, 1, 0},
	} {
		if got := tc.fn(tc.dp, tc.ds, tc.tr, tc.rate); got != tc.want {
			t.Errorf("%s: got %d taps, want %d", tc.name, got, tc.want)
		}
	}
}
