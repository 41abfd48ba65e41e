package remez

import (
	"fmt"
	"testing"
)

func TestWork2(t *testing.T) {
	if !debugRemez {
		t.Skip()
	}
	for _, tc := range []struct {
		n     int
		rate  float64
		bands []Band
	}{
		{1023, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1, Weight: 1}, {Lo: 0.205, Hi: 0.5, Weight: 10}}},
		{2047, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1, Weight: 1}, {Lo: 0.2025, Hi: 0.5, Weight: 10}}},
		{4095, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1, Weight: 1}, {Lo: 0.2015, Hi: 0.5, Weight: 10}}},
		{5080, 10000, []Band{{Lo: 0, Hi: 45, Gain: 1, Weight: 1}, {Lo: 50, Hi: 5000, Weight: 10}}},
		{2001, 1, []Band{{Lo: 0, Hi: 0.05, Weight: 10}, {Lo: 0.06, Hi: 0.2, Gain: 1}, {Lo: 0.21, Hi: 0.5, Weight: 10}}},
	} {
		workCount.Store(0)
		res, err := Design(tc.n, tc.rate, tc.bands, Settings{})
		r := float64((tc.n + 1) / 2)
		fmt.Printf("WORK2 n=%d work/r^2=%.1f iters %d err %v\n", tc.n, float64(workCount.Load())/(r*r), res.Iterations, err)
	}
}
