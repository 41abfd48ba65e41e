package fixed

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/bits"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// Stage is one stage in the terms the word-length planner needs: a
// decimating stage, or an interpolating one when Interpolate is set.
type Stage struct {
	// CIC marks a CIC stage of order N and differential delay M; otherwise the
	// stage is an FIR (half-band when HalfBand is set) with taps Taps.
	CIC  bool
	N, M int
	// R is the stage's factor: its decimation, or its interpolation L when
	// Interpolate is set.
	R int
	// Interpolate marks an interpolating stage: it raises the rate by R
	// (zero-stuffing, then its filter at the higher rate; a CIC: combs at
	// its input rate, integrators at its output rate). It must equal the
	// Cascade's Interpolate; Plan refuses a cascade that mixes directions.
	// Its Taps and Bands are the transpose's, at its output (high) rate.
	Interpolate bool
	// NonRecursive marks a CIC built non-recursively (chain.NonRecursive:
	// M = 1, R = 2^k, k sub-stages (1 + z^-1)^N decimating by 2, full
	// precision); false is the recursive CIC.
	NonRecursive bool

	Taps     []float64
	HalfBand bool
	// scaledHalfBand marks a half-band whose taps carry a gain correction:
	// zeros kept, centre an ordinary coefficient (set by scaledStage).
	scaledHalfBand bool
	// Bands are what the quantised FIR response must meet (each MaxError set),
	// in Hz at the rate the taps run at: the stage's input rate, or its
	// output rate when it interpolates. A fractional stage's are its
	// (equivalent) prototype's, unit gain, at Up times its input rate.
	Bands []remez.Band

	// Up and Down mark a fractional stage (package doc, Fractional
	// stages): its output rate is its input rate times Up/Down, and R is
	// 1. A polyphase stage's Taps are its prototype at Up times its input
	// rate (gain 1 at 0 Hz; the data path multiplies by Up); a Farrow
	// stage's rows are Farrow (farrow.Convention: row p multiplies mu^p)
	// and its Taps are nil. Zero for an integer stage.
	Up, Down int
	Farrow   [][]float64
}

// Length is the stage's impulse response length at its high rate (the
// input rate of a decimating stage, the output rate of an interpolating
// one): its taps, or N (RM - 1) + 1 for a CIC (N boxcars of RM samples).
// A fractional stage's is its span in input samples: ceil(taps/Up) for a
// polyphase stage, the subfilters' length N for a Farrow stage.
func (st Stage) Length() int {
	if st.fractional() {
		if st.Farrow != nil {
			return len(st.Farrow[0])
		}
		return (len(st.Taps) + st.Up - 1) / st.Up
	}
	if st.CIC {
		return st.N*(st.R*st.M-1) + 1
	}
	return len(st.Taps)
}

// Cascade is a chain of stages from InputRate (Hz), listed in the order
// the signal passes them.
//
// A decimation cascade (Interpolate false, the zero value) runs from the
// high rate down; an interpolation cascade (Interpolate true) from the
// channel rate up: InputRate is then the channel rate, Stages[0] takes the
// input and every stage (each with Stage.Interpolate set) raises the rate
// by its R, so the output rate is InputRate times the product of the R.
type Cascade struct {
	// InputRate is the rate of the samples entering Stages[0].
	InputRate float64
	Complex   bool // I/Q: two identical real data paths
	// Interpolate marks an interpolation cascade (see Cascade).
	Interpolate bool
	Stages      []Stage
	// Passband (fp) and Protected (fa, zero means Passband) edges in Hz, used
	// by the bit-true run for its test tones and alias (image) bands. They
	// are on the channel side: the output of a decimation cascade, the
	// input of an interpolation cascade.
	Passband, Protected float64
}

// Ratio returns the product of the stages' factors: the cascade's
// decimation, or its interpolation; for a cascade that ends in a
// fractional stage (R 1), its integer stages' decimation.
func (c Cascade) Ratio() int {
	d := 1
	for _, st := range c.Stages {
		d *= st.R
	}
	return d
}

// Rates returns the rate at each stage boundary in signal order:
// Rates()[i] enters Stages[i], Rates()[i+1] leaves it (divided by its R
// for a decimation cascade, multiplied for an interpolation cascade).
func (c Cascade) Rates() []float64 {
	r := make([]float64, len(c.Stages)+1)
	r[0] = c.InputRate
	for i, st := range c.Stages {
		switch {
		case st.fractional():
			r[i+1] = r[i] * float64(st.Up) / float64(st.Down)
		case c.Interpolate:
			r[i+1] = r[i] * float64(st.R)
		default:
			r[i+1] = r[i] / float64(st.R)
		}
	}
	return r
}

// ChannelRate returns the rate of the channel side: the output rate of a
// decimation cascade, the input rate of an interpolation cascade.
func (c Cascade) ChannelRate() float64 {
	if c.Interpolate {
		return c.InputRate
	}
	num, den := c.fraction()
	return c.InputRate * float64(den) / float64(num)
}

// protectedEdge is the edge fa of the band no alias may reach: Protected,
// or Passband where Protected is zero.
func (c Cascade) protectedEdge() float64 {
	if c.Protected == 0 {
		return c.Passband
	}
	return c.Protected
}

// Words are the word widths the spec fixes.
type Words struct {
	InputBits  int // ADC word; zero means 16
	OutputBits int // final output word; zero means 24
	// DataBits is the width of the words between stages; zero means OutputBits.
	DataBits int
	// CoefBits fixes every FIR coefficient width; zero means "auto": the
	// smallest width per stage that meets its bands (MinCoefBits).
	CoefBits int
}

// Settings tunes Plan. The zero value is the documented default.
type Settings struct {
	Quant QuantSettings // coefficient search; see QuantSettings
	// NoSymmetry counts every tap's multiply and stores every coefficient;
	// by default symmetric pairs share a multiplier through a pre-adder.
	NoSymmetry bool
	// UnityGain folds 1 / (the chain's DC gain before correction) into the
	// taps of the last FIR that is not a half-band (the last half-band when
	// the chain has no other FIR; its zeros stay zero and its centre becomes
	// an ordinary coefficient with its own multiply) before that stage is
	// quantised, so that the chain's DC gain is 1 within the rounding of
	// those taps. The DC gain before correction is the product of every other
	// stage's planned gain (StageWidths.Gain) and the corrected stage's float
	// tap sum (times 2^floor(log2 L) / L when it interpolates). A chain of
	// CICs alone is left uncorrected. An interpolation cascade corrects the
	// stage its transpose would: the first FIR that is not a half-band in
	// signal order (the CIC droop's compensator), else the first half-band;
	// see the package doc, Interpolation, for the headroom that takes.
	// False (the zero value): no correction.
	UnityGain bool
	// NativeA x NativeB is the hardware multiplier's native size (e.g. 18 x 27);
	// zero means no hardware multiplier figure.
	NativeA, NativeB int
	// Clock is the hardware clock in Hz; zero means no multipliers-at-clock figure.
	Clock float64
	// Multiplierless builds every FIR and half-band stage as an adder
	// graph of its rounded taps: the taps are wired in, and no coefficient
	// memory is counted (CoefMemoryBits 0). False: stored coefficients.
	Multiplierless bool
	// MuBits is the width of a Farrow stage's unsigned fractional-delay
	// word; zero means the stage's coefficient width, at least
	// ceil(log2 Up) (package doc, Fractional stages).
	MuBits int
	// Shaper, when not nil, is the noise-shaped converter whose codes the
	// chain takes: Evaluate feeds its bit-true run with them
	// (Signal.Shaper) unless the signal names its own. Plan and
	// PlanChain do not read it.
	Shaper Shaper
	// Inputs, when not nil, is the InputMemo Evaluate's bit-true runs
	// share (Signal.Inputs) unless the signal names its own: chains
	// evaluated on one signal then generate and quantise it once. The
	// figures are the same with it or without it, bit for bit. Plan and
	// PlanChain do not read it.
	Inputs *InputMemo
}

// StageWidths is the fixed-point plan of one stage.
type StageWidths struct {
	CIC      bool
	HalfBand bool
	R        int
	// Interpolate marks an interpolating stage (Stage.Interpolate): it
	// raises the rate by R.
	Interpolate bool
	// Up and Down are a fractional stage's rate change (Stage.Up, Down;
	// R is then 1), zero otherwise. Farrow marks a Farrow stage: its
	// Coefficients hold its FarrowRows rows one after the other (row p,
	// the power p of mu, at Ints[p N : (p+1) N]), all at one scale; MuBits
	// is its unsigned mu word, HornerBits its Horner register and
	// HornerDrop the LSBs of the branch sums rounded off before it (0
	// unless a product would pass 63 bits). PhaseGainMin and PhaseGainMax
	// are the smallest and largest DC gain of one output phase (the sum
	// of a polyphase phase's quantised taps; a Farrow stage's at each of
	// its Up quantised mu); Gain is their mean over the Up phases. In an
	// interpolation cascade (the transpose; Up and Down its own, M and L
	// of the chain's L/M) a Farrow stage's HornerBits is the register of
	// its mu products, the input word shifted left HornerGuard bits, and
	// its phases are its M output phases.
	Up, Down                   int
	Farrow                     bool
	FarrowRows                 int
	MuBits                     int
	HornerBits, HornerDrop     int
	HornerGuard                int
	PhaseGainMin, PhaseGainMax float64
	// InputRate is the rate of the stage's input samples in Hz (OutputRate
	// gives its output's; HighRate the one its taps run at).
	InputRate float64

	InputBits int
	// FIR: the quantised coefficients (full impulse response) and their measured
	// per-band deviations (with a gain correction, of the corrected taps
	// against the bands scaled by GainCorrection); MeetsBands says whether every band is met (false
	// when Words.CoefBits fixes a width too narrow for the bands, or when the
	// float design itself misses them: see FloatMeets).
	Coefficients Coefficients
	Deviations   []float64
	MeetsBands   bool
	// FloatDeviations are the float taps' per-band deviations; FloatMeets is
	// false when some exceed their band's MaxError. Such a band is then held
	// to its float deviation plus 1/16 when choosing the width.
	FloatDeviations []float64
	FloatMeets      bool

	// AccumulatorBits is the worst-case width of the sum of products (FIR;
	// an interpolating FIR's widest phase), the full register width Bin +
	// ceil(N log2(RM)) + GuardBits (CIC decimator; see chain.PruneCIC), or
	// the widest register (CIC interpolator, CICInterp).
	AccumulatorBits int
	// CIC decimator: its register plan (chain.PruneCIC); nil for a CIC
	// interpolator, whose plan is CICInterp. For a non-recursive CIC it
	// is the plan of the recursive CIC with the same output, nothing pruned
	// inside: FullBits = Bin + N log2 R, no guard bits, every register
	// FullBits wide, and Dropped[2N] the output truncation both forms share
	// (the two forms then give the same output, sample for sample).
	Pruning *CICPruning
	// NonRecursive marks a non-recursive CIC; SubStageBits are the output
	// widths of its log2 R sub-stages, Bin + N i (chain.NonRecursiveBits).
	NonRecursive bool
	SubStageBits []int
	// CICInterp is a CIC interpolator's register plan (nil otherwise).
	CICInterp *CICInterpolation
	// OutputBits is the stage's output word; OutputShift the LSBs removed from
	// the accumulator to make it (rounded for an FIR, truncated for a CIC);
	// negative means the accumulator is shifted left. An interpolating FIR's
	// is the decimating FIR's less floor(log2 R) (see the package doc).
	OutputBits  int
	OutputShift int
	// Gain is the stage's DC gain from input full scale to output full scale.
	Gain float64
	// GainCorrection is the factor folded into this stage's taps before
	// quantisation (Settings.UnityGain); 1 for every other stage.
	GainCorrection float64
	// Points states every rounding, truncation and saturation point in order.
	Points []string

	// Cost from the widths, one real data path (Complex doubles the data path
	// figures, not the coefficient memory).
	MultiplierA, MultiplierB int // product size a x b bits (data x coefficient); 0 for a CIC
	// MultipliesPerSample is per sample at the stage's low rate: per output
	// sample of a decimating stage, per input sample of an interpolating
	// one (the transpose's figure; see the package doc, Cost).
	MultipliesPerSample int
	CoefMemoryBits      int
	DataMemoryBits      int
	NativePerProduct    int // native multipliers per a x b product; 0 without NativeA/B
	HardwareMultipliers int // at Settings.Clock; 0 without a clock or native size
}

// Widths is the fixed-point plan of a cascade.
type Widths struct {
	InputBits, OutputBits int
	Stages                []StageWidths
	MemoryBits            int // data (doubled for Complex) plus coefficients
	// DCGain is the cascade's gain at 0 Hz from input full scale to output
	// full scale: the product of the stages' Gain.
	DCGain              float64
	HardwareMultipliers int // summed over stages; 0 without a clock or native size
	// GainCorrection is the factor Settings.UnityGain folded into stage
	// CorrectedStage (0-based); 1 and -1 when none was applied.
	GainCorrection float64
	CorrectedStage int
}

// Plan chooses every word width of the cascade: quantised coefficients per
// FIR stage, accumulator and output widths, CIC registers by Hogenauer's
// pruning, and the cost that follows from them. An interpolation cascade
// follows the package doc's Interpolation section instead where it
// differs.
//
// Data path conventions. Every data word is a two's-complement fraction of
// full scale: a b-bit word w stands for w / 2^(b-1). The input is the ADC
// word (rounded to nearest, saturated). A CIC's registers are truncated
// (floor: drop LSBs) at each of Hogenauer's points and wrap modulo their
// width; its output keeps the top OutputBits of the full register. An FIR's
// products and sum are exact in an accumulator of AccumulatorBits (worst
// case, any input, no overflow);
// its output is rounded half up at OutputShift and saturated to OutputBits.
// Inter-stage words are Words.DataBits wide (the CIC's output is narrower when
// its full register is), the last stage's output Words.OutputBits.
func Plan(c Cascade, w Words, s Settings) (*Widths, error) {
	if w.InputBits == 0 {
		w.InputBits = chain.DefaultInputBits
	}
	if w.OutputBits == 0 {
		w.OutputBits = chain.DefaultOutputBits
	}
	if w.DataBits == 0 {
		w.DataBits = w.OutputBits
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", w.InputBits}, {"OutputBits", w.OutputBits}, {"DataBits", w.DataBits}} {
		// A 1-bit input word carries a noise-shaped converter's codes
		// (Signal.Shaper); every other word is at least 2 bits.
		if lo := 2 - b2i(f.name == "InputBits"); f.v < lo || f.v > 32 {
			return nil, fmt.Errorf("fixed: words %s = %d: must lie in [%d, 32] bits", f.name, f.v, lo)
		}
	}
	if w.CoefBits != 0 && (w.CoefBits < 2 || w.CoefBits > MaxBits) {
		return nil, fmt.Errorf("fixed: words CoefBits = %d: must be 0 (auto) or lie in [2, %d] bits", w.CoefBits, MaxBits)
	}
	if !(c.InputRate > 0) || math.IsInf(c.InputRate, 0) {
		return nil, fmt.Errorf("fixed: cascade InputRate = %g: must be a finite rate above 0 Hz", c.InputRate)
	}
	if len(c.Stages) == 0 {
		return nil, fmt.Errorf("fixed: cascade has no stages")
	}
	if err := chain.CheckClock(slices.Max(c.Rates()), s.Clock); err != nil {
		return nil, fmt.Errorf("fixed: settings Clock = %g Hz: %v", s.Clock, err)
	}
	if s.MuBits < 0 || s.MuBits > 32 {
		return nil, fmt.Errorf("fixed: settings MuBits = %d: must be 0 (the coefficient width) or lie in [1, 32] bits", s.MuBits)
	}
	if (s.NativeA == 0) != (s.NativeB == 0) || s.NativeA < 0 || s.NativeB < 0 {
		return nil, fmt.Errorf("fixed: native multiplier %d x %d: give both sizes (> 0) or neither", s.NativeA, s.NativeB)
	}
	if err := c.checkDirection(); err != nil {
		return nil, err
	}
	return plan(c, w, s, nil)
}

// checkDirection refuses a cascade whose stages do not all run in its
// direction, and a non-recursive CIC in an interpolation cascade.
func (c Cascade) checkDirection() error {
	for i, st := range c.Stages {
		if st.Interpolate != c.Interpolate {
			return fmt.Errorf("fixed: stage %d: Interpolate = %v, but the cascade's Interpolate = %v; a cascade runs in one direction", i+1, st.Interpolate, c.Interpolate)
		}
		if st.Interpolate && st.CIC && st.NonRecursive {
			return fmt.Errorf("fixed: stage %d: the non-recursive CIC is built for decimation only; an interpolation cascade takes the recursive form", i+1)
		}
	}
	return nil
}

// OutputRate returns the rate of the stage's output samples in Hz.
func (sw *StageWidths) OutputRate() float64 {
	if sw.Up > 0 {
		return sw.InputRate * float64(sw.Up) / float64(sw.Down)
	}
	if sw.Interpolate {
		return sw.InputRate * float64(sw.R)
	}
	return sw.InputRate / float64(sw.R)
}

// HighRate returns the higher of the stage's two rates, the one its taps
// (and its bands) run at: its input rate when it decimates, its output
// rate when it interpolates.
func (sw *StageWidths) HighRate() float64 {
	if sw.Interpolate {
		return sw.OutputRate()
	}
	return sw.InputRate
}

// lowRate returns the lower of the stage's two rates.
func (sw *StageWidths) lowRate() float64 {
	if sw.Interpolate {
		return sw.InputRate
	}
	return sw.OutputRate()
}

// plan is Plan after the checks; minBits, when not nil, sets per stage the
// narrowest coefficient width the "auto" search may return (0: no bound).
func plan(c Cascade, w Words, s Settings, minBits []int) (*Widths, error) {
	n := len(c.Stages)
	for i, st := range c.Stages {
		if st.R < 1 {
			return nil, fmt.Errorf("fixed: stage %d: factor R = %d: must be >= 1", i+1, st.R)
		}
	}
	rates := c.Rates()
	// The rate each stage's taps run at: its input rate, or its output
	// rate when it interpolates.
	high := func(i int) float64 {
		if c.Interpolate {
			return rates[i+1]
		}
		return rates[i]
	}
	target := -1
	if s.UnityGain {
		target = gainTarget(c)
	}
	sws := make([]StageWidths, n)
	ins := make([]int, n)
	in := w.InputBits
	var accs accumulators
	for i, st := range c.Stages {
		ob := w.DataBits
		if i == n-1 {
			ob = w.OutputBits
		}
		ins[i] = in
		if i == target {
			// Planned below, once the other stages' gains are known; an
			// FIR's output word does not depend on its taps.
			sws[i].OutputBits = ob
			in = ob
			continue
		}
		var err error
		switch {
		case st.fractional():
			sws[i], err = planFractional(st, rates[i], in, ob, w.CoefBits, s, minBitsOf(minBits, i))
			if AsAccumulatorError(err) != nil {
				// As a FIR's: the plan goes on past it to say what the
				// later stages need, on its output word and the design's
				// unit gain at 0 Hz (the rounded taps' is not known).
				sws[i] = StageWidths{OutputBits: ob, Gain: 1}
			}
		case st.CIC && st.Interpolate:
			sws[i], err = planCICInterp(st, in, ob)
		case st.CIC:
			sws[i], err = planCIC(st, rates[i], in, ob)
		default:
			sws[i], err = planFIR(st, high(i), in, ob, w.CoefBits, s, minBitsOf(minBits, i))
		}
		if err != nil && !(!st.CIC && accs.add(err, i)) {
			// Another error ends the plan; the earliest accumulator error
			// is the one returned.
			if aerr := accs.err(); aerr != nil {
				return nil, aerr
			}
			return nil, fmt.Errorf("fixed: stage %d: %w", i+1, err)
		}
		// A FIR or fractional stage whose accumulator is too wide has its
		// output word and gain all the same: the plan goes on, to say
		// what the other stages need.
		in = sws[i].OutputBits
	}
	if target < 0 {
		if err := accs.err(); err != nil {
			return nil, err
		}
	}
	out := &Widths{InputBits: w.InputBits, OutputBits: w.OutputBits, DCGain: 1, GainCorrection: 1, CorrectedStage: -1}
	if target >= 0 {
		st := c.Stages[target]
		others := 1.0
		for i := range sws {
			if i != target {
				others *= sws[i].Gain
			}
		}
		k := 1 / (others * tapSum(st.Taps) * interpGain(st))
		if math.IsNaN(k) || math.IsInf(k, 0) || !(k > 0) {
			return nil, fmt.Errorf("fixed: stage %d: words.unity_gain: the chain's gain at 0 Hz before the correction is %g, which scaling this stage's taps cannot bring to 1 (it must be above 0)", target+1, 1/k)
		}
		var err error
		sws[target], err = planFIR(scaledStage(st, k), high(target), ins[target], sws[target].OutputBits, w.CoefBits, s, minBitsOf(minBits, target))
		if err != nil && !accs.add(err, target) {
			return nil, fmt.Errorf("fixed: stage %d: %w", target+1, err)
		}
		if err := accs.err(); err != nil {
			return nil, err
		}
		sws[target].GainCorrection = k
		sws[target].Points = append(sws[target].Points, fmt.Sprintf("gain correction: taps scaled by %.9g before quantisation (words.unity_gain)", k))
		out.GainCorrection, out.CorrectedStage = k, target
	}
	for i := range sws {
		sw := &sws[i]
		if sw.GainCorrection == 0 {
			sw.GainCorrection = 1
		}
		sw.InputRate, sw.Interpolate = rates[i], c.Interpolate
		sw.costAtClock(sw.lowRate(), c.Complex, s)
		sw.cicLanes(s.Clock)
		if s.Multiplierless {
			sw.CoefMemoryBits = 0 // wired into the adder graph
		}
		out.MemoryBits += sw.MemoryBits(c.Complex)
		out.HardwareMultipliers += sw.HardwareMultipliers
		out.DCGain *= sw.Gain
	}
	out.Stages = sws
	return out, nil
}

// floatTaps returns st's float taps with this stage's gain correction, as
// the float chain runs them.
func (sw *StageWidths) floatTaps(st Stage) []float64 {
	if sw.GainCorrection == 0 || sw.GainCorrection == 1 {
		return st.Taps
	}
	return scaledStage(st, sw.GainCorrection).Taps
}

func minBitsOf(minBits []int, i int) int {
	if minBits == nil {
		return 0
	}
	return minBits[i]
}

// gainTarget returns the stage that takes the UnityGain correction: the last
// FIR that is not a half-band, else the last half-band, else -1 (a chain of
// CICs alone has no taps to correct). An interpolation cascade takes the
// stage its transpose would (the same filter): the first FIR that is not
// a half-band in signal order, which is the one that corrects the CIC
// droop (chain.Compensator), else the first half-band.
func gainTarget(c Cascade) int {
	hb := -1
	for k := len(c.Stages) - 1; k >= 0; k-- {
		i := k
		if c.Interpolate {
			i = len(c.Stages) - 1 - k
		}
		st := c.Stages[i]
		switch {
		case st.CIC, st.fractional():
		case !st.HalfBand:
			return i
		case hb < 0:
			hb = i
		}
	}
	return hb
}

// interpGain is the gain an interpolating FIR's data path puts on its
// taps' sum, 2^floor(log2 L) / L (1 for L a power of two; see the package
// doc), and 1 for any other stage.
func interpGain(st Stage) float64 {
	if !st.Interpolate || st.CIC {
		return 1
	}
	return math.Ldexp(1, log2Floor(st.R)) / float64(st.R)
}

func tapSum(h []float64) float64 {
	var s float64
	for _, v := range h {
		s += v
	}
	return s
}

// scaledStage returns st with its taps and its bands' gains and limits scaled
// by k, so that the scaled filter meets the scaled bands exactly when st
// meets its own (a band's limit is relative to the stage's gain, which k
// scales with the rest of the chain). A half-band keeps its zero taps exactly
// zero; its centre k/2 is then an ordinary coefficient (scaledHalfBand).
func scaledStage(st Stage, k float64) Stage {
	out := st
	out.Taps = make([]float64, len(st.Taps))
	for i, v := range st.Taps {
		out.Taps[i] = v * k
	}
	if st.HalfBand {
		mid := len(st.Taps) / 2
		for d := 2; d <= mid; d += 2 {
			out.Taps[mid-d], out.Taps[mid+d] = 0, 0
		}
		out.scaledHalfBand = true
	}
	out.Bands = make([]remez.Band, len(st.Bands))
	for i, b := range st.Bands {
		b.Gain *= k
		b.MaxError *= k
		if g := b.GainFunc; g != nil {
			b.GainFunc = func(f float64) float64 { return k * g(f) }
		}
		out.Bands[i] = b
	}
	return out
}

func planCIC(st Stage, rate float64, in, ob int) (StageWidths, error) {
	if st.NonRecursive {
		return planNonRecursive(st, in, ob)
	}
	p, err := chain.PruneCIC(st.N, st.M, st.R, in, ob)
	if err != nil {
		return StageWidths{}, err
	}
	sw := StageWidths{CIC: true, R: st.R, InputBits: in, AccumulatorBits: p.FullBits,
		Pruning: &p, OutputBits: p.OutputBits, OutputShift: p.Dropped[2*p.N], Gain: p.Gain(), MeetsBands: true, FloatMeets: true}
	if p.GuardBits > 0 {
		sw.Points = append(sw.Points, fmt.Sprintf("guard: %d bit(s) above Hogenauer's %d-bit width, so that the truncations cannot wrap the output", p.GuardBits, p.FullBits-p.GuardBits))
	}
	for j := 0; j < 2*p.N; j++ {
		kind, idx := "integrator", j+1
		if j >= p.N {
			kind, idx = "comb", j+1-p.N
		}
		if p.Dropped[j] > 0 {
			sw.Points = append(sw.Points, fmt.Sprintf("%s %d: truncate %d LSBs at its input (%d-bit register, wraps)", kind, idx, p.Dropped[j], p.RegisterBits[j]))
		} else {
			sw.Points = append(sw.Points, fmt.Sprintf("%s %d: full width (%d-bit register, wraps)", kind, idx, p.RegisterBits[j]))
		}
		if j < p.N {
			sw.DataMemoryBits += p.RegisterBits[j]
		} else {
			sw.DataMemoryBits += st.M * p.RegisterBits[j] // the comb's M past inputs
		}
	}
	sw.Points = append(sw.Points, fmt.Sprintf("output: truncate %d LSBs to %d bits", p.Dropped[2*p.N], p.OutputBits))
	return sw, nil
}

// planNonRecursive plans a non-recursive CIC: every sub-stage at full
// precision (Bin + N i bits after sub-stage i), exact, and the output the
// top OutputBits of the last, truncated (floor) as the recursive CIC's.
// Its DC gain is R^N / 2^(N log2 R) = 1 (no guard bits: nothing inside is
// truncated, so nothing can push the output past full scale).
func planNonRecursive(st Stage, in, ob int) (StageWidths, error) {
	if err := chain.NonRecursiveOK(st.M, st.R); err != nil {
		return StageWidths{}, err
	}
	if st.N < 1 || st.N > 16 {
		return StageWidths{}, fmt.Errorf("CIC order N = %d: must lie in [1, 16]", st.N)
	}
	if in < 2 || ob < 2 {
		return StageWidths{}, fmt.Errorf("CIC word widths in %d, out %d: each must be >= 2", in, ob)
	}
	sub := chain.NonRecursiveBits(st.N, st.R, in)
	full := sub[len(sub)-1]
	if full > chain.MaxCICBits {
		return StageWidths{}, fmt.Errorf("non-recursive CIC N=%d R=%d on %d-bit input needs %d bits; at most %d are supported", st.N, st.R, in, full, chain.MaxCICBits)
	}
	out := min(ob, full)
	p := CICPruning{N: st.N, M: 1, R: st.R, InputBits: in, OutputBits: out, FullBits: full,
		Dropped: make([]int, 2*st.N+1), RegisterBits: make([]int, 2*st.N)}
	for j := range p.RegisterBits {
		p.RegisterBits[j] = full
	}
	p.Dropped[2*st.N] = full - out
	sw := StageWidths{CIC: true, R: st.R, InputBits: in, AccumulatorBits: full, Pruning: &p,
		NonRecursive: true, SubStageBits: sub,
		OutputBits: out, OutputShift: full - out, Gain: 1, MeetsBands: true, FloatMeets: true}
	w := in
	for i, b := range sub {
		sw.Points = append(sw.Points, fmt.Sprintf("sub-stage %d: (1 + z^-1)^%d, decimate by 2, exact (%d-bit input, %d-bit output)", i+1, st.N, w, b))
		// Its N past inputs (the polyphase delay lines of both phases).
		sw.DataMemoryBits += st.N * w
		w = b
	}
	sw.Points = append(sw.Points, fmt.Sprintf("output: truncate %d LSBs to %d bits", full-out, out))
	return sw, nil
}

// MaxAccumulatorBits is the widest FIR, half-band, polyphase or Farrow
// accumulator a word-length plan builds: the bit-true run and the
// rounded-tap checks sum in int64. Wider ones are refused.
const MaxAccumulatorBits = 63

// AccumulatorError is the error of a word-length plan that would need an
// accumulator wider than MaxAccumulatorBits: NeedBits (exact, AccumulatorBits)
// for DataBits-bit data (a Farrow stage's mu products when MuProducts) and
// CoefBits-bit coefficients, at the first stage that does. A cascade's plan
// goes on through its other FIR and half-band stages and gives the most
// bits each kind passes by: FirstExcess for its first stage, whose data
// word is the chain's input word (Words.InputBits), LaterExcess for the
// stages after it, which take the word between stages or a CIC's output
// (zero where they fit). Each bit off a stage's data word takes one off its
// accumulator: InputFits is the widest input word at which the first stage
// would fit, BetweenFits the widest data word at which every later stage
// that passed would (zero where none passed; -1 where no data word would
// do, as for a Farrow stage's mu products).
type AccumulatorError struct {
	DataBits, CoefBits, NeedBits int
	MuProducts                   bool
	FirstExcess, LaterExcess     int
	InputFits, BetweenFits       int
}

func (e *AccumulatorError) Error() string {
	data := "data"
	if e.MuProducts {
		data = "mu products"
	}
	return fmt.Sprintf("accumulator of %d-bit %s and %d-bit coefficients needs %d bits; at most %d are supported", e.DataBits, data, e.CoefBits, e.NeedBits, MaxAccumulatorBits)
}

// Excess is how many bits the plan's accumulators need beyond
// MaxAccumulatorBits: the most over the stages planned. Each bit off the
// coefficient word takes one off every accumulator, and each bit off a
// stage's data word one off its own.
func (e *AccumulatorError) Excess() int {
	return max(e.FirstExcess, e.LaterExcess, e.NeedBits-MaxAccumulatorBits)
}

// AsAccumulatorError is the AccumulatorError err wraps, or nil.
func AsAccumulatorError(err error) *AccumulatorError {
	var ae *AccumulatorError
	if errors.As(err, &ae) {
		return ae
	}
	return nil
}

// accumulators gathers the AccumulatorErrors of a cascade's FIR and
// half-band stages (plan): the first, with the most each kind of
// stage passes by.
type accumulators struct {
	first *AccumulatorError
	stage int // the first's, from 1
}

// add records stage i's error; it reports whether err was one.
func (a *accumulators) add(err error, i int) bool {
	ae := AsAccumulatorError(err)
	if ae == nil {
		return false
	}
	if a.first == nil || i+1 < a.stage {
		c := *ae
		c.FirstExcess, c.LaterExcess, c.InputFits, c.BetweenFits = 0, 0, 0, 0
		if a.first != nil {
			c.FirstExcess, c.LaterExcess = a.first.FirstExcess, a.first.LaterExcess
			c.InputFits, c.BetweenFits = a.first.InputFits, a.first.BetweenFits
		}
		a.first, a.stage = &c, i+1
	}
	x := ae.NeedBits - MaxAccumulatorBits
	// The widest data word at which this stage fits; -1 when none does
	// (mu products are no word of the spec).
	fits := ae.DataBits - x
	if ae.MuProducts || fits < 1 {
		fits = -1
	}
	narrowest := func(w *int) {
		if *w == 0 || fits < *w {
			*w = fits
		}
	}
	if i == 0 {
		a.first.FirstExcess = max(a.first.FirstExcess, x)
		narrowest(&a.first.InputFits)
	} else {
		a.first.LaterExcess = max(a.first.LaterExcess, x)
		narrowest(&a.first.BetweenFits)
	}
	return true
}

// err is the gathered error (nil when no stage passed).
func (a *accumulators) err() error {
	if a.first == nil {
		return nil
	}
	return fmt.Errorf("fixed: stage %d: %w", a.stage, a.first)
}

// AccumulatorBits returns the narrowest two's-complement width that holds
// every sum of products of the integer taps h with inBits-bit data, the
// worst case for any input: with P the sum of the positive taps and N the
// sum of the negative taps' magnitudes, the sums lie in
// [-(P 2^(Bin-1) + N (2^(Bin-1) - 1)), P (2^(Bin-1) - 1) + N 2^(Bin-1)],
// reached by the full-scale input of each tap's sign (the largest) or of the
// opposite sign (the smallest, using the most negative code). That is at
// most Bin + floor(log2 sum|h|) + 1 bits, the width of the symmetric bound
// 2^(Bin-1) sum|h|, and one bit less when the extremes allow it (e.g. when
// sum|h| is a power of two). It is exact for any width, past 64 bits too
// (the width a plan refuses then says by how much it is over), for inBits
// >= 1.
func AccumulatorBits(h []int64, inBits int) int {
	var p, n uint64
	wide := false // P or N passes 2^63: summed in math/big
	for _, v := range h {
		var c uint64
		if v > 0 {
			p, c = bits.Add64(p, uint64(v), 0)
		} else {
			n, c = bits.Add64(n, uint64(-v), 0)
		}
		wide = wide || c != 0
	}
	if inBits < 1 || inBits > 62 || wide || p > 1<<62 || n > 1<<62 {
		return accumulatorBitsBig(h, inBits)
	}
	a := uint64(1) << (inBits - 1)
	hp, lp := bits.Mul64(p, a)
	hn, ln := bits.Mul64(n, a)
	if hp != 0 || hn != 0 || lp > 1<<62 || ln > 1<<62 {
		return accumulatorBitsBig(h, inBits)
	}
	lo := lp + ln - n // -(smallest sum)
	hi := lp - p + ln // largest sum
	neg := 0          // bits for -(smallest sum): 2^neg >= lo
	if lo > 0 {
		neg = bits.Len64(lo - 1)
	}
	return 1 + max(neg, bits.Len64(hi))
}

// accumulatorBitsBig is AccumulatorBits in math/big, for the sums that do
// not fit an int64: the same extremes, -(P 2^(Bin-1) + N (2^(Bin-1) - 1))
// and P (2^(Bin-1) - 1) + N 2^(Bin-1).
func accumulatorBitsBig(h []int64, inBits int) int {
	p, n := new(big.Int), new(big.Int)
	for _, v := range h {
		if v > 0 {
			p.Add(p, big.NewInt(v))
		} else {
			n.Sub(n, big.NewInt(v))
		}
	}
	a := new(big.Int).Lsh(big.NewInt(1), uint(max(inBits, 1)-1))
	a1 := new(big.Int).Sub(a, big.NewInt(1))
	lo := new(big.Int).Mul(p, a)
	lo.Add(lo, new(big.Int).Mul(n, a1))
	hi := new(big.Int).Mul(p, a1)
	hi.Add(hi, new(big.Int).Mul(n, a))
	return bigWidth(lo.Neg(lo), hi)
}

// planFIR plans one FIR or half-band stage; minBits (0: none) is the
// narrowest width the "auto" search may return.
func planFIR(st Stage, rate float64, in, ob, coefBits int, s Settings, minBits int) (StageWidths, error) {
	if len(st.Taps) == 0 {
		return StageWidths{}, fmt.Errorf("FIR stage has no taps (an estimate cannot be quantised)")
	}
	if st.R < 1 {
		return StageWidths{}, fmt.Errorf("FIR factor R = %d: must be >= 1", st.R)
	}
	q := s.Quant
	// A scaled half-band's centre is no longer 1/2: it is quantised as an
	// ordinary tap, and its exact zeros stay zero (no rounding moves them).
	q.HalfBand = st.HalfBand && !st.scaledHalfBand
	if minBits > 0 {
		q.MinBits = max(q.MinBits, minBits)
	}
	sw := StageWidths{HalfBand: st.HalfBand, R: st.R, InputBits: in, OutputBits: ob}
	for i, b := range st.Bands {
		if !(b.MaxError > 0) {
			return StageWidths{}, fmt.Errorf("band %d [%g, %g] Hz has MaxError %g; it must be > 0", i, b.Lo, b.Hi, b.MaxError)
		}
	}
	var bands []remez.Band
	var err error
	sw.FloatDeviations, sw.FloatMeets, bands, err = floatTargets(q.ctx, st.Taps, rate, st.Bands, q.Density)
	if err != nil {
		return StageWidths{}, err
	}
	if coefBits == 0 {
		if st.Up > 0 {
			// A fractional stage's prototype (planPolyphase).
			q.from = widthEstimate(st.Taps, bands, sw.FloatDeviations)
		}
		sw.Coefficients, sw.Deviations, err = MinCoefBits(st.Taps, rate, bands, q)
		if err != nil {
			return StageWidths{}, err
		}
		sw.MeetsBands = true
	} else {
		if q.HalfBand && !IsHalfBand(st.Taps, 1e-6) {
			return StageWidths{}, fmt.Errorf("taps of length %d are not a half-band", len(st.Taps))
		}
		if _, err := symmetrized(st.Taps); err != nil {
			return StageWidths{}, err
		}
		sw.Coefficients, sw.Deviations, sw.MeetsBands = TryWidth(st.Taps, rate, bands, coefBits, q)
		if q.stopped() {
			return StageWidths{}, fmt.Errorf("coefficient rounding stopped: %w", q.ctx.Err())
		}
		if sw.Coefficients.Bits == 0 {
			return StageWidths{}, fmt.Errorf("words CoefBits = %d: too narrow for the half-band's centre 1/2", coefBits)
		}
	}
	sw.MeetsBands = sw.MeetsBands && sw.FloatMeets
	cf := sw.Coefficients
	if st.Interpolate {
		if err := interpAccumulator(&sw, st, in, ob); err != nil {
			// Its output word and gain stand (see plan).
			return StageWidths{OutputBits: ob, Gain: sw.Gain}, err
		}
	} else {
		var dc int64
		for _, v := range cf.Ints {
			dc += v
		}
		sw.Gain = float64(dc) * math.Ldexp(1, -cf.Frac)
		// A fractional stage's prototype (st.Up > 0) is summed one phase
		// at a time: planPolyphase sizes its accumulator, not the whole
		// prototype's sum, which is L times as large.
		if sw.AccumulatorBits = AccumulatorBits(cf.Ints, in); sw.AccumulatorBits > MaxAccumulatorBits && st.Up == 0 {
			// Its output word and gain stand (see plan).
			return StageWidths{OutputBits: ob, Gain: sw.Gain}, &AccumulatorError{DataBits: in, CoefBits: cf.Bits, NeedBits: sw.AccumulatorBits}
		}
		// The accumulator holds Frac + in - 1 fractional bits; the output ob - 1.
		sw.OutputShift = cf.Frac + in - ob
		sw.Points = []string{
			fmt.Sprintf("products and sum: exact (%d x %d bits into %d-bit accumulator)", in, cf.Bits, sw.AccumulatorBits),
		}
	}
	switch {
	case sw.OutputShift > 0:
		sw.Points = append(sw.Points, fmt.Sprintf("output: round half up, dropping %d LSBs, then saturate to %d bits", sw.OutputShift, ob))
	case sw.OutputShift == 0:
		sw.Points = append(sw.Points, fmt.Sprintf("output: no rounding, saturate to %d bits", ob))
	default:
		sw.Points = append(sw.Points, fmt.Sprintf("output: shift left %d bits, saturate to %d bits", -sw.OutputShift, ob))
	}
	n := len(cf.Ints)
	sw.MultiplierA, sw.MultiplierB = in, cf.Bits
	switch {
	case st.HalfBand:
		k := (n + 1) / 4
		c := 0 // the centre: a shift, or a multiply once scaled
		if st.scaledHalfBand {
			c = 1
		}
		sw.MultipliesPerSample = 2*k + c
		sw.CoefMemoryBits = (2*k + c) * cf.Bits
		if !s.NoSymmetry {
			sw.MultipliesPerSample, sw.CoefMemoryBits = k+c, (k+c)*cf.Bits
			sw.MultiplierA = in + 1 // pre-adder output
		}
	case s.NoSymmetry:
		sw.MultipliesPerSample, sw.CoefMemoryBits = n, n*cf.Bits
	default:
		sw.MultipliesPerSample, sw.CoefMemoryBits = (n+1)/2, (n+1)/2*cf.Bits
		if n > 1 {
			sw.MultiplierA = in + 1 // pre-adder output
		}
	}
	// Data memory as package cost counts it (one definition): a polyphase
	// FIR keeps its n taps' worth of input words; a half-band of 4K-1 taps
	// keeps 2K words for its even branch and K for the branch holding the
	// centre tap, 3K in all (its other odd taps are zero).
	sw.DataMemoryBits = n * in
	if st.HalfBand {
		sw.DataMemoryBits = 3 * ((n + 1) / 4) * in
	}
	if st.Interpolate {
		// The transpose's counts, as package cost prices an interpolation
		// chain: each input sample is multiplied once by every distinct
		// coefficient, a symmetric pair's product serving both taps, so
		// no pre-adder widens the data operand.
		sw.MultiplierA = in
	}
	return sw, nil
}

// NativeMultipliers returns how many a x b native multipliers one product of
// x by y bits needs when tiled: the better of the two orientations,
// ceil(x/a)*ceil(y/b) or ceil(x/b)*ceil(y/a). It treats the native block's
// operands as unsigned-width slices of the signed operands; a real signed
// block yields one bit less per extra slice, so for products just over a
// native size the count can be one slice short (check with the vendor's tool).
func NativeMultipliers(x, y, a, b int) int {
	if x <= 0 || y <= 0 || a <= 0 || b <= 0 {
		return 0
	}
	cd := func(p, q int) int { return (p + q - 1) / q }
	return min(cd(x, a)*cd(y, b), cd(x, b)*cd(y, a))
}

// costAtClock fills the hardware multiplier figures: per stage
// ceil(MultipliesPerSample * Fi / fclk) time-shared multipliers (doubled for
// Complex), each NativePerProduct native blocks.
func (sw *StageWidths) costAtClock(outRate float64, complexData bool, s Settings) {
	if sw.CIC || s.NativeA == 0 {
		return
	}
	sw.NativePerProduct = NativeMultipliers(sw.MultiplierA, sw.MultiplierB, s.NativeA, s.NativeB)
	if s.Clock <= 0 {
		return
	}
	rate := float64(sw.MultipliesPerSample) * outRate
	if complexData {
		rate *= 2
	}
	sw.HardwareMultipliers = chain.PerCycle(rate, s.Clock) * sw.NativePerProduct
}

// MemoryBits is the stage's memory as built: its data memory, doubled for
// a complex chain's two data paths, and its coefficient memory, once.
// Widths.MemoryBits is their sum over the stages.
func (sw *StageWidths) MemoryBits(complexData bool) int {
	data := sw.DataMemoryBits
	if complexData {
		data *= 2
	}
	return data + sw.CoefMemoryBits
}

// cicLanes counts a recursive CIC's integrator registers once per lane
// when its high rate, where the integrators run, is above the clock
// (chain.Lanes): the structure package cost prices (cost.CICMemoryBits),
// so that DataMemoryBits is the memory as built. The combs run at the low
// rate and are counted once.
func (sw *StageWidths) cicLanes(clock float64) {
	lanes := chain.Lanes(sw.HighRate(), clock)
	if !sw.CIC || sw.NonRecursive || lanes < 2 {
		return
	}
	integ := 0
	switch {
	case sw.Pruning != nil && !sw.Interpolate:
		for _, b := range sw.Pruning.RegisterBits[:sw.Pruning.N] {
			integ += b
		}
	case sw.CICInterp != nil:
		for _, b := range sw.CICInterp.RegisterBits[sw.CICInterp.N:] {
			integ += b
		}
	}
	sw.DataMemoryBits += (lanes - 1) * integ
}

// b2i is 1 for true, 0 for false.
func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// floatTargets measures the float taps h (Deviations) and returns the
// bands the rounded taps are held to: a band the float design itself
// misses is held to its float deviation plus 1/16 instead, so that a width
// is still found and the shortfall, which no word length can fix, shows in
// the deviations returned; meets says whether the float design met every
// band. ctx stops the measurement (DeviationsContext).
func floatTargets(ctx context.Context, h []float64, rate float64, bands []remez.Band, density int) (dev []float64, meets bool, held []remez.Band, err error) {
	if dev, err = DeviationsContext(ctx, h, rate, bands, density); err != nil {
		return nil, false, nil, err
	}
	held = append([]remez.Band(nil), bands...)
	meets = true
	for i := range held {
		if dev[i] > held[i].MaxError {
			meets = false
			held[i].MaxError = dev[i] * (1 + 1.0/16)
		}
	}
	return dev, meets, held, nil
}
