// Package testfilters makes filters for tests by Kaiser's window method
// (Kaiser's window and the windowed ideal lowpass, as in Oppenheim and
// Schafer's text; common practice), independent of the project's own
// Parks-McClellan engine: tests use them as designs that come from outside
// the code under test.
//
// Frequencies are fractions of the sample rate (cycles per sample); taps
// are exactly symmetric, whatever the rounding of sin at mirrored
// arguments.
package testfilters

import "math"

// BesselI0 is the modified Bessel function of the first kind of order 0,
// by its power series (60 terms: exact to float64 for the arguments a
// window takes).
func BesselI0(x float64) float64 {
	s, t := 1.0, 1.0
	for k := 1; k < 60; k++ {
		t *= (x / 2) / float64(k)
		s += t * t
	}
	return s
}

// KaiserLowpass returns an n-tap Kaiser-windowed ideal lowpass with cutoff
// fc (a fraction of the rate) and window parameter beta, scaled to a DC
// gain of 1.
func KaiserLowpass(n int, fc, beta float64) []float64 {
	h := make([]float64, n)
	c := float64(n-1) / 2
	sum := 0.0
	for k := range h {
		t := float64(k) - c
		v := 2 * fc
		if t != 0 {
			v = math.Sin(2*math.Pi*fc*t) / (math.Pi * t)
		}
		r := 0.0
		if c > 0 {
			r = t / c
		}
		h[k] = v * BesselI0(beta*math.Sqrt(math.Max(0, 1-r*r))) / BesselI0(beta)
		sum += h[k]
	}
	for k := range h {
		h[k] /= sum
	}
	for k := 0; k < n/2; k++ {
		h[n-1-k] = h[k]
	}
	return h
}

// KaiserHalfBand returns a 4k-1 tap Kaiser-windowed half-band: centre 1/2,
// every other tap exactly zero (the half-band's definition, common
// practice).
func KaiserHalfBand(k int, beta float64) []float64 {
	n := 4*k - 1
	h := make([]float64, n)
	c := n / 2
	for i := range h {
		t := i - c
		switch {
		case t == 0:
			h[i] = 0.5
		case t%2 == 0:
		default:
			r := float64(t) / float64(c+1)
			h[i] = math.Sin(math.Pi*float64(t)/2) / (math.Pi * float64(t)) * BesselI0(beta*math.Sqrt(1-r*r)) / BesselI0(beta)
		}
	}
	for i := 0; i < n/2; i++ {
		h[n-1-i] = h[i]
	}
	return h
}
