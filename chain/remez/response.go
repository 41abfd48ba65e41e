package remez

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"
)

// resync is how many taps a phase rotation runs before it is recomputed
// exactly, which keeps the rounding error of the rotation at a few ulps.
const resync = 32

// Magnitude returns |H(f)| of the filter h at f Hz for a sample rate rate,
// evaluated directly (no FFT, no allocation). h need not be symmetric; when
// it is (exactly, as every design of this package is), Magnitude returns
// |Amplitude|, which pairs the taps and costs about a quarter as much.
func Magnitude(h []float64, f, rate float64) float64 {
	if symmetric(h) {
		return math.Abs(Amplitude(h, f, rate))
	}
	w := 2 * math.Pi * f / rate
	sw, cw := math.Sincos(w)
	var re, im float64
	for k0 := 0; k0 < len(h); k0 += resync {
		s, c := math.Sincos(w * float64(k0))
		end := min(k0+resync, len(h))
		for _, v := range h[k0:end] {
			re += v * c
			im -= v * s
			c, s = c*cw-s*sw, s*cw+c*sw
		}
	}
	return math.Hypot(re, im)
}

func symmetric(h []float64) bool {
	for i, j := 0, len(h)-1; i < j; i, j = i+1, j-1 {
		if h[i] != h[j] {
			return false
		}
	}
	return true
}

// Amplitude returns the zero-phase amplitude A(f) = Re(exp(j w c) H(exp(j w)))
// of h at f Hz, where w = 2 pi f/rate and c = (len(h)-1)/2 is the centre.
// For a symmetric h this is the real, signed amplitude whose absolute value
// is Magnitude; it is evaluated directly, pairwise about the centre, without
// allocating, and costs about half of Magnitude for long filters.
func Amplitude(h []float64, f, rate float64) float64 {
	n := len(h)
	if n == 0 {
		return 0
	}
	w := 2 * math.Pi * f / rate
	sw, cw := math.Sincos(w)
	var sum float64
	var lo, hi int // indices of the pair at offset j (+1/2 for even n)
	var off0 float64
	if n%2 == 1 {
		mid := n / 2
		sum = h[mid]
		lo, hi = mid-1, mid+1
		off0 = 1
	} else {
		lo, hi = n/2-1, n/2
		off0 = 0.5
	}
	pairs := lo + 1
	for j0 := 0; j0 < pairs; j0 += resync {
		s, c := math.Sincos(w * (off0 + float64(j0)))
		end := min(j0+resync, pairs)
		for j := j0; j < end; j++ {
			sum += (h[lo-j] + h[hi+j]) * c
			c, s = c*cw-s*sw, s*cw+c*sw
		}
	}
	return sum
}

// Spectrum evaluates a filter's magnitude on an evenly spaced grid through
// gonum's real FFT. Its buffers are reused, so after NewSpectrum a call to
// Magnitude allocates nothing. A Spectrum is not safe for concurrent use.
type Spectrum struct {
	points int
	fft    *fourier.FFT // nil when points == 1
	seq    []float64
	coef   []complex128
}

// NewSpectrum returns a Spectrum for grids of points frequencies from 0 to
// rate/2 inclusive, that is f_k = k rate / (2 (points-1)). It panics if
// points < 1.
func NewSpectrum(points int) *Spectrum {
	if points < 1 {
		panic("remez: NewSpectrum needs at least one point")
	}
	s := &Spectrum{points: points}
	if points > 1 {
		l := 2 * (points - 1)
		s.fft = fourier.NewFFT(l)
		s.seq = make([]float64, l)
		s.coef = make([]complex128, l/2+1)
	}
	return s
}

// Points returns the grid size the Spectrum was made for.
func (s *Spectrum) Points() int { return s.points }

// Magnitude writes |H(f_k)| of h into dst, which must have Points elements,
// and returns dst. A filter longer than the FFT is folded in time first,
// which samples its response exactly.
func (s *Spectrum) Magnitude(dst, h []float64) []float64 {
	if len(dst) != s.points {
		panic("remez: Spectrum.Magnitude destination length mismatch")
	}
	if s.points == 1 {
		var sum float64
		for _, v := range h {
			sum += v
		}
		dst[0] = math.Abs(sum)
		return dst
	}
	for i := range s.seq {
		s.seq[i] = 0
	}
	l := len(s.seq)
	for i, v := range h {
		s.seq[i%l] += v
	}
	s.fft.Coefficients(s.coef, s.seq)
	for i, c := range s.coef {
		dst[i] = cmplx.Abs(c)
	}
	return dst
}

// MagnitudeGrid writes |H| of h at len(dst) evenly spaced frequencies from 0
// to rate/2 inclusive (f_k = k rate / (2 (len(dst)-1))) into dst through an
// FFT, and returns dst. It allocates an FFT plan on every call; repeated
// evaluations should keep a Spectrum instead. It panics if dst is empty.
func MagnitudeGrid(dst, h []float64) []float64 {
	return NewSpectrum(len(dst)).Magnitude(dst, h)
}
