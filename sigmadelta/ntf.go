package sigmadelta

import (
	"fmt"
	"math"
	"math/cmplx"
)

// NTF is a noise transfer function as a rational function of z with monic
// numerator and denominator of the same degree,
//
//	NTF(z) = prod (z - Zeros[i]) / prod (z - Poles[i]),
//
// so that its impulse response starts with 1 (the loop can be realised: the
// quantiser's error passes unfiltered at the current sample). Complex zeros
// and poles come in conjugate pairs, so its coefficients are real.
type NTF struct {
	Zeros, Poles []complex128
}

// Order returns the NTF's degree.
func (n NTF) Order() int { return len(n.Zeros) }

// Gain returns |NTF| at f cycles per sample (f in [0, 1/2] covers the
// response: it is even and periodic in f).
func (n NTF) Gain(f float64) float64 {
	z := cmplx.Exp(complex(0, 2*math.Pi*f))
	g := 1.0
	for i := range n.Zeros {
		g *= cmplx.Abs(z-n.Zeros[i]) / cmplx.Abs(z-n.Poles[i])
	}
	return g
}

// Coefficients returns the numerator b and the denominator a as
// polynomials in z^-1 (b[0] = a[0] = 1), each of Order()+1 coefficients.
func (n NTF) Coefficients() (b, a []float64) {
	return realPoly(n.Zeros), realPoly(n.Poles)
}

// realPoly expands prod (1 - r z^-1) and keeps the real parts (the roots
// come in conjugate pairs, so the imaginary parts are rounding).
func realPoly(roots []complex128) []float64 {
	p := []complex128{1}
	for _, r := range roots {
		q := make([]complex128, len(p)+1)
		for i, c := range p {
			q[i] += c
			q[i+1] -= c * r
		}
		p = q
	}
	out := make([]float64, len(p))
	for i, c := range p {
		out[i] = real(c)
	}
	return out
}

// Differentiator returns (1 - z^-1)^order: every zero at DC, every pole at
// the origin, the NTF of the classic modulator whose in-band noise the
// textbooks give in closed form (see InBandNoiseDifferentiator).
func Differentiator(order int) NTF {
	n := NTF{Zeros: make([]complex128, order), Poles: make([]complex128, order)}
	for i := range n.Zeros {
		n.Zeros[i] = 1
	}
	return n
}

// zeroRoots returns the NTF's zeros on the unit circle: each relative
// frequency f > 0 a conjugate pair at exp(+-j 2 pi f), each 0 one zero at
// z = 1; nil zeros means order zeros at z = 1.
func zeroRoots(order int, zeros []float64) []complex128 {
	if zeros == nil {
		z := make([]complex128, order)
		for i := range z {
			z[i] = 1
		}
		return z
	}
	var z []complex128
	for _, f := range zeros {
		if f == 0 {
			z = append(z, 1)
			continue
		}
		r := cmplx.Exp(complex(0, 2*math.Pi*f))
		z = append(z, r, cmplx.Conj(r))
	}
	return z
}

// butterworthPoles returns the poles of the order-n digital Butterworth
// highpass with corner fc (cycles per sample), by the bilinear transform
// s = 2 (z - 1)/(z + 1) of the analog prototype prewarped to
// Omega = 2 tan(pi fc): the analog poles Omega exp(j pi (2k + n + 1)/(2n)),
// k = 0..n-1 (a highpass's, Omega/s_k, are the same set), mapped by
// z = (2 + p)/(2 - p) (textbook Butterworth and bilinear transform; the
// poles are checked against scipy.signal.butter in the tests).
func butterworthPoles(n int, fc float64) []complex128 {
	om := 2 * math.Tan(math.Pi*fc)
	p := make([]complex128, n)
	for k := 0; k < n; k++ {
		s := cmplx.Exp(complex(0, math.Pi*float64(2*k+n+1)/float64(2*n)))
		a := complex(om, 0) * s
		p[k] = (2 + a) / (2 - a)
	}
	// An odd order's real pole is exactly real.
	for k := range p {
		if math.Abs(imag(p[k])) < 1e-15 {
			p[k] = complex(real(p[k]), 0)
		}
	}
	return p
}

// designNTF places the zeros and chooses the poles: a Butterworth highpass
// denominator whose corner is found by bisection so that |NTF| at half the
// modulator rate (z = -1) equals obg. This is the classic way to set an
// NTF's out-of-band gain (the approach of Schreier and Temes's NTF
// synthesis, from memory): the Butterworth denominator keeps the NTF
// maximally flat out of band, and |NTF(-1)| rises monotonically with the
// corner, from below 1 as the poles meet the zeros at z = 1 towards
// infinity as they reach z = -1.
func designNTF(order int, zeros []float64, obg float64) (NTF, error) {
	zs := zeroRoots(order, zeros)
	if len(zs) != order {
		return NTF{}, fmt.Errorf("the zeros make %d NTF zeros (a frequency above 0 makes a pair, 0 Hz one), not the order's %d", len(zs), order)
	}
	gainAt := func(fc float64) float64 {
		return NTF{Zeros: zs, Poles: butterworthPoles(order, fc)}.Gain(0.5)
	}
	lo, hi := 1e-9, 0.5-1e-9
	if gainAt(lo) >= obg || gainAt(hi) <= obg {
		return NTF{}, fmt.Errorf("no Butterworth denominator gives an out-of-band gain of %g with these zeros (it reaches %.4g to %.4g)", obg, gainAt(lo), gainAt(hi))
	}
	for range 200 {
		mid := (lo + hi) / 2
		if gainAt(mid) < obg {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo < 1e-15 {
			break
		}
	}
	return NTF{Zeros: zs, Poles: butterworthPoles(order, (lo+hi)/2)}, nil
}

// OptimalZeros returns the NTF zero frequencies, relative to the modulator
// rate, that minimise the in-band noise of an order-n modulator whose band
// edge is edge (relative): the roots of the Legendre polynomial P_n scaled
// to [-edge, edge], the positive ones each a conjugate pair and, for an odd
// n, one zero at DC. Minimising the integral of prod (f - f_i)^2 over the
// band, the NTF's magnitude squared near DC, is the least-squares problem
// whose monic solution is the Legendre polynomial (Schreier's optimised
// zeros, from memory: +-1/sqrt(3) of the edge for n = 2, 0 and
// +-sqrt(3/5) for n = 3). The result lists 0 first, then increasing.
func OptimalZeros(n int, edge float64) []float64 {
	var out []float64
	if n%2 == 1 {
		out = append(out, 0)
	}
	// Newton on P_n from the Chebyshev-like initial guesses
	// cos(pi (i - 1/4)/(n + 1/2)) (common practice for Gauss-Legendre
	// nodes); the positive roots in increasing order.
	var pos []float64
	for i := 1; i <= n/2; i++ {
		x := math.Cos(math.Pi * (float64(i) - 0.25) / (float64(n) + 0.5))
		for range 100 {
			p, dp := legendre(n, x)
			dx := p / dp
			x -= dx
			if math.Abs(dx) < 1e-16 {
				break
			}
		}
		pos = append(pos, x)
	}
	for i := len(pos) - 1; i >= 0; i-- {
		out = append(out, pos[i]*edge)
	}
	return out
}

// legendre returns P_n(x) and its derivative by the three-term recurrence.
func legendre(n int, x float64) (p, dp float64) {
	p0, p1 := 1.0, x
	if n == 0 {
		return 1, 0
	}
	for k := 2; k <= n; k++ {
		p0, p1 = p1, (float64(2*k-1)*x*p1-float64(k-1)*p0)/float64(k)
	}
	dp = float64(n) * (x*p1 - p0) / (x*x - 1)
	return p1, dp
}
