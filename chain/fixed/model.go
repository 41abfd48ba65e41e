package fixed

import (
	"context"
	"fmt"
	"math"
)

// Model is the integer data path of a planned cascade, one real path: the
// integer half of the bit-true run (BitTrue runs the same filters), exposed
// so that test vectors and other models of the chain can be checked against
// it sample for sample.
//
// Its conventions are Plan's: the input is a two's-complement code of
// Widths.InputBits bits; a CIC's registers truncate (floor) at each of
// Hogenauer's points and wrap at their widths, its first output is taken at
// input sample 0 and then every R-th (a non-recursive CIC's sub-stages
// are exact, and its output is truncated like the recursive one's: see
// StageWidths.NonRecursive); an FIR's output m is sum_k h[k]
// x[mR-k] over k <= mR (inputs before the first are zero), exact, rounded
// half up at OutputShift and saturated to OutputBits. Stage i's output is a
// code of Widths.Stages[i].OutputBits bits. A complex (I/Q) chain is two
// such paths, one per component.
//
// An interpolation cascade (Cascade.Interpolate) follows the package doc's
// interpolating data path: a FIR's output nL + p is sum_k h[p + Lk]
// x[n - k] (the zero-stuffed input filtered by h; inputs before the first
// are zero), exact, rounded half up at OutputShift and saturated to
// OutputBits; a CIC interpolator runs its combs on each input sample, then
// R outputs (the comb output, then R-1 zeros) through its integrators,
// every register wrapping at its width (CICInterpolation), each output the
// last integrator truncated (floor) to OutputBits. Every stage gives R
// outputs per input sample, the first with its first input.
//
// A fractional stage (package doc, Fractional stages) gives ceil(n L / M)
// outputs for n inputs (polyphase), or the outputs whose last input has
// arrived (Farrow: N/2 samples later).
//
// A Model keeps its filters' state between calls to Run, so a long input can
// be run a block at a time; the zero Model is not usable (NewModel).
type Model struct {
	inBits int
	stages []intFilter
}

// NewModel returns the integer data path of c planned as w, in its reset
// state (every register and delay line zero). It refuses a CIC whose full
// register is wider than the model runs (cicModelBits: MaxModelBits, 127,
// for the recursive form; 63 for the non-recursive one).
func NewModel(c Cascade, w *Widths) (*Model, error) {
	if len(w.Stages) != len(c.Stages) || len(c.Stages) == 0 {
		return nil, fmt.Errorf("fixed: model of %d stages with widths of %d", len(c.Stages), len(w.Stages))
	}
	if err := c.checkDirection(); err != nil {
		return nil, err
	}
	m := &Model{inBits: w.InputBits}
	for i, st := range c.Stages {
		sw := &w.Stages[i]
		if st.fractional() {
			if sw.Up != st.Up || sw.Down != st.Down || (st.Farrow != nil) != sw.Farrow {
				return nil, fmt.Errorf("fixed: stage %d: the fractional stage has no plan of its kind (widths of another cascade)", i+1)
			}
			fi, _ := newFracFilters(st, sw)
			m.stages = append(m.stages, fi)
			continue
		}
		if st.CIC {
			if st.Interpolate && sw.CICInterp == nil || !st.Interpolate && sw.Pruning == nil {
				return nil, fmt.Errorf("fixed: stage %d: the CIC has no register plan for its direction (widths of another cascade)", i+1)
			}
			if lim := cicModelBits(sw); cicModelWidth(sw) > lim {
				return nil, fmt.Errorf("fixed: stage %d: %s", i+1, cicTooWide(sw, "the integer model"))
			}
			if st.Interpolate {
				m.stages = append(m.stages, newCICInterpFilter(sw.CICInterp))
			} else {
				m.stages = append(m.stages, newCICInt(sw))
			}
			continue
		}
		if st.Interpolate {
			m.stages = append(m.stages, newFIRInterpInt(sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits))
			continue
		}
		m.stages = append(m.stages, newFIRInt(sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits))
	}
	return m, nil
}

// Run passes the input codes x through every stage and returns each stage's
// outputs completed by this block (out[i] is stage i's, out[len-1] the
// chain's). It returns an error, and leaves the state unchanged, when a code
// lies outside the input word.
func (m *Model) Run(x []int64) ([][]int64, error) {
	lo, hi := -(int64(1) << (m.inBits - 1)), int64(1)<<(m.inBits-1)-1
	for n, v := range x {
		if v < lo || v > hi {
			return nil, fmt.Errorf("fixed: input sample %d = %d lies outside the %d-bit input word [%d, %d]", n, v, m.inBits, lo, hi)
		}
	}
	out := make([][]int64, len(m.stages))
	cur := x
	for i, f := range m.stages {
		out[i] = f.run(cur, nil)
		cur = out[i]
	}
	return out, nil
}

// RunCodes runs the bit-true run's two chains, the integer one (Model) and
// the float one of the same structure and gains, on the input codes x of
// one data path (codes of Widths.InputBits bits), a block at a time, and
// returns the integer chain's output codes and the float chain's output in
// fractions of full scale. ctx is checked between blocks; once it is done
// RunCodes returns an error wrapping ctx.Err(). It refuses what BitTrue
// refuses: a CIC register over MaxModelBits, a CIC float model over 2^22 taps,
// and a code outside the input word; and an interpolation cascade's output
// over MaxRunCodesOutput samples (it holds both outputs whole).
func RunCodes(ctx context.Context, c Cascade, w *Widths, x []int64) ([]int64, []float64, error) {
	if _, err := NewModel(c, w); err != nil {
		return nil, nil, err
	}
	for i, st := range c.Stages {
		if st.CIC && st.Length() > maxCICFloatTaps {
			return nil, nil, fmt.Errorf("fixed: stage %d: the CIC's float model would need %d taps, beyond the run's %d", i+1, st.Length(), maxCICFloatTaps)
		}
	}
	nout := 0
	if c.Interpolate {
		if l := c.Ratio(); len(x) > MaxRunCodesOutput/l {
			return nil, nil, fmt.Errorf("fixed: %d input samples interpolated by %d make %d output samples; at most %d are run at once (run a shorter input)", len(x), l, len(x)*l, MaxRunCodesOutput)
		}
		nout = len(x) * c.Ratio()
	}
	lo, hi := -(int64(1) << (w.InputBits - 1)), int64(1)<<(w.InputBits-1)-1
	for n, v := range x {
		if v < lo || v > hi {
			return nil, nil, fmt.Errorf("fixed: input sample %d = %d lies outside the %d-bit input word [%d, %d]", n, v, w.InputBits, lo, hi)
		}
	}
	cs := newChainState(c, w)
	// The codes as fractions of full scale: exact (a power-of-two scale),
	// so that the ADC of the run gives the codes back.
	lsb := math.Ldexp(1, -(w.InputBits - 1))
	olsb := math.Ldexp(1, w.Stages[len(w.Stages)-1].OutputBits-1)
	blk := make([]float64, min(blockLen(c), len(x)))
	if nout == 0 {
		// Room for every output at once: grown by append, the outputs of
		// a recording of 2^24 I/Q samples would, for a moment, be held
		// twice over.
		nout = decimationRoom(c, len(x))
	}
	codes, fl := make([]int64, 0, nout), make([]float64, 0, nout)
	for n0 := 0; n0 < len(x); n0 += len(blk) {
		if err := ctx.Err(); err != nil {
			return nil, nil, fmt.Errorf("fixed: run stopped: %w", err)
		}
		b := blk[:min(len(blk), len(x)-n0)]
		for i := range b {
			b[i] = float64(x[n0+i]) * lsb
		}
		yi, yf := cs.run(b)
		for _, v := range yi {
			codes = append(codes, int64(math.Round(v*olsb)))
		}
		fl = append(fl, yf...)
	}
	return codes, fl, nil
}

// decimationRoom is at least the number of outputs a decimation cascade
// makes from n input samples: n den/num, rounded up, and a sample or two
// more for the phase the run starts on.
func decimationRoom(c Cascade, n int) int {
	num, den := c.fraction()
	return n/num*den + den + 2
}

// MaxRunCodesOutput bounds the output of RunCodes on an interpolation
// cascade, 2^24 samples: its codes and floats then take 256 MiB.
const MaxRunCodesOutput = 1 << 24

// cicModelBits is the widest CIC register the integer model runs for the
// stage: MaxModelBits in 128-bit arithmetic for the recursive form, 63 for
// the non-recursive one, whose sub-stages run in int64.
func cicModelBits(sw *StageWidths) int {
	if sw.NonRecursive {
		return 63
	}
	return MaxModelBits
}
