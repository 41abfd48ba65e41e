package remez

import (
	"math"
	"strings"
	"testing"
)

func TestDesignErrors(t *testing.T) {
	lp := []Band{{Lo: 0, Hi: 0.2, Gain: 1}, {Lo: 0.3, Hi: 0.5, Gain: 0}}
	nan := math.NaN()
	for _, tc := range []struct {
		name  string
		n     int
		rate  float64
		bands []Band
		s     Settings
		want  string // a word the message must contain
	}{
		{"n<3", 2, 1, lp, Settings{}, "n = 2"},
		{"n=0", 0, 1, lp, Settings{}, "n = 0"},
		{"rate0", 31, 0, lp, Settings{}, "rate"},
		{"rateNaN", 31, nan, lp, Settings{}, "rate"},
		{"rateInf", 31, math.Inf(1), lp, Settings{}, "rate"},
		{"nobands", 31, 1, nil, Settings{}, "no bands"},
		{"zerowidth", 31, 1, []Band{{Lo: 0.1, Hi: 0.1, Gain: 1}}, Settings{}, "zero-width"},
		{"reversed", 31, 1, []Band{{Lo: 0.3, Hi: 0.1, Gain: 1}}, Settings{}, "band 0"},
		{"beyondNyquist", 31, 1, []Band{{Lo: 0, Hi: 0.6, Gain: 1}}, Settings{}, "rate/2"},
		{"negative", 31, 1, []Band{{Lo: -0.1, Hi: 0.2, Gain: 1}}, Settings{}, "band 0"},
		{"nanEdge", 31, 1, []Band{{Lo: nan, Hi: 0.2, Gain: 1}}, Settings{}, "band 0"},
		{"overlap", 31, 1, []Band{{Lo: 0, Hi: 0.3, Gain: 1}, {Lo: 0.2, Hi: 0.5}}, Settings{}, "overlap"},
		{"nanGain", 31, 1, []Band{{Lo: 0, Hi: 0.2, Gain: nan}}, Settings{}, "Gain"},
		{"negWeight", 31, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1, Weight: -1}}, Settings{}, "Weight"},
		{"gainFuncNaN", 31, 1, []Band{{Lo: 0, Hi: 0.2, GainFunc: func(float64) float64 { return nan }}}, Settings{}, "GainFunc"},
		{"weightFuncZero", 31, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1, WeightFunc: func(float64) float64 { return 0 }}}, Settings{}, "WeightFunc"},
		{"density", 31, 1, lp, Settings{Density: -1}, "Density"},
		{"iterations", 31, 1, lp, Settings{MaxIterations: -3}, "MaxIterations"},
		{"tooManyBands", 5, 1, []Band{{Lo: 0, Hi: 0.05, Gain: 1}, {Lo: 0.1, Hi: 0.15}, {Lo: 0.2, Hi: 0.25, Gain: 1}, {Lo: 0.3, Hi: 0.35}, {Lo: 0.4, Hi: 0.5, Gain: 1}}, Settings{}, "bands"},
		{"fewGridPoints", 101, 1, []Band{{Lo: 0, Hi: 0.001, Gain: 1}, {Lo: 0.4, Hi: 0.401}}, Settings{Density: 1, GridOnly: true}, "grid points"},
		{"evenNyquist", 20, 1, []Band{{Lo: 0, Hi: 0.3, Gain: 1}, {Lo: 0.4999, Hi: 0.5}}, Settings{GridOnly: true}, "rate/2"},
		{"fewPoints", 5, 1, []Band{{Lo: 0.499, Hi: 0.5, Gain: 1}}, Settings{GridOnly: true}, "grid point"},
		// An even length cannot reach a gain at rate/2 (a review found
		// the exchange's failure advising more iterations).
		{"evenNyquistGain", 30, 1000, []Band{{Lo: 0, Hi: 200}, {Lo: 300, Hi: 500, Gain: 1}}, Settings{}, "use an odd length"},
		{"evenNyquistGainFunc", 30, 1, []Band{{Lo: 0, Hi: 0.2}, {Lo: 0.3, Hi: 0.5, GainFunc: func(f float64) float64 { return f }}}, Settings{}, "wants gain 0.5 at rate/2"},
		// A length whose counts would overflow (a review found negative
		// degrees of freedom in the message).
		{"absurdLength", math.MaxInt, 1, lp, Settings{}, "at most 4194304 taps"},
		{"tooLax", 301, 1, []Band{{Lo: 0, Hi: 0.1, Gain: 1}, {Lo: 0.4, Hi: 0.5}}, Settings{}, "rounding"},
		{"maxIter", 301, 1, []Band{{Lo: 0, Hi: 0.2, Gain: 1}, {Lo: 0.21, Hi: 0.5}}, Settings{MaxIterations: 1}, "converge"},
	} {
		res, err := Design(tc.n, tc.rate, tc.bands, tc.s)
		if err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		if !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %q does not mention %q", tc.name, err, tc.want)
		}
		if res != nil {
			for _, v := range res.Taps {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Errorf("%s: non-finite tap in the best-effort result", tc.name)
					break
				}
			}
		}
	}
}

func TestOtherErrors(t *testing.T) {
	lp := []Band{{Lo: 0, Hi: 0.2, Gain: 1, MaxError: 0.01}, {Lo: 0.25, Hi: 0.5, MaxError: 0.001}}
	hp := []Band{{Lo: 0, Hi: 0.2, MaxError: 0.001}, {Lo: 0.25, Hi: 0.5, Gain: 1, MaxError: 0.01}}
	for _, tc := range []struct {
		name string
		fn   func() (*Result, error)
	}{
		{"halfband k=0", func() (*Result, error) { return HalfBand(0, 0.2, 1, Settings{}) }},
		{"halfband fp=0", func() (*Result, error) { return HalfBand(3, 0, 1, Settings{}) }},
		{"halfband fp=rate/4", func() (*Result, error) { return HalfBand(3, 0.25, 1, Settings{}) }},
		{"halfband rate NaN", func() (*Result, error) { return HalfBand(3, 0.2, math.NaN(), Settings{}) }},
		{"minhalfband dev=0", func() (*Result, error) { return MinHalfBand(0.2, 1, 0, Settings{}) }},
		{"minhalfband dev=0.5", func() (*Result, error) { return MinHalfBand(0.2, 1, 0.5, Settings{}) }},
		{"minlength no MaxError", func() (*Result, error) {
			return MinLength(1, []Band{{Lo: 0, Hi: 0.2, Gain: 1}, {Lo: 0.3, Hi: 0.5}}, 0, 0, Settings{})
		}},
		{"minlength parity 3", func() (*Result, error) { return MinLength(1, lp, 3, 0, Settings{}) }},
		{"minlength maxTaps 2", func() (*Result, error) { return MinLength(1, lp, 0, 2, Settings{}) }},
		{"minlength unreachable", func() (*Result, error) { return MinLength(1, lp, 1, 21, Settings{}) }},
		{"minlength even highpass", func() (*Result, error) { return MinLength(1, hp, 2, 0, Settings{}) }},
	} {
		res, err := tc.fn()
		if err == nil {
			t.Errorf("%s: no error", tc.name)
		}
		if res != nil {
			t.Errorf("%s: result with error", tc.name)
		}
	}
}
