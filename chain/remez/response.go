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

// AmplitudeEach writes Amplitude(h, fs[i], rate) into out[i] for every i,
// bit for bit: the same operations in the same order for each frequency,
// four frequencies interleaved so that their rotations overlap instead of
// waiting on one another. out must be as long as fs.
func AmplitudeEach(h, fs []float64, rate float64, out []float64) {
	n := len(h)
	if len(out) != len(fs) {
		panic("remez: AmplitudeEach output length mismatch")
	}
	if n == 0 {
		clear(out)
		return
	}
	var base float64
	var lo, hi int
	var off0 float64
	if n%2 == 1 {
		mid := n / 2
		base = h[mid]
		lo, hi = mid-1, mid+1
		off0 = 1
	} else {
		lo, hi = n/2-1, n/2
		off0 = 0.5
	}
	pairs := lo + 1
	g := make([]float64, pairs)
	for j := range g {
		g[j] = h[lo-j] + h[hi+j]
	}
	i := 0
	for ; i+4 <= len(fs); i += 4 {
		w0 := 2 * math.Pi * fs[i] / rate
		w1 := 2 * math.Pi * fs[i+1] / rate
		w2 := 2 * math.Pi * fs[i+2] / rate
		w3 := 2 * math.Pi * fs[i+3] / rate
		sw0, cw0 := math.Sincos(w0)
		sw1, cw1 := math.Sincos(w1)
		sw2, cw2 := math.Sincos(w2)
		sw3, cw3 := math.Sincos(w3)
		sum0, sum1, sum2, sum3 := base, base, base, base
		for j0 := 0; j0 < pairs; j0 += resync {
			t := off0 + float64(j0)
			s0, c0 := math.Sincos(w0 * t)
			s1, c1 := math.Sincos(w1 * t)
			s2, c2 := math.Sincos(w2 * t)
			s3, c3 := math.Sincos(w3 * t)
			for _, v := range g[j0:min(j0+resync, pairs)] {
				sum0 += v * c0
				sum1 += v * c1
				sum2 += v * c2
				sum3 += v * c3
				c0, s0 = c0*cw0-s0*sw0, s0*cw0+c0*sw0
				c1, s1 = c1*cw1-s1*sw1, s1*cw1+c1*sw1
				c2, s2 = c2*cw2-s2*sw2, s2*cw2+c2*sw2
				c3, s3 = c3*cw3-s3*sw3, s3*cw3+c3*sw3
			}
		}
		out[i], out[i+1], out[i+2], out[i+3] = sum0, sum1, sum2, sum3
	}
	for ; i < len(fs); i++ {
		out[i] = Amplitude(h, fs[i], rate)
	}
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
