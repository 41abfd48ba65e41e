package fixed

import (
	"math/rand/v2"
	"reflect"
	"testing"
)

// MinCoefBits gives the same coefficients and deviations, bit for bit,
// whether its widths' searches share one table of grid cosines or each
// computes its own (shareCosines): 60 seeded random Kaiser lowpasses of 11
// to 301 taps, their limits 1.05 to 3 times the float deviations, so that
// the searches move taps at several widths.
func TestMinCoefBitsCosTable(t *testing.T) {
	defer func(v bool) { shareCosines = v }(shareCosines)
	rng := rand.New(rand.NewPCG(41, 7))
	moved := 0
	for c := range 60 {
		n := 11 + rng.IntN(291)
		fc := 50e3 + 100e3*rng.Float64()
		taps := kaiserLowpass(n, fc, 1e6, 5+5*rng.Float64())
		bands := lowpassBands(0.6*fc, fc+4e6/float64(n), 1e6, 0, 0)
		fd := Deviations(taps, 1e6, bands, 0)
		for i := range bands {
			bands[i].MaxError = (1.05 + 2*rng.Float64()) * fd[i]
		}
		var got [2]struct {
			c   Coefficients
			dev []float64
			err error
		}
		for i, share := range []bool{true, false} {
			shareCosines = share
			widthCache = measureCache{} // a remembered result would hide the search
			got[i].c, got[i].dev, got[i].err = MinCoefBits(taps, 1e6, bands, QuantSettings{})
		}
		if got[0].c.Adjusted > 0 {
			moved++
		}
		if !reflect.DeepEqual(got[0], got[1]) {
			t.Fatalf("case %d (%d taps): with the table %+v, without %+v", c, n, got[0], got[1])
		}
	}
	if n := cosHeld.Load(); n != 0 {
		t.Errorf("%d grid cosines still counted as held after every MinCoefBits returned", n)
	}
	if moved < 20 {
		t.Errorf("only %d of 60 cases moved a tap off its plain rounding", moved)
	}
}
