package chain

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

func TestCICRegisterWidth(t *testing.T) {
	for _, tc := range []struct {
		n, m, r, in, want int
		src               string
	}{
		// N=3, R=8, M=1, 12-bit input: gain 512, 21-bit registers
		// (common textbook example, REFERENCES.md).
		{3, 1, 8, 12, 21, "common practice"},
		// Hogenauer (1981) worked example: N=4, R=25, M=1, 16-bit input,
		// Bmax = 34 (MSB index), so 35-bit registers.
		{4, 1, 25, 16, 35, "Hogenauer 1981"},
		// Exact powers of two must not round up: 16 + 5*log2(16) = 36.
		{5, 1, 16, 16, 36, "hand count"},
		// 4 log2(2*25) = 22.58 -> 23 growth bits.
		{4, 2, 25, 16, 39, "hand count"},
	} {
		if got := CICRegisterWidth(tc.n, tc.m, tc.r, tc.in); got != tc.want {
			t.Errorf("CICRegisterWidth(N=%d, M=%d, R=%d, Bin=%d) = %d, want %d (%s)",
				tc.n, tc.m, tc.r, tc.in, got, tc.want, tc.src)
		}
	}
}

func TestCICVarianceFactorsCombs(t *testing.T) {
	// Comb-only variance factors for 1..7 combs: 2, 6, 20, 70, 252, 924, 3432
	// (Hogenauer 1981, eq. 16 for j > N; REFERENCES.md).
	want := []float64{2, 6, 20, 70, 252, 924, 3432}
	f := CICVarianceFactors(7, 1, 10)
	for c := 1; c <= 7; c++ {
		// register j = 2N+1-c has c combs after it.
		if got := f[2*7-c]; got != want[c-1] {
			t.Errorf("%d combs: F^2 = %v, want %v", c, got, want[c-1])
		}
	}
	// Integrator factors against a direct sum of the impulse response's
	// squares from Hogenauer's eq. 16 with binomials (hand-checked formula).
	n, r := 3, 5
	f = CICVarianceFactors(n, 1, r)
	for j := 1; j <= n; j++ {
		s := 0.0
		for k := 0; k <= (r-1)*n+j-1; k++ {
			h := 0.0
			for l := 0; l <= k/r; l++ {
				sg := 1.0
				if l%2 == 1 {
					sg = -1
				}
				h += sg * binom(n, l) * binom(n-j+k-r*l, k-r*l)
			}
			s += h * h
		}
		if math.Abs(f[j-1]-s) > 1e-9*s {
			t.Errorf("integrator %d: F^2 = %v, eq. 16 gives %v", j, f[j-1], s)
		}
	}
}

func TestCICPruningHogenauer(t *testing.T) {
	// Hogenauer (1981) worked example, N=4, R=25, M=1, 16-bit in and out:
	// bits dropped at registers 1..8 = 1, 6, 9, 13, 14, 15, 16, 17 and output
	// truncation 19 (REFERENCES.md; recomputed here from his eqs. 16-21).
	dropped, out := CICPruning(4, 1, 25, 16, 16)
	want := []int{1, 6, 9, 13, 14, 15, 16, 17}
	if out != 19 {
		t.Errorf("output truncation = %d, want 19", out)
	}
	for j := range want {
		if dropped[j] != want[j] {
			t.Errorf("register %d drops %d bits, want %d (all: %v)", j+1, dropped[j], want[j], dropped)
		}
	}
	st := NewCICStage(4, 1, 25, 16, 16)
	if st.RegisterBits[0] != 34 || st.RegisterBits[7] != 18 || st.OutputBits != 16 {
		t.Errorf("NewCICStage registers %v output %d, want 34 ... 18 and 16", st.RegisterBits, st.OutputBits)
	}
	// Output as wide as the registers: nothing to prune (hand count).
	dropped, out = CICPruning(4, 1, 25, 16, 40)
	for _, d := range dropped {
		if d != 0 || out != 0 {
			t.Fatalf("no pruning expected, got %v, %d", dropped, out)
		}
	}
}

type cicGolden struct {
	SciPy string `json:"scipy"`
	Cases []struct {
		N, M, R int
		Freq    []float64 `json:"freq"`
		Mag     []float64 `json:"mag"`
	} `json:"cases"`
}

func TestCICResponseSciPy(t *testing.T) {
	// Golden data: SciPy signal.freqz of the CIC's equivalent FIR, made by
	// testdata/chain/cic_freqz.py (SciPy version recorded in the file).
	b, err := os.ReadFile("../testdata/chain/cic_freqz.json")
	if err != nil {
		t.Fatal(err)
	}
	var g cicGolden
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	if len(g.Cases) == 0 {
		t.Fatal("no cases")
	}
	const rate = 1e6
	for _, c := range g.Cases {
		st := CICStage{N: c.N, M: c.M, R: c.R}
		for i, f := range c.Freq {
			got, want := st.Gain(f*rate, rate), c.Mag[i]
			if math.Abs(got-want) > 1e-12+1e-9*want {
				t.Errorf("cic N=%d M=%d R=%d at %g F: %.15g, SciPy %s gives %.15g",
					c.N, c.M, c.R, f, got, g.SciPy, want)
			}
		}
	}
}

func TestCICAliasAttenuation(t *testing.T) {
	// Alias attenuation per order for large R relative to the passband-edge
	// gain, 20 log10((1-b)/b), b = fa / output rate (REFERENCES.md, computed
	// from Hogenauer 1981's response). R = 4096 is close to the large-R limit.
	for _, tc := range []struct{ b, want float64 }{
		{1.0 / 128, 42.08}, {1.0 / 64, 35.99}, {1.0 / 32, 29.83},
		{1.0 / 16, 23.52}, {1.0 / 8, 16.90}, {1.0 / 4, 9.54},
	} {
		const r, out = 4096, 1.0
		st := CICStage{N: 1, M: 1, R: r}
		att := 20 * math.Log10(st.Gain(tc.b*out, r*out)/st.Gain((1-tc.b)*out, r*out))
		if math.Abs(att-tc.want) > 0.01 {
			t.Errorf("b = %g: %.3f dB per order, want %.2f", tc.b, att, tc.want)
		}
	}
}

func TestCICDroop(t *testing.T) {
	// N=5, R=16, M=1 at 16 MHz (1 MHz out), fp = 0.2 MHz: droop =
	// -100 log10 |sin(pi 0.2)/(16 sin(pi 0.2/16))| (DESIGN §4 formula by hand).
	st := CICStage{N: 5, M: 1, R: 16}
	want := -100 * math.Log10(math.Sin(math.Pi*0.2)/(16*math.Sin(math.Pi*0.2/16)))
	got, ok := st.DroopDB(0.2e6, 16e6)
	if !ok || math.Abs(got-want) > 1e-12 {
		t.Errorf("droop %v %v, want %v", got, ok, want)
	}
	// M = 3: first null at 16e6/48 = 0.333 MHz, inside a 0.4 MHz passband.
	if _, ok := (CICStage{N: 5, M: 3, R: 16}).DroopDB(0.4e6, 16e6); ok {
		t.Error("a null in the passband must be reported")
	}
}

func TestRunCICMatchesEquivalentFIR(t *testing.T) {
	// Integrators and combs (wrapping integers) against the CIC's equivalent
	// FIR of N boxcars (Hogenauer 1981, eq. 1), on a seeded random signal
	// long enough for float64 integrators to have failed.
	rng := rand.New(rand.NewPCG(3, 4))
	for _, tc := range []struct{ n, m, r int }{{5, 1, 16}, {3, 2, 7}, {6, 1, 64}} {
		x := make([]float64, 200000)
		for i := range x {
			x[i] = 2*rng.Float64() - 1 + 0.3 // a DC offset makes integrators ramp
		}
		st := CICStage{N: tc.n, M: tc.m, R: tc.r}
		got := runCIC(st, x)
		want := polyphaseDecimate(cicTaps(st), tc.r, x)
		// Input quantisation is one step of 2^-(61 - growth) of the peak
		// (1.3 here), rounded: at most half a step on the output too.
		tol := 1.3 * math.Ldexp(1, -(61-CICGrowth(tc.n, tc.m, tc.r)))
		for i := range want {
			if math.Abs(got[i]-want[i]) > tol {
				t.Fatalf("N=%d M=%d R=%d: output %d = %v, FIR gives %v", tc.n, tc.m, tc.r, i, got[i], want[i])
			}
		}
	}
}

func TestCICRejection(t *testing.T) {
	// Rejection on the alias bands against a dense direct grid; for M = 1 the
	// worst point is the first band's lower edge F1 - fa (main lobe falling
	// monotonically, DESIGN §4 formula), for M = 2 a sidelobe peak inside.
	const rate = 32e6
	for _, tc := range []struct{ n, m, r int }{{4, 1, 16}, {3, 2, 16}, {5, 2, 8}} {
		st := CICStage{N: tc.n, M: tc.m, R: tc.r}
		out := rate / float64(tc.r)
		fa := 0.45 * out
		bands := aliasBands(out, rate, fa, false, 0)
		db, at := st.RejectionDB(bands, rate)
		best, bestAt := 0.0, 0.0
		for _, b := range bands {
			for i := 0; i <= 200000; i++ {
				x := b.Lo + (b.Hi-b.Lo)*float64(i)/200000
				if v := st.Gain(x, rate); v > best {
					best, bestAt = v, x
				}
			}
		}
		want := -20 * math.Log10(best)
		if db > want+1e-9 || db < want-0.001 {
			t.Errorf("N=%d M=%d R=%d: %.5f dB at %v, dense grid %.5f dB at %v", tc.n, tc.m, tc.r, db, at, want, bestAt)
		}
		if tc.m == 1 && math.Abs(at-(out-fa)) > 1e-6*out {
			t.Errorf("N=%d M=1: worst at %v, want the band edge %v", tc.n, at, out-fa)
		}
	}
}
