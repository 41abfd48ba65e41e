package chain

import (
	"fmt"
	"math"
	"math/big"
	"sync"
)

// MaxCICBits bounds a CIC's full register width in PruneCIC.
const MaxCICBits = 256

// maxCICGuardBits bounds the guard bits PruneCIC adds above Hogenauer's
// width before it falls back to pruning less.
const maxCICGuardBits = 2

// CICPruning is the register plan of a CIC decimator: Hogenauer's (1981)
// pruning, widened by PruneCIC so that no input can wrap its output.
// Registers are numbered as in his paper: 1..N are the integrators, N+1..2N
// the combs, 2N+1 the output.
type CICPruning struct {
	N, M, R    int
	InputBits  int
	OutputBits int // the output word, at most FullBits
	// FullBits is Bin + ceil(N log2(RM)) + GuardBits: Hogenauer's Bmax + 1
	// plus the guard bits that keep the truncation errors from wrapping the
	// output. Every register keeps this MSB.
	FullBits  int
	GuardBits int
	Dropped   []int // LSBs truncated at registers 1..2N+1 (len 2N+1), each >= 0
	// RegisterBits is the width of registers 1..2N: FullBits - Dropped[j].
	RegisterBits    []int
	VarianceFactors []float64 // F_j^2 of registers 1..2N+1 (F_{2N+1}^2 = 1)
	// TruncationBound is the largest |error| the truncations at registers
	// 1..2N can add to the output before its own truncation, in units of the
	// full register's LSB (one input LSB): the sum over j of the largest
	// truncation error at register j, 2^B_j - 2^B_(j-1) (the value arrives in
	// units of the previous register's LSB), times the L1 norm of the impulse
	// response from register j to the output.
	TruncationBound float64
}

// Gain returns the CIC's DC gain (RM)^N relative to full scale of its
// output word: (RM)^N / 2^(FullBits - InputBits), at most 1 (at most 1/2
// with a guard bit).
func (p CICPruning) Gain() float64 {
	return math.Pow(float64(p.R*p.M), float64(p.N)) / math.Ldexp(1, p.FullBits-p.InputBits)
}

// cicRegisterNorms returns, for registers 1..2N of a CIC of order n and
// product rm = R M, Hogenauer's (1981, eq. 16) variance factor F_j^2 =
// sum_k h_j(k)^2 and the L1 norm sum_k |h_j(k)|, h_j the impulse response
// from register j's input to the output before its truncation.
//
// Integrator j sees H_j(z) = (1 - z^-RM)^N / (1 - z^-1)^(N-j+1) at the
// input rate (his eq. 9a): the combs' taps (-1)^l C(N, l) at l RM, summed
// N-j+1 times, N RM - N + j samples long. H_j is a power of the boxcar
// (1 - z^-RM)/(1 - z^-1) times a power of (1 - z^-RM), so |h_j| is
// symmetric about its middle and only its first half is summed. The N
// running sums are carried as N accumulators over one pass of N RM / 2
// samples, so the work is about N^2 R M / 2 additions and the memory O(N).
// Comb j sees (1 - z^-M)^c, c = 2N+1-j, at the output rate: F_j^2 =
// C(2c, c) and L1 norm 2^c. The sums are exact integers while they stay
// below 2^53; beyond, they carry a relative error far below the margin
// PruneCIC allows.
func cicRegisterNorms(n, rm int) (f2, l1 []float64) {
	f2 = make([]float64, 2*n)
	l1 = make([]float64, 2*n)
	acc := make([]float64, n) // acc[j-1] = h_j(k)
	tf2 := make([]float64, n) // the middle samples' share, weighted
	tl1 := make([]float64, n)
	// Samples k < kMain lie in the first half of every h_j (2k < N RM - N,
	// the shortest length less one) and count twice; the few after it up to
	// the longest h_j's middle are weighted per register.
	kMain, half := (n*rm-n+1)/2, (n*rm-1)/2
	next, l := 0, 0 // the next comb tap's position and index
	for k := 0; k <= half; k++ {
		var in float64
		if k == next {
			in = binom(n, l)
			if l%2 == 1 {
				in = -in
			}
			next, l = next+rm, l+1
		}
		if k < kMain {
			for j := n - 1; j >= 0; j-- {
				acc[j] += in
				in = acc[j]
				f2[j] += in * in
				l1[j] += math.Abs(in)
			}
			continue
		}
		for j := n - 1; j >= 0; j-- {
			acc[j] += in
			in = acc[j]
			// h_(j+1) is N RM - N + j + 1 samples long: its middle is at
			// 2k = N RM - N + j.
			w := 0.0
			switch d := n*rm - n + j - 2*k; {
			case d > 0:
				w = 2
			case d == 0:
				w = 1
			}
			tf2[j] += w * in * in
			tl1[j] += w * math.Abs(in)
		}
	}
	for j := 0; j < n; j++ {
		f2[j] = 2*f2[j] + tf2[j]
		l1[j] = 2*l1[j] + tl1[j]
	}
	for j := n + 1; j <= 2*n; j++ {
		c := 2*n + 1 - j
		f2[j-1] = binom(2*c, c)
		l1[j-1] = math.Ldexp(1, c)
	}
	return f2, l1
}

// registerNorms remembers cicRegisterNorms of the longer CICs, whose N^2 R M
// / 2 additions a search would otherwise repeat for every chain that
// starts with the same CIC (a third of a second at D = 2^20). The values
// are a pure function of (n, rm) and are never modified by the callers;
// the cache forgets everything once it holds maxNormsCached entries, so
// it stays a few hundred kB in a long-lived program.
var registerNorms struct {
	sync.Mutex
	m map[[2]int][2][]float64
}

const (
	minNormsCached = 1 << 12 // n rm below which computing is as cheap as looking up
	maxNormsCached = 1 << 10
)

// cachedRegisterNorms returns cicRegisterNorms(n, rm), remembered when
// n rm is at least minNormsCached. The slices are shared: read only.
func cachedRegisterNorms(n, rm int) (f2, l1 []float64) {
	if n*rm < minNormsCached {
		return cicRegisterNorms(n, rm)
	}
	k := [2]int{n, rm}
	registerNorms.Lock()
	v, ok := registerNorms.m[k]
	registerNorms.Unlock()
	if ok {
		return v[0], v[1]
	}
	f2, l1 = cicRegisterNorms(n, rm)
	registerNorms.Lock()
	if registerNorms.m == nil || len(registerNorms.m) >= maxNormsCached {
		registerNorms.m = map[[2]int][2][]float64{}
	}
	registerNorms.m[k] = [2][]float64{f2, l1}
	registerNorms.Unlock()
	return f2, l1
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

// hogenauerDrops returns Hogenauer's (1981, eqs. 16-21) LSBs dropped at
// registers 1..2N+1 for a full-bits result whose top outBits form the
// output: B_{2N+1} = full - outBits (at least 0), and
// B_j = floor(-log2 F_j + log2 sigma_{2N+1} + (1/2) log2(6/N)) with
// sigma_{2N+1}^2 = 2^(2 B_{2N+1}) / 12, clamped to [0, B_{2N+1}].
func hogenauerDrops(n int, f2 []float64, full, outBits int) []int {
	bOut := max(0, full-outBits)
	dropped := make([]int, 2*n+1)
	dropped[2*n] = bOut
	if bOut == 0 {
		return dropped
	}
	// log2 sigma_{2N+1} = B_{2N+1} - log2(sqrt 12).
	logSigma := float64(bOut) - 0.5*math.Log2(12)
	for j := 0; j < 2*n; j++ {
		b := int(math.Floor(-0.5*math.Log2(f2[j]) + logSigma + 0.5*math.Log2(6/float64(n))))
		dropped[j] = min(max(b, 0), bOut)
	}
	return dropped
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

// cicPlanner holds what every candidate plan of one CIC shares.
type cicPlanner struct {
	n, m, r, inBits, outBits int
	full0                    int // Bin + ceil(N log2 RM)
	peak                     *big.Int
	f2, l1                   []float64
}

func newCICPlanner(n, m, r, inBits, outBits int) (*cicPlanner, error) {
	switch {
	case n < 1 || n > maxCICOrder:
		return nil, fmt.Errorf("chain: CIC order N = %d; it must be 1..%d", n, maxCICOrder)
	case m < 1 || m > maxCICDelay:
		return nil, fmt.Errorf("chain: CIC differential delay M = %d; it must be 1..%d", m, maxCICDelay)
	case r < 1 || r > maxNotationFactor:
		return nil, fmt.Errorf("chain: CIC factor R = %d; it must be 1..%d", r, maxNotationFactor)
	case inBits < 1 || outBits < 2:
		return nil, fmt.Errorf("chain: CIC word widths in %d, out %d; the input must be >= 1 (1 bit: a noise-shaped converter's codes), the output >= 2", inBits, outBits)
	}
	// Bmax = ceil(N log2(RM) + Bin - 1); the width is Bmax + 1. The growth
	// ceil(N log2 RM) is the bit length of (RM)^N - 1, computed exactly.
	gain := new(big.Int).Exp(big.NewInt(int64(r)*int64(m)), big.NewInt(int64(n)), nil)
	growth := new(big.Int).Sub(gain, big.NewInt(1)).BitLen()
	full0 := inBits + growth
	if full0 > MaxCICBits {
		return nil, fmt.Errorf("chain: CIC N=%d R=%d M=%d on %d-bit input needs %d-bit registers; at most %d are supported", n, r, m, inBits, full0, MaxCICBits)
	}
	f2, l1 := cachedRegisterNorms(n, r*m)
	// peak = (RM)^N 2^(Bin-1), the largest |output| without truncations.
	return &cicPlanner{n: n, m: m, r: r, inBits: inBits, outBits: outBits, full0: full0,
		peak: gain.Lsh(gain, uint(inBits-1)), f2: f2, l1: l1}, nil
}

// slack returns 2^(full-1) - peak as a float64: the room the truncation
// errors have before the output wraps.
func (c *cicPlanner) slack(full int) float64 {
	s := new(big.Int).Lsh(big.NewInt(1), uint(full-1))
	f, _ := new(big.Float).SetInt(s.Sub(s, c.peak)).Float64()
	return f
}

// plan returns the plan with these drops at width full.
func (c *cicPlanner) plan(full int, dropped []int) CICPruning {
	n := c.n
	p := CICPruning{N: n, M: c.m, R: c.r, InputBits: c.inBits, OutputBits: min(c.outBits, full), FullBits: full,
		GuardBits: full - c.full0, Dropped: dropped, RegisterBits: make([]int, 2*n),
		VarianceFactors: append(append(make([]float64, 0, 2*n+1), c.f2...), 1),
		TruncationBound: truncationBound(n, dropped, c.l1)}
	for j := range p.RegisterBits {
		p.RegisterBits[j] = full - dropped[j]
	}
	return p
}

// PruneCIC returns the register widths of a CIC decimator of order n
// (1..16), differential delay m (1..16) and factor r (1..2^20, as
// ParseNotation allows) for an inBits input and an outBits output word (each
// >= 2): Hogenauer's (1981) pruning, widened where needed so that no input
// sequence within the input word can wrap the output. It is the one rule:
// NewCICStage (the report's register_bits, package cost's CIC memory, the
// optimiser's estimates) and package fixed's data-path plan and bit-true run
// all take their CIC widths from it. It refuses registers wider than
// MaxCICBits. Its work grows as N^2 R M (the register norms).
//
// Hogenauer's rule (HogenauerPruning): the output keeps the top outBits of
// the FullBits-bit result (so B_{2N+1} = FullBits - outBits LSBs are
// truncated there), and register j may drop B_j = floor(-log2 F_j + log2
// sigma_{2N+1} + (1/2) log2(6/N)) LSBs, with sigma_{2N+1}^2 =
// 2^(2 B_{2N+1}) / 12, so that no register's truncation noise at the output
// exceeds 1/(2N) of the output's own. Negative B_j are clamped to 0. An
// output word wider than FullBits is cut to FullBits.
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
// does). An output word at least Bin + ceil(N log2 RM) wide prunes nothing
// and needs no guard. The bound is computed in float64 with a relative
// margin of 1e-6 (the L1 norms are exact integers below 2^53).
func PruneCIC(n, m, r, inBits, outBits int) (CICPruning, error) {
	c, err := newCICPlanner(n, m, r, inBits, outBits)
	if err != nil {
		return CICPruning{}, err
	}
	const margin = 1 + 1e-6
	for g := 0; g <= maxCICGuardBits && c.full0+g <= MaxCICBits; g++ {
		d := hogenauerDrops(n, c.f2, c.full0+g, outBits)
		if e := truncationBound(n, d, c.l1); e*margin <= c.slack(c.full0+g) {
			return c.plan(c.full0+g, d), nil
		}
	}
	d := hogenauerDrops(n, c.f2, c.full0, outBits)
	s := c.slack(c.full0)
	for lim := d[2*n] - 1; ; lim-- {
		capped := append([]int(nil), d...)
		for j := 0; j < 2*n; j++ {
			capped[j] = min(capped[j], max(lim, 0))
		}
		if lim <= 0 || truncationBound(n, capped, c.l1)*margin <= s {
			return c.plan(c.full0, capped), nil
		}
	}
}

// HogenauerPruning returns Hogenauer's (1981, eqs. 16-21) plan alone, at his
// width Bin + ceil(N log2 RM) with no guard bits, and its TruncationBound,
// which may exceed the room below the output's MSB: such a plan can wrap
// (see PruneCIC, which widens it). It is the textbook reference the tests
// compare against; build hardware from PruneCIC. Its arguments and errors
// are PruneCIC's.
func HogenauerPruning(n, m, r, inBits, outBits int) (CICPruning, error) {
	c, err := newCICPlanner(n, m, r, inBits, outBits)
	if err != nil {
		return CICPruning{}, err
	}
	return c.plan(c.full0, hogenauerDrops(n, c.f2, c.full0, outBits)), nil
}
