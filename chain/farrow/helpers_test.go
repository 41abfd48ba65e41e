package farrow

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
)

// randFilter returns a filter of random degree 0..maxP and even length
// 2..maxN with coefficients uniform in [-1, 1].
func randFilter(rng *rand.Rand, maxP, maxN int) Filter {
	p := rng.IntN(maxP + 1)
	n := 2 * (1 + rng.IntN(maxN/2))
	c := make([][]float64, p+1)
	for i := range c {
		c[i] = make([]float64, n)
		for j := range c[i] {
			c[i][j] = 2*rng.Float64() - 1
		}
	}
	return Filter{Coef: c}
}

// absSum is the sum of |Coef|, the scale of the tests' tolerances.
func absSum(f Filter) float64 {
	s := 0.0
	for _, row := range f.Coef {
		for _, v := range row {
			s += math.Abs(v)
		}
	}
	return s
}

// gaussLegendre returns the n nodes and weights on [-1, 1]: the roots of
// the Legendre polynomial P_n by Newton's method from the Chebyshev-like
// start cos(pi (k - 1/4) / (n + 1/2)), weights 2 / ((1 - x^2) P_n'(x)^2)
// (textbook, from memory).
func gaussLegendre(n int) (x, w []float64) {
	x = make([]float64, n)
	w = make([]float64, n)
	for k := 1; k <= n; k++ {
		z := math.Cos(math.Pi * (float64(k) - 0.25) / (float64(n) + 0.5))
		var dp float64
		for it := 0; it < 100; it++ {
			p0, p1 := 1.0, z
			for m := 2; m <= n; m++ {
				p0, p1 = p1, ((2*float64(m)-1)*z*p1-(float64(m)-1)*p0)/float64(m)
			}
			dp = float64(n) * (z*p1 - p0) / (z*z - 1)
			dz := p1 / dp
			z -= dz
			if math.Abs(dz) < 1e-16 {
				break
			}
		}
		p0, p1 := 1.0, z
		for m := 2; m <= n; m++ {
			p0, p1 = p1, ((2*float64(m)-1)*z*p1-(float64(m)-1)*p0)/float64(m)
		}
		dp = float64(n) * (z*p1 - p0) / (z*z - 1)
		x[k-1] = z
		w[k-1] = 2 / ((1 - z*z) * dp * dp)
	}
	return x, w
}

// quadResponse integrates Impulse(tau) exp(-j 2 pi nu tau) over
// [-N/2, N/2] by composite 16-point Gauss-Legendre, each unit segment cut
// into pieces of at most a quarter period: a brute-force reference that
// shares only Impulse with the package.
func quadResponse(f Filter, nu float64) complex128 {
	gx, gw := gaussLegendre(16)
	n := f.Len()
	pieces := max(2, int(math.Ceil(4*math.Abs(nu)))+2)
	var sum complex128
	for seg := -n / 2; seg < n/2; seg++ {
		for q := 0; q < pieces; q++ {
			a := float64(seg) + float64(q)/float64(pieces)
			b := float64(seg) + float64(q+1)/float64(pieces)
			for k := range gx {
				tau := 0.5*(a+b) + 0.5*(b-a)*gx[k]
				s, c := math.Sincos(-2 * math.Pi * nu * tau)
				sum += complex(0.5*(b-a)*gw[k]*f.Impulse(tau), 0) * complex(c, s)
			}
		}
	}
	return sum
}

// jumpSeries is H(nu) by integration by parts repeated down to the
// piecewise-constant P-th derivative (textbook):
// H(nu) = sum_r sum_m D_r(tau_m) exp(-j w tau_m) / (j w)^(r+1), w = 2 pi nu,
// D_r(tau_m) the jump (right minus left) of the r-th derivative of h at the
// breakpoint tau_m = -N/2..N/2, computed here from the coefficients
// directly. It is exact for nu != 0, and its phases, at integer tau_m, come
// from nu reduced modulo 1.
func jumpSeries(f Filter, nu float64) complex128 {
	n := f.Len()
	p := f.Degree()
	// d(r, j, mu): r-th derivative of segment j's polynomial at mu.
	d := func(r, j int, mu float64) float64 {
		v := 0.0
		for i := p; i >= r; i-- {
			fac := 1.0
			for k := 0; k < r; k++ {
				fac *= float64(i - k)
			}
			v += fac * f.Coef[i][j] * math.Pow(mu, float64(i-r))
		}
		return v
	}
	w := 2 * math.Pi * nu
	fr := nu - math.Round(nu)
	var sum complex128
	jw := complex(0, w)
	pow := jw
	for r := 0; r <= p; r++ {
		var s complex128
		for m := -n / 2; m <= n/2; m++ {
			// Segment starting at m is j = N/2-1-m; the one ending at m is j+1.
			right, left := 0.0, 0.0
			if j := n/2 - 1 - m; j >= 0 && j < n {
				right = d(r, j, 0)
			}
			if j := n/2 - m; j >= 0 && j < n {
				left = d(r, j, 1)
			}
			sn, cs := math.Sincos(-2 * math.Pi * math.Mod(fr*float64(m), 1))
			s += complex(right-left, 0) * complex(cs, sn)
		}
		sum += s / pow
		pow *= jw
	}
	return sum
}

// directRun is y(t) = sum_n x[n] h(t - n), the convolution form of the
// convention, from Impulse.
func directRun(f Filter, x, t []float64) []float64 {
	y := make([]float64, len(t))
	for k, tk := range t {
		for n, xv := range x {
			y[k] += xv * f.Impulse(tk-float64(n))
		}
	}
	return y
}

func cabsDiff(a, b complex128) float64 { return cmplx.Abs(a - b) }
