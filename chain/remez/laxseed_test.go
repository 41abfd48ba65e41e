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

// MinLength starts no lower than the least length with a coefficient for
// every band (2 nb - 1 taps, odd), and refuses with ErrTooManyBands when
// that is over maxTaps.
func TestMinLengthBandCountFloor(t *testing.T) {
	var bands []Band
	bands = append(bands, Band{Lo: 0, Hi: 0.05, Gain: 1, MaxError: 0.01})
	for i := range 30 {
		lo := 0.08 + 0.014*float64(i)
		bands = append(bands, Band{Lo: lo, Hi: lo + 0.007, MaxError: 0.001})
	}
	if _, err := MinLength(1, bands, 1, 59, Settings{}); !errors.Is(err, ErrTooManyBands) {
		t.Errorf("31 bands within 59 taps: %v, want ErrTooManyBands", err)
	}
	res, err := MinLength(1, bands, 1, 401, Settings{})
	if err != nil {
		t.Fatalf("31 bands within 401 taps: %v", err)
	}
	if len(res.Taps) < 61 {
		t.Errorf("31 bands designed with %d taps, fewer than 61", len(res.Taps))
	}
}
