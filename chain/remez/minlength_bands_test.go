package remez

import (
	"errors"
	"testing"
)

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
