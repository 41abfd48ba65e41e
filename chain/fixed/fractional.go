package fixed

import (
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// The fractional stage of a cascade (package doc, Fractional stages): a
// polyphase L/M stage or a Farrow stage, the last of a decimation cascade
// and the first of an interpolation cascade, where it is the transpose,
// or a polyphase stage next to the CIC.

// fractional says whether st is a fractional stage.
func (st Stage) fractional() bool { return st.Up > 0 }

// fracView returns a fractional stage's rate change in its chain's
// decimation view, L/M (chain.PolyphaseStage's Up and Down): the stage's
// own Up and Down in a decimation cascade; swapped in an interpolation
// cascade, whose stage is the transpose and changes the rate by M/L.
func (st Stage) fracView() (l, m int) {
	if st.Interpolate {
		return st.Down, st.Up
	}
	return st.Up, st.Down
}

// Fractional says whether the cascade has a fractional stage (Stage.Up
// set): the hand-off packages refuse it, being written for chains of
// integer stages only.
func (c Cascade) Fractional() bool {
	_, i := c.fracStage()
	return i >= 0
}

// fraction returns the cascade's input rate over its output rate as
// num/den (not reduced): its Ratio over 1 for an integer cascade, Ratio
// Down/Up when it ends in a fractional stage.
func (c Cascade) fraction() (num, den int) {
	num, den = c.Ratio(), 1
	for _, st := range c.Stages {
		if st.fractional() {
			num, den = num*st.Down, den*st.Up
		}
	}
	return num, den
}

// fracStage returns the cascade's fractional stage and its index, or -1.
func (c Cascade) fracStage() (Stage, int) {
	for i, st := range c.Stages {
		if st.fractional() {
			return st, i
		}
	}
	return Stage{}, -1
}

// inputsFor returns the input samples a decimation cascade needs to make
// nout output samples: nout times its ratio, rounded up, plus the
// fractional stage's look-ahead (a Farrow output waits for the inputs
// N/2 past its time) and one sample of every stage's rate for the
// rounding of the rates.
func (c Cascade) inputsFor(nout int) int {
	num, den := c.fraction()
	n := (nout*num + den - 1) / den
	if st, _ := c.fracStage(); st.fractional() {
		n += (len(st.Farrow0())/2 + 2) * c.Ratio()
	}
	return n
}

// Farrow0 returns a Farrow stage's row 0 (nil otherwise).
func (st Stage) Farrow0() []float64 {
	if len(st.Farrow) == 0 {
		return nil
	}
	return st.Farrow[0]
}

// fracFromChain is the fractional stage s (chain.PolyphaseStage or
// chain.FarrowStage), at place k in signal order. In an interpolation
// chain (interp) it is the transpose: its Up and Down are swapped, so that
// they state its own rate change in signal order (fracView gives the
// chain's back), and its taps and bands stay the chain's.
func fracFromChain(s chain.Stage, k int, interp bool) (Stage, error) {
	var req chain.FractionalRequirement
	var st Stage
	switch v := s.(type) {
	case chain.PolyphaseStage:
		if len(v.Taps) == 0 {
			return Stage{}, fmt.Errorf("fixed: stage %d has no taps (an estimate cannot be quantised)", k+1)
		}
		st = Stage{R: 1, Up: v.Up, Down: v.Down, Taps: v.Taps}
		req = v.Req
	case chain.FarrowStage:
		if err := v.Filter.Validate(); err != nil {
			return Stage{}, fmt.Errorf("fixed: stage %d has no usable coefficients (an estimate cannot be quantised): %v", k+1, err)
		}
		if _, err := chain.FarrowPrototype(v); err != nil {
			return Stage{}, fmt.Errorf("fixed: stage %d: %v", k+1, err)
		}
		st = Stage{R: 1, Up: v.Up, Down: v.Down, Farrow: v.Filter.Coef}
		req = v.Req
	}
	if st.Up < 1 || st.Down < 1 || st.Up > chain.MaxFarrowUp {
		return Stage{}, fmt.Errorf("fixed: stage %d: rate change %d/%d: Up must lie in [1, %d] and Down be at least 1", k+1, st.Up, st.Down, chain.MaxFarrowUp)
	}
	if !(req.Dp > 0) || !(req.Ds > 0) || !(req.Passband > 0) || !(req.InputRate > 0) {
		return Stage{}, fmt.Errorf("fixed: stage %d carries no requirement (Dp %g, Ds %g, passband %g Hz)", k+1, req.Dp, req.Ds, req.Passband)
	}
	st.Bands = fracBands(req, st.Up)
	if interp {
		st.Up, st.Down = st.Down, st.Up
	}
	return st, nil
}

// fracBands are the bands a fractional stage's (equivalent) prototype
// meets, at Up times its input rate, as the chain package designs the
// polyphase prototype (chain.FractionalRequirement.Bands).
func fracBands(r chain.FractionalRequirement, up int) []remez.Band {
	return r.Bands(up)
}

// planFractional plans the fractional stage st at input rate rate.
func planFractional(st Stage, rate float64, in, ob, coefBits int, s Settings, minBits int) (StageWidths, error) {
	if st.Farrow != nil {
		return planFarrow(st, rate, in, ob, coefBits, s, minBits)
	}
	return planPolyphase(st, rate, in, ob, coefBits, s, minBits)
}

// planPolyphase plans a polyphase L/M stage: its prototype times L
// quantised as an FIR's taps (planFIR, the bands scaled by L; "auto"
// searches from widthEstimate, narrowestWidth),
// each output the exact sum of one phase's products in an accumulator
// that holds every phase's extremes, rounded half up at OutputShift and
// saturated. An interpolation cascade's stage (the transpose of the
// chain's L/M) is the polyphase M/L stage of the same prototype: the same
// rules with L and M swapped (st's own Up and Down).
func planPolyphase(st Stage, rate float64, in, ob, coefBits int, s Settings, minBits int) (StageWidths, error) {
	l := st.Up
	scaled := scaledStage(st, float64(l))
	scaled.R, scaled.Interpolate = 1, false
	prate := rate * float64(l)
	sw, err := planFIR(scaled, prate, in, ob, coefBits, s, minBits)
	if err != nil {
		return StageWidths{}, err
	}
	cf := sw.Coefficients
	sw.R, sw.Up, sw.Down = 1, l, st.Down
	acc := 0
	sw.PhaseGainMin, sw.PhaseGainMax = math.Inf(1), math.Inf(-1)
	var total int64
	for p := 0; p < l; p++ {
		ph := phaseTaps(cf.Ints, l, p)
		acc = max(acc, AccumulatorBits(ph, in))
		var g int64
		for _, v := range ph {
			g += v
		}
		total += g
		gf := math.Ldexp(float64(g), -cf.Frac)
		sw.PhaseGainMin, sw.PhaseGainMax = math.Min(sw.PhaseGainMin, gf), math.Max(sw.PhaseGainMax, gf)
	}
	if acc > MaxAccumulatorBits {
		return StageWidths{}, &AccumulatorError{DataBits: in, CoefBits: cf.Bits, NeedBits: acc}
	}
	sw.AccumulatorBits = acc
	sw.OutputShift = cf.Frac + in - ob
	sw.Gain = math.Ldexp(float64(total), -cf.Frac) / float64(l)
	n := len(cf.Ints)
	k := (n + l - 1) / l
	sw.Points = []string{
		fmt.Sprintf("coefficients: the prototype times %d (its phases' DC gains %.6g to %.6g, mean %.9g)", l, sw.PhaseGainMin, sw.PhaseGainMax, sw.Gain),
		fmt.Sprintf("output m: phase r = m*%d mod %d, sum_s h[r + %d s] x[floor(m*%d/%d) - s], at most %d products, exact (%d x %d bits into %d-bit accumulator, the widest phase's)", st.Down, l, l, st.Down, l, k, in, cf.Bits, acc),
		roundPoint(sw.OutputShift, ob),
	}
	// One phase per output: ceil(N/L) multiplies, no pre-adder (a phase's
	// taps are not pairwise equal). The prototype's symmetry pairs phase r
	// with phase (N-1-r) mod L read backwards, so half the coefficients
	// are stored unless NoSymmetry.
	sw.MultiplierA, sw.MultiplierB = in, cf.Bits
	sw.MultipliesPerSample = k
	sw.CoefMemoryBits = (n + 1) / 2 * cf.Bits
	if s.NoSymmetry {
		sw.CoefMemoryBits = n * cf.Bits
	}
	sw.DataMemoryBits = k * in
	if st.Interpolate {
		// Priced as the transpose, as package cost prices it, per input
		// sample (the stage's low rate): each input multiplied by the
		// ceil(N/M) taps of one phase of the chain's L/M stage into as
		// many partial sums, which are the data memory. Its outputs are
		// the same exact sums, so the figures above hold bit for bit.
		kt := (n + st.Down - 1) / st.Down
		sw.MultipliesPerSample = kt
		sw.DataMemoryBits = kt * acc
		sw.Points = append(sw.Points, fmt.Sprintf("built as the transpose: each input times one phase's %d taps into %d partial sums of %d bits", kt, kt, acc))
	}
	return sw, nil
}

// roundPoint states an FIR-like output's rounding point.
func roundPoint(shift, ob int) string {
	switch {
	case shift > 0:
		return fmt.Sprintf("output: round half up, dropping %d LSBs, then saturate to %d bits", shift, ob)
	case shift == 0:
		return fmt.Sprintf("output: no rounding, saturate to %d bits", ob)
	}
	return fmt.Sprintf("output: shift left %d bits, saturate to %d bits", -shift, ob)
}

// muCode returns the quantised fractional delay of a Farrow stage's phase
// r (its outputs m with m Down mod Up = r, a time r/Up past an input
// sample) as a code of muBits bits: round(r 2^muBits / Up), halves up, in
// [0, 2^muBits]; 2^muBits (a time one sample on, mu 0) only when r/Up
// rounds to 1.
func muCode(r, up, muBits int) int64 {
	return (int64(r)<<(muBits+1) + int64(up)) / (2 * int64(up))
}

// farrowTiming returns, for each phase k = m mod Up of a Farrow stage's
// outputs, the whole input samples q_k past (m / Up) Down at which its
// time falls and its mu code: output m is at input sample
// b = (m / Up) Down + q_k plus mu_k / 2^muBits.
func farrowTiming(up, down, muBits int) (q []int, mu []int64) {
	q, mu = make([]int, up), make([]int64, up)
	for k := range up {
		t := k * down // k < 256 and down < 2^31: no overflow
		q[k] = t / up
		mu[k] = muCode(t%up, up, muBits)
		if mu[k] == int64(1)<<muBits {
			q[k]++
			mu[k] = 0
		}
	}
	return q, mu
}

// defaultMuBits is a Farrow stage's mu width for coefficient width bits:
// Settings.MuBits, else bits, at least ceil(log2 up) so that the phases
// stay apart; at most 32.
func defaultMuBits(bits, up int, s Settings) int {
	if s.MuBits > 0 {
		return s.MuBits
	}
	return min(32, max(bits, bitsLen(up-1)))
}

func bitsLen(v int) int { return bits.Len(uint(v)) }

// farrowQuantProto returns the polyphase prototype (at Up times the input
// rate, unit gain) a Farrow stage of quantised coefficients cf (rows of
// n) is at its quantised output times, the Horner roundings left out:
// p[j] = h_q(floor(j/Up) - n/2 + mu_q(j mod Up)) / Up, h_q the structure's
// impulse response with the integer coefficients (farrow.Convention) and
// mu_q(r) = muCode(r) / 2^muBits; the taps chain.FarrowPrototype gives
// for exact coefficients and times, delayed by one input sample (Up
// taps): a phase whose mu rounds up to 1 reads one input sample later
// (mu 0, the next segment) and needs the room. The delay changes no gain.
func farrowQuantProto(cf Coefficients, rows, n, up, muBits int) []float64 {
	scale := math.Ldexp(1, -cf.Frac) / float64(up)
	out := make([]float64, up*(n+1))
	mus := make([]float64, up)
	for r := range mus {
		mus[r] = math.Ldexp(float64(muCode(r, up, muBits)), -muBits)
	}
	for j := range out {
		s := j/up - 1 - n/2
		mu := mus[j%up]
		if mu == 1 {
			s, mu = s+1, 0
		}
		seg := n/2 - 1 - s
		if seg < 0 || seg >= n {
			continue
		}
		v := 0.0
		for p := rows - 1; p >= 0; p-- {
			v = v*mu + float64(cf.Ints[p*n+seg])
		}
		out[j] = v * scale
	}
	return out
}

// farrowFloatProto is chain.FarrowPrototype of the stage's float rows (in
// the chain's decimation view, fracView).
func farrowFloatProto(st Stage) []float64 {
	l, m := st.fracView()
	taps, err := chain.FarrowPrototype(chain.FarrowStage{Up: l, Down: m, Filter: farrow.Filter{Coef: st.Farrow}})
	if err != nil {
		panic(fmt.Sprintf("fixed: a Farrow stage FromChain took is refused by chain.FarrowPrototype: %v", err))
	}
	return taps
}

// planFarrow plans a Farrow stage (package doc, Fractional stages): its
// coefficient matrix at one width and scale, then the decimation data path
// (Horner's rule) or, in an interpolation cascade, the transposed one
// (planFarrowT).
func planFarrow(st Stage, rate float64, in, ob, coefBits int, s Settings, minBits int) (StageWidths, error) {
	rows, n := len(st.Farrow), len(st.Farrow[0])
	l, m := st.fracView()
	// An interpolation cascade's stage carries the transpose's gain M/L
	// (the rate raised) in its coefficients, as a polyphase stage carries
	// its L; its prototype is compared with the bands at unit gain.
	g := 1.0
	if st.Interpolate {
		g = float64(m) / float64(l)
	}
	flat := make([]float64, 0, rows*n)
	for _, r := range st.Farrow {
		for _, v := range r {
			flat = append(flat, v*g)
		}
	}
	prate := rate * float64(st.Up) // L times the chain's Fm either way
	density := s.Quant.Density
	sw := StageWidths{R: 1, Up: st.Up, Down: st.Down, Farrow: true, FarrowRows: rows, InputBits: in, OutputBits: ob}
	var bands []remez.Band
	var err error
	sw.FloatDeviations, sw.FloatMeets, bands, err = floatTargets(s.Quant.ctx, farrowFloatProto(st), prate, st.Bands, density)
	if err != nil {
		return StageWidths{}, err
	}
	// proto is the quantised stage's prototype at width b.
	proto := func(b int) (Coefficients, int, []float64) {
		cf := Quantize(flat, b)
		mb := defaultMuBits(b, l, s)
		p := farrowQuantProto(cf, rows, n, l, mb)
		if g != 1 {
			for j := range p {
				p[j] /= g
			}
		}
		return cf, mb, p
	}
	try := func(b int) (Coefficients, int, []float64, bool) {
		cf, mb, p := proto(b)
		dev, err := DeviationsContext(s.Quant.ctx, p, prate, bands, density)
		if err != nil {
			return cf, mb, nil, false // stopped: the width search says so
		}
		return cf, mb, dev, Meets(dev, bands)
	}
	var cf Coefficients
	var mb int
	if coefBits != 0 {
		cf, mb, sw.Deviations, sw.MeetsBands = try(coefBits)
	} else {
		lo, hi := max(2, s.Quant.MinBits, minBits), s.Quant.MaxBits
		if hi == 0 {
			hi = 32
		}
		if lo > hi || hi > MaxBits {
			return StageWidths{}, fmt.Errorf("fixed: coefficient widths [%d, %d] must lie within [2, %d]", lo, hi, MaxBits)
		}
		b, err := narrowestWidth(lo, hi, widthEstimate(flat, bands, sw.FloatDeviations), s.Quant, func(b int) bool {
			_, _, p := proto(b)
			return meetsBands(s.Quant.ctx, p, prate, bands, density)
		})
		if err != nil {
			return StageWidths{}, err
		}
		c0, m0, d0, _ := try(b)
		cf, mb, sw.Deviations, sw.MeetsBands = c0, m0, d0, true
	}
	sw.MeetsBands = sw.MeetsBands && sw.FloatMeets
	sw.Coefficients, sw.MuBits = cf, mb
	if st.Interpolate {
		return planFarrowT(sw, st, in, ob)
	}
	// Branch accumulators, each as an FIR's; the Horner register holds
	// the sum of the branches' largest magnitudes (mu < 1, and a product
	// rounded to the register's LSB is at most its operand in magnitude).
	vmax := make([]uint64, rows)
	acc := 0
	for p := range rows {
		row := cf.Ints[p*n : (p+1)*n]
		acc = max(acc, AccumulatorBits(row, in))
		var pos, neg uint64
		for _, v := range row {
			if v > 0 {
				pos += uint64(v)
			} else {
				neg += uint64(-v)
			}
		}
		vmax[p] = max(pos, neg) << (in - 1)
	}
	if acc > MaxAccumulatorBits {
		return StageWidths{}, &AccumulatorError{DataBits: in, CoefBits: cf.Bits, NeedBits: acc}
	}
	sw.AccumulatorBits = acc
	sw.OutputShift = cf.Frac + in - ob
	// The product of the Horner register and the unsigned mu word must
	// fit 63 bits: the branch sums lose their lowest bits (rounded half
	// up, which can add 1/2 to each) first when it would not; at least two
	// guard bits stay below the output's LSB.
	for drop := 0; ; drop++ {
		var sum uint64
		for _, v := range vmax {
			sum += v>>drop + 1
		}
		if drop == 0 {
			sum -= uint64(rows)
		}
		sw.HornerBits, sw.HornerDrop = bits.Len64(sum)+1, drop
		if sw.HornerBits+mb <= 63 {
			break
		}
	}
	if sw.OutputShift-sw.HornerDrop < 2 {
		return StageWidths{}, fmt.Errorf("farrow stage: a %d-bit Horner register times a %d-bit mu leaves %s below the output's LSB; at least 2 are needed (narrower coefficients or mu)", sw.HornerBits, mb, units.Count(sw.OutputShift-sw.HornerDrop, "guard bit", "guard bits"))
	}
	rowSum := make([]float64, rows)
	for p := range rows {
		var g int64
		for _, v := range cf.Ints[p*n : (p+1)*n] {
			g += v
		}
		rowSum[p] = math.Ldexp(float64(g), -cf.Frac)
	}
	sw.PhaseGainMin, sw.PhaseGainMax = math.Inf(1), math.Inf(-1)
	var total float64
	for r := range l {
		// The phase r = k Down mod Up of the prototype meets mu_q(r); every
		// r appears once over k = 0..Up-1 (Up and Down coprime).
		mu := math.Ldexp(float64(muCode(r, l, mb)), -mb)
		g := 0.0
		for p := rows - 1; p >= 0; p-- {
			g = g*mu + rowSum[p]
		}
		if mu == 1 {
			g = rowSum[0]
		}
		total += g
		sw.PhaseGainMin, sw.PhaseGainMax = math.Min(sw.PhaseGainMin, g), math.Max(sw.PhaseGainMax, g)
	}
	sw.Gain = total / float64(l)
	exact := fmt.Sprintf("exact (L = %d, the stage's interpolation, a power of two within the word)", l)
	if l&(l-1) != 0 || bitsLen(l-1) > mb {
		exact = fmt.Sprintf("rounded half up to the word (L = %d, the stage's interpolation, is not a power of two within it)", l)
	}
	sw.Points = []string{
		fmt.Sprintf("coefficients: %d rows of %d, one scale 2^-%d for the whole matrix", rows, n, cf.Frac),
		fmt.Sprintf("branches: v_p = sum_n c_p[n] x[b - %d + n], exact (%d x %d bits into %d-bit accumulators, the widest branch's)", n/2-1, in, cf.Bits, acc),
		fmt.Sprintf("mu: unsigned %d-bit word, mu = k/%d %s (output m at input sample m*%d/%d)", mb, l, exact, st.Down, l),
	}
	if sw.HornerDrop > 0 {
		sw.Points = append(sw.Points, fmt.Sprintf("branches into Horner: round half up, dropping %d LSBs", sw.HornerDrop))
	}
	sw.Points = append(sw.Points,
		fmt.Sprintf("Horner: acc = acc*mu + v_p from p = %d down, each product (%d x %d bits) rounded half up to the register's LSB (%d guard bits below the output's), %d-bit register", rows-1, sw.HornerBits, mb+1, sw.OutputShift-sw.HornerDrop, sw.HornerBits),
		roundPoint(sw.OutputShift-sw.HornerDrop, ob),
	)
	// Cost: every branch's N products and P Horner products per output
	// (farrow.Cost); every coefficient stored (the rows' symmetry is a
	// relation between rows, not a pair within one).
	sw.MultiplierA, sw.MultiplierB = in, cf.Bits
	sw.MultipliesPerSample = farrow.Cost(rows-1, n)
	sw.CoefMemoryBits = rows * n * cf.Bits
	sw.DataMemoryBits = n * in
	return sw, nil
}

// fracProto returns the prototype of the planned fractional stage, at Up
// times its input rate and unit gain: the float one (the design) or the
// quantised one (coefficients and mu as built, Horner roundings left out).
// An interpolation cascade's quantised Farrow stage is the transpose of
// the decimation structure of the same rows and mu, so its prototype is
// that structure's (farrowQuantProto) reversed in time, over the gain M/L
// its coefficients carry: the prototype of the chain's L/M stage whose
// transpose (chain.Resample up M, down L) it is exactly, to a delay.
func (sw *StageWidths) fracProto(st Stage, quantised bool) []float64 {
	switch {
	case st.Farrow != nil && quantised && st.Interpolate:
		l, m := st.fracView()
		p := farrowQuantProto(sw.Coefficients, len(st.Farrow), len(st.Farrow[0]), l, sw.MuBits)
		slices.Reverse(p)
		for j := range p {
			p[j] *= float64(l) / float64(m)
		}
		return p
	case st.Farrow != nil && quantised:
		return farrowQuantProto(sw.Coefficients, len(st.Farrow), len(st.Farrow[0]), st.Up, sw.MuBits)
	case st.Farrow != nil:
		return farrowFloatProto(st)
	case quantised:
		h := sw.Coefficients.Float()
		for k := range h {
			h[k] /= float64(st.Up)
		}
		return h
	}
	return st.Taps
}

// polyInt is a polyphase L/M stage's integer data path, run a block at a
// time: output m is sum_s h[r + L s] x[b - s], b = floor(m M / L),
// r = m M mod L (inputs before the first are zero), exact, rounded half
// up at shift and saturated to ob bits; it is made once input b arrives.
type polyInt struct {
	h        []int64
	l, m     int
	shift    int
	lo, hi   int64
	buf      []int64 // the last k-1 inputs, then the block
	n, next  int     // inputs seen before the block; the next output
	sat      int
	keepHist int
	// The extremes the accumulator reached, for the tests that drive the
	// stage with worst-case inputs.
	accLo, accHi int64
}

func newPolyInt(h []int64, l, m, shift, ob int) *polyInt {
	hi := int64(1)<<(ob-1) - 1
	k := (len(h) + l - 1) / l
	return &polyInt{h: h, l: l, m: m, shift: shift, lo: -hi - 1, hi: hi, buf: make([]int64, k-1), keepHist: k - 1}
}

func (s *polyInt) run(x, out []int64) []int64 {
	k := s.keepHist
	s.buf = append(s.buf[:k], x...)
	end := s.n + len(x)
	for {
		t := s.next * s.m
		b, r := t/s.l, t%s.l
		if b >= end {
			break
		}
		pos := b - s.n + k
		var acc int64
		for j, i := r, pos; j < len(s.h) && b-(j-r)/s.l >= 0; j, i = j+s.l, i-1 {
			acc += s.h[j] * s.buf[i]
		}
		s.accLo, s.accHi = min(s.accLo, acc), max(s.accHi, acc)
		y, sat := roundSat(acc, s.shift, s.lo, s.hi)
		if sat {
			s.sat++
		}
		out = append(out, y)
		s.next++
	}
	s.n = end
	copy(s.buf, s.buf[len(s.buf)-k:])
	s.buf = s.buf[:k]
	return out
}

func (s *polyInt) saturated() int { return s.sat }

// polyFloat is polyInt's float chain, the taps h in float64.
type polyFloat struct {
	h       []float64
	l, m, k int
	buf     []float64
	n, next int
}

func newPolyFloat(h []float64, l, m int) *polyFloat {
	k := (len(h) + l - 1) / l
	return &polyFloat{h: h, l: l, m: m, k: k - 1, buf: make([]float64, k-1)}
}

func (s *polyFloat) run(x, out []float64) []float64 {
	k := s.k
	s.buf = append(s.buf[:k], x...)
	end := s.n + len(x)
	for {
		t := s.next * s.m
		b, r := t/s.l, t%s.l
		if b >= end {
			break
		}
		pos := b - s.n + k
		var acc float64
		for j, i := r, pos; j < len(s.h) && b-(j-r)/s.l >= 0; j, i = j+s.l, i-1 {
			acc += s.h[j] * s.buf[i]
		}
		out = append(out, acc)
		s.next++
	}
	s.n = end
	copy(s.buf, s.buf[len(s.buf)-k:])
	s.buf = s.buf[:k]
	return out
}

// farrowInt is a Farrow stage's integer data path, run a block at a time
// (package doc, Fractional stages): output m at input sample
// b = (m / Up) Down + q_k and mu code mu_k (k = m mod Up, farrowTiming),
// made once input b + N/2 arrives.
type farrowInt struct {
	c          [][]int64
	n, up, dn  int
	q          []int
	mu         []int64
	mb, drop   int
	shift      int
	lo, hi     int64
	buf        []int64 // the last n-1 inputs, then the block
	seen, next int
	sat        int
	v          []int64
	// The extremes the branch sums and the Horner register reached, for
	// the tests that drive the stage with worst-case inputs.
	brLo, brHi, hoLo, hoHi int64
}

func newFarrowInt(sw *StageWidths) *farrowInt {
	rows := sw.FarrowRows
	n := len(sw.Coefficients.Ints) / rows
	c := make([][]int64, rows)
	for p := range c {
		c[p] = sw.Coefficients.Ints[p*n : (p+1)*n]
	}
	q, mu := farrowTiming(sw.Up, sw.Down, sw.MuBits)
	hi := int64(1)<<(sw.OutputBits-1) - 1
	return &farrowInt{c: c, n: n, up: sw.Up, dn: sw.Down, q: q, mu: mu, mb: sw.MuBits, drop: sw.HornerDrop,
		shift: sw.OutputShift - sw.HornerDrop, lo: -hi - 1, hi: hi, buf: make([]int64, n-1), v: make([]int64, rows)}
}

func (s *farrowInt) run(x, out []int64) []int64 {
	k := s.n - 1
	s.buf = append(s.buf[:k], x...)
	end := s.seen + len(x)
	for {
		ph := s.next % s.up
		b := s.next/s.up*s.dn + s.q[ph]
		if b+s.n/2 >= end {
			break
		}
		first := b - s.n/2 + 1 // input index of c_p[0]
		pos := first - s.seen + k
		for p, row := range s.c {
			var a int64
			for j, c := range row {
				if first+j >= 0 {
					a += c * s.buf[pos+j]
				}
			}
			s.brLo, s.brHi = min(s.brLo, a), max(s.brHi, a)
			if s.drop > 0 {
				a = (a + int64(1)<<(s.drop-1)) >> s.drop
			}
			s.v[p] = a
		}
		mu := s.mu[ph]
		acc := s.v[len(s.v)-1]
		for p := len(s.v) - 2; p >= 0; p-- {
			acc = (acc*mu+int64(1)<<(s.mb-1))>>s.mb + s.v[p]
			s.hoLo, s.hoHi = min(s.hoLo, acc), max(s.hoHi, acc)
		}
		y, sat := roundSat(acc, s.shift, s.lo, s.hi)
		if sat {
			s.sat++
		}
		out = append(out, y)
		s.next++
	}
	s.seen = end
	copy(s.buf, s.buf[len(s.buf)-k:])
	s.buf = s.buf[:k]
	return out
}

func (s *farrowInt) saturated() int { return s.sat }

// farrowFloat is farrowInt's float chain: the float rows at the exact
// times m Down/Up (chain.FarrowTimes), Horner in float64. Each output is
// made with farrowInt's (once input b_q + N/2 arrives, b_q its rounded
// time's sample, one past the exact b when mu rounds up to 1), so that
// both chains give the same outputs in every block.
type farrowFloat struct {
	c          [][]float64
	n, up, dn  int
	q          []int // farrowInt's whole samples per phase (farrowTiming)
	buf        []float64
	seen, next int
	v          []float64
}

func newFarrowFloat(st Stage, muBits int) *farrowFloat {
	n := len(st.Farrow[0])
	q, _ := farrowTiming(st.Up, st.Down, muBits)
	// n past inputs: an output waits for b_q + N/2 <= b + N/2 + 1.
	return &farrowFloat{c: st.Farrow, n: n, up: st.Up, dn: st.Down, q: q, buf: make([]float64, n), v: make([]float64, len(st.Farrow))}
}

func (s *farrowFloat) run(x, out []float64) []float64 {
	k := s.n
	s.buf = append(s.buf[:k], x...)
	end := s.seen + len(x)
	for {
		ph := s.next % s.up
		base := s.next / s.up * s.dn
		if base+s.q[ph]+s.n/2 >= end {
			break
		}
		t := ph * s.dn
		b := base + t/s.up
		mu := float64(t%s.up) / float64(s.up)
		first := b - s.n/2 + 1
		pos := first - s.seen + k
		for p, row := range s.c {
			var a float64
			for j, c := range row {
				if first+j >= 0 {
					a += c * s.buf[pos+j]
				}
			}
			s.v[p] = a
		}
		acc := s.v[len(s.v)-1]
		for p := len(s.v) - 2; p >= 0; p-- {
			acc = acc*mu + s.v[p]
		}
		out = append(out, acc)
		s.next++
	}
	s.seen = end
	copy(s.buf, s.buf[len(s.buf)-k:])
	s.buf = s.buf[:k]
	return out
}

// newFracFilters returns the integer and float data paths of the planned
// fractional stage st.
func newFracFilters(st Stage, sw *StageWidths) (intFilter, floatFilter) {
	if st.Farrow != nil && st.Interpolate {
		return newFarrowTInt(sw), newFarrowTFloat(st)
	}
	if st.Farrow != nil {
		return newFarrowInt(sw), newFarrowFloat(st, sw.MuBits)
	}
	h := make([]float64, len(st.Taps))
	for k, v := range st.Taps {
		h[k] = v * float64(st.Up)
	}
	return newPolyInt(sw.Coefficients.Ints, st.Up, st.Down, sw.OutputShift, sw.OutputBits), newPolyFloat(h, st.Up, st.Down)
}

// quantisedFrac returns the fractional stage s of a chain as it will be
// built, for chain.Analyze: a chain.PolyphaseStage whose prototype is the
// quantised one (fracProto): a polyphase stage's quantised taps over L
// (over M in an interpolation chain, interp, whose transpose multiplies
// by M); a Farrow stage's response at its quantised output times, an
// L-phase polyphase filter (farrowQuantProto; its transpose's in an
// interpolation chain). The Horner roundings (the transpose's rounded mu
// products) are noise, measured by the bit-true run, not a response.
func quantisedFrac(s chain.Stage, sw *StageWidths, interp bool) chain.Stage {
	// The planner's view of s: its own rate change in signal order.
	own := func(up, down int) (int, int) {
		if interp {
			return down, up
		}
		return up, down
	}
	switch st := s.(type) {
	case *chain.PolyphaseStage:
		return quantisedFrac(*st, sw, interp)
	case *chain.FarrowStage:
		return quantisedFrac(*st, sw, interp)
	case chain.PolyphaseStage:
		u, d := own(st.Up, st.Down)
		st.Taps = sw.fracProto(Stage{Up: u, Down: d, Taps: st.Taps, Interpolate: interp}, true)
		st.Length = len(st.Taps)
		return st
	case chain.FarrowStage:
		u, d := own(st.Up, st.Down)
		fs := Stage{Up: u, Down: d, Farrow: st.Filter.Coef, Interpolate: interp}
		taps := sw.fracProto(fs, true)
		return chain.PolyphaseStage{Up: st.Up, Down: st.Down, Taps: taps, Length: len(taps), Req: st.Req}
	}
	panic(fmt.Sprintf("fixed: quantisedFrac of a %T", s))
}

// aliasPathGain returns the chain's gain on the path of a's worst alias
// (a.WorstAliasHz through path a.WorstPath of a fractional chain, its
// one path otherwise) over its gain at 0 Hz.
func aliasPathGain(c *chain.Chain, a chain.Analysis) float64 {
	g := a.WorstAliasHz
	if ps := chain.PathGains(c, g, 0); len(ps) > 1 && a.WorstPath >= 0 && a.WorstPath < len(ps) {
		return ps[a.WorstPath].Gain / c.Gain(0)
	}
	return c.Gain(g) / c.Gain(0)
}

// fracCulprit is culprit's figure for the fractional stage st, c.Stages[j]
// (q the quantised chain): for the rejection, how much its float design
// would lower the worst alias's path; for the ripple, the largest
// relative error of its quantised prototype's magnitude over [0, fp].
func fracCulprit(c, q *chain.Chain, j int, sw *StageWidths, st Stage, a chain.Analysis, fp float64, rejection bool) float64 {
	if rejection {
		alt := *q
		alt.Stages = append([]chain.Stage(nil), q.Stages...)
		alt.Stages[j] = c.Stages[j]
		return aliasPathGain(q, a) - aliasPathGain(&alt, a)
	}
	ft, qt := sw.fracProto(st, false), sw.fracProto(st, true)
	rate := sw.InputRate * float64(st.Up)
	v := 0.0
	const pts = 256
	for k := 0; k <= pts; k++ {
		f := fp * float64(k) / pts
		af := remez.Magnitude(ft, f, rate)
		v = math.Max(v, math.Abs(remez.Magnitude(qt, f, rate)-af)/math.Max(af, 1e-300))
	}
	return v
}

// pathGain returns the gain of the input tone g's path k through the
// chain (chain.PathGains; the chain's gain at g for its one path).
func pathGain(c *chain.Chain, g float64, k int) float64 {
	ps := chain.PathGains(c, g, 0)
	if k < 0 || k >= len(ps) {
		return c.Gain(g)
	}
	return ps[k].Gain
}

// worstPath returns the path of the input tone g with the largest gain
// that lands in the protected band [0, fa] (fa zero: fp) and is not the
// tone itself (path 0 of a g within it): the alias the bit-true run
// measures for a given Signal.AliasHz. An integer chain has path 0 alone.
func worstPath(c *chain.Chain, g, fa, fp float64) int {
	if fa == 0 {
		fa = fp
	}
	best, bestG := 0, -1.0
	for _, p := range chain.PathGains(c, g, 0) {
		if p.OutputHz > fa || (p.K == 0 && g <= fa) {
			continue
		}
		if p.Gain > bestG {
			best, bestG = p.K, p.Gain
		}
	}
	return best
}

// widthEstimate is where narrowestWidth starts: one bit below the width
// at which the rounding noise of the taps, 3 2^-Frac sqrt(N/12) (three
// times the RMS of N independent uniform rounding errors, common
// practice), fits the tightest band's room left by the float design
// (its MaxError less the float deviation fdev: a design of least length
// leaves little, and a band the float design misses has its MaxError
// raised to 17/16 of fdev).
func widthEstimate(taps []float64, bands []remez.Band, fdev []float64) int {
	m, lim := 0.0, math.Inf(1)
	for _, t := range taps {
		m = math.Max(m, math.Abs(t))
	}
	for i, b := range bands {
		lim = math.Min(lim, math.Max(b.MaxError-fdev[i], b.MaxError*1e-9))
	}
	_, e := math.Frexp(m)
	return int(math.Ceil(1+float64(e)+math.Log2(3*math.Sqrt(float64(len(taps))/12)/lim))) - 1
}

// narrowestWidth returns the narrowest width in [lo, hi] at which meets
// holds, searching from start: down while the next narrower width meets,
// else up until one does. Each try of a fractional stage's long
// prototype is dear, so the search starts near the answer instead of at
// lo; it takes the widths that meet to be every one above the narrowest,
// as MinCoefBits does.
func narrowestWidth(lo, hi, start int, q QuantSettings, meets func(int) bool) (int, error) {
	b := min(hi, max(lo, start))
	ok := meets(b)
	for ok && b > lo {
		if q.stopped() {
			return 0, fmt.Errorf("fixed: coefficient width search stopped: %w", q.ctx.Err())
		}
		if !meets(b - 1) {
			break
		}
		b--
	}
	for !ok && b < hi {
		if q.stopped() {
			return 0, fmt.Errorf("fixed: coefficient width search stopped: %w", q.ctx.Err())
		}
		b++
		ok = meets(b)
	}
	if q.stopped() {
		// A trial stopped part way says "no" without having measured.
		return 0, fmt.Errorf("fixed: coefficient width search stopped: %w", q.ctx.Err())
	}
	if !ok {
		return 0, fmt.Errorf("%w up to %d bits", ErrNoWidth, hi)
	}
	return b, nil
}

// removePaths returns a copy of the window y (win samples at rate fk)
// without the components of the input tone g's paths through the
// fractional stage of q that land on other bins than fout's: each is a
// whole number of cycles in the window, removed by least squares.
func removePaths(y []float64, q *chain.Chain, g, fout, fk float64, win int) []float64 {
	out := append([]float64(nil), y...)
	at := int(math.Round(fout / fk * float64(win)))
	done := map[int]bool{at: true}
	for _, p := range chain.PathGains(q, g, 0) {
		m := int(math.Round(p.OutputHz / fk * float64(win)))
		if done[m] {
			continue
		}
		done[m] = true
		removeTone(out, float64(m)/float64(win))
	}
	return out
}
