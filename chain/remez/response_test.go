package remez

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// naive is the textbook DTFT sum, used as an independent reference.
func naive(h []float64, f, rate float64) complex128 {
	var s complex128
	for k, v := range h {
		s += complex(v, 0) * cmplx.Exp(complex(0, -2*math.Pi*f/rate*float64(k)))
	}
	return s
}

func TestMagnitudeDirichlet(t *testing.T) {
	// A length-L moving sum has |H(f)| = |sin(pi f L/rate) / sin(pi f/rate)|
	// (the Dirichlet kernel; common practice).
	for _, l := range []int{1, 2, 7, 64, 1000} {
		h := make([]float64, l)
		for i := range h {
			h[i] = 1
		}
		for _, f := range []float64{0.013, 0.1, 0.2371, 0.4999} {
			want := math.Abs(math.Sin(math.Pi*f*float64(l)) / math.Sin(math.Pi*f))
			if got := Magnitude(h, f*48000, 48000); math.Abs(got-want) > 1e-11*float64(l) {
				t.Errorf("L=%d f=%v: Magnitude %v, want %v", l, f, got, want)
			}
			if got := math.Abs(Amplitude(h, f*48000, 48000)); math.Abs(got-want) > 1e-11*float64(l) {
				t.Errorf("L=%d f=%v: |Amplitude| %v, want %v", l, f, got, want)
			}
		}
	}
}

func TestMagnitudeAgainstNaive(t *testing.T) {
	// An asymmetric filter (the general path) and symmetric ones of both
	// parities (the paired path).
	for _, h := range [][]float64{
		{0.1, -0.3, 0.25, 1.5, -0.7, 0.05, 0.2, 0.9, -0.01},
		{0.1, -0.3, 0.25, 1.5, 0.25, -0.3, 0.1},
		{0.1, -0.3, 0.25, 0.25, -0.3, 0.1},
	} {
		for _, f := range []float64{0, 0.05, 0.3, 0.5} {
			want := cmplx.Abs(naive(h, f, 1))
			if got := Magnitude(h, f, 1); math.Abs(got-want) > 1e-13 {
				t.Errorf("h=%v f=%v: %v, want %v", h, f, got, want)
			}
		}
	}
}

func TestAmplitudeSign(t *testing.T) {
	// h = [1, 2, 1]: A(w) = 2 + 2 cos w, H = exp(-jw) A(w) (worked by hand).
	// h = [1, 1]: A(w) = 2 cos(w/2).
	for _, tc := range []struct {
		h    []float64
		f    float64
		want float64
	}{
		{[]float64{1, 2, 1}, 0.25, 2},
		{[]float64{1, 2, 1}, 0.5, 0},
		{[]float64{1, 2, 1}, 1.0 / 3, 1},
		{[]float64{1, 1}, 1.0 / 3, 1},
		{[]float64{-1, 3, 3, -1}, 0.25, 2 * (3*math.Cos(math.Pi/4) - math.Cos(3*math.Pi/4))},
	} {
		if got := Amplitude(tc.h, tc.f, 1); math.Abs(got-tc.want) > 1e-14 {
			t.Errorf("Amplitude(%v, %v) = %v, want %v", tc.h, tc.f, got, tc.want)
		}
	}
}

func TestMagnitudeGrid(t *testing.T) {
	h := make([]float64, 301)
	for i := range h {
		h[i] = math.Sin(float64(i)*0.37) / float64(i+1)
	}
	for _, m := range []int{1, 2, 65, 100, 513} { // 100 folds h in time (FFT 198 < 301)
		dst := MagnitudeGrid(make([]float64, m), h)
		for k := range m {
			f := 0.0
			if m > 1 {
				f = float64(k) / float64(2*(m-1))
			}
			if want := Magnitude(h, f, 1); math.Abs(dst[k]-want) > 1e-12 {
				t.Fatalf("m=%d k=%d: %v, want %v", m, k, dst[k], want)
			}
		}
	}
	sp := NewSpectrum(1025)
	dst := make([]float64, 1025)
	if a := testing.AllocsPerRun(10, func() { sp.Magnitude(dst, h) }); a != 0 {
		t.Errorf("Spectrum.Magnitude allocates %v times", a)
	}
	if a := testing.AllocsPerRun(10, func() { Magnitude(h, 0.1, 1); Amplitude(h, 0.1, 1) }); a != 0 {
		t.Errorf("Magnitude/Amplitude allocate %v times", a)
	}
}

// TestAmplitudeEachSame: AmplitudeEach gives Amplitude's bits at every
// frequency, on seeded random filters of odd and even lengths.
func TestAmplitudeEachSame(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 1))
	for _, n := range []int{0, 1, 2, 3, 7, 64, 65, 301, 1000} {
		h := make([]float64, n)
		for k := range h {
			h[k] = rng.NormFloat64()
		}
		fs := make([]float64, 1+rng.IntN(40))
		for i := range fs {
			fs[i] = 5e5 * rng.Float64()
		}
		out := make([]float64, len(fs))
		AmplitudeEach(h, fs, 1e6, out)
		for i, f := range fs {
			if want := Amplitude(h, f, 1e6); math.Float64bits(out[i]) != math.Float64bits(want) {
				t.Errorf("n %d f %g: %v, Amplitude %v", n, f, out[i], want)
			}
		}
	}
}
