package fixed

import (
	"context"
	"math"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// What Deviations cannot measure (a rate that is not positive and
// finite, a band outside [0, rate/2] or reversed, a negative density) is
// an error from DeviationsContext and MinCoefBits naming the value, and
// a panic with the same words from Deviations and TryWidth, never a
// runtime error from deep inside (a slice sized from a NaN rate).
func TestMeasureRefusesBadInput(t *testing.T) {
	h := []float64{0.1, 0.3, 0.1}
	lp := []remez.Band{{Lo: 0, Hi: 100, Gain: 1, MaxError: 0.1}, {Lo: 150, Hi: 500, MaxError: 0.1}}
	cases := []struct {
		name    string
		rate    float64
		bands   []remez.Band
		density int
		want    string
	}{
		{"NaN rate", math.NaN(), lp, 16, "rate = NaN Hz"},
		{"zero rate", 0, lp, 16, "rate = 0 Hz"},
		{"negative rate", -1000, lp, 16, "rate = -1000 Hz"},
		{"infinite rate", math.Inf(1), lp, 16, "rate = +Inf Hz"},
		{"band above rate/2", 1000, []remez.Band{{Lo: 0, Hi: 9000, Gain: 1, MaxError: 0.1}}, 16, "band 0 edges [0, 9000] Hz"},
		{"reversed band", 1000, []remez.Band{{Lo: 200, Hi: 100, MaxError: 0.1}}, 16, "band 0 edges [200, 100] Hz"},
		{"NaN edge", 1000, []remez.Band{{Lo: math.NaN(), Hi: 100, MaxError: 0.1}}, 16, "band 0 edges [NaN, 100] Hz"},
		{"negative density", 1000, lp, -5, "density = -5"},
	}
	for _, c := range cases {
		if _, err := DeviationsContext(context.Background(), h, c.rate, c.bands, c.density); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: DeviationsContext err = %v, want one naming %q", c.name, err, c.want)
		}
		if _, _, err := MinCoefBits(h, c.rate, c.bands, QuantSettings{Density: c.density}); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: MinCoefBits err = %v, want one naming %q", c.name, err, c.want)
		}
		for fn, call := range map[string]func(){
			"Deviations": func() { Deviations(h, c.rate, c.bands, c.density) },
			"TryWidth":   func() { TryWidth(h, c.rate, c.bands, 12, QuantSettings{Density: c.density}) },
		} {
			func() {
				defer func() {
					r := recover()
					if s, ok := r.(string); !ok || !strings.Contains(s, c.want) {
						t.Errorf("%s: %s panicked with %v, want a message naming %q", c.name, fn, r, c.want)
					}
				}()
				call()
			}()
		}
	}
	// An upper edge past rate/2 by rounding is measured as given.
	if _, err := DeviationsContext(context.Background(), h, 1000, []remez.Band{{Lo: 400, Hi: 500 * (1 + 1e-15)}}, 16); err != nil {
		t.Errorf("an edge past rate/2 by rounding: %v", err)
	}
}

// Quantize refuses taps that are not finite rather than turning NaN into
// the most negative code.
func TestQuantizeNonFinitePanics(t *testing.T) {
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		func() {
			defer func() {
				if s, ok := recover().(string); !ok || !strings.Contains(s, "not all finite") {
					t.Errorf("Quantize with a tap of %v: panic %q, want one saying the taps are not all finite", v, s)
				}
			}()
			Quantize([]float64{v, 0.25}, 12)
		}()
	}
}

// A bounded band's measurement that is abandoned (DeviationsContext
// cancelled part way, its evaluations reading 0) stops at its next chunk
// instead of walking every candidate peak, which zeros would never prune.
func TestDeviationBoundedStops(t *testing.T) {
	c := randomDevCases(t, 91, 1, 6000, 6001)[0]
	r := newResponse(c.h, c.rate)
	for i := range c.bands {
		b := &c.bands[i]
		if !r.boundable(b) || b.Gain != 0 {
			continue // a zero-read passband errs by 1 and prunes itself
		}
		calls := 0
		each := func(xs, out []float64) {
			calls++
			clear(out)
		}
		deviationBounded(b, bandGrid(b, len(c.h), c.rate, 16), r.bounds(), each, math.Inf(1), func() bool { return true })
		if calls > 1 {
			t.Errorf("band %d: an abandoned measurement evaluated %d batches, want at most the first", i, calls)
		}
		return
	}
	t.Fatal("no boundable band in the case: the test checks nothing")
}
