package fixed

import (
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// hogenauerOnly is the plan of Hogenauer's (1981) rule alone at his width
// Bin + ceil(N log2 RM), with no guard against the truncations' wrap: the
// plan chain.PruneCIC widens.
func hogenauerOnly(t *testing.T, n, m, r, in, out int) CICPruning {
	t.Helper()
	p, err := chain.HogenauerPruning(n, m, r, in, out)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// cicExact returns the exact CIC output (no truncation) at input indices
// 0, R, 2R, ...: the convolution with (boxcar of RM)^N, in input LSBs.
func cicExact(x []int64, n, rm, r int) []int64 {
	hf := cicTaps(n, rm, 1)
	h := make([]int64, len(hf))
	for k, v := range hf {
		h[k] = int64(v)
	}
	out := make([]int64, (len(x)+r-1)/r)
	for mi := range out {
		var y int64
		for k := 0; k < len(h) && k <= mi*r; k++ {
			y += h[k] * x[mi*r-k]
		}
		out[mi] = y
	}
	return out
}

// cicWraps runs p on x and reports whether any output leaves the band the
// no-wrap argument allows around the exact output: |error| < TruncationBound
// before the output's truncation (a floor, which lowers it by less than
// 2^B_{2N+1} more).
func cicWraps(p *CICPruning, x []int64) (bool, int64, int64) {
	got := cicInt(x, p)
	want := cicExact(x, p.N, p.R*p.M, p.R)
	bOut := p.Dropped[2*p.N]
	lo := p.TruncationBound + float64(int64(1)<<bOut)
	for i := range got {
		d := got[i]<<bOut - want[i]
		if (d > 0 && float64(d) >= p.TruncationBound) || (d < 0 && float64(-d) >= lo) {
			return true, got[i] << bOut, want[i]
		}
	}
	return false, 0, 0
}

// adversarial returns input sequences for a CIC of order n and RM rm on a
// bits-bit input: seeded noise then sustained full scale of either sign,
// the most negative code held, full scale alternating every sample and
// every rm/2 samples, and noise that ends on a full-scale step.
func adversarial(rng *rand.Rand, n, rm, bits int) [][]int64 {
	top := int64(1) << (bits - 1)
	hold := (n + 2) * rm
	noise := func(k int) []int64 {
		x := make([]int64, k)
		for i := range x {
			x[i] = rng.Int64N(2*top) - top
		}
		return x
	}
	fill := func(x []int64, k int, v func(i int) int64) []int64 {
		for i := 0; i < k; i++ {
			x = append(x, v(i))
		}
		return x
	}
	var out [][]int64
	for _, lvl := range []int64{-top, top - 1} {
		out = append(out, fill(noise(1+rng.IntN(3*rm)), hold, func(int) int64 { return lvl }))
	}
	out = append(out, fill(nil, hold, func(int) int64 { return -top }))
	out = append(out, fill(noise(rm), hold, func(i int) int64 { return []int64{-top, top - 1}[i%2] }))
	half := max(1, rm/2)
	out = append(out, fill(noise(rm), 2*hold, func(i int) int64 { return []int64{-top, top - 1}[(i/half)%2] }))
	out = append(out, fill(fill(noise(hold), hold, func(int) int64 { return top - 1 }), hold, func(int) int64 { return -top }))
	return out
}

func TestCICNoWrap(t *testing.T) {
	// The no-wrap argument of PruneCIC: the largest |output| is Hogenauer's
	// (E. B. Hogenauer (1981), "An economical class of digital filters for
	// decimation and interpolation", IEEE Trans. ASSP 29(2), eq. 11)
	// (RM)^N 2^(Bin-1) plus, per register j, its worst
	// truncation error times sum_k |h_j(k)|; FullBits leaves room for it.
	// Adversarial inputs run through the bit-true integer model must stay
	// within that band around the exact convolution (brute force), on CICs
	// whose (RM)^N is and is not a power of two. Seeded RNG.
	rng := rand.New(rand.NewPCG(21, 22))
	cases, guarded, oldWraps := 0, 0, 0
	for n := 1; n <= 7; n++ {
		for _, m := range []int{1, 2} {
			for _, r := range []int{2, 3, 4, 5, 6, 8, 10, 12, 16, 25, 32} {
				if n*r*m > 160 {
					continue
				}
				for _, w := range [][2]int{{16, 24}, {16, 16}, {12, 14}, {8, 10}, {4, 4}, {2, 3}} {
					p, err := chain.PruneCIC(n, m, r, w[0], w[1])
					if err != nil {
						t.Fatal(err)
					}
					if p.FullBits > 62 {
						continue
					}
					cases++
					if p.GuardBits > 0 {
						guarded++
					}
					old := hogenauerOnly(t, n, m, r, w[0], w[1])
					oldWrapped := false
					for _, x := range adversarial(rng, n, r*m, w[0]) {
						if bad, got, want := cicWraps(&p, x); bad {
							t.Fatalf("N=%d M=%d R=%d %v (guard %d, registers %v): output %d, exact %d, bound %g", n, m, r, w, p.GuardBits, p.RegisterBits, got, want, p.TruncationBound)
						}
						if bad, _, _ := cicWraps(&old, x); bad {
							oldWrapped = true
						}
					}
					if oldWrapped {
						oldWraps++
					}
				}
			}
		}
	}
	t.Logf("%d CICs: %d needed guard bits; Hogenauer's width alone wrapped on %d", cases, guarded, oldWraps)
	if oldWraps == 0 {
		t.Error("the adversarial inputs never wrapped Hogenauer's plain width: the test has no teeth")
	}
}

func TestCICWrapTrials(t *testing.T) {
	// The failure of issue 11: noise then a sustained negative full-scale
	// input, 200 seeded trials each on cic5m1r16 and cic4m1r32, 16-bit input,
	// 24-bit output. None may wrap.
	for _, tc := range []struct{ n, r int }{{5, 16}, {4, 32}} {
		p, err := chain.PruneCIC(tc.n, 1, tc.r, 16, 24)
		if err != nil {
			t.Fatal(err)
		}
		old := hogenauerOnly(t, tc.n, 1, tc.r, 16, 24)
		rng := rand.New(rand.NewPCG(uint64(tc.n), uint64(tc.r)))
		wraps, oldWraps := 0, 0
		for trial := 0; trial < 200; trial++ {
			x := make([]int64, 0, 8*tc.n*tc.r)
			for i := 0; i < 1+rng.IntN(4*tc.r); i++ {
				x = append(x, rng.Int64N(1<<16)-1<<15)
			}
			for len(x) < cap(x) {
				x = append(x, -1<<15)
			}
			if bad, _, _ := cicWraps(&p, x); bad {
				wraps++
			}
			if bad, _, _ := cicWraps(&old, x); bad {
				oldWraps++
			}
		}
		t.Logf("cic%dm1r%d: %d of 200 wrap (guard %d bits, registers %v); Hogenauer's width alone: %d of 200", tc.n, tc.r, wraps, p.GuardBits, p.RegisterBits, oldWraps)
		if wraps > 0 {
			t.Errorf("cic%dm1r%d: %d of 200 trials wrap", tc.n, tc.r, wraps)
		}
	}
}
