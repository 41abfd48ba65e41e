package fixed

import (
	"math"
	"testing"
)

func TestPruneCICHogenauer(t *testing.T) {
	// Hogenauer (1981), pruning example: N = 4, R = 25, M = 1, 16-bit input
	// and output: Bmax = 34 (width 35), bits dropped at registers 1..8 =
	// 1, 6, 9, 13, 14, 15, 16, 17 and 19 at the output (REFERENCES.md:
	// computed from his equations; the first eight match his table, from memory).
	p, err := PruneCIC(4, 1, 25, 16, 16)
	if err != nil {
		t.Fatal(err)
	}
	if p.FullBits != 35 {
		t.Errorf("FullBits = %d, want 35 (Bmax 34)", p.FullBits)
	}
	want := []int{1, 6, 9, 13, 14, 15, 16, 17, 19}
	for j, w := range want {
		if p.Dropped[j] != w {
			t.Errorf("register %d drops %d bits, want %d", j+1, p.Dropped[j], w)
		}
	}
}

func TestCICVarianceCombs(t *testing.T) {
	// Hogenauer (1981): comb-only variance factors F^2 for 1..7 combs are
	// the central binomials 2, 6, 20, 70, 252, 924, 3432 (REFERENCES.md).
	want := []float64{2, 6, 20, 70, 252, 924, 3432}
	for c, w := range want {
		n := 7
		j := 2*n + 1 - (c + 1) // register with c+1 combs after it
		if got := cicVarianceFactor(n, 8, j); got != w {
			t.Errorf("%d combs: F^2 = %g, want %g", c+1, got, w)
		}
	}
}

func TestCICWidthTextbook(t *testing.T) {
	// N = 3, R = 8, M = 1, 12-bit input: gain 512, 21-bit registers
	// (REFERENCES.md, common textbook example).
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

func TestCICL1NormsBruteForce(t *testing.T) {
	// The L1 norms of the register-to-output responses against a brute-force
	// convolution of Hogenauer's (1981, eq. 9a) H_j(z): integrator j sees
	// (boxcar of RM)^(N-j+1) times (1 - z^-RM)^(j-1); comb j sees
	// (1 - z^-M)^(2N+1-j), whose L1 norm is 2^(2N+1-j).
	for _, tc := range []struct{ n, rm int }{{1, 2}, {3, 8}, {4, 25}, {5, 6}, {7, 3}, {2, 64}} {
		got := cicL1Norms(tc.n, tc.rm)
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
			want := 0.0
			for _, v := range h {
				want += math.Abs(v)
			}
			if got[j-1] != want {
				t.Errorf("N=%d RM=%d integrator %d: L1 %g, brute force %g", tc.n, tc.rm, j, got[j-1], want)
			}
		}
		for j := tc.n + 1; j <= 2*tc.n; j++ {
			if want := math.Ldexp(1, 2*tc.n+1-j); got[j-1] != want {
				t.Errorf("N=%d comb %d: L1 %g, want %g", tc.n, j-tc.n, got[j-1], want)
			}
		}
	}
}

func TestCICDataMemory(t *testing.T) {
	// A CIC stores one word per integrator and, per comb of differential
	// delay M (y[n] = x[n] - x[n-M]), its M past inputs (arithmetic), each
	// as wide as the register: N = 3, M = 2, R = 8 on 12 bits (gain 16^3 =
	// 2^12, full width 24, no pruning at a 24-bit output).
	w, err := Plan(Cascade{InputRate: 1e6, Passband: 1e3, Stages: []Stage{{CIC: true, N: 3, M: 2, R: 8}}}, Words{InputBits: 12, OutputBits: 24}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := w.Stages[0].DataMemoryBits, 3*24+3*2*24; got != want {
		t.Errorf("data memory %d bits, want %d (registers %v)", got, want, w.Stages[0].Pruning.RegisterBits)
	}
}
