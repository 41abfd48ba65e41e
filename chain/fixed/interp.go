package fixed

import (
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
)

// CICInterpolation is a CIC interpolator's register plan
// (chain.NewCICInterpolator): N combs at its input rate, the rate raised
// by R (each comb output, then R-1 zeros), N integrators at its output
// rate. Every register is unpruned, at Hogenauer's (1981) interpolator
// width (chain.InterpolatorCICBits), so none wraps and nothing inside is
// truncated (common practice: an interpolator's integrators would
// accumulate any truncation error without bound); every register holds
// its value in units of the input's LSB. The output keeps the top
// OutputBits of the last integrator, truncated (floor).
type CICInterpolation struct {
	N, M, R   int
	InputBits int
	// OutputBits is the output word: min(FullBits(), the stage's output
	// word).
	OutputBits int
	// RegisterBits are the widths of the 2N registers in signal order: the
	// N combs', then the N integrators'.
	RegisterBits []int
}

// FullBits returns W_2N, the width of the last integrator, whose top
// OutputBits are the output.
func (p CICInterpolation) FullBits() int { return p.RegisterBits[2*p.N-1] }

// Gain returns the DC gain from input full scale to output full scale,
// (RM)^N / R / 2^(FullBits - InputBits), at most 1: the zero-stuffed
// input's DC is 1/R of the input's, and N boxcars of RM samples multiply
// it by (RM)^N.
func (p CICInterpolation) Gain() float64 {
	return math.Pow(float64(p.R*p.M), float64(p.N)) / float64(p.R) / math.Ldexp(1, p.FullBits()-p.InputBits)
}

// CIC limits shared with the chain package's (its notation's bounds).
const (
	maxCICOrder  = 16
	maxCICDelay  = 16
	maxCICFactor = 1 << 20
)

// planCICInterp plans a CIC interpolator on in-bit input with an ob-bit
// output word.
func planCICInterp(st Stage, in, ob int) (StageWidths, error) {
	switch {
	case st.N < 1 || st.N > maxCICOrder:
		return StageWidths{}, fmt.Errorf("CIC order N = %d: must lie in [1, %d]", st.N, maxCICOrder)
	case st.M < 1 || st.M > maxCICDelay:
		return StageWidths{}, fmt.Errorf("CIC differential delay M = %d: must lie in [1, %d]", st.M, maxCICDelay)
	case st.R > maxCICFactor:
		return StageWidths{}, fmt.Errorf("CIC factor R = %d: must lie in [1, %d]", st.R, maxCICFactor)
	case in < 2 || ob < 2:
		return StageWidths{}, fmt.Errorf("CIC word widths in %d, out %d: each must be >= 2", in, ob)
	}
	cs := chain.NewCICInterpolator(st.N, st.M, st.R, in, ob)
	widest := slices.Max(cs.RegisterBits)
	if widest > chain.MaxCICBits {
		return StageWidths{}, fmt.Errorf("CIC interpolator N=%d R=%d M=%d on %d-bit input needs %d-bit registers; at most %d are supported", st.N, st.R, st.M, in, widest, chain.MaxCICBits)
	}
	p := CICInterpolation{N: st.N, M: st.M, R: st.R, InputBits: in, OutputBits: cs.OutputBits, RegisterBits: cs.RegisterBits}
	full := p.FullBits()
	sw := StageWidths{CIC: true, R: st.R, InputBits: in, AccumulatorBits: widest, CICInterp: &p,
		OutputBits: p.OutputBits, OutputShift: full - p.OutputBits, Gain: p.Gain(), MeetsBands: true, FloatMeets: true}
	for j := 0; j < st.N; j++ {
		sw.Points = append(sw.Points, fmt.Sprintf("comb %d: full width (%d-bit register, wraps), at the input rate", j+1, p.RegisterBits[j]))
		// Each comb's M past inputs and each integrator's register, as
		// package cost counts a CIC interpolator's memory.
		sw.DataMemoryBits += st.M*p.RegisterBits[j] + p.RegisterBits[st.N+j]
	}
	sw.Points = append(sw.Points, fmt.Sprintf("rate raised by %d: each comb output, then %s", st.R, zeros(st.R-1)))
	for j := 0; j < st.N; j++ {
		sw.Points = append(sw.Points, fmt.Sprintf("integrator %d: full width (%d-bit register, sign-extended input, wraps), at the output rate", j+1, p.RegisterBits[st.N+j]))
	}
	sw.Points = append(sw.Points, fmt.Sprintf("output: truncate %d LSBs to %d bits", full-p.OutputBits, p.OutputBits))
	return sw, nil
}

// log2Floor returns floor(log2 l) for l >= 1.
func log2Floor(l int) int { return bits.Len(uint(l)) - 1 }

// phaseTaps returns the taps of polyphase phase p of h for factor l:
// h[p], h[p+l], h[p+2l], ...
func phaseTaps(h []int64, l, p int) []int64 {
	var out []int64
	for k := p; k < len(h); k += l {
		out = append(out, h[k])
	}
	return out
}

// interpAccumulator fills an interpolating FIR's accumulator, output shift,
// gain and first rounding points from its quantised coefficients (see the
// package doc, Data path): the accumulator holds the widest of its R
// phases' sums, the output is acc 2^floor(log2 R) / 2^Frac in the output
// word's units, so the shift is the decimating FIR's less floor(log2 R).
func interpAccumulator(sw *StageWidths, st Stage, in, ob int) error {
	cf := sw.Coefficients
	l := st.R
	acc := 0
	for p := 0; p < l && p < len(cf.Ints); p++ {
		acc = max(acc, AccumulatorBits(phaseTaps(cf.Ints, l, p), in))
	}
	fl := log2Floor(l)
	var dc int64
	for _, v := range cf.Ints {
		dc += v
	}
	sw.Gain = float64(dc) * math.Ldexp(1, fl-cf.Frac) / float64(l)
	if acc > MaxAccumulatorBits {
		return &AccumulatorError{DataBits: in, CoefBits: cf.Bits, NeedBits: acc}
	}
	sw.AccumulatorBits = acc
	sw.OutputShift = cf.Frac + in - ob - fl
	sw.Points = []string{
		fmt.Sprintf("input: zero-stuffed to %d times its rate (each sample, then %s), run as %d polyphase phases at the input rate", l, zeros(l-1), l),
		fmt.Sprintf("products and sum: exact per phase (%d x %d bits into %d-bit accumulator, the widest phase's)", in, cf.Bits, acc),
	}
	if st.HalfBand && !st.scaledHalfBand {
		sw.Points = append(sw.Points, "centre phase: the centre tap 1/2 passes the input exactly (a shift, no multiply)")
	}
	if fl > 0 {
		sw.Points = append(sw.Points, fmt.Sprintf("gain: the output is the phase sum times 2^%d (each phase's DC gain is about 1/%d), folded into the output shift", fl, l))
	}
	return nil
}

// firInterpInt is an interpolating FIR with exact products and sum, run a
// block at a time: output nL + p is sum_k h[p + Lk] x[n - k] (inputs before
// the first are zero), rounded half up at bit shift and saturated to ob
// bits. accLo and accHi record the extremes the accumulator reached, for
// the tests that drive it with worst-case inputs.
type firInterpInt struct {
	h            []int64
	l, shift     int
	lo, hi       int64
	buf          []int64 // the last k-1 inputs, then the block
	k            int     // taps per phase, ceil(len(h)/l)
	accLo, accHi int64
	sat          int // outputs saturated
}

func newFIRInterpInt(h []int64, l, shift, ob int) *firInterpInt {
	hi := int64(1)<<(ob-1) - 1
	k := (len(h) + l - 1) / l
	return &firInterpInt{h: h, l: l, shift: shift, lo: -hi - 1, hi: hi, k: k, buf: make([]int64, k-1)}
}

func (s *firInterpInt) run(x, out []int64) []int64 {
	kk := s.k - 1
	s.buf = append(s.buf[:kk], x...)
	for i := range x {
		j := kk + i // x[i]'s place in buf
		for p := 0; p < s.l; p++ {
			var acc int64
			for q, b := p, j; q < len(s.h); q, b = q+s.l, b-1 {
				acc += s.h[q] * s.buf[b]
			}
			s.accLo, s.accHi = min(s.accLo, acc), max(s.accHi, acc)
			y, sat := roundSat(acc, s.shift, s.lo, s.hi)
			if sat {
				s.sat++
			}
			out = append(out, y)
		}
	}
	copy(s.buf, s.buf[len(s.buf)-kk:])
	s.buf = s.buf[:kk]
	return out
}

// saturated returns how many outputs saturated so far.
func (s *firInterpInt) saturated() int { return s.sat }

// roundSat rounds acc half up at bit shift (shift > 0), or shifts it left
// (shift < 0), and saturates it to [lo, hi], saying whether it saturated;
// a left shift that would leave the range saturates without overflowing.
func roundSat(acc int64, shift int, lo, hi int64) (int64, bool) {
	switch {
	case shift > 0:
		acc = (acc + int64(1)<<(shift-1)) >> uint(shift)
	case shift < 0:
		sh := uint(-shift)
		switch {
		case acc > hi>>sh:
			return hi, true
		case acc < lo>>sh:
			return lo, true
		}
		acc <<= sh
	}
	if acc > hi {
		return hi, true
	}
	if acc < lo {
		return lo, true
	}
	return acc, false
}

// firInterpFloat is firInterpInt's float chain: output nL + p is
// sum_k h[p + Lk] x[n - k], in float64.
type firInterpFloat struct {
	h   []float64
	l   int
	buf []float64
	k   int
}

func newFIRInterpFloat(h []float64, l int) *firInterpFloat {
	k := (len(h) + l - 1) / l
	return &firInterpFloat{h: h, l: l, k: k, buf: make([]float64, k-1)}
}

func (s *firInterpFloat) run(x, out []float64) []float64 {
	kk := s.k - 1
	s.buf = append(s.buf[:kk], x...)
	for i := range x {
		j := kk + i
		for p := 0; p < s.l; p++ {
			var acc float64
			for q, b := p, j; q < len(s.h); q, b = q+s.l, b-1 {
				acc += s.h[q] * s.buf[b]
			}
			out = append(out, acc)
		}
	}
	copy(s.buf, s.buf[len(s.buf)-kk:])
	s.buf = s.buf[:kk]
	return out
}

// cicInterpInt is a CIC interpolator in int64 (every register at most 63
// bits): per input sample the N combs (each wrapped to its width), then R
// outputs, the comb output and R-1 zeros through the N integrators (each
// wrapped to its width), each output the last integrator shifted right
// (floor) by shift.
type cicInterpInt struct {
	n, r  int
	wrap  []uint    // 64 - RegisterBits[j]
	hist  [][]int64 // per comb: its last M inputs, circular
	pos   int
	integ []int64
	shift uint
}

func newCICInterpInt(p *CICInterpolation) *cicInterpInt {
	s := &cicInterpInt{n: p.N, r: p.R, hist: make([][]int64, p.N), integ: make([]int64, p.N), shift: uint(p.FullBits() - p.OutputBits)}
	for j := range s.hist {
		s.hist[j] = make([]int64, p.M)
	}
	for _, b := range p.RegisterBits {
		s.wrap = append(s.wrap, uint(64-b))
	}
	return s
}

func (s *cicInterpInt) run(x, out []int64) []int64 {
	n := s.n
	for _, v := range x {
		for j := 0; j < n; j++ {
			old := s.hist[j][s.pos]
			s.hist[j][s.pos] = v
			v = (v - old) << s.wrap[j] >> s.wrap[j]
		}
		s.pos++
		if s.pos == len(s.hist[0]) {
			s.pos = 0
		}
		for k := 0; k < s.r; k++ {
			u := v
			if k > 0 {
				u = 0
			}
			for j := 0; j < n; j++ {
				w := s.wrap[n+j]
				s.integ[j] = (s.integ[j] + u) << w >> w
				u = s.integ[j]
			}
			out = append(out, u>>s.shift)
		}
	}
	return out
}

// cicInterpInt128 is cicInterpInt for registers of 64 to 127 bits, in
// two's-complement 128-bit arithmetic with the same wraps.
type cicInterpInt128 struct {
	p     *CICInterpolation
	hist  [][]int128
	pos   int
	integ []int128
}

func newCICInterpInt128(p *CICInterpolation) *cicInterpInt128 {
	s := &cicInterpInt128{p: p, hist: make([][]int128, p.N), integ: make([]int128, p.N)}
	for j := range s.hist {
		s.hist[j] = make([]int128, p.M)
	}
	return s
}

func (s *cicInterpInt128) run(x, out []int64) []int64 {
	p := s.p
	n, shift := p.N, p.FullBits()-p.OutputBits
	for _, x0 := range x {
		v := int128{hi: x0 >> 63, lo: uint64(x0)}
		for j := 0; j < n; j++ {
			old := s.hist[j][s.pos]
			s.hist[j][s.pos] = v
			v = v.sub(old).wrap(p.RegisterBits[j])
		}
		s.pos = (s.pos + 1) % p.M
		for k := 0; k < p.R; k++ {
			u := v
			if k > 0 {
				u = int128{}
			}
			for j := 0; j < n; j++ {
				s.integ[j] = s.integ[j].add(u).wrap(p.RegisterBits[n+j])
				u = s.integ[j]
			}
			// The output word is at most 32 bits: its low word holds it.
			out = append(out, int64(u.shr(shift).wrap(p.OutputBits).lo))
		}
	}
	return out
}

// newCICInterpFilter returns the integer CIC interpolator of p in the
// narrowest arithmetic that holds its registers.
func newCICInterpFilter(p *CICInterpolation) intFilter {
	if slices.Max(p.RegisterBits) > 63 {
		return newCICInterpInt128(p)
	}
	return newCICInterpInt(p)
}

// cicModelWidth is the widest register of a CIC stage, which the integer
// model must hold.
func cicModelWidth(sw *StageWidths) int {
	if sw.CICInterp != nil {
		return slices.Max(sw.CICInterp.RegisterBits)
	}
	return sw.Pruning.FullBits
}

// cicTooWide says that sw's CIC needs more bits (cicModelWidth) than what
// (the bit-true run, the integer model) holds (cicModelBits). A
// decimating CIC is worked at its full-precision width, wider than the
// pruned registers its word lengths list.
func cicTooWide(sw *StageWidths, what string) string {
	if sw.CICInterp == nil {
		return fmt.Sprintf("the CIC needs %d bits (its full-precision width; its pruned registers are narrower), more than the %d bits %s holds", cicModelWidth(sw), cicModelBits(sw), what)
	}
	return fmt.Sprintf("the CIC's %d-bit registers are more than the %d bits %s holds", cicModelWidth(sw), cicModelBits(sw), what)
}

// cicFloatScale is the scale of a CIC's float model (its equivalent FIR of
// N boxcars of RM ones): 2^-(the LSBs from the input word to the output
// word's full scale), so that its DC gain is StageWidths.Gain.
func cicFloatScale(sw *StageWidths) float64 {
	if p := sw.CICInterp; p != nil {
		return math.Ldexp(1, -(p.FullBits() - p.InputBits))
	}
	return math.Ldexp(1, -(sw.Pruning.FullBits - sw.Pruning.InputBits))
}

// zeros says "1 zero" or "n zeros".
func zeros(n int) string {
	if n == 1 {
		return "1 zero"
	}
	return fmt.Sprintf("%d zeros", n)
}
