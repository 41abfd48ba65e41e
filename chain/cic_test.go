package chain

import (
	"encoding/json"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"slices"
	"testing"
)

func TestCICRegisterWidth(t *testing.T) {
	for _, tc := range []struct {
		n, m, r, in, want int
		src               string
	}{
		// N=3, R=8, M=1, 12-bit input: gain 512, 21-bit registers
		// (common practice, the usual textbook example; docs/design.md §11).
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

// Hogenauer (1981): E. B. Hogenauer, "An economical class of digital
// filters for decimation and interpolation", IEEE Trans. ASSP 29(2),
// pp. 155-162. Equation numbers below are his.

func TestCICVarianceFactors(t *testing.T) {
	// Comb-only variance factors for 1..7 combs: 2, 6, 20, 70, 252, 924, 3432
	// (Hogenauer 1981, eq. 16 for j > N, the central binomials; docs/design.md §11).
	want := []float64{2, 6, 20, 70, 252, 924, 3432}
	for _, rm := range []int{8, 10} {
		f, _ := cicRegisterNorms(7, rm)
		for c := 1; c <= 7; c++ {
			// register j = 2N+1-c has c combs after it.
			if got := f[2*7-c]; got != want[c-1] {
				t.Errorf("RM=%d, %d combs: F^2 = %v, want %v", rm, c, got, want[c-1])
			}
		}
	}
	// Integrator factors against Hogenauer's eq. 16 summed directly: h_j(k)
	// as the alternating sum of binomials sum_l (-1)^l C(N, l)
	// C(N-j+k-RM l, k-RM l) (hand-checked formula), squared and summed.
	for _, tc := range []struct{ n, rm int }{{3, 5}, {4, 25}, {7, 8}, {5, 2}} {
		f, _ := cicRegisterNorms(tc.n, tc.rm)
		for j := 1; j <= tc.n; j++ {
			s := 0.0
			for k := 0; k <= (tc.rm-1)*tc.n+j-1; k++ {
				h := 0.0
				for l := 0; l <= k/tc.rm; l++ {
					sg := 1.0
					if l%2 == 1 {
						sg = -1
					}
					h += sg * binom(tc.n, l) * binom(tc.n-j+k-tc.rm*l, k-tc.rm*l)
				}
				s += h * h
			}
			if math.Abs(f[j-1]-s) > 1e-12*s {
				t.Errorf("N=%d RM=%d integrator %d: F^2 = %v, eq. 16 gives %v", tc.n, tc.rm, j, f[j-1], s)
			}
		}
	}
}

func TestCICL1NormsBruteForce(t *testing.T) {
	// The L1 norms and F^2 of the register-to-output responses against a
	// brute-force convolution of Hogenauer's (1981, eq. 9a) H_j(z):
	// integrator j sees (boxcar of RM)^(N-j+1) times (1 - z^-RM)^(j-1); comb
	// j sees (1 - z^-M)^(2N+1-j), whose L1 norm is 2^(2N+1-j).
	for _, tc := range []struct{ n, rm int }{{1, 2}, {3, 8}, {4, 25}, {5, 6}, {7, 3}, {2, 64}, {6, 1}} {
		f2, l1 := cicRegisterNorms(tc.n, tc.rm)
		for j := 1; j <= tc.n; j++ {
			h := []float64{1}
			for b := 0; b < tc.n-j+1; b++ {
				g := make([]float64, len(h)+tc.rm-1)
				for k, v := range h {
					for i := 0; i < tc.rm; i++ {
						g[k+i] += v
					}
				}
				h = g
			}
			for d := 0; d < j-1; d++ {
				g := make([]float64, len(h)+tc.rm)
				for k, v := range h {
					g[k] += v
					g[k+tc.rm] -= v
				}
				h = g
			}
			wantL1, wantF2 := 0.0, 0.0
			for _, v := range h {
				wantL1 += math.Abs(v)
				wantF2 += v * v
			}
			if l1[j-1] != wantL1 || f2[j-1] != wantF2 {
				t.Errorf("N=%d RM=%d integrator %d: L1 %g, F^2 %g; brute force %g, %g", tc.n, tc.rm, j, l1[j-1], f2[j-1], wantL1, wantF2)
			}
		}
		for j := tc.n + 1; j <= 2*tc.n; j++ {
			if want := math.Ldexp(1, 2*tc.n+1-j); l1[j-1] != want {
				t.Errorf("N=%d comb %d: L1 %g, want %g", tc.n, j-tc.n, l1[j-1], want)
			}
		}
	}
}

func TestCICPruningHogenauer(t *testing.T) {
	// Hogenauer (1981) worked example, N=4, R=25, M=1, 16-bit in and out:
	// Bmax = 34 (width 35), bits dropped at registers 1..8 = 1, 6, 9, 13, 14,
	// 15, 16, 17 and output truncation 19 (docs/design.md §11: recomputed from his
	// eqs. 16-21; the first eight match his table, from memory). (RM)^N =
	// 390625 leaves room for the truncations, so PruneCIC adds no guard bit
	// and gives the same plan.
	want := []int{1, 6, 9, 13, 14, 15, 16, 17, 19}
	h, err := HogenauerPruning(4, 1, 25, 16, 16)
	if err != nil {
		t.Fatal(err)
	}
	p, err := PruneCIC(4, 1, 25, 16, 16)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []CICPruning{h, p} {
		if q.FullBits != 35 || q.GuardBits != 0 || q.OutputBits != 16 {
			t.Errorf("FullBits %d guard %d output %d, want 35, 0, 16", q.FullBits, q.GuardBits, q.OutputBits)
		}
		for j := range want {
			if q.Dropped[j] != want[j] {
				t.Errorf("register %d drops %d bits, want %d (all: %v)", j+1, q.Dropped[j], want[j], q.Dropped)
			}
		}
	}
	st := NewCICStage(4, 1, 25, 16, 16)
	if st.RegisterBits[0] != 34 || st.RegisterBits[7] != 18 || st.OutputBits != 16 || st.Width() != 35 {
		t.Errorf("NewCICStage registers %v output %d width %d, want 34 ... 18, 16 and 35", st.RegisterBits, st.OutputBits, st.Width())
	}
	// Output as wide as the registers: nothing to prune (hand count).
	p, err = PruneCIC(4, 1, 25, 16, 40)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range p.Dropped {
		if d != 0 || p.GuardBits != 0 || p.OutputBits != 35 {
			t.Fatalf("no pruning expected, got %v, guard %d, output %d", p.Dropped, p.GuardBits, p.OutputBits)
		}
	}
}

func TestCICWidthTextbook(t *testing.T) {
	// N = 3, R = 8, M = 1, 12-bit input: gain 512, 21-bit registers
	// (common practice, the usual textbook example; docs/design.md §11); a 21-bit output keeps them
	// whole at unit gain.
	p, err := PruneCIC(3, 1, 8, 12, 21)
	if err != nil {
		t.Fatal(err)
	}
	if p.FullBits != 21 || p.Gain() != 1 {
		t.Errorf("FullBits %d gain %g, want 21 and 1", p.FullBits, p.Gain())
	}
	for j, d := range p.Dropped {
		if d != 0 {
			t.Errorf("full-width output: register %d drops %d bits, want 0", j+1, d)
		}
	}
}

func TestPruneCICNoWrapBound(t *testing.T) {
	// PruneCIC's plan must satisfy its own no-wrap inequality,
	// (RM)^N 2^(Bin-1) + TruncationBound <= 2^(FullBits-1) (the DC gain times
	// the largest input, Hogenauer 1981 eq. 11, plus the truncations' worst
	// error), checked here in exact big-integer arithmetic against a
	// truncation bound recomputed from the brute-force L1 norms; and when
	// (RM)^N is a power of two, any pruning needs a guard bit (the first term
	// alone fills the range). The bit-true wrap tests (adversarial inputs through the integer CIC) are
	// package fixed's TestCICNoWrap.
	for n := 1; n <= 7; n++ {
		for _, m := range []int{1, 2} {
			for _, r := range []int{2, 3, 4, 5, 8, 16, 25, 64} {
				for _, w := range [][2]int{{16, 24}, {16, 16}, {12, 14}, {8, 10}, {4, 4}, {2, 3}} {
					p, err := PruneCIC(n, m, r, w[0], w[1])
					if err != nil {
						t.Fatal(err)
					}
					_, l1 := cicRegisterNorms(n, r*m)
					room := new(big.Int).Lsh(big.NewInt(1), uint(p.FullBits-1))
					peak := new(big.Int).Exp(big.NewInt(int64(r*m)), big.NewInt(int64(n)), nil)
					peak.Lsh(peak, uint(w[0]-1))
					bound := new(big.Int)
					prev := 0
					for j := 0; j < 2*n; j++ {
						if d := p.Dropped[j]; d > prev {
							e := new(big.Int).Sub(new(big.Int).Lsh(big.NewInt(1), uint(d)), new(big.Int).Lsh(big.NewInt(1), uint(prev)))
							l, _ := big.NewFloat(l1[j]).Int(nil)
							bound.Add(bound, e.Mul(e, l))
						}
						prev = p.Dropped[j]
					}
					if new(big.Int).Add(peak, bound).Cmp(room) > 0 {
						t.Errorf("N=%d M=%d R=%d %v: peak %v + bound %v > 2^%d", n, m, r, w, peak, bound, p.FullBits-1)
					}
					pruned := false
					for j := 0; j < 2*n; j++ {
						pruned = pruned || p.Dropped[j] > 0
					}
					pow2 := new(big.Int).Exp(big.NewInt(int64(r*m)), big.NewInt(int64(n)), nil)
					if pruned && pow2.BitLen()-1 == int(pow2.TrailingZeroBits()) && p.GuardBits == 0 {
						t.Errorf("N=%d M=%d R=%d %v: (RM)^N a power of two, registers pruned without a guard bit", n, m, r, w)
					}
				}
			}
		}
	}
}

func TestPruneCICErrors(t *testing.T) {
	// Bad parameters are errors, not panics; NewCICStage (no error) falls
	// back to unpruned registers or none.
	for _, a := range [][5]int{{0, 1, 8, 16, 24}, {17, 1, 8, 16, 24}, {3, 0, 8, 16, 24}, {3, 17, 8, 16, 24},
		{3, 1, 0, 16, 24}, {3, 1, 8, 0, 24}, {3, 1, 8, 16, 1}, {16, 16, 1 << 20, 16, 24}, {3, 1, 1<<20 + 1, 16, 24}, {-1, -1, -1, 16, 24}} {
		if _, err := PruneCIC(a[0], a[1], a[2], a[3], a[4]); err == nil {
			t.Errorf("PruneCIC%v: no error", a)
		}
		st := NewCICStage(a[0], a[1], a[2], a[3], a[4])
		if st.RegisterBits != nil && len(st.RegisterBits) != 2*a[0] {
			t.Errorf("NewCICStage%v: %d registers", a, len(st.RegisterBits))
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
	// gain, 20 log10((1-b)/b), b = fa / output rate (docs/design.md §11, computed
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
	// -100 log10 |sin(pi 0.2)/(16 sin(pi 0.2/16))| (docs/design.md §4 formula by hand).
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
	// monotonically, docs/design.md §4 formula), for M = 2 a sidelobe peak inside.
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

func TestCachedRegisterNormsSame(t *testing.T) {
	// The remembered norms equal a fresh computation, bit for bit, on the
	// first call, on a repeat, and after the cache was emptied at its cap;
	// a caller's copy of them (PruneCIC's VarianceFactors) does not alias
	// the cache.
	for _, tc := range []struct{ n, rm int }{{4, 1 << 10}, {6, 3000}, {2, 1 << 12}, {5, 7}} {
		f2, l1 := cicRegisterNorms(tc.n, tc.rm)
		for rep := 0; rep < 2; rep++ {
			g2, g1 := cachedRegisterNorms(tc.n, tc.rm)
			if !slices.Equal(f2, g2) || !slices.Equal(l1, g1) {
				t.Fatalf("N=%d RM=%d call %d: cached norms differ", tc.n, tc.rm, rep+1)
			}
		}
	}
	for i := 0; i <= maxNormsCached; i++ {
		cachedRegisterNorms(1, minNormsCached+i)
	}
	if n := len(registerNorms.m); n > maxNormsCached {
		t.Fatalf("the cache holds %d entries, more than %d", n, maxNormsCached)
	}
	p, err := PruneCIC(4, 1, 1<<10, 14, 18)
	if err != nil {
		t.Fatal(err)
	}
	p.VarianceFactors[0] = -1
	if f2, _ := cachedRegisterNorms(4, 1<<10); f2[0] < 0 {
		t.Fatal("PruneCIC's VarianceFactors alias the cache")
	}
}
