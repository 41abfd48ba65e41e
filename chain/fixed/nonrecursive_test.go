package fixed

import (
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// cicTapsBig returns the exact taps of a CIC of order n and length-r
// boxcars, ((1 - z^-r)/(1 - z^-1))^n, by repeated convolution in math/big:
// an independent reference for both forms (Hogenauer 1981, eq. 1).
func cicTapsBig(n, r int) []*big.Int {
	h := []*big.Int{big.NewInt(1)}
	for b := 0; b < n; b++ {
		g := make([]*big.Int, len(h)+r-1)
		for k := range g {
			g[k] = new(big.Int)
		}
		for k, v := range h {
			for j := 0; j < r; j++ {
				g[k+j].Add(g[k+j], v)
			}
		}
		h = g
	}
	return h
}

// directCIC is the reference output of a CIC on x: y[mR] = sum_k h[k]
// x[mR-k] (inputs before the first zero) in math/big, then floor by shift
// bits, the output truncation both forms share.
func directCIC(x []int64, n, r, shift int) []int64 {
	h := cicTapsBig(n, r)
	var out []int64
	for m := 0; m*r < len(x); m++ {
		acc := new(big.Int)
		for k, v := range h {
			if i := m*r - k; i >= 0 {
				acc.Add(acc, new(big.Int).Mul(v, big.NewInt(x[i])))
			}
		}
		acc.Rsh(acc, uint(shift)) // floor for negative values too (big.Int.Rsh is arithmetic)
		out = append(out, acc.Int64())
	}
	return out
}

// TestNonRecursiveModel runs non-recursive CICs in fixed.Model on seeded
// random and extreme inputs and checks every output against the direct
// convolution with the CIC's exact taps in math/big, truncated as planned;
// and against the recursive CIC with nothing pruned (outBits at its full
// width, so its output is the exact sum too, truncated the same way).
func TestNonRecursiveModel(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 2))
	for _, tc := range []struct{ n, r, in, out int }{
		{1, 2, 8, 8}, {3, 8, 12, 16}, {5, 16, 16, 24}, {4, 32, 14, 14}, {6, 64, 12, 24},
		{2, 4, 3, 2}, {7, 128, 10, 20}, {5, 256, 12, 40},
	} {
		sw, err := planNonRecursive(Stage{CIC: true, N: tc.n, M: 1, R: tc.r, NonRecursive: true}, tc.in, tc.out)
		if err != nil {
			t.Fatalf("%+v: %v", tc, err)
		}
		// Hand-worked: Bin + N log2 R bits, DC gain 1.
		k := 0
		for 1<<k < tc.r {
			k++
		}
		if full := tc.in + tc.n*k; sw.AccumulatorBits != full || sw.OutputBits != min(tc.out, full) || sw.Gain != 1 {
			t.Fatalf("%+v: full %d out %d gain %g; want %d, %d, 1", tc, sw.AccumulatorBits, sw.OutputBits, sw.Gain, full, min(tc.out, full))
		}
		lo, hi := -(int64(1) << (tc.in - 1)), int64(1)<<(tc.in-1)-1
		x := make([]int64, 40*tc.r+7)
		for i := range x {
			switch {
			case i < 8*tc.r:
				x[i] = lo + rng.Int64N(hi-lo+1)
			case i < 16*tc.r:
				x[i] = lo // sustained negative full scale: the largest magnitude
			case i < 24*tc.r:
				x[i] = hi
			case i < 28*tc.r:
				x[i] = lo + (hi-lo)*int64(i%2) // alternating
			default:
				x[i] = lo + rng.Int64N(hi-lo+1)
			}
		}
		want := directCIC(x, tc.n, tc.r, sw.OutputShift)
		w := &Widths{InputBits: tc.in, OutputBits: sw.OutputBits, Stages: []StageWidths{sw}}
		m, err := NewModel(Cascade{InputRate: 1, Stages: []Stage{{CIC: true, N: tc.n, M: 1, R: tc.r, NonRecursive: true}}}, w)
		if err != nil {
			t.Fatal(err)
		}
		// In blocks of odd sizes, so that the state carries over.
		var got []int64
		for i := 0; i < len(x); {
			j := min(len(x), i+1+rng.IntN(3*tc.r))
			o, err := m.Run(x[i:j])
			if err != nil {
				t.Fatal(err)
			}
			got = append(got, o[0]...)
			i = j
		}
		if len(got) != len(want) {
			t.Fatalf("%+v: %d outputs, want %d", tc, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] {
				t.Fatalf("%+v: output %d = %d, direct convolution gives %d", tc, i, got[i], want[i])
			}
		}
		// The recursive CIC with nothing pruned: the same output.
		p, err := chain.PruneCIC(tc.n, 1, tc.r, tc.in, tc.in+tc.n*k)
		if err != nil {
			t.Fatal(err)
		}
		rec := cicInt(x, &p)
		for i := range rec {
			if rec[i]>>sw.OutputShift != got[i] {
				t.Fatalf("%+v: output %d: non-recursive %d, unpruned recursive %d >> %d = %d", tc, i, got[i], rec[i], sw.OutputShift, rec[i]>>sw.OutputShift)
			}
		}
	}
}

// TestNonRecursiveRefused checks the plan refuses M != 1 and R not a
// power of two, saying so.
func TestNonRecursiveRefused(t *testing.T) {
	for _, st := range []Stage{{CIC: true, N: 3, M: 2, R: 8, NonRecursive: true}, {CIC: true, N: 3, M: 1, R: 12, NonRecursive: true}} {
		if _, err := planNonRecursive(st, 16, 24); err == nil {
			t.Errorf("%+v planned", st)
		} else {
			t.Log(err)
		}
	}
}
