package farrow

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestValidate(t *testing.T) {
	for _, c := range []struct {
		name string
		f    Filter
		want string // "" for valid
	}{
		{"zero value", Filter{}, "no coefficient rows"},
		{"odd length", Filter{Coef: [][]float64{{1, 2, 3}}}, "length 3"},
		{"empty row", Filter{Coef: [][]float64{{}}}, "length 0"},
		{"ragged", Filter{Coef: [][]float64{{1, 2}, {1, 2, 3, 4}}}, "row 1"},
		{"NaN", Filter{Coef: [][]float64{{1, 2}, {math.NaN(), 0}}}, "[1][0] is NaN"},
		{"Inf", Filter{Coef: [][]float64{{1, math.Inf(-1)}}}, "[0][1] is -Inf"},
		{"degree 17", Filter{Coef: make([][]float64, 18)}, "degree 17"},
		{"degree 0", Filter{Coef: [][]float64{{0.5, 0.5}}}, ""},
		{"degree 1", Filter{Coef: [][]float64{{0, 1}, {1, -1}}}, ""},
	} {
		err := c.f.Validate()
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: unexpected error %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
	// An invalid filter gives NaN, never a panic, and Bounds gives (0, +Inf).
	bad := Filter{Coef: [][]float64{{1, 2, 3}}}
	if !math.IsNaN(bad.Gain(0.1)) || !math.IsNaN(bad.Impulse(0)) || !math.IsNaN(bad.Run([]float64{1}, []float64{0})[0]) {
		t.Error("an invalid filter must give NaN")
	}
	if lo, up := bad.Bounds(0, 1); lo != 0 || !math.IsInf(up, 1) {
		t.Errorf("Bounds of an invalid filter = %v, %v, want 0, +Inf", lo, up)
	}
	good := Filter{Coef: [][]float64{{0, 1}, {1, -1}}}
	if lo, up := good.Bounds(1, 0); lo != 0 || !math.IsInf(up, 1) {
		t.Errorf("Bounds(1, 0) = %v, %v, want 0, +Inf", lo, up)
	}
}

// TestLinearInterpolator checks the convention on the one filter everyone
// knows: linear interpolation between x[b] and x[b+1] is N = 2,
// Coef = {{1, 0}, {-1, 1}} (the taps are x[b], x[b+1], and
// y = (1 - mu) x[b] + mu x[b+1]), h the triangle of width 2, H(nu) = sinc^2(nu) (common
// practice).
func TestLinearInterpolator(t *testing.T) {
	f := Filter{Coef: [][]float64{{1, 0}, {-1, 1}}}
	for _, tau := range []float64{-1, -0.75, -0.25, 0, 0.3, 0.999} {
		if got, want := f.Impulse(tau), 1-math.Abs(tau); math.Abs(got-want) > 1e-15 {
			t.Errorf("h(%v) = %v, want %v", tau, got, want)
		}
	}
	for _, nu := range []float64{0, 1e-9, 0.1, 0.5, 1.3, 7.25, 123.4, 1e6 + 0.5} {
		s := 1.0
		if nu != 0 {
			s = math.Sin(math.Pi*nu) / (math.Pi * nu)
		}
		got := f.Response(nu)
		if math.Abs(real(got)-s*s) > 1e-14 || math.Abs(imag(got)) > 1e-14 {
			t.Errorf("H(%v) = %v, want %v", nu, got, s*s)
		}
	}
	y := f.Run([]float64{1, 3, -2}, []float64{0, 0.5, 1.25, 2, 2.5, -0.5, math.NaN()})
	want := []float64{1, 2, 3 - 1.25, -2, -1, 0.5, math.NaN()}
	for k := range want {
		if math.IsNaN(want[k]) != math.IsNaN(y[k]) || (!math.IsNaN(want[k]) && math.Abs(y[k]-want[k]) > 1e-15) {
			t.Errorf("Run output %d = %v, want %v", k, y[k], want[k])
		}
	}
}

// TestResponseQuadrature holds the closed form to brute-force
// Gauss-Legendre integration of Impulse (helpers_test.go) on seeded random
// filters and frequencies.
func TestResponseQuadrature(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	worst := 0.0
	for trial := 0; trial < 100; trial++ {
		f := randFilter(rng, 6, 12)
		scale := absSum(f)
		for q := 0; q < 8; q++ {
			var nu float64
			switch q % 4 {
			case 0:
				nu = 1e-3 * (2*rng.Float64() - 1) // the Taylor side
			case 1:
				nu = 2*rng.Float64() - 1 // around the switch
			default:
				nu = 60 * (2*rng.Float64() - 1)
			}
			got, want := f.Response(nu), quadResponse(f, nu)
			e := cabsDiff(got, want) / scale
			worst = math.Max(worst, e)
			if e > 1e-10 {
				t.Errorf("trial %d: H(%v) = %v, quadrature %v (error %.2g of the coefficient sum)", trial, nu, got, want, e)
			}
		}
	}
	t.Logf("largest difference from quadrature: %.2g of the coefficients' absolute sum", worst)
}

// TestResponseHighDegree holds the closed form to quadrature at the
// largest degree Validate accepts, where the Taylor series and the
// recursion are used furthest from their comfort.
func TestResponseHighDegree(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	worst := 0.0
	for trial := 0; trial < 10; trial++ {
		f := randFilter(rng, 0, 8)
		f.Coef = make([][]float64, MaxFilterDegree+1)
		for i := range f.Coef {
			f.Coef[i] = make([]float64, 8)
			for j := range f.Coef[i] {
				f.Coef[i][j] = 2*rng.Float64() - 1
			}
		}
		scale := absSum(f)
		for _, nu := range []float64{0.01, 0.5, 1.2, 1.5, 2.5, 7.3, 40.1} {
			e := cabsDiff(f.Response(nu), quadResponse(f, nu)) / scale
			worst = math.Max(worst, e)
			if e > 1e-12 {
				t.Errorf("degree %d, nu %v: error %.2g of the coefficient sum", MaxFilterDegree, nu, e)
			}
		}
	}
	t.Logf("degree %d: largest difference from quadrature %.2g of the coefficients' absolute sum", MaxFilterDegree, worst)
}

// TestResponseFar holds the closed form, up to nu = 1e6, to the exact
// integration-by-parts series over the jumps of h and its derivatives
// (helpers_test.go), which is accurate where the quadrature would need
// millions of nodes. The tolerance is 1e-13 of max |H| <= the coefficient
// sum, as the package promises.
func TestResponseFar(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	worst := 0.0
	for trial := 0; trial < 100; trial++ {
		f := randFilter(rng, 6, 16)
		scale := absSum(f)
		for q := 0; q < 10; q++ {
			nu := math.Pow(10, 1+5*rng.Float64())
			if q%2 == 1 {
				nu = -nu
			}
			got, want := f.Response(nu), jumpSeries(f, nu)
			e := cabsDiff(got, want) / scale
			worst = math.Max(worst, e)
			if e > 1e-13 {
				t.Errorf("trial %d: H(%v) = %v, jump series %v (error %.2g of the coefficient sum)", trial, nu, got, want, e)
			}
		}
	}
	t.Logf("largest difference from the jump series: %.2g of the coefficients' absolute sum", worst)
}

// TestRunDirect holds the Farrow structure to the convolution form
// sum_n x[n] h(t - n) at random times, inside and around the input.
func TestRunDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	worst := 0.0
	for trial := 0; trial < 100; trial++ {
		f := randFilter(rng, 5, 12)
		x := make([]float64, 1+rng.IntN(40))
		for i := range x {
			x[i] = 2*rng.Float64() - 1
		}
		tt := make([]float64, 50)
		for i := range tt {
			tt[i] = -8 + (float64(len(x))+16)*rng.Float64()
		}
		tt[0] = 3 // on a sample
		got, want := f.Run(x, tt), directRun(f, x, tt)
		for k := range tt {
			e := math.Abs(got[k] - want[k])
			worst = math.Max(worst, e)
			if e > 1e-12 {
				t.Errorf("trial %d: y(%v) = %v, direct sum %v", trial, tt[k], got[k], want[k])
			}
		}
	}
	t.Logf("largest difference from the direct sum: %.2g", worst)
}

// lagrangeCubic derives the Farrow table of cubic Lagrange interpolation on
// the taps x[b-1], x[b], x[b+1], x[b+2] (nodes -1, 0, 1, 2 relative to b):
// L_j(mu) = prod_{m != j} (mu - d_m) / (d_j - d_m), expanded in powers of
// mu (the Lagrange formula, textbook, from memory).
func lagrangeCubic() Filter {
	nodes := []float64{-1, 0, 1, 2}
	coef := make([][]float64, 4)
	for i := range coef {
		coef[i] = make([]float64, 4)
	}
	for j, dj := range nodes {
		poly := []float64{1} // lowest power first
		den := 1.0
		for m, dm := range nodes {
			if m == j {
				continue
			}
			next := make([]float64, len(poly)+1)
			for i, c := range poly {
				next[i+1] += c
				next[i] -= dm * c
			}
			poly = next
			den *= dj - dm
		}
		for i, c := range poly {
			coef[i][j] = c / den
		}
	}
	return Filter{Coef: coef}
}

func TestLagrangeCubic(t *testing.T) {
	f := lagrangeCubic()
	cubic := func(v float64) float64 { return 0.5 - 1.5*v + 0.25*v*v - 0.03*v*v*v }
	x := make([]float64, 30)
	for i := range x {
		x[i] = cubic(float64(i))
	}
	rng := rand.New(rand.NewPCG(7, 8))
	tt := make([]float64, 200)
	for i := range tt {
		tt[i] = 1 + 26*rng.Float64() // every tap inside the input
	}
	y := f.Run(x, tt)
	for k, tk := range tt {
		if want := cubic(tk); math.Abs(y[k]-want) > 1e-12*math.Max(1, math.Abs(want)) {
			t.Errorf("y(%v) = %v, the cubic is %v", tk, y[k], want)
		}
	}
	// A unity-gain interpolator: H(0) = 1.
	if g := f.Response(0); math.Abs(real(g)-1) > 1e-14 || math.Abs(imag(g)) > 1e-14 {
		t.Errorf("Lagrange cubic H(0) = %v, want 1", g)
	}
}
