package farrow

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Convention is the package's coefficient convention in one sentence, for
// readers of the files that carry a Filter's coefficients.
const Convention = "Coef[i][j] (i = 0..P the power of mu, lowest first; j = 0..N-1, N even) gives, for an output at time t = b + mu in input samples (b = floor(t), 0 <= mu < 1), y(t) = sum_i mu^i * sum_j Coef[i][j] * x[b - N/2 + 1 + j], samples outside the input reading as 0; equivalently y(t) = sum_n x[n] h(t - n) with h(tau) = sum_i Coef[i][j] mu^i on [-N/2, N/2), j = N/2 - 1 - floor(tau), mu = tau - floor(tau), zero elsewhere, and H(nu) = integral h(tau) exp(-j 2 pi nu tau) dtau with nu in cycles per input sample."

// Filter is a Farrow interpolator: Coef[i] is the subfilter multiplied by
// mu^i. The zero value has no coefficients and is not valid.
type Filter struct {
	Coef [][]float64
}

// Degree returns P, the degree of the polynomial in mu (len(Coef) - 1),
// or -1 for a filter with no rows.
func (f Filter) Degree() int { return len(f.Coef) - 1 }

// Len returns N, the subfilter length (the length of Coef[0]), or 0 for a
// filter with no rows.
func (f Filter) Len() int {
	if len(f.Coef) == 0 {
		return 0
	}
	return len(f.Coef[0])
}

// MaxFilterDegree is the largest degree a Filter may have: the closed form
// of the response keeps its accuracy (about 1e-13 of the coefficients'
// absolute sum) up to it.
const MaxFilterDegree = 16

// Validate reports, in plain words, why f is not a Farrow filter of this
// package's convention: it needs 1..MaxFilterDegree+1 rows, every row of
// the same even length of at least 2, and finite coefficients.
func (f Filter) Validate() error {
	if len(f.Coef) == 0 {
		return fmt.Errorf("farrow filter: no coefficient rows: a filter needs at least one (degree 0)")
	}
	if p := len(f.Coef) - 1; p > MaxFilterDegree {
		return fmt.Errorf("farrow filter: degree %d (%d coefficient rows): at most %d is supported", p, p+1, MaxFilterDegree)
	}
	n := len(f.Coef[0])
	if n < 2 || n%2 != 0 {
		return fmt.Errorf("farrow filter: subfilter length %d: it must be even and at least 2", n)
	}
	for i, row := range f.Coef {
		if len(row) != n {
			return fmt.Errorf("farrow filter: row %d (power of mu %d) has %d coefficients, row 0 has %d: every row must have the same length", i, i, len(row), n)
		}
		for j, c := range row {
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return fmt.Errorf("farrow filter: coefficient [%d][%d] is %v: every coefficient must be finite", i, j, c)
			}
		}
	}
	return nil
}

// segStart returns the left end of segment j of a filter of length n: the
// segment covers tau in [segStart, segStart+1).
func segStart(n, j int) float64 { return float64(n/2 - 1 - j) }

// poly evaluates sum_i Coef[i][j] mu^i by Horner's rule.
func (f Filter) poly(j int, mu float64) float64 {
	v := 0.0
	for i := len(f.Coef) - 1; i >= 0; i-- {
		v = v*mu + f.Coef[i][j]
	}
	return v
}

// Impulse returns h(tau), the continuous impulse response of the
// convention: zero outside [-N/2, N/2). It returns NaN for a NaN tau or an
// invalid filter.
func (f Filter) Impulse(tau float64) float64 {
	if math.IsNaN(tau) || f.Validate() != nil {
		return math.NaN()
	}
	n := f.Len()
	h := float64(n / 2)
	if tau < -h || tau >= h {
		return 0
	}
	fl := math.Floor(tau)
	j := n/2 - 1 - int(fl)
	return f.poly(j, tau-fl)
}

// taylorLimit is the |w| below which integrals uses the Taylor series:
// the series loses about exp(|w|) in relative accuracy to cancellation and
// the upward recursion about prod_{i > |w|} i/|w|, and this choice keeps
// both within a few hundred ulps for degrees up to MaxDegree.
func taylorLimit(p int) float64 { return math.Max(2, 1+0.5*float64(p)) }

// integrals sets out[i] = I_i(w) = integral_0^1 mu^i exp(-j w mu) dmu for
// i = 0..len(out)-1, w = 2 pi nu. The phase exp(-j w) is taken from nu
// reduced to [-1/2, 1/2], so that it stays accurate for large nu.
func integrals(nu float64, out []complex128) {
	w := 2 * math.Pi * nu
	if math.Abs(w) < taylorLimit(len(out)-1) {
		// I_i = sum_k (-j w)^k / (k! (i+k+1)).
		for i := range out {
			term := complex(1, 0)
			sum := complex(0, 0)
			for k := 0; k < 200; k++ {
				add := term / complex(float64(i+k+1), 0)
				sum += add
				if cmplx.Abs(add) < 1e-18*cmplx.Abs(sum) && k > 2 {
					break
				}
				term *= complex(0, -w/float64(k+1))
			}
			out[i] = sum
		}
		return
	}
	fr := nu - math.Round(nu)
	s, c := math.Sincos(2 * math.Pi * fr)
	e := complex(c, -s) // exp(-j w)
	jw := complex(0, w)
	// Integration by parts: I_0 = (1 - e)/(j w), I_i = (i I_{i-1} - e)/(j w).
	out[0] = (1 - e) / jw
	for i := 1; i < len(out); i++ {
		out[i] = (complex(float64(i), 0)*out[i-1] - e) / jw
	}
}

// phase returns exp(-j 2 pi nu s) for an integer s, from nu reduced modulo
// 1 so that it stays accurate for large nu.
func phase(nu, s float64) complex128 {
	fr := nu - math.Round(nu)
	sn, cs := math.Sincos(2 * math.Pi * math.Mod(fr*s, 1))
	return complex(cs, -sn)
}

// response is Response for a valid filter, with scratch space for the
// integrals.
func (f Filter) response(nu float64, iw []complex128) complex128 {
	integrals(nu, iw)
	n := f.Len()
	var h complex128
	for j := 0; j < n; j++ {
		var seg complex128
		for i, row := range f.Coef {
			seg += complex(row[j], 0) * iw[i]
		}
		h += phase(nu, segStart(n, j)) * seg
	}
	return h
}

// Response returns H(nu), the Fourier transform of the continuous impulse
// response, nu in cycles per input sample, in closed form:
// H(nu) = sum_j exp(-j 2 pi nu s_j) sum_i Coef[i][j] I_i(2 pi nu), s_j the
// left end of segment j. It returns NaN for a non-finite nu or an invalid
// filter.
func (f Filter) Response(nu float64) complex128 {
	if math.IsNaN(nu) || math.IsInf(nu, 0) || f.Validate() != nil {
		return cmplx.NaN()
	}
	return f.response(nu, make([]complex128, len(f.Coef)))
}

// Gain returns |H(nu)|.
func (f Filter) Gain(nu float64) float64 { return cmplx.Abs(f.Response(nu)) }

// Run returns the outputs at times t (in input samples; any real value,
// samples outside x read as 0) by the Farrow structure: each subfilter's
// output, then Horner's rule in mu. A non-finite time gives NaN; an
// invalid filter gives NaN at every time.
func (f Filter) Run(x []float64, t []float64) []float64 {
	y := make([]float64, len(t))
	if f.Validate() != nil {
		for k := range y {
			y[k] = math.NaN()
		}
		return y
	}
	n := f.Len()
	v := make([]float64, len(f.Coef))
	for k, tk := range t {
		if math.IsNaN(tk) || math.IsInf(tk, 0) {
			y[k] = math.NaN()
			continue
		}
		// Outside this range every tap reads past the input.
		if tk < -float64(n) || tk > float64(len(x)+n) {
			continue
		}
		fl := math.Floor(tk)
		mu := tk - fl
		first := int(fl) - n/2 + 1
		for i, row := range f.Coef {
			s := 0.0
			for j, c := range row {
				if m := first + j; m >= 0 && m < len(x) {
					s += c * x[m]
				}
			}
			v[i] = s
		}
		acc := 0.0
		for i := len(v) - 1; i >= 0; i-- {
			acc = acc*mu + v[i]
		}
		y[k] = acc
	}
	return y
}
