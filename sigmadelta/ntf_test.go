package sigmadelta

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"slices"
	"testing"
)

type golden struct {
	Butter []struct {
		Order   int
		FC      float64   `json:"fc"`
		PolesRe []float64 `json:"poles_re"`
		PolesIm []float64 `json:"poles_im"`
	}
	Freqz []struct {
		B, A   []float64
		F, Mag []float64
	}
}

func readGolden(t *testing.T) golden {
	t.Helper()
	b, err := os.ReadFile("testdata/golden.json")
	if err != nil {
		t.Fatal(err)
	}
	var g golden
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	return g
}

// The NTF's denominator is the digital Butterworth highpass: its poles
// against scipy.signal.butter(order, 2 fc, 'high') (testdata/gen_golden.py).
func TestButterworthPolesSciPy(t *testing.T) {
	for _, c := range readGolden(t).Butter {
		p := butterworthPoles(c.Order, c.FC)
		slices.SortFunc(p, func(a, b complex128) int {
			ra, rb := math.Round(real(a)*1e12), math.Round(real(b)*1e12)
			switch {
			case ra != rb:
				return int(math.Copysign(1, ra-rb))
			case imag(a) < imag(b):
				return -1
			case imag(a) > imag(b):
				return 1
			}
			return 0
		})
		for i := range p {
			want := complex(c.PolesRe[i], c.PolesIm[i])
			if d := cmplx.Abs(p[i] - want); d > 1e-12 {
				t.Errorf("order %d fc %g: pole %d = %v, SciPy %v (|diff| %.3g, want <= 1e-12)", c.Order, c.FC, i, p[i], want, d)
			}
		}
	}
}

// NTF.Gain against scipy.signal.freqz of the same polynomials, and
// NTF.Coefficients against the polynomials the script expanded.
func TestNTFGainFreqz(t *testing.T) {
	g := readGolden(t)
	e := func(f float64) complex128 { return cmplx.Exp(complex(0, 2*math.Pi*f)) }
	ntfs := []NTF{
		{Zeros: []complex128{1, 1}, Poles: []complex128{0.6 + 0.3i, 0.6 - 0.3i}},
		{Zeros: []complex128{1, e(0.01), e(-0.01)}, Poles: []complex128{0.6, 0.55 + 0.3i, 0.55 - 0.3i}},
	}
	for i, n := range ntfs {
		c := g.Freqz[i]
		b, a := n.Coefficients()
		for k := range b {
			if math.Abs(b[k]-c.B[k]) > 1e-12 || math.Abs(a[k]-c.A[k]) > 1e-12 {
				t.Errorf("case %d: coefficients b %v a %v, SciPy's polynomials b %v a %v", i, b, a, c.B, c.A)
				break
			}
		}
		for k, f := range c.F {
			if got := n.Gain(f); math.Abs(got-c.Mag[k]) > 1e-9*math.Max(1, c.Mag[k]) {
				t.Errorf("case %d: |NTF(%g)| = %.12g, freqz %.12g", i, f, got, c.Mag[k])
			}
		}
	}
}

// Every NTF the modulators make: |NTF| at half the rate is the OBG, no
// higher anywhere (checked on a dense grid), poles inside the unit circle,
// zeros where they were asked, and Gain equal to a direct evaluation of
// Coefficients' polynomials.
func TestNTFDesign(t *testing.T) {
	for order := 1; order <= MaxOrder; order++ {
		for _, obg := range []float64{1.2, 1.5, 2, 3} {
			if obg > math.Ldexp(1, order) {
				continue
			}
			for _, opt := range []bool{false, true} {
				m := Modulator{Order: order, Bits: 1, SNRDB: 80, OBG: obg}
				if opt {
					m.Zeros = OptimalZeros(order, 1.0/128)
				}
				n, err := m.NTF()
				if err != nil {
					t.Fatalf("order %d obg %g: %v", order, obg, err)
				}
				if g := n.Gain(0.5); math.Abs(g-obg) > 1e-9 {
					t.Errorf("order %d obg %g optimal %v: |NTF(1/2)| = %.12g", order, obg, opt, g)
				}
				b, a := n.Coefficients()
				for k := 0; k <= 2000; k++ {
					f := float64(k) / 4000
					if g := n.Gain(f); g > obg*(1+1e-9) {
						t.Errorf("order %d obg %g optimal %v: |NTF(%g)| = %g above the OBG", order, obg, opt, f, g)
						break
					}
					z := cmplx.Exp(complex(0, -2*math.Pi*f))
					var nb, na complex128
					for i := len(b) - 1; i >= 0; i-- {
						nb = nb*z + complex(b[i], 0)
						na = na*z + complex(a[i], 0)
					}
					// The expanded polynomial cancels near DC: its
					// rounding is about 1e-16 sum |b| / |A| (the
					// reason Gain multiplies root distances instead).
					var sb float64
					for _, v := range b {
						sb += math.Abs(v)
					}
					tol := 1e-9*n.Gain(f) + 1e-13*sb/cmplx.Abs(na)
					if d := math.Abs(cmplx.Abs(nb/na) - n.Gain(f)); d > tol {
						t.Errorf("order %d obg %g: |B/A| at %g differs from Gain by %g", order, obg, f, d)
						break
					}
				}
				for _, p := range n.Poles {
					if cmplx.Abs(p) >= 1 {
						t.Errorf("order %d obg %g: pole %v outside the unit circle", order, obg, p)
					}
				}
				if opt {
					for _, f := range m.Zeros {
						if g := n.Gain(f); g > 1e-9 {
							t.Errorf("order %d: |NTF| at the zero %g is %g", order, f, g)
						}
					}
				}
			}
		}
	}
}

// Gauss-Legendre nodes (Abramowitz and Stegun, Table 25.4) are the
// optimal zeros on [-1, 1].
func TestOptimalZeros(t *testing.T) {
	for _, c := range []struct {
		n    int
		want []float64
	}{
		{1, []float64{0}},
		{2, []float64{0.5773502691896258}},
		{3, []float64{0, 0.7745966692414834}},
		{4, []float64{0.3399810435848563, 0.8611363115940526}},
		{5, []float64{0, 0.5384693101056831, 0.9061798459386640}},
		{8, []float64{0.1834346424956498, 0.5255324099163290, 0.7966664774136267, 0.9602898564975363}},
	} {
		got := OptimalZeros(c.n, 1)
		if len(got) != len(c.want) {
			t.Fatalf("n %d: %v, want %v", c.n, got, c.want)
		}
		for i := range got {
			if math.Abs(got[i]-c.want[i]) > 1e-14 {
				t.Errorf("n %d: zero %d = %.16g, A&S %.16g", c.n, i, got[i], c.want[i])
			}
		}
	}
}
