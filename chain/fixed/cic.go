package fixed

import (
	"fmt"
	"math"
	"math/big"
)

// maxCICBits bounds a CIC's register width in PruneCIC; the bit-true run
// needs every register within 63 bits (BitTrue says so when one is wider).
const maxCICBits = 256

// maxGuardBits bounds the guard bits PruneCIC adds above Hogenauer's width
// before it falls back to pruning less (see PruneCIC).
const maxGuardBits = 2

// CICPruning is the register plan of a CIC decimator after Hogenauer's (1981)
// pruning, widened so that no input can wrap its output. Registers are
// numbered as in his paper: 1..N are the integrators, N+1..2N the combs, 2N+1
// the output.
type CICPruning struct {
	N, M, R    int
	InputBits  int
	OutputBits int // the output word, at most FullBits
	// FullBits is Bin + ceil(N log2(RM)) + GuardBits: Hogenauer's Bmax + 1
	// plus the guard bits that keep the truncation errors from wrapping the
	// output (see PruneCIC). Every register keeps this MSB.
	FullBits  int
	GuardBits int
	Dropped   []int // LSBs truncated at registers 1..2N+1 (len 2N+1), each >= 0
	// RegisterBits is the width of registers 1..2N: FullBits - Dropped[j].
	RegisterBits    []int
	VarianceFactors []float64 // F_j^2 of registers 1..2N+1 (F_{2N+1}^2 = 1)
	// TruncationBound is the largest |error| the truncations at registers
	// 1..2N can add to the output before its own truncation, in units of the
	// full register's LSB (one input LSB): sum over j of the largest
	// truncation error at register j times the L1 norm of the impulse
	// response from register j to the output (TruncationBound in PruneCIC).
	TruncationBound float64
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

// cicL1Norms returns, for registers 1..2N, the L1 norm sum_k |h_j(k)| of the
// impulse response from register j's input to the CIC's output (before its
// output truncation). Integrator j sees H_j(z) = (1 - z^-RM)^N /
// (1 - z^-1)^(N-j+1) at the input rate (Hogenauer 1981, eq. 9a), so h_j is
// the running sum of h_(j+1), starting from the combs' (1 - z^-RM)^N; comb
// j sees (1 - z^-M)^(2N+1-j) at the output rate, whose L1 norm is
// 2^(2N+1-j). The sums are exact integers while (RM)^N < 2^53; beyond, they
// carry a relative error under 2^-30, which the caller's margin covers.
func cicL1Norms(n, rm int) []float64 {
	out := make([]float64, 2*n)
	// (1 - z^-RM)^N: taps (-1)^l C(N, l) at l RM.
	h := make([]float64, n*rm+1)
	for l := 0; l <= n; l++ {
		h[l*rm] = binom(n, l)
		if l%2 == 1 {
			h[l*rm] = -h[l*rm]
		}
	}
	for j := n; j >= 1; j-- {
		p := n - j + 1 // integrators from j to N
		length := p*(rm-1) + (j-1)*rm + 1
		g := make([]float64, length)
		run := 0.0
		for k := range g {
			if k < len(h) {
				run += h[k]
			}
			g[k] = run
		}
		h = g
		s := 0.0
		for _, v := range h {
			s += math.Abs(v)
		}
		out[j-1] = s
	}
	for j := n + 1; j <= 2*n; j++ {
		out[j-1] = math.Ldexp(1, 2*n+1-j)
	}
	return out
}

// hogenauerDrops returns Hogenauer's (1981) LSBs dropped at registers
// 1..2N+1 for a full-bits result whose top outBits form the output, and the
// variance factors F_j^2: B_{2N+1} = full - outBits (at least 0), and
// B_j = floor(-log2 F_j + log2 sigma_{2N+1} + (1/2) log2(6/N)) with
// sigma_{2N+1}^2 = 2^(2 B_{2N+1}) / 12, clamped to [0, B_{2N+1}].
func hogenauerDrops(n, rm, full, outBits int) ([]int, []float64) {
	bOut := max(0, full-outBits)
	dropped := make([]int, 2*n+1)
	vf := make([]float64, 2*n+1)
	dropped[2*n] = bOut
	vf[2*n] = 1
	// log2 sigma_{2N+1} = B_{2N+1} - log2(sqrt 12).
	logSigma := float64(bOut) - 0.5*math.Log2(12)
	for j := 1; j <= 2*n; j++ {
		f2 := cicVarianceFactor(n, rm, j)
		vf[j-1] = f2
		b := int(math.Floor(-0.5*math.Log2(f2) + logSigma + 0.5*math.Log2(6/float64(n))))
		if bOut == 0 || b < 0 {
			b = 0
		}
		dropped[j-1] = min(b, bOut)
	}
	return dropped, vf
}

// truncationBound returns sum over registers j = 1..2N of the largest
// truncation error at j, 2^D_j - 2^D_prev (the value arrives in units of
// 2^D_prev, the previous register's, and floor drops at most that much),
// times l1[j], in units of the full register's LSB.
func truncationBound(n int, dropped []int, l1 []float64) float64 {
	e, prev := 0.0, 0
	for j := 0; j < 2*n; j++ {
		if d := dropped[j]; d > prev {
			e += (math.Ldexp(1, d) - math.Ldexp(1, prev)) * l1[j]
		}
		prev = dropped[j]
	}
	return e
}

// PruneCIC returns the register widths of a CIC decimator of order n,
// differential delay m and factor r for an inBits input and an outBits output
// word: Hogenauer's (1981) pruning, widened where needed so that no input
// sequence within the input word can wrap the output.
//
// Hogenauer's rule: the output keeps the top outBits of the FullBits-bit
// result (so B_{2N+1} = FullBits - outBits LSBs are truncated there), and
// register j may drop B_j = floor(-log2 F_j + log2 sigma_{2N+1} + (1/2)
// log2(6/N)) LSBs, with sigma_{2N+1}^2 = 2^(2 B_{2N+1}) / 12, so that no
// register's truncation noise at the output exceeds 1/(2N) of the output's
// own. Negative B_j are clamped to 0. An output word wider than FullBits is
// cut to FullBits.
//
// No wrap. Every register keeps the same MSB and wraps modulo 2^FullBits in
// units of the input LSB, and floor commutes with that modulus, so the output
// is the unwrapped result y of the pruned arithmetic reduced modulo
// 2^FullBits; it is right exactly when -2^(FullBits-1) <= y < 2^(FullBits-1)
// (the output truncation then stays in range too). Without truncations
// |y| <= (RM)^N 2^(Bin-1) (Hogenauer 1981, eq. 11: the DC gain times the
// largest input). Each truncation (floor) at register j adds an error in
// (-(2^B_j - 2^B_prev), 0] that reaches the output through the impulse
// response h_j, so it moves y by less than (2^B_j - 2^B_prev) sum_k |h_j(k)|.
// The sum of those terms is TruncationBound, and the widths are chosen so
// that
//
//	(RM)^N 2^(Bin-1) + TruncationBound <= 2^(FullBits-1).
//
// When (RM)^N is a power of two the left side's first term already fills the
// range, so any pruning needs a guard bit. PruneCIC tries GuardBits = 0, 1,
// 2 with Hogenauer's B_j for each FullBits (the output's LSB moves up with the
// guard, so the output's DC gain (RM)^N / 2^(FullBits-Bin) halves per guard
// bit); if none holds (an output word of a few bits, whose LSB is large
// against full scale), it keeps GuardBits = 0 and lowers every B_j to the
// largest common cap that holds (a cap of 0, no register pruning, always
// does). The bound is computed in float64 with a relative margin of 1e-6 (the
// L1 norms are exact integers below 2^53).
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
	gain := new(big.Int).Exp(big.NewInt(int64(rm)), big.NewInt(int64(n)), nil)
	growth := new(big.Int).Sub(gain, big.NewInt(1)).BitLen()
	full0 := inBits + growth
	if full0 > maxCICBits {
		return CICPruning{}, fmt.Errorf("fixed: CIC N=%d R=%d M=%d on %d-bit input needs %d-bit registers; at most %d are supported", n, r, m, inBits, full0, maxCICBits)
	}
	// peak = (RM)^N 2^(Bin-1), the largest |output| without truncations.
	peak := new(big.Int).Lsh(gain, uint(inBits-1))
	// slack returns 2^(full-1) - peak as a float64.
	slack := func(full int) float64 {
		s := new(big.Int).Lsh(big.NewInt(1), uint(full-1))
		f, _ := new(big.Float).SetInt(s.Sub(s, peak)).Float64()
		return f
	}
	l1 := cicL1Norms(n, rm)
	const margin = 1 + 1e-6
	make1 := func(full int, dropped []int, vf []float64) CICPruning {
		p := CICPruning{N: n, M: m, R: r, InputBits: inBits, OutputBits: min(outBits, full), FullBits: full,
			GuardBits: full - full0, Dropped: dropped, VarianceFactors: vf, RegisterBits: make([]int, 2*n)}
		for j := range p.RegisterBits {
			p.RegisterBits[j] = full - dropped[j]
		}
		p.TruncationBound = truncationBound(n, dropped, l1)
		return p
	}
	for g := 0; g <= maxGuardBits && full0+g <= maxCICBits; g++ {
		d, vf := hogenauerDrops(n, rm, full0+g, outBits)
		if e := truncationBound(n, d, l1); e*margin <= slack(full0+g) {
			return make1(full0+g, d, vf), nil
		}
	}
	d, vf := hogenauerDrops(n, rm, full0, outBits)
	s := slack(full0)
	for lim := d[2*n] - 1; ; lim-- {
		capped := append([]int(nil), d...)
		for j := 0; j < 2*n; j++ {
			capped[j] = min(capped[j], max(lim, 0))
		}
		if lim <= 0 || truncationBound(n, capped, l1)*margin <= s {
			return make1(full0, capped, vf), nil
		}
	}
}

// Gain returns the CIC's DC gain (RM)^N relative to full scale of its
// output word: (RM)^N / 2^(FullBits - InputBits), at most 1 (at most 1/2
// with a guard bit).
func (p CICPruning) Gain() float64 {
	return math.Pow(float64(p.R*p.M), float64(p.N)) / math.Ldexp(1, p.FullBits-p.InputBits)
}
