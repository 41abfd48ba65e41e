package optimize

import "testing"

// change's percentages round a tie against the chain described (worked by
// hand: 18 multiplies against 16 is 12.5% more, said 13%; 171 bits
// against 200 is 14.5% less, said 14%) and otherwise to the nearest.
func TestChangeRoundsTiesAgainst(t *testing.T) {
	for _, tc := range []struct {
		a, b float64
		want string
	}{
		{18, 16, "13% more"},
		{171, 200, "14% less"},
		{113, 100, "13% more"},
		{86, 100, "14% less"},
		{100.4, 100, "the same"},
	} {
		if got := change(tc.a, tc.b, "more", "less"); got != tc.want {
			t.Errorf("change(%g, %g) = %q, want %q", tc.a, tc.b, got, tc.want)
		}
	}
}
