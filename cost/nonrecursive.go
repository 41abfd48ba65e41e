package cost

import (
	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

// SubStage is one sub-stage of a non-recursive CIC ((1 + z^-1)^N
// decimating by 2; chain.NonRecursive) as Price counts it.
type SubStage struct {
	InputRate  float64 // Hz
	InputBits  int     // its input word
	OutputBits int     // its output word, InputBits + N (full precision)
	// Lanes is Lanes of its input rate; OutputLanes of its output rate, the
	// copies of its adders at the clock.
	Lanes, OutputLanes int
	// AddsPerOutput is NonRecursiveAdds(N): one polyphase output's adds.
	AddsPerOutput int
	// Adders is its hardware adders: AddsPerOutput times OutputLanes.
	Adders int
	// RegisterBits is its delay line: its N past inputs, N InputBits.
	RegisterBits int
}

// NonRecursiveAdds is the adds one output of a sub-stage (1 + z^-1)^N
// decimating by 2 takes in polyphase form, y[m] = sum_j C(N, j) x[2m - j]:
// the N + 1 terms' symmetric pairs pre-added (floor((N+1)/2) adds), each
// pair's binomial C(N, j) made by shifts and adds in canonical signed
// digit (its nonzero digits less one, mcm.CSDAdders of it alone: each
// multiplies a different sum, so nothing is shared), and the
// ceil((N+1)/2) products summed (one add fewer): N plus the CSD adds.
// N = 1..6 give 1, 2, 4, 5, 7, 9 (against 2N - 1 = 1, 3, 5, 7, 9, 11 for N
// sections (1 + z^-1) with only the last computed at the output rate).
func NonRecursiveAdds(n int) int {
	a, c := n, int64(1)
	for j := 1; j <= n/2; j++ {
		c = c * int64(n-j+1) / int64(j)
		a += mcm.CSDAdders([]int64{c})
	}
	return a
}

// NonRecursiveSubStages returns the sub-stages of a non-recursive CIC v
// (v.Form chain.NonRecursive) whose input runs at rate Hz on inBits-wide
// words (v.InputBits when set), at clock Hz (0: none).
func NonRecursiveSubStages(v chain.CICStage, inBits int, rate, clock float64) []SubStage {
	if v.InputBits > 0 {
		inBits = v.InputBits
	}
	widths := chain.NonRecursiveBits(v.N, v.R, inBits)
	a := NonRecursiveAdds(v.N)
	subs := make([]SubStage, len(widths))
	w := inBits
	for i, ow := range widths {
		s := SubStage{InputRate: rate, InputBits: w, OutputBits: ow, Lanes: Lanes(rate, clock),
			OutputLanes: Lanes(rate/2, clock), AddsPerOutput: a, RegisterBits: v.N * w}
		s.Adders = a * s.OutputLanes
		subs[i] = s
		w, rate = ow, rate/2
	}
	return subs
}

// nonRecursiveTotals sums sub-stages: adds per output of the whole CIC
// (sub-stage i makes R/2^i outputs per CIC output), delay-line words and
// bits, and hardware adders.
func nonRecursiveTotals(subs []SubStage, n, r int) (addsPerOut float64, words, bits, adders int) {
	per := r
	for _, s := range subs {
		per /= 2
		addsPerOut += float64(s.AddsPerOutput * per)
		words += n
		bits += s.RegisterBits
		adders += s.Adders
	}
	return addsPerOut, words, bits, adders
}

// NonRecursiveFigures is Price's count of a non-recursive CIC for one real
// filter: its adds per CIC output, its memory (words and bits: the
// sub-stages' delay lines, shared by their lanes) and its hardware adders
// at the clock. The estimate tier calls it too.
func NonRecursiveFigures(v chain.CICStage, inBits int, rate, clock float64) (addsPerOut float64, words, bits, adders int) {
	return nonRecursiveTotals(NonRecursiveSubStages(v, inBits, rate, clock), v.N, v.R)
}
