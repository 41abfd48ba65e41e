package fixed

import (
	"math"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// besselI0 is the modified Bessel function of order 0 by its power series.
func besselI0(x float64) float64 {
	s, t := 1.0, 1.0
	for k := 1; k < 60; k++ {
		t *= (x / 2) / float64(k)
		s += t * t
	}
	return s
}

// kaiserLowpass returns an n-tap Kaiser-windowed sinc lowpass with cutoff fc
// Hz at rate Hz and DC gain 1 (Kaiser's window method, as in Oppenheim &
// Schafer): a hand-made design independent of the remez engine.
func kaiserLowpass(n int, fc, rate, beta float64) []float64 {
	h := make([]float64, n)
	c := float64(n-1) / 2
	sum := 0.0
	for k := range h {
		t := float64(k) - c
		v := 2 * fc / rate
		if t != 0 {
			v = math.Sin(2*math.Pi*fc/rate*t) / (math.Pi * t)
		}
		r := t / c
		h[k] = v * besselI0(beta*math.Sqrt(math.Max(0, 1-r*r))) / besselI0(beta)
		sum += h[k]
	}
	for k := range h {
		h[k] /= sum
	}
	// Exact symmetry, whatever the rounding of sin at mirrored arguments.
	for k := 0; k < n/2; k++ {
		h[n-1-k] = h[k]
	}
	return h
}

// kaiserHalfBand returns a 4K-1 tap windowed half-band: centre 1/2, every
// other tap exactly zero.
func kaiserHalfBand(k int, beta float64) []float64 {
	n := 4*k - 1
	h := make([]float64, n)
	c := n / 2
	for i := range h {
		t := i - c
		switch {
		case t == 0:
			h[i] = 0.5
		case t%2 == 0:
			h[i] = 0
		default:
			r := float64(t) / float64(c+1)
			h[i] = math.Sin(math.Pi*float64(t)/2) / (math.Pi * float64(t)) * besselI0(beta*math.Sqrt(1-r*r)) / besselI0(beta)
		}
	}
	for i := 0; i < n/2; i++ {
		h[n-1-i] = h[i]
	}
	return h
}

func lowpassBands(fp, fs, rate, dp, ds float64) []remez.Band {
	return []remez.Band{
		{Lo: 0, Hi: fp, Gain: 1, MaxError: dp},
		{Lo: fs, Hi: rate / 2, Gain: 0, MaxError: ds},
	}
}
