package remez

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestSeedLaxAgreesWithLongWay: a design far longer than its bands need is
// refused as met to rounding level as soon as a seed design (half the
// length, or less) shows it, instead of after the whole exchange at full
// length. Seeded cases with transitions from 0.004 to 0.25 of the rate,
// most so wide that tens of taps would do: every one refused early must
// be refused the long way too, and a design the long way accepts must not
// be refused early.
func TestSeedLaxAgreesWithLongWay(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 11))
	early, designed := 0, 0
	const cases = 16
	for c := range cases {
		fp := 0.05 + 0.15*rng.Float64()
		fs := fp + 0.004*math.Pow(60, rng.Float64())
		n := []int{201, 301, 400, 501, 800, 1001}[rng.IntN(6)]
		bands := []Band{
			{Lo: 0, Hi: fp, Gain: 1, Weight: 1},
			{Lo: fs, Hi: 0.5, Gain: 0, Weight: 1 + 99*rng.Float64()},
		}
		name := fmt.Sprintf("case %d: n %d, pass %.3f, stop %.3f", c, n, fp, fs)
		_, errFast := Design(n, 1, bands, Settings{})
		seedLax = false
		_, errLong := Design(n, 1, bands, Settings{})
		seedLax = true
		fast := errors.Is(errFast, ErrRoundingLevel)
		if fast && strings.Contains(errFast.Error(), "seed design") {
			early++
			if !errors.Is(errLong, ErrRoundingLevel) {
				t.Errorf("%s: refused early (%v), the long way gives %v", name, errFast, errLong)
			}
		}
		if errLong == nil {
			designed++
		}
		if errLong == nil && errFast != nil {
			t.Errorf("%s: the long way designs it, early: %v", name, errFast)
		}
	}
	if early == 0 || designed == 0 {
		t.Errorf("%d cases refused early, %d designed the long way: the test checks too little", early, designed)
	}
	t.Logf("%d of %d refused early, %d designed", early, cases, designed)
}
