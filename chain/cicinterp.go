package chain

import (
	"math/big"
)

// NewCICInterpolator returns the CIC interpolator of order n, differential
// delay m and factor r on inBits-wide input: N combs at the input rate, the
// rate raised by R (a zero after every input sample), N integrators at the
// output rate. Its registers are unpruned, at the widths of Hogenauer's
// (1981) interpolator case (InterpolatorCICBits), and its output keeps the
// top min(W_2N, outBits) bits of the last integrator (OutputBits). Errors
// in an interpolator's integrators accumulate without bound, so none of its
// registers is truncated (common practice; Hogenauer prunes only the
// decimator). Its response is the decimator's, [sin(pi f R M / F) /
// (R M sin(pi f / F))]^N at its output rate F, so Gain is shared. When n, m
// or r is below 1 RegisterBits is nil.
func NewCICInterpolator(n, m, r, inBits, outBits int) CICStage {
	st := CICStage{N: n, M: m, R: r, InputBits: inBits, Interpolator: true}
	if n < 1 || m < 1 || r < 1 {
		return st
	}
	st.RegisterBits = InterpolatorCICBits(n, m, r, inBits)
	st.OutputBits = min(st.RegisterBits[2*n-1], outBits)
	return st
}

// InterpolatorCICBits returns the widths of the 2N registers of a CIC
// interpolator on inBits-wide input, combs first: W_j = Bin + ceil(log2
// G_j), where G_j is Hogenauer's (1981) growth for the interpolator,
//
//	G_j = 2^j                            j = 1 .. N (the combs)
//	G_j = 2^(2N-j) (R M)^(j-N) / R       j = N+1 .. 2N (the integrators)
//
// (with M the differential delay; a comb doubles the largest magnitude
// whatever its delay). G_2N = (RM)^N / R is the DC gain. G_j bounds the
// largest magnitude at register j over every input within the input word
// (the exact worst case, the largest L1 norm of the impulse response's R
// phases, is checked against it by brute force in the tests), so no
// register wraps. A G_j below 1 keeps the input width. The ceiling is
// exact, in integers: ceil(log2 (a/b)) is the least k with a <= b 2^k.
func InterpolatorCICBits(n, m, r, inBits int) []int {
	w := make([]int, 2*n)
	rm := big.NewInt(int64(r) * int64(m))
	for j := 1; j <= 2*n; j++ {
		num := new(big.Int).Lsh(big.NewInt(1), uint(max(0, 2*n-j)))
		den := big.NewInt(1)
		if j <= n {
			num = new(big.Int).Lsh(big.NewInt(1), uint(j))
		} else {
			num.Mul(num, new(big.Int).Exp(rm, big.NewInt(int64(j-n)), nil))
			den = big.NewInt(int64(r))
		}
		w[j-1] = inBits + ceilLog2Ratio(num, den)
	}
	return w
}

// ceilLog2Ratio returns ceil(log2(a/b)) for a, b > 0, or 0 when a <= b.
func ceilLog2Ratio(a, b *big.Int) int {
	k := 0
	t := new(big.Int).Set(b)
	for t.Cmp(a) < 0 {
		t.Lsh(t, 1)
		k++
	}
	return k
}
