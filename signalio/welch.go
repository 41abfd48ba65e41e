package signalio

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// Window is the taper Welch applies to each segment. The zero Window is
// BlackmanHarris.
type Window int

const (
	// BlackmanHarris is the 4-term Blackman-Harris window (sidelobes
	// near -92 dB, noise bandwidth 2.00 bins, scalloping loss 0.83 dB;
	// Harris 1978, from memory), in its periodic (DFT-even) form, as
	// scipy.signal.get_window("blackmanharris", N) makes it. Its low
	// sidelobes keep a strong tone from hiding alias products 80 to 90
	// dB below it.
	BlackmanHarris Window = iota
	// Hann is the periodic Hann window (sidelobes -31 dB, noise bandwidth
	// 1.50 bins, scalloping loss 1.42 dB; from memory).
	Hann
)

func (w Window) String() string {
	switch w {
	case BlackmanHarris:
		return "Blackman-Harris"
	case Hann:
		return "Hann"
	}
	return fmt.Sprintf("Window(%d)", int(w))
}

// coefficients returns the periodic window of length n.
func (w Window) coefficients(n int) []float64 {
	var a []float64
	switch w {
	case Hann:
		a = []float64{0.5, 0.5}
	default:
		// Harris 1978, table of the 4-term -92 dB window; the same
		// constants as scipy.signal.windows.blackmanharris.
		a = []float64{0.35875, 0.48829, 0.14128, 0.01168}
	}
	out := make([]float64, n)
	for i := range out {
		var v, sign float64 = 0, 1
		for k, ak := range a {
			v += sign * ak * math.Cos(2*math.Pi*float64(k*i)/float64(n))
			sign = -sign
		}
		out[i] = v
	}
	return out
}

// DefaultSegment is Welch's segment length when WelchOptions.Segment is
// zero: 4096 points, 2048 bins of a real signal, a resolution of a 4096th
// of the rate.
const DefaultSegment = 4096

// MaxSegment is the longest segment Welch takes, 2^20 points; its
// buffers then take about 50 MiB.
const MaxSegment = 1 << 20

// WelchOptions sets up Welch. The zero value is a 4096-point
// Blackman-Harris segment.
type WelchOptions struct {
	// Segment is the FFT length, 8 to MaxSegment; zero selects
	// DefaultSegment. A signal shorter than the segment is analysed in
	// one segment of its own length.
	Segment int
	// Window tapers each segment.
	Window Window
}

// Spectrum is the power spectrum of a signal in dB relative to full
// scale, as Welch measures it.
type Spectrum struct {
	// Hz holds the bin centres in ascending order: 0 to RateHz/2 for a
	// real signal (Segment/2+1 bins), -RateHz/2 to RateHz/2 less one bin
	// for I/Q (Segment bins, the negative frequencies first).
	Hz []float64
	// DB is the power in each bin in dBFS: 0 dBFS is the power of a
	// full-scale sine (amplitude 2^(Bits-1)) for a real signal, of a
	// full-scale complex tone (I and Q both of that amplitude, in
	// quadrature) for I/Q, so that either reads 0 dBFS in its peak bin
	// when it falls on a bin centre. An empty bin is -Inf.
	DB []float64
	// RateHz is the signal's sample rate.
	RateHz float64
	// RBWHz is the noise bandwidth of one bin: noise of density D per Hz
	// reads D times RBWHz in each bin.
	RBWHz float64
	// Segment is the FFT length used; Averages the number of segments
	// averaged.
	Segment, Averages int
}

// Welch estimates the power spectrum of s by Welch's averaged
// periodogram (Welch 1967): segments of opt.Segment points overlapping by
// half, each tapered by the window, their squared FFT magnitudes averaged
// (mean), with no detrending, so that a DC offset shows in bin 0. It
// matches scipy.signal.welch(x, fs, window, nperseg, noverlap=nperseg//2,
// detrend=False, scaling="spectrum") on x = codes / 2^(Bits-1), in dB
// relative to the full-scale reference above (a real signal's one-sided
// spectrum, an I/Q signal's two-sided one, fft-shifted).
//
// Memory is a few times the segment (at most MaxSegment) plus the result,
// whatever the signal's length; time is proportional to the number of
// samples times log2 of the segment: at the readers' cap of 2^24 frames
// and the default segment, about 0.8 s for a real signal and 2 s for I/Q
// on one core of a 2-core CI machine (BenchmarkWelchCap).
func Welch(s *Signal, opt WelchOptions) (*Spectrum, error) {
	return WelchContext(context.Background(), s, opt)
}

// welchCheck is how many segments WelchContext transforms between looks
// at its context: at the default segment, well under a millisecond.
const welchCheck = 16

// WelchContext is Welch stopped by ctx: it looks at ctx every welchCheck
// segments and returns ctx's error once it is done.
func WelchContext(ctx context.Context, s *Signal, opt WelchOptions) (*Spectrum, error) {
	if err := s.Check("signal"); err != nil {
		return nil, err
	}
	n := opt.Segment
	switch {
	case n == 0:
		n = DefaultSegment
	case n < 8 || n > MaxSegment:
		return nil, fmt.Errorf("spectrum segment of %d points: must be 8 to %d", n, MaxSegment)
	}
	if opt.Window != BlackmanHarris && opt.Window != Hann {
		return nil, fmt.Errorf("spectrum window %v: unknown", opt.Window)
	}
	frames := s.Frames()
	if frames < 8 {
		return nil, fmt.Errorf("signal of %d samples: too short for a spectrum (need 8)", frames)
	}
	n = min(n, frames)
	w := opt.Window.coefficients(n)
	var s1, s2 float64
	for _, v := range w {
		s1 += v
		s2 += v * v
	}
	step := n - n/2
	segs := (frames-n)/step + 1
	fs := math.Ldexp(1, s.Bits-1) // full scale
	norm := 1 / (s1 * s1 * float64(segs))

	sp := &Spectrum{RateHz: s.RateHz, RBWHz: s2 / (s1 * s1) * s.RateHz, Segment: n, Averages: segs}
	var pow []float64
	if s.Channels() == 1 {
		fft := fourier.NewFFT(n)
		seq := make([]float64, n)
		coef := make([]complex128, n/2+1)
		pow = make([]float64, n/2+1)
		x := s.Samples[0]
		for k := range segs {
			if k%welchCheck == 0 && ctx.Err() != nil {
				return nil, ctx.Err()
			}
			for i := range seq {
				seq[i] = float64(x[k*step+i]) / fs * w[i]
			}
			fft.Coefficients(coef, seq)
			for i, c := range coef {
				pow[i] += real(c)*real(c) + imag(c)*imag(c)
			}
		}
		sp.Hz = make([]float64, len(pow))
		for i := range pow {
			pow[i] *= norm
			// One-sided: the negative frequencies' power folds onto
			// the positive ones, all bins but DC and, for even n,
			// Nyquist.
			if i > 0 && !(n%2 == 0 && i == n/2) {
				pow[i] *= 2
			}
			sp.Hz[i] = float64(i) * s.RateHz / float64(n)
		}
		// Relative to a full-scale sine's power, 1/2.
		for i := range pow {
			pow[i] *= 2
		}
	} else {
		fft := fourier.NewCmplxFFT(n)
		seq := make([]complex128, n)
		coef := make([]complex128, n)
		acc := make([]float64, n)
		xi, xq := s.Samples[0], s.Samples[1]
		for k := range segs {
			if k%welchCheck == 0 && ctx.Err() != nil {
				return nil, ctx.Err()
			}
			for i := range seq {
				seq[i] = complex(float64(xi[k*step+i])/fs*w[i], float64(xq[k*step+i])/fs*w[i])
			}
			fft.Coefficients(coef, seq)
			for i, c := range coef {
				acc[i] += real(c)*real(c) + imag(c)*imag(c)
			}
		}
		// fft-shift: bin n - n/2 .. n-1 are the negative frequencies.
		pow = make([]float64, n)
		sp.Hz = make([]float64, n)
		for j := range pow {
			i := (j + n - n/2) % n
			pow[j] = acc[i] * norm // relative to a full-scale complex tone's power, 1
			f := i
			if i >= n-n/2 {
				f = i - n
			}
			sp.Hz[j] = float64(f) * s.RateHz / float64(n)
		}
	}
	sp.DB = pow
	for i, p := range pow {
		sp.DB[i] = 10 * math.Log10(p) // -Inf for an empty bin
	}
	return sp, nil
}
