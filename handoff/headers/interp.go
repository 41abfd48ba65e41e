package headers

import (
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// interpStage lays out an interpolating stage's constants (see the package
// documentation, Interpolation chains): its kind and factor L, its words,
// and an FIR's polyphase taps and shift or a CIC interpolator's combs and
// integrators.
func (m *model) interpStage(i int, st fixed.Stage, sw *fixed.StageWidths) (section, error) {
	if st.CIC != sw.CIC || (!st.CIC && st.HalfBand != sw.HalfBand) {
		return section{}, fmt.Errorf("the cascade's stage is a %s but the widths' a %s: give the widths fixed.Plan returned for this cascade", kindName(st.CIC, st.HalfBand, false), kindName(sw.CIC, sw.HalfBand, false))
	}
	if st.NonRecursive || sw.NonRecursive {
		return section{}, fmt.Errorf("a non-recursive CIC in an interpolation chain: the form is built for decimation only")
	}
	if st.R != sw.R || sw.R < 1 || sw.R > math.MaxInt32 {
		return section{}, fmt.Errorf("factor L = %d in the cascade, %d in the widths: they must agree and lie in [1, %d]", st.R, sw.R, math.MaxInt32)
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", sw.InputBits}, {"OutputBits", sw.OutputBits}, {"AccumulatorBits", sw.AccumulatorBits}} {
		if f.v < 1 || f.v > maxFieldBits {
			return section{}, fmt.Errorf("%s = %d: must lie in [1, %d] bits", f.name, f.v, maxFieldBits)
		}
	}
	if sw.OutputShift < -maxFieldBits || sw.OutputShift > maxFieldBits {
		return section{}, fmt.Errorf("OutputShift = %d: must lie in [%d, %d] bits", sw.OutputShift, -maxFieldBits, maxFieldBits)
	}
	n := fmt.Sprintf("S%d_", i+1)
	kind := int64(KindFIR)
	switch {
	case sw.CIC:
		kind = KindCIC
	case sw.HalfBand:
		kind = KindHalfBand
	}
	name := kindName(sw.CIC, sw.HalfBand, false) + " interpolator"
	sec := section{title: fmt.Sprintf("Stage %d: %s", i+1, name)}
	if sw.InputRate > 0 {
		sec.notes = append(sec.notes, fmt.Sprintf("Input rate %s Hz, output rate %s Hz (interpolation %d).", hz(sw.InputRate), hz(sw.OutputRate()), sw.R))
	}
	sec.notes = append(sec.notes, fmt.Sprintf("DC gain %s (input full scale to output full scale).", g(sw.Gain)))
	if sw.GainCorrection != 0 && sw.GainCorrection != 1 {
		sec.notes = append(sec.notes, fmt.Sprintf("Taps scaled by %s before quantisation (gain correction).", g(sw.GainCorrection)))
	}
	for _, p := range sw.Points {
		sec.notes = append(sec.notes, comment(p))
	}
	sec.items = []item{
		{name: n + "KIND", doc: "stage kind (KIND_CIC, KIND_FIR, KIND_HALFBAND)", value: kind},
		{name: n + "L", doc: "interpolation factor: output samples per input sample", value: int64(sw.R)},
		{name: n + "INPUT_BITS", doc: "input word, bits", value: int64(sw.InputBits)},
		{name: n + "OUTPUT_BITS", doc: "output word, bits", value: int64(sw.OutputBits)},
	}
	if sw.CIC {
		return cicInterp(sec, n, st, sw)
	}
	if err := checkCoefs(st, sw); err != nil {
		return section{}, err
	}
	cf := sw.Coefficients
	l := sw.R
	gain := bits.Len(uint(l)) - 1
	sec.notes = append(sec.notes,
		fmt.Sprintf("Tap k is COEFS[k] / 2^COEF_FRAC; %d taps, %d bits, at the output rate.", len(cf.Ints), cf.Bits),
		"Phase p (output nL + p) sums COEFS[p + L k] x[n - k], k = 0 .. PHASE_TAPS - 1.")
	sec.items = append(sec.items,
		item{name: n + "OUTPUT_SHIFT", doc: "LSBs rounded (half up) off the phase sum to make the output, GAIN_SHIFT already taken off; negative: shift left", value: int64(sw.OutputShift)},
		item{name: n + "GAIN_SHIFT", doc: "floor(log2 L): each phase's DC gain is about 1/L, so the phase sum is taken times 2^GAIN_SHIFT", value: int64(gain)},
		item{name: n + "ACC_BITS", doc: "accumulator width, the widest phase's (worst case, exact sum of products), bits", value: int64(sw.AccumulatorBits)},
		item{name: n + "NUM_TAPS", doc: "coefficients, the full impulse response at the output rate, zeros included", value: int64(len(cf.Ints))},
		item{name: n + "PHASE_TAPS", doc: "taps per polyphase phase, ceil(NUM_TAPS / L) (a phase past the last tap adds zeros)", value: int64((len(cf.Ints) + l - 1) / l)},
		item{name: n + "COEF_BITS", doc: "coefficient word, bits, two's complement", value: int64(cf.Bits)},
		item{name: n + "COEF_FRAC", doc: "coefficient fractional bits: tap = COEFS[k] / 2^COEF_FRAC", value: int64(cf.Frac)},
		item{name: n + "COEFS", doc: "quantised coefficients, integers, index 0 first; phase p takes p, p + L, p + 2L, ...", array: true, values: cf.Ints, coef: true, elemBits: cf.Bits, length: n + "NUM_TAPS"},
	)
	return sec, nil
}

// cicInterp adds a CIC interpolator's constants to sec: its order and
// delay, its combs' and integrators' widths, and the output truncation
// from the last integrator.
func cicInterp(sec section, n string, st fixed.Stage, sw *fixed.StageWidths) (section, error) {
	p := sw.CICInterp
	if p == nil {
		return section{}, fmt.Errorf("a CIC interpolator without its register plan (CICInterp is nil)")
	}
	if p.N != st.N || p.M != st.M || p.R != st.R {
		return section{}, fmt.Errorf("CIC N=%d M=%d R=%d in the cascade but N=%d M=%d R=%d in its register plan", st.N, st.M, st.R, p.N, p.M, p.R)
	}
	if p.N < 1 || p.N > 64 || p.M < 1 || p.M > math.MaxInt32 {
		return section{}, fmt.Errorf("CIC order N = %d, delay M = %d: N must lie in [1, 64], M in [1, %d]", p.N, p.M, math.MaxInt32)
	}
	if len(p.RegisterBits) != 2*p.N {
		return section{}, fmt.Errorf("CIC interpolator of order %d: its plan has %d register widths; want %d", p.N, len(p.RegisterBits), 2*p.N)
	}
	for j, b := range p.RegisterBits {
		if b < 1 || b > maxFieldBits {
			return section{}, fmt.Errorf("CIC register %d: width %d must lie in [1, %d]", j+1, b, maxFieldBits)
		}
	}
	full := p.FullBits()
	if p.InputBits != sw.InputBits || p.OutputBits != sw.OutputBits || sw.OutputShift != full-sw.OutputBits || sw.AccumulatorBits != slices.Max(p.RegisterBits) {
		return section{}, fmt.Errorf("CIC interpolator: its plan has %d-bit input, %d-bit output and a %d-bit last integrator, but the widths %d, %d, OutputShift %d and AccumulatorBits %d (want %d, the widest register)",
			p.InputBits, p.OutputBits, full, sw.InputBits, sw.OutputBits, sw.OutputShift, sw.AccumulatorBits, slices.Max(p.RegisterBits))
	}
	combs := make([]int64, p.N)
	integs := make([]int64, p.N)
	for j := range combs {
		combs[j], integs[j] = int64(p.RegisterBits[j]), int64(p.RegisterBits[p.N+j])
	}
	sec.items = append(sec.items,
		item{name: n + "OUTPUT_SHIFT", doc: "LSBs truncated (floor) from the last integrator (FULL_BITS) to make the output", value: int64(sw.OutputShift)},
		item{name: n + "ACC_BITS", doc: "the widest register, bits", value: int64(sw.AccumulatorBits)},
		item{name: n + "FULL_BITS", doc: "the last integrator's width, whose top OUTPUT_BITS are the output, bits", value: int64(full)},
		item{name: n + "ORDER", doc: "CIC order N (combs, integrators)", value: int64(p.N)},
		item{name: n + "DELAY", doc: "comb differential delay M, input samples", value: int64(p.M)},
		item{name: n + "COMB_BITS", doc: "width of each comb, at the input rate, bits (index 0: comb 1); full width, wraps", array: true, values: combs, length: n + "ORDER"},
		item{name: n + "INTEG_BITS", doc: "width of each integrator, at the output rate, bits (index 0: integrator 1); full width, wraps", array: true, values: integs, length: n + "ORDER"},
	)
	return sec, nil
}
