package fixed

import (
	"fmt"
	"math"
	"math/big"
)

// maxCICBits bounds a CIC's register width in PruneCIC; the bit-true run
// needs every register within 63 bits (BitTrue says so when one is wider).
const maxCICBits = 256

// CICPruning is the register plan of a CIC decimator after Hogenauer's (1981)
// pruning. Registers are numbered as in his paper: 1..N are the integrators,
// N+1..2N the combs, 2N+1 the output.
type CICPruning struct {
	N, M, R         int
	InputBits       int
	OutputBits      int       // the output word, at most FullBits
	FullBits        int       // Bin + ceil(N log2(RM)) = Hogenauer's Bmax + 1
	Dropped         []int     // LSBs truncated at registers 1..2N+1 (len 2N+1), each >= 0
	RegisterBits    []int     // width of registers 1..2N: FullBits - Dropped[j]
	VarianceFactors []float64 // F_j^2 of registers 1..2N+1 (F_{2N+1}^2 = 1)
}

// binom returns C(n, k) as a float64 (exact for the sizes used here).
func binom(n, k int) float64 {
	if k < 0 || k > n {
		return 0
	}
	if k > n-k {
		k = n - k
	}
	r := 1.0
	for i := 1; i <= k; i++ {
		r = r * float64(n-k+i) / float64(i)
	}
	return math.Round(r)
}

// cicVarianceFactor returns Hogenauer's F_j^2, the sum of squares of the impulse
// response from register j to the output (his eqs. 9b and 16).
func cicVarianceFactor(n, rm, j int) float64 {
	if j == 2*n+1 {
		return 1
	}
	var s float64
	if j <= n {
		for k := 0; k <= (rm-1)*n+j-1; k++ {
			var h float64
			for l := 0; l <= k/rm; l++ {
				t := binom(n, l) * binom(n-j+k-rm*l, k-rm*l)
				if l%2 == 1 {
					t = -t
				}
				h += t
			}
			s += h * h
		}
		return s
	}
	for k := 0; k <= 2*n+1-j; k++ {
		h := binom(2*n+1-j, k)
		s += h * h
	}
	return s
}

// PruneCIC returns the register widths of a CIC decimator of order n,
// differential delay m and factor r for an inBits input and an outBits output
// word, by Hogenauer's (1981) rule: the output word keeps the top outBits of
// the FullBits-bit result (so B_{2N+1} = FullBits - outBits LSBs are
// truncated there), and register j may drop
// B_j = floor(-log2 F_j + log2 sigma_{2N+1} + (1/2) log2(6/N)) LSBs, with
// sigma_{2N+1}^2 = 2^(2 B_{2N+1}) / 12, so that no register's truncation
// noise at the output exceeds 1/(2N) of the output's own. Negative B_j are
// clamped to 0. An output word wider than FullBits is cut to FullBits.
func PruneCIC(n, m, r, inBits, outBits int) (CICPruning, error) {
	switch {
	case n < 1 || n > 16:
		return CICPruning{}, fmt.Errorf("fixed: CIC order N = %d; it must be 1..16", n)
	case m < 1 || m > 16:
		return CICPruning{}, fmt.Errorf("fixed: CIC differential delay M = %d; it must be 1..16", m)
	case r < 1:
		return CICPruning{}, fmt.Errorf("fixed: CIC factor R = %d; it must be >= 1", r)
	case inBits < 2 || outBits < 2:
		return CICPruning{}, fmt.Errorf("fixed: CIC word widths in %d, out %d; each must be >= 2", inBits, outBits)
	}
	rm := r * m
	// Bmax = ceil(N log2(RM) + Bin - 1); the width is Bmax + 1. The growth
	// ceil(N log2 RM) is the bit length of (RM)^N - 1, computed exactly.
	g := new(big.Int).Exp(big.NewInt(int64(rm)), big.NewInt(int64(n)), nil)
	growth := g.Sub(g, big.NewInt(1)).BitLen()
	full := inBits + growth
	if full > maxCICBits {
		return CICPruning{}, fmt.Errorf("fixed: CIC N=%d R=%d M=%d on %d-bit input needs %d-bit registers; at most %d are supported", n, r, m, inBits, full, maxCICBits)
	}
	if outBits > full {
		outBits = full
	}
	p := CICPruning{N: n, M: m, R: r, InputBits: inBits, OutputBits: outBits, FullBits: full}
	bOut := full - outBits
	p.Dropped = make([]int, 2*n+1)
	p.VarianceFactors = make([]float64, 2*n+1)
	p.RegisterBits = make([]int, 2*n)
	p.Dropped[2*n] = bOut
	p.VarianceFactors[2*n] = 1
	// log2 sigma_{2N+1} = B_{2N+1} - log2(sqrt 12).
	logSigma := float64(bOut) - 0.5*math.Log2(12)
	for j := 1; j <= 2*n; j++ {
		f2 := cicVarianceFactor(n, rm, j)
		p.VarianceFactors[j-1] = f2
		b := int(math.Floor(-0.5*math.Log2(f2) + logSigma + 0.5*math.Log2(6/float64(n))))
		if bOut == 0 || b < 0 {
			b = 0
		}
		if b > bOut {
			b = bOut
		}
		p.Dropped[j-1] = b
		p.RegisterBits[j-1] = full - b
	}
	return p, nil
}

// Gain returns the CIC's DC gain (RM)^N relative to full scale of its
// output word: (RM)^N / 2^(FullBits - InputBits), at most 1.
func (p CICPruning) Gain() float64 {
	return math.Pow(float64(p.R*p.M), float64(p.N)) / math.Ldexp(1, p.FullBits-p.InputBits)
}
