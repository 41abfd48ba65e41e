package chain

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"
)

// PolyphasePaths evaluates a polyphase prototype's gains on every path of
// one input frequency at once: |P(g + k Fm)| for k = 0 .. L-1, P the
// prototype (taps at L Fm). With theta = 2 pi g / (L Fm),
// P(g + k Fm) = sum_r exp(-i 2 pi k r / L) Q_r(g) and
// Q_r(g) = sum_m p[r + L m] exp(-i theta (r + L m)): one pass over the
// taps and an L-point FFT, where evaluating the paths one by one costs L
// passes. The analysis of a real chain's coincident paths and the
// response figure use it. A PolyphasePaths is not safe for concurrent use.
type PolyphasePaths struct {
	taps []float64
	up   int
	fm   float64
	fft  *fourier.CmplxFFT
	q, p []complex128
}

// NewPolyphasePaths returns the evaluator of the prototype taps of an
// up-phase stage whose input rate is fm.
func NewPolyphasePaths(taps []float64, up int, fm float64) *PolyphasePaths {
	return &PolyphasePaths{taps: taps, up: up, fm: fm, fft: fourier.NewCmplxFFT(up),
		q: make([]complex128, up), p: make([]complex128, up)}
}

// Gains sets dst[k] = |P(g + k Fm)| for k = 0 .. L-1 and returns dst
// (allocated when it is shorter than L).
func (pp *PolyphasePaths) Gains(g float64, dst []float64) []float64 {
	l := pp.up
	if len(dst) < l {
		dst = make([]float64, l)
	}
	for i := range pp.q {
		pp.q[i] = 0
	}
	// Q_r by a rotating phasor, resynchronised every 64 taps.
	theta := 2 * math.Pi * g / (float64(l) * pp.fm)
	sw, cw := math.Sincos(-theta)
	step := complex(cw, sw)
	var ph complex128
	r := 0
	for n, v := range pp.taps {
		if n%64 == 0 {
			s, c := math.Sincos(-theta * float64(n))
			ph = complex(c, s)
		}
		pp.q[r] += complex(v, 0) * ph
		ph *= step
		if r++; r == l {
			r = 0
		}
	}
	pp.fft.Coefficients(pp.p, pp.q)
	for k := range l {
		dst[k] = cmplx.Abs(pp.p[k])
	}
	return dst[:l]
}
