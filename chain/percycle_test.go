package chain

import (
	"math"
	"strings"
	"testing"
)

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

// A quotient past 2^53 counts as 2^53 rather than wrapping negative (an
// int conversion of it would), and CheckClock refuses a clock under which
// a stage would take more than MaxLanes samples a cycle, naming the least
// clock, rate / MaxLanes, which it accepts.
func TestCheckClock(t *testing.T) {
	if got := PerCycle(100e6, 1e-30); got != 1<<53 {
		t.Errorf("PerCycle(100 MHz, 1e-30 Hz) = %d, want 2^53", got)
	}
	for _, tc := range []struct {
		rate, clock float64
		want        string // "" for accepted
	}{
		{100e6, 0, ""},
		{0, 1e-30, ""},
		{100e6, 100e6 / MaxLanes, ""},
		{100e6, 1e9, ""},
		{100e6, 100e6 / MaxLanes * (1 - 1e-6), "at least 1.52587890625 kHz"},
		{100e6, 1e-30, "more than 65536 samples a clock cycle"},
		{100e6, -1, "above 0 Hz"},
		{100e6, math.Inf(1), "finite"},
		{100e6, math.NaN(), "above 0 Hz"},
	} {
		err := CheckClock(tc.rate, tc.clock)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("CheckClock(%v, %v) = %v, want nil", tc.rate, tc.clock, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("CheckClock(%v, %v) = %v, want an error saying %q", tc.rate, tc.clock, err, tc.want)
		}
	}
}
