package chain

import (
	"fmt"
	"math/bits"
)

// CICForm is how a CIC stage is built. Both forms have the same transfer
// function, ((1 - z^-RM)/(1 - z^-1))^N, so its response, its bounds in
// Analyze and its requirements do not depend on the form; its registers,
// adders and cost do.
type CICForm int

const (
	// Recursive is Hogenauer's (1981) CIC: N integrators at the input rate,
	// then N combs at the output rate, registers pruned by PruneCIC. It is
	// the zero value.
	Recursive CICForm = iota
	// NonRecursive is a CIC with M = 1 and R = 2^k built as k cascaded
	// sub-stages, each (1 + z^-1)^N followed by a decimation by 2: no
	// integrator at the input rate, each later sub-stage at half the rate of
	// the one before. (1 - z^-R)/(1 - z^-1) = prod_{i<k} (1 + z^-(2^i)), and
	// the noble identity moves each factor (1 + z^-(2^i))^N behind the i
	// decimations by 2 before it, where it becomes (1 + z^-1)^N. Sub-stage i
	// (1..k) keeps full precision: its output is InputBits + N i bits wide,
	// so the last one is Width() = InputBits + N log2 R bits and nothing
	// wraps or is dropped inside (NonRecursiveBits).
	NonRecursive
)

// String returns "recursive" or "nonrecursive".
func (f CICForm) String() string {
	if f == NonRecursive {
		return "nonrecursive"
	}
	return "recursive"
}

// NonRecursiveOK returns nil when a CIC of differential delay m and factor
// r can be built in the non-recursive form (m = 1, r = 2^k with k >= 1),
// and otherwise an error that says why.
func NonRecursiveOK(m, r int) error {
	if m != 1 {
		return fmt.Errorf("a non-recursive CIC needs differential delay M = 1, not %d (it is built from (1 + z^-1)^N sub-stages decimating by 2)", m)
	}
	if r < 2 || r&(r-1) != 0 {
		return fmt.Errorf("a non-recursive CIC needs a factor R that is a power of two (2, 4, 8, ...), not %d (it is built from sub-stages decimating by 2)", r)
	}
	return nil
}

// NonRecursiveBits returns the output width of each of the log2 R
// sub-stages of a non-recursive CIC of order n and factor r = 2^k on
// inBits-wide input, full precision: inBits + n i for sub-stage i = 1..k
// (each (1 + z^-1)^N has DC gain 2^N, and its largest output magnitude,
// 2^N 2^(Bin-1) for an all-negative full-scale input, fits in Bin + N
// bits).
func NonRecursiveBits(n, r, inBits int) []int {
	k := bits.TrailingZeros(uint(r))
	w := make([]int, k)
	for i := range w {
		w[i] = inBits + n*(i+1)
	}
	return w
}

// NewCICStageForm is NewCICStage for either form. For NonRecursive it
// returns an error unless NonRecursiveOK(m, r) holds and n lies in 1..16;
// its RegisterBits are the sub-stages' output widths (NonRecursiveBits),
// GuardBits is 0 and OutputBits is min(Width(), outBits): the output keeps
// the top OutputBits of the full-precision result (truncated, floor), so
// its DC gain is R^N / 2^(N log2 R) = 1 from input to output full scale.
func NewCICStageForm(form CICForm, n, m, r, inBits, outBits int) (CICStage, error) {
	switch form {
	case Recursive:
		return NewCICStage(n, m, r, inBits, outBits), nil
	case NonRecursive:
		if err := NonRecursiveOK(m, r); err != nil {
			return CICStage{}, fmt.Errorf("chain: %v", err)
		}
		if n < 1 || n > maxCICOrder {
			return CICStage{}, fmt.Errorf("chain: CIC order N = %d; it must be 1..%d", n, maxCICOrder)
		}
		st := CICStage{N: n, M: m, R: r, Form: NonRecursive, InputBits: inBits,
			RegisterBits: NonRecursiveBits(n, r, inBits)}
		st.OutputBits = min(st.RegisterBits[len(st.RegisterBits)-1], outBits)
		return st, nil
	}
	return CICStage{}, fmt.Errorf("chain: CIC form %d is not one of Recursive, NonRecursive", int(form))
}
