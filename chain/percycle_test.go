package chain

import "testing"

// PerCycle is ceil(rate/clock) (the definition), with a rate that is a
// whole multiple of the clock up to rounding counted as that multiple, and
// Lanes is at least 1: the rule that cost's multipliers, fixed's native
// blocks and the lanes all take.
func TestPerCycle(t *testing.T) {
	for _, tc := range []struct {
		rate, clock float64
		want, lanes int
	}{
		{0, 400e6, 0, 1},
		{1, 400e6, 1, 1},
		{400e6, 400e6, 1, 1},
		{400e6 * (1 + 1e-13), 400e6, 1, 1}, // rounding of a product that is 1 clock
		{400.1e6, 400e6, 2, 2},
		{2.4e9, 400e6, 6, 6},
		{2.4e9 + 1, 400e6, 7, 7},
		{3e9, 491.52e6, 7, 7},
	} {
		if got := PerCycle(tc.rate, tc.clock); got != tc.want {
			t.Errorf("PerCycle(%v, %v) = %d, want %d", tc.rate, tc.clock, got, tc.want)
		}
		if got := Lanes(tc.rate, tc.clock); got != tc.lanes {
			t.Errorf("Lanes(%v, %v) = %d, want %d", tc.rate, tc.clock, got, tc.lanes)
		}
	}
}
