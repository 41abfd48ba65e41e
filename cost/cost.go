package cost

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
)

// Settings selects how a chain is priced. The zero value is the default:
// symmetric coefficients are folded and no clock is given.
type Settings struct {
	NoSymmetry bool    // count every tap's multiply (docs/design.md §5 default folds symmetry)
	Clock      float64 // Hz; zero means no multipliers-at-clock figure
	// Multiplierless prices every FIR and half-band stage as a shared adder
	// graph of its rounded taps and no multipliers (see Multiplierless in
	// the package doc), and fills the adder fields.
	Multiplierless bool
}

// FloatCoefBits is the coefficient width assumed when the spec asks for
// floating-point coefficients.
const FloatCoefBits = 18

// StageFigures is one stage's share, counted per final output sample.
type StageFigures struct {
	MultipliesPerOutput float64
	AddsPerOutput       float64
	MemoryWords         int
	MemoryBits          int
	LatencyS            float64
	Multipliers         int // hardware multipliers at Settings.Clock; 0 without a clock
	// Lanes is how many input samples the stage takes per clock cycle
	// (Lanes of its input rate): 1 at or below Settings.Clock or without
	// one. A CIC's integrators are replicated over them (CICMemoryBits).
	Lanes int

	// The adder fields are filled with Settings.Multiplierless only (zero
	// otherwise). CoefficientAdders and StructuralAdders are one copy of a
	// FIR or half-band stage's block (one lane of one real filter): the
	// adders of its shared adder graph and those that sum its taps.
	// Adders is the stage's hardware adders as built: the block times its
	// lanes and real filters, or a CIC's integrators and combs.
	// AddersEstimated marks a block counted from an estimated length
	// rather than a graph of rounded taps.
	CoefficientAdders int
	StructuralAdders  int
	Adders            int
	AddersEstimated   bool

	// CICForm is a CIC stage's form (chain.Recursive for every other
	// stage); SubStages are a non-recursive CIC's sub-stages, nil
	// otherwise.
	CICForm   chain.CICForm
	SubStages []SubStage
}

// Figures is what a chain costs (docs/design.md §5) and, for a designed chain, what it achieves (§7).
type Figures struct {
	MultipliesPerOutput float64
	AddsPerOutput       float64
	MemoryWords         int
	MemoryBits          int
	LatencyS            float64
	LatencySamples      float64 // in output samples
	MultipliersAtClock  int     // 0 without a clock
	MaxLanes            int     // the most lanes of any stage (1 without a clock)
	// Adders is the chain's hardware adders with Settings.Multiplierless
	// (the sum of StageFigures.Adders; zero otherwise): the search's cost
	// axis in that mode.
	Adders int
	// Multiplierless says the chain was priced with
	// Settings.Multiplierless.
	Multiplierless bool
	Stages         []StageFigures

	Designed bool
	// Analysis is the measured truth of a designed chain; for an estimated
	// chain it is the per-stage estimate of the same figures.
	Analysis chain.Analysis
}

// Evaluate turns a chain into all of its figures. It is the one call the
// optimiser and the command line both use.
func Evaluate(spec chain.Spec, c *chain.Chain, s Settings) (Figures, error) {
	return EvaluateContext(context.Background(), spec, c, s)
}

// EvaluateContext is Evaluate whose cascade analysis stops once ctx is done
// (chain.AnalyzeContext), returning an error wrapping ctx.Err().
func EvaluateContext(ctx context.Context, spec chain.Spec, c *chain.Chain, s Settings) (Figures, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return Figures{}, err
	}
	f, err := Price(spec, c, s)
	if err != nil {
		return Figures{}, err
	}
	a, err := chain.AnalyzeContext(ctx, c, spec)
	if err != nil {
		return Figures{}, err
	}
	f.Analysis = a
	return f, nil
}

// Price computes the cost figures of Evaluate without the analysis (which
// dominates Evaluate's time on long chains); Figures.Analysis is left zero.
func Price(spec chain.Spec, c *chain.Chain, s Settings) (Figures, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return Figures{}, err
	}
	if c == nil || len(c.Stages) == 0 {
		return Figures{}, errors.New("cost: empty chain")
	}
	if !(s.Clock >= 0) || math.IsInf(s.Clock, 0) {
		return Figures{}, fmt.Errorf("cost: Settings.Clock = %g: must be a finite clock above 0 Hz, or 0 for none", s.Clock)
	}
	if err := chain.CheckClock(slices.Max(c.Rates()), s.Clock); err != nil {
		return Figures{}, fmt.Errorf("cost: Settings.Clock = %g Hz: %v", s.Clock, err)
	}
	f := Figures{Designed: c.Designed, Multiplierless: s.Multiplierless, Stages: make([]StageFigures, len(c.Stages))}
	rates := c.Rates()
	fk := rates[len(rates)-1]
	// later[i] is D(i+1) ... DK, before[i] D1 ... D(i-1): the input
	// samples per sample at stage i's input (integers for integer stages,
	// so that the latency below is exact).
	later := make([]float64, len(c.Stages))
	before := make([]float64, len(c.Stages))
	p, q := 1.0, 1.0
	for i := range c.Stages {
		j := len(c.Stages) - 1 - i
		later[j], before[i] = p, q
		p *= inputsPer(c.Stages[j])
		q *= inputsPer(c.Stages[i])
	}
	inSamples := 0.0 // the chain's latency in input samples
	cx := 1
	if c.Complex {
		cx = 2
	}
	coefBits := spec.CoefBits
	if coefBits == 0 {
		coefBits = FloatCoefBits
	}
	// Words flow in signal order (the reverse of Stages for an
	// interpolation chain): each stage stores the word entering it.
	width := spec.InputBits
	for _, i := range c.SignalOrder() {
		st := c.Stages[i]
		var mul, add float64 // per stage output, one real filter
		var dataWords, dataBits, coefWords int
		var delayIn float64 // group delay, input samples
		var block Block     // a FIR or half-band block's adders (Multiplierless)
		var adders int      // the stage's hardware adders (Multiplierless)
		var subs []SubStage // a non-recursive CIC's sub-stages
		// The cases cover every kind of chain.Kinds (FIR and half-band are
		// chain.FIRStages).
		switch v := st.(type) {
		case chain.CICStage:
			n, m, r := v.N, v.M, v.R
			if v.Form == chain.NonRecursive {
				if err := chain.NonRecursiveOK(m, r); err != nil {
					return Figures{}, fmt.Errorf("cost: stage %d: %v", i+1, err)
				}
				subs = NonRecursiveSubStages(v, width, rates[i], s.Clock)
				var hw int
				add, dataWords, dataBits, hw = nonRecursiveTotals(subs, n, r)
				delayIn = float64(n*(r-1)) / 2
				if s.Multiplierless {
					adders = hw * cx
				}
				if v.OutputBits > 0 {
					width = v.OutputBits
				} else {
					width = min(subs[len(subs)-1].OutputBits, spec.OutputBits)
				}
				break
			}
			add = float64(n*r + n)
			regs := cicRegisters(v, width)
			lanes := Lanes(rates[i], s.Clock)
			dataWords = n*lanes + n*m
			dataBits = CICMemoryBits(v, width, lanes)
			delayIn = float64(n*(r*m-1)) / 2
			if s.Multiplierless {
				adders = CICAdders(n, lanes) * cx
			}
			if v.OutputBits > 0 {
				width = v.OutputBits
			} else {
				width = min(regs[2*n-1], spec.OutputBits)
			}
		case chain.FIRStage:
			n := v.Length
			if v.Taps != nil {
				n = len(v.Taps)
			}
			if n < 1 {
				return Figures{}, fmt.Errorf("cost: stage %d (%s) has no taps and no estimated length", i+1, v.Kind())
			}
			c := firCounts(n, v.HalfBand, s.NoSymmetry)
			mul, add, coefWords, dataWords, delayIn = c.mul, c.add, c.coefWords, c.dataWords, c.delayIn
			dataBits = dataWords * width
			width = spec.OutputBits
			if s.Multiplierless {
				var err error
				if v.Taps != nil {
					block, err = GraphAdders(v.Taps, v.HalfBand, coefBits)
					if err != nil {
						return Figures{}, fmt.Errorf("cost: stage %d (%s): %w", i+1, v.Kind(), err)
					}
				} else {
					block = EstimateAdders(n, v.HalfBand)
				}
				adders = (block.Coefficient + block.Structural) * Lanes(rates[i], s.Clock) * cx
			}
		case chain.PolyphaseStage:
			n := v.Length
			if v.Taps != nil {
				n = len(v.Taps)
			}
			if n < 1 || v.Up < 1 {
				return Figures{}, fmt.Errorf("cost: stage %d (%s) has no taps and no estimated length", i+1, v.Kind())
			}
			// One phase per output: ceil(N/Up) multiplies on as many
			// input words (a phase's taps are not pairwise equal: no
			// pre-adder); the prototype's symmetry pairs phase r with
			// phase (N-1-r) mod Up read backwards, so half the
			// coefficients are stored unless NoSymmetry (package
			// fixed's count); the prototype's group delay (N-1)/2 at Up
			// times the input rate.
			ph := (n + v.Up - 1) / v.Up
			mul, add, dataWords, coefWords = float64(ph), float64(ph-1), ph, (n+1)/2
			if s.NoSymmetry {
				coefWords = n
			}
			delayIn = float64(n-1) / 2 / float64(v.Up)
			dataBits = dataWords * width
			width = spec.OutputBits
			if s.Multiplierless {
				return Figures{}, fmt.Errorf("cost: stage %d (%s): multiplierless pricing takes integer stages only", i+1, v.Kind())
			}
		case chain.FarrowStage:
			p, n := v.Degree, v.Length
			if n < 2 {
				return Figures{}, fmt.Errorf("cost: stage %d (%s) has no subfilter length", i+1, v.Kind())
			}
			// P+1 subfilters of N taps on one delay line of N input
			// words, then P multiplies by mu (Horner's rule); every
			// coefficient stored; the output at time t waits for the
			// input N/2 samples past it.
			mul, add = float64((p+1)*n+p), float64((p+1)*(n-1)+p)
			dataWords, coefWords = n, (p+1)*n
			delayIn = float64(n) / 2
			dataBits = dataWords * width
			width = spec.OutputBits
			if s.Multiplierless {
				return Figures{}, fmt.Errorf("cost: stage %d (%s): multiplierless pricing takes integer stages only", i+1, v.Kind())
			}
		default:
			return Figures{}, fmt.Errorf("cost: stage %d is a %T; cost prices chain.CICStage, chain.FIRStage, chain.PolyphaseStage and chain.FarrowStage values", i+1, st)
		}
		sf := multiplyOut(mul, add, dataWords, dataBits, stored(coefWords, s), coefBits, cx, later[i], delayIn, rates[i])
		if s.Clock > 0 && mul > 0 && !s.Multiplierless {
			sf.Multipliers = chain.PerCycle(mul*float64(cx)*rates[i+1], s.Clock)
		}
		sf.CoefficientAdders, sf.StructuralAdders, sf.AddersEstimated = block.Coefficient, block.Structural, block.Estimated
		sf.Adders = adders
		if v, ok := st.(chain.CICStage); ok {
			sf.CICForm, sf.SubStages = v.Form, subs
		}
		f.Adders += adders
		sf.Lanes = Lanes(rates[i], s.Clock)
		f.MaxLanes = max(f.MaxLanes, sf.Lanes)
		f.Stages[i] = sf
		f.MultipliesPerOutput += sf.MultipliesPerOutput
		f.AddsPerOutput += sf.AddsPerOutput
		f.MemoryWords += sf.MemoryWords
		f.MemoryBits += sf.MemoryBits
		inSamples += delayIn * before[i]
		f.MultipliersAtClock += sf.Multipliers
	}
	// The chain's latency is summed in input samples and divided once,
	// so that two chains of the same delay get the same figure to the
	// bit (a sum of each stage's seconds differs in its last bits with
	// the order of the stages, which would put a chain on the front that
	// another ties in latency and beats on the rest).
	f.LatencyS = inSamples / rates[0]
	f.LatencySamples = f.LatencyS * fk
	return f, nil
}

// inputsPer is a stage's input samples per output sample: its factor, or
// a fractional stage's Down/Up.
func inputsPer(st chain.Stage) float64 {
	if u, d := fractionalRatio(st); u > 0 {
		return float64(d) / float64(u)
	}
	return float64(st.Factor())
}

// Lanes is how many samples a stage whose input runs at rate Hz must take
// per cycle of a clock of clock Hz (chain.Lanes, the rule's owner).
func Lanes(rate, clock float64) int { return chain.Lanes(rate, clock) }

// CICMemoryBits is a CIC's register memory as Price counts it: each
// integrator's register once per lane (a CIC whose input runs above the
// clock is built lanes wide, and each lane's running sum is registered:
// common practice, a planning estimate), and M delay words per comb (the
// combs run at the output rate), each as wide as its pruned register
// (CICStage.RegisterBits; without them, chain.CICRegisterWidth for inBits,
// or for the stage's own InputBits when set).
//
// A CIC interpolator (CICStage.Interpolator) runs its combs, registers
// RegisterBits[0..N-1], at its input rate and its integrators,
// RegisterBits[N..2N-1], at its output rate: the integrators count once
// per lane of that rate, the combs M words each.
func CICMemoryBits(v chain.CICStage, inBits, lanes int) int {
	regs := cicRegisters(v, inBits)
	bits := 0
	if v.Interpolator {
		for j := 0; j < v.N; j++ {
			bits += v.M*regs[j] + max(1, lanes)*regs[v.N+j]
		}
		return bits
	}
	for j := 0; j < v.N; j++ {
		bits += max(1, lanes)*regs[j] + v.M*regs[v.N+j]
	}
	return bits
}

// cicRegisters are v's 2N register widths: its pruned ones, or the unpruned
// width for its input word.
func cicRegisters(v chain.CICStage, inBits int) []int {
	n := v.N
	if len(v.RegisterBits) == 2*n {
		return v.RegisterBits
	}
	in := v.InputBits
	if in == 0 {
		in = inBits
	}
	w := chain.CICRegisterWidth(n, v.M, v.R, in)
	regs := make([]int, 2*n)
	for j := range regs {
		regs[j] = w
	}
	return regs
}

// firCount is a FIR or half-band stage's counts per its own output, for
// one real filter.
type firCount struct {
	mul, add             float64
	dataWords, coefWords int
	delayIn              float64 // group delay, input samples
}

// firCounts is the count rule of a stage of n taps (see the package doc):
// a FIR's, or a half-band's of 4K-1 taps.
func firCounts(n int, halfBand, noSymmetry bool) firCount {
	var c firCount
	if halfBand {
		k := (n + 1 + 3) / 4
		c.mul, c.coefWords = float64(2*k), 2*k
		if !noSymmetry {
			c.mul, c.coefWords = float64(k), k
		}
		c.add = float64(2 * k)
		c.dataWords = 3 * k
	} else {
		c.mul, c.coefWords = float64(n), n
		if !noSymmetry {
			c.mul, c.coefWords = float64((n+1)/2), (n+1)/2
		}
		c.add = float64(n - 1)
		c.dataWords = n
	}
	c.delayIn = float64(n-1) / 2
	return c
}

// FIRStage is Price's figures for one FIR (halfBand false) or half-band
// stage of n taps with input rate rate Hz whose output is followed by
// later-stage factors multiplying to later, on data words of width bits
// and coefficients of coefBits, in a chain of cx real filters (2 for
// complex): the pricing the search's estimate tier applies to an estimated
// length. Multipliers and Lanes are left zero; with s.Multiplierless the
// adder fields are EstimateAdders' block, over the lanes at s.Clock.
func FIRStage(n int, halfBand bool, s Settings, later float64, cx, width, coefBits int, rate float64) StageFigures {
	c := firCounts(n, halfBand, s.NoSymmetry)
	sf := multiplyOut(c.mul, c.add, c.dataWords, c.dataWords*width, stored(c.coefWords, s), coefBits, cx, later, c.delayIn, rate)
	if s.Multiplierless {
		b := EstimateAdders(n, halfBand)
		sf.CoefficientAdders, sf.StructuralAdders, sf.AddersEstimated = b.Coefficient, b.Structural, true
		sf.Adders = (b.Coefficient + b.Structural) * Lanes(rate, s.Clock) * cx
	}
	return sf
}

// stored is how many of a stage's coefWords coefficients are stored:
// all, or none when multiplierless (the taps are wired into the adder
// graph; package fixed counts likewise, fixed.Settings.Multiplierless).
func stored(coefWords int, s Settings) int {
	if s.Multiplierless {
		return 0
	}
	return coefWords
}

// multiplyOut turns a stage's counts per its own output, for one real
// filter, into its StageFigures per final output: multiplies and adds times
// cx filters and the later factors, data memory times cx, coefficients
// once, the group delay at its input rate.
func multiplyOut(mul, add float64, dataWords, dataBits, coefWords, coefBits, cx int, later, delayIn, rate float64) StageFigures {
	return StageFigures{
		MultipliesPerOutput: mul * float64(cx) * later,
		AddsPerOutput:       add * float64(cx) * later,
		MemoryWords:         dataWords*cx + coefWords,
		MemoryBits:          dataBits*cx + coefWords*coefBits,
		LatencyS:            delayIn / rate,
	}
}

// fractionalRatio returns a fractional stage's Up and Down, and 0, 0 for
// an integer stage.
func fractionalRatio(st chain.Stage) (up, down int) {
	switch v := st.(type) {
	case chain.PolyphaseStage:
		return v.Up, v.Down
	case chain.FarrowStage:
		return v.Up, v.Down
	}
	return 0, 0
}
