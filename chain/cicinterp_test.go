package chain

import (
	"math/rand/v2"
	"testing"
)

// TestInterpolatorCICBitsHogenauer checks the widths against Hogenauer's
// (1981) interpolator growth, G_j = 2^j for the combs (j <= N) and
// G_j = 2^(2N-j) (RM)^(j-N) / R for the integrators, written out here for
// hand-worked cases: W_j = Bin + ceil(log2 G_j).
func TestInterpolatorCICBitsHogenauer(t *testing.T) {
	for _, tc := range []struct {
		n, m, r, in int
		want        []int
	}{
		// N=3, M=1, R=8, Bin=16: combs 2,4,8; integrators 2^2*8/8=4,
		// 2*64/8=16, 512/8=64 -> +1,+2,+3,+2,+4,+6.
		{3, 1, 8, 16, []int{17, 18, 19, 18, 20, 22}},
		// N=4, M=1, R=16, Bin=12: combs 2..16; integrators 8*16/16=8,
		// 4*256/16=64, 2*4096/16=512, 65536/16=4096.
		{4, 1, 16, 12, []int{13, 14, 15, 16, 15, 18, 21, 24}},
		// N=2, M=2, R=5, Bin=10: combs 2,4; integrators 2*10/5=4, 100/5=20
		// (ceil log2 20 = 5).
		{2, 2, 5, 10, []int{11, 12, 12, 15}},
		// N=1, M=1, R=2: comb 2; integrator 2/2 = 1 keeps the input width.
		{1, 1, 2, 8, []int{9, 8}},
	} {
		got := InterpolatorCICBits(tc.n, tc.m, tc.r, tc.in)
		if len(got) != len(tc.want) {
			t.Fatalf("N=%d M=%d R=%d: %v, want %v", tc.n, tc.m, tc.r, got, tc.want)
		}
		for j := range got {
			if got[j] != tc.want[j] {
				t.Errorf("N=%d M=%d R=%d: widths %v, want %v", tc.n, tc.m, tc.r, got, tc.want)
				break
			}
		}
		st := NewCICInterpolator(tc.n, tc.m, tc.r, tc.in, 14)
		if !st.Interpolator || st.OutputBits != min(tc.want[len(tc.want)-1], 14) {
			t.Errorf("NewCICInterpolator: %+v", st)
		}
	}
}

// TestInterpolatorCICBitsSafe: on seeded random N, M, R, the largest
// magnitude any input in the input word can reach at each register (the
// largest L1 norm over the R output phases of the impulse response from the
// input to that register, by brute force on the structure: combs at the
// low rate, zero stuffing, integrators at the high rate) fits in its width.
func TestInterpolatorCICBitsSafe(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1981))
	for trial := 0; trial < 200; trial++ {
		n, m, r := 1+rng.IntN(6), 1+rng.IntN(3), 2+rng.IntN(30)
		const bin = 8
		w := InterpolatorCICBits(n, m, r, bin)
		// The impulse response at the high rate: the combs' (1 - z^-RM)^N,
		// then each integrator in turn.
		length := (n + 1) * r * m * 2
		h := make([]int64, length)
		h[0] = 1
		for j := 1; j <= n; j++ {
			for k := length - 1; k >= r*m; k-- {
				h[k] -= h[k-r*m]
			}
			// Register j (a comb) at the low rate: its response is the
			// stuffed one's phase 0.
			check(t, n, m, r, j, w[j-1], bin, h, r)
		}
		for j := n + 1; j <= 2*n; j++ {
			for k := 1; k < length; k++ {
				h[k] += h[k-1]
			}
			check(t, n, m, r, j, w[j-1], bin, h, r)
		}
	}
}

// check fails unless the largest phase L1 norm of h, times the input's
// largest magnitude 2^(bin-1), fits in a width-bit two's-complement
// register.
func check(t *testing.T, n, m, r, j, width, bin int, h []int64, phases int) {
	t.Helper()
	var worst int64
	for p := 0; p < phases; p++ {
		var s int64
		for k := p; k < len(h); k += phases {
			s += abs64(h[k])
		}
		worst = max(worst, s)
	}
	if worst<<(bin-1) > int64(1)<<(width-1) {
		t.Errorf("N=%d M=%d R=%d register %d: worst gain %d needs more than %d bits", n, m, r, j, worst, width)
	}
}

func abs64(v int64) int64 {
	if v < 0 {
		return -v
	}
	return v
}
