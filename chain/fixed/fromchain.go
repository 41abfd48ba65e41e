package fixed

import (
	"context"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

// FromChain converts a designed chain and its spec into the planner's terms.
// Each FIR and half-band stage must meet the bands of its chain.Requirement:
// the passband [0, Req.Passband] within Req.Dp (relative to the CIC droop it
// corrects, |A H_cic - 1| <= Dp, for a compensating stage, as the chain
// package designs it) and every stopband within Req.Ds. The words come from
// the spec: InputBits, OutputBits between stages and at the output (as the
// chain package prunes its CICs), and CoefBits (zero: auto).
//
// An interpolation chain (Direction chain.Interpolate, held by the chain
// package as its transpose) becomes an interpolation cascade: its stages in
// signal order, c.SignalOrder() (Cascade.Stages[k] is c.Stages[
// c.SignalOrder()[k]]), each with Stage.Interpolate set, from the channel
// rate (Cascade.InputRate = c.OutputRate()). Its taps and bands are the
// transpose's, at each stage's high rate; its fractional stage, the
// first, is the transpose of the chain's L/M (Up M, Down L: package doc,
// Fractional stages). Stage numbers in errors count in signal order.
func FromChain(spec chain.Spec, c *chain.Chain) (Cascade, Words, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return Cascade{}, Words{}, err
	}
	if c == nil || len(c.Stages) == 0 {
		return Cascade{}, Words{}, fmt.Errorf("fixed: the chain has no stages")
	}
	if c.Direction != spec.Direction() {
		return Cascade{}, Words{}, fmt.Errorf("fixed: the chain's direction, %s, is not the spec's, %s", c.Direction, spec.Direction())
	}
	interp := c.Direction == chain.Interpolate
	cas := Cascade{InputRate: c.InputRate, Complex: c.Complex, Interpolate: interp, Passband: spec.Passband, Protected: spec.Protected}
	if interp {
		cas.InputRate = c.OutputRate()
	}
	rates := c.Rates()
	for k, i := range c.SignalOrder() {
		// The cases cover every kind of chain.Kinds (FIR and half-band are
		// chain.FIRStages).
		var fs Stage
		var err error
		switch st := c.Stages[i].(type) {
		case chain.CICStage:
			fs, err = cicFromChain(st, interp, k)
		case *chain.CICStage:
			fs, err = cicFromChain(*st, interp, k)
		case chain.FIRStage:
			fs, err = firFromChain(st, c, rates, i, k)
		case *chain.FIRStage:
			fs, err = firFromChain(*st, c, rates, i, k)
		case chain.PolyphaseStage, chain.FarrowStage:
			fs, err = fracFromChain(st, k, interp)
		case *chain.PolyphaseStage:
			fs, err = fracFromChain(*st, k, interp)
		case *chain.FarrowStage:
			fs, err = fracFromChain(*st, k, interp)
		default:
			err = fmt.Errorf("fixed: stage %d is a %T; FromChain takes chain.CICStage, chain.FIRStage, chain.PolyphaseStage and chain.FarrowStage values", k+1, st)
		}
		if err != nil {
			return Cascade{}, Words{}, err
		}
		fs.Interpolate = interp
		cas.Stages = append(cas.Stages, fs)
	}
	w := Words{InputBits: spec.InputBits, OutputBits: spec.OutputBits, DataBits: spec.OutputBits, CoefBits: spec.CoefBits}
	return cas, w, nil
}

// cicFromChain is the CIC stage st, at place k in signal order.
func cicFromChain(st chain.CICStage, interp bool, k int) (Stage, error) {
	if st.Interpolator != interp {
		what, dir := "decimator", "an interpolation"
		if st.Interpolator {
			what, dir = "interpolator", "a decimation"
		}
		return Stage{}, fmt.Errorf("fixed: stage %d is a CIC %s in %s chain", k+1, what, dir)
	}
	return Stage{CIC: true, N: st.N, M: st.M, R: st.R, NonRecursive: st.Form == chain.NonRecursive}, nil
}

// firFromChain is the FIR stage st, c.Stages[i], at place k in signal
// order.
func firFromChain(st chain.FIRStage, c *chain.Chain, rates []float64, i, k int) (Stage, error) {
	if len(st.Taps) == 0 {
		return Stage{}, fmt.Errorf("fixed: stage %d has no taps (an estimate cannot be quantised)", k+1)
	}
	r := st.Req
	if !(r.Dp > 0) || !(r.Ds > 0) || !(r.Passband > 0) {
		return Stage{}, fmt.Errorf("fixed: stage %d carries no requirement (Dp %g, Ds %g, passband %g Hz)", k+1, r.Dp, r.Ds, r.Passband)
	}
	var hc func(float64) float64
	if len(r.Compensates) > 0 {
		hc = droop(c, rates, r.Compensates)
	}
	return Stage{R: st.R, Taps: st.Taps, HalfBand: st.HalfBand, Bands: r.Bands(hc)}, nil
}

// droop returns the product of the listed CIC stages' gains at f Hz; f lies in
// the passband, below every earlier Nyquist rate, so each CIC sees f itself.
func droop(c *chain.Chain, rates []float64, idx []int) func(float64) float64 {
	type cr struct {
		s    chain.Stage
		rate float64
	}
	var cs []cr
	for _, j := range idx {
		cs = append(cs, cr{c.Stages[j], rates[j]})
	}
	return func(f float64) float64 {
		g := 1.0
		for _, v := range cs {
			g *= v.s.Gain(f, v.rate)
		}
		return g
	}
}

// Result is everything the package reports on one chain.
type Result struct {
	Widths *Widths
	// Quantised is the cascade as it will be built, measured by
	// chain.Analyze on QuantisedChain: alias rejection and passband ripple of
	// the rounded taps. It needs no bit-true run.
	Quantised chain.Analysis
	// BitTrue is the bit-true run; it is the zero value when BitTrueErr is
	// set.
	BitTrue BitTrueResult
	// BitTrueErr says why the bit-true run could not be made (e.g. a CIC
	// register over MaxModelBits); Widths and Quantised are valid all the same.
	BitTrueErr error
	// UnityGainAsked records Settings.UnityGain, so that the report can say
	// when the correction had no stage to go into.
	UnityGainAsked bool
}

// PlanChain plans the word lengths of a designed chain (FromChain, then
// Plan) and measures the chain as it will be built: chain.Analyze on the
// rounded taps (QuantisedChain). With "auto" coefficient widths it then
// widens the stages responsible until the whole quantised chain meets the
// spec (see widen and the package doc). It is the one call that judges a
// chain on its quantised coefficients; the search and the report both use
// it.
func PlanChain(spec chain.Spec, c *chain.Chain, s Settings) (*Widths, chain.Analysis, error) {
	return PlanChainContext(context.Background(), spec, c, s)
}

// PlanChainContext is PlanChain stopped by ctx, checked before the plan,
// before every measurement of the quantised chain and every bit widen adds:
// once ctx is done it returns an error wrapping ctx.Err().
func PlanChainContext(ctx context.Context, spec chain.Spec, c *chain.Chain, s Settings) (*Widths, chain.Analysis, error) {
	_, ws, a, err := planChain(ctx, spec, c, s)
	return ws, a, err
}

// planStopped is the error of word-length planning stopped by its context.
func planStopped(err error) error {
	return fmt.Errorf("fixed: word-length planning stopped: %w", err)
}

// planChain is PlanChain that also returns the cascade it planned.
func planChain(ctx context.Context, spec chain.Spec, c *chain.Chain, s Settings) (Cascade, *Widths, chain.Analysis, error) {
	if err := ctx.Err(); err != nil {
		return Cascade{}, nil, chain.Analysis{}, planStopped(err)
	}
	cas, w, err := FromChain(spec, c)
	if err != nil {
		return Cascade{}, nil, chain.Analysis{}, err
	}
	s.Quant.ctx = ctx
	ws, err := Plan(cas, w, s)
	if err != nil {
		return Cascade{}, nil, chain.Analysis{}, err
	}
	if err := ctx.Err(); err != nil {
		return Cascade{}, nil, chain.Analysis{}, planStopped(err)
	}
	a, err := chain.AnalyzeContext(ctx, QuantisedChain(c, ws), spec)
	if err != nil {
		return Cascade{}, nil, chain.Analysis{}, err
	}
	if w.CoefBits == 0 {
		ws, a, err = widen(ctx, spec, c, cas, w, s, ws, a)
		if err != nil {
			return Cascade{}, nil, chain.Analysis{}, err
		}
	}
	return cas, ws, a, nil
}

// The whole-chain check of "auto" coefficient widths: the quantised chain
// must reach the spec's rejection and keep within its ripple (or the float
// chain's own figures, when the design itself falls short of the spec: no
// width can do better than the taps), the verdict's rule
// (chain.Analysis.Meets). maxWidenSteps bounds the bits widen adds over
// the whole chain.
const maxWidenSteps = 24

// widen makes "auto" coefficient widths meet the spec on the whole chain:
// while chain.Analyze on the quantised chain falls short, it adds a bit to
// the stage whose rounding costs the most (at the worst alias for the
// rejection, over the passband for the ripple) and plans again, until the
// chain meets, the stage reaches its width limit (QuantSettings.MaxBits) or
// maxWidenSteps bits were added. It returns the last plan and its analysis.
func widen(ctx context.Context, spec chain.Spec, c *chain.Chain, cas Cascade, w Words, s Settings, ws *Widths, a chain.Analysis) (*Widths, chain.Analysis, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return nil, chain.Analysis{}, err
	}
	if a.Meets(spec) {
		// Nothing to widen, and no need to measure the float chain.
		return ws, a, nil
	}
	fa, err := chain.AnalyzeContext(ctx, c, spec)
	if err != nil {
		return nil, chain.Analysis{}, err
	}
	rejTarget := math.Min(spec.RejectionDB, fa.AliasRejectionDB)
	ripTarget := math.Max(spec.RippleDB, fa.PassbandRippleDB)
	limit := s.Quant.MaxBits
	if limit == 0 {
		limit = MaxBits
	}
	minBits := make([]int, len(ws.Stages))
	for step := 0; step < maxWidenSteps; step++ {
		if err := ctx.Err(); err != nil {
			return nil, chain.Analysis{}, planStopped(err)
		}
		shortRej := a.AliasRejectionDB < rejTarget
		if !shortRej && a.PassbandRippleDB <= ripTarget {
			break
		}
		i := culprit(c, cas, ws, a, shortRej)
		if i < 0 || ws.Stages[i].Coefficients.Bits >= limit {
			break
		}
		minBits[i] = ws.Stages[i].Coefficients.Bits + 1
		next, err := plan(cas, w, s, minBits)
		if err != nil {
			return nil, chain.Analysis{}, err
		}
		na, err := chain.AnalyzeContext(ctx, QuantisedChain(c, next), spec)
		if err != nil {
			return nil, chain.Analysis{}, err
		}
		ws, a = next, na
	}
	for i := range ws.Stages {
		sw := &ws.Stages[i]
		if minBits[i] > 0 {
			sw.Points = append(sw.Points, fmt.Sprintf("coefficients: widened to %d bits so that the quantised chain meets the spec", sw.Coefficients.Bits))
		}
	}
	return ws, a, nil
}

// culprit returns the FIR stage whose rounding costs the chain the most:
// for the rejection, the one whose float taps (gain correction included)
// would lower the quantised chain's response at the worst alias the most;
// for the ripple, the one with the largest relative rounding error of its
// amplitude over the passband. It returns -1 when the chain has no FIR.
func culprit(c *chain.Chain, cas Cascade, ws *Widths, a chain.Analysis, rejection bool) int {
	best, bestV := -1, math.Inf(-1)
	q := QuantisedChain(c, ws)
	order := c.SignalOrder()
	for i, st := range cas.Stages {
		if st.CIC {
			continue
		}
		sw := &ws.Stages[i]
		var v float64
		if st.fractional() {
			v = fracCulprit(c, q, order[i], sw, st, a, cas.Passband, rejection)
			if v > bestV {
				best, bestV = i, v
			}
			continue
		}
		ft, qt := sw.floatTaps(st), sw.Coefficients.Float()
		if rejection {
			alt := *q
			alt.Stages = append([]chain.Stage(nil), q.Stages...)
			fs, ok := alt.Stages[order[i]].(chain.FIRStage)
			if !ok {
				continue
			}
			fs.Taps = ft
			alt.Stages[order[i]] = fs
			v = aliasPathGain(q, a) - aliasPathGain(&alt, a)
		} else {
			const pts = 256
			for j := 0; j <= pts; j++ {
				f := cas.Passband * float64(j) / pts
				af := Amplitude(ft, f, sw.HighRate())
				v = math.Max(v, math.Abs(Amplitude(qt, f, sw.HighRate())-af)/math.Max(math.Abs(af), 1e-300))
			}
		}
		if v > bestV {
			best, bestV = i, v
		}
	}
	return best
}

// Evaluate is the one call for a designed chain: PlanChain, then BitTrue
// with the alias test tone (unless sig.AliasHz is set) at the quantised
// chain's worst alias. sig is the test signal (its zero value is the
// default). It returns an error only when PlanChain does; when the bit-true
// run cannot be made, the Result carries the widths and the quantised
// figures and BitTrueErr says why.
func Evaluate(spec chain.Spec, c *chain.Chain, s Settings, sig Signal) (*Result, error) {
	return EvaluateContext(context.Background(), spec, c, s, sig)
}

// EvaluateContext is Evaluate stopped by ctx (PlanChainContext, then
// BitTrueContext): once ctx is done it returns no Result and an error
// wrapping ctx.Err().
func EvaluateContext(ctx context.Context, spec chain.Spec, c *chain.Chain, s Settings, sig Signal) (*Result, error) {
	cas, ws, qa, err := planChain(ctx, spec, c, s)
	if err != nil {
		return nil, err
	}
	if err := headroomPoints(ctx, cas, ws); err != nil {
		return nil, fmt.Errorf("fixed: headroom bound stopped: %w", err)
	}
	res := &Result{Widths: ws, Quantised: qa, UnityGainAsked: s.UnityGain}
	if sig.AliasHz == 0 {
		sig.AliasHz = qa.WorstAliasHz
	}
	if sig.Shaper == nil {
		sig.Shaper = s.Shaper
	}
	if sig.Inputs == nil {
		sig.Inputs = s.Inputs
	}
	res.BitTrue, res.BitTrueErr = BitTrueContext(ctx, cas, ws, sig)
	if cerr := ctx.Err(); cerr != nil {
		return nil, fmt.Errorf("fixed: bit-true run stopped: %w", cerr)
	}
	if res.BitTrueErr != nil {
		res.BitTrue = BitTrueResult{}
	}
	return res, nil
}

// QuantisedChain returns a copy of c whose FIR and half-band taps are the
// quantised coefficients of w (from Plan on FromChain(spec, c)), for
// chain.Analyze and chain.Run. A fractional stage becomes the
// chain.PolyphaseStage it is as built (package doc, Fractional stages): a
// polyphase stage with its quantised prototype, a Farrow stage as the
// polyphase filter of its quantised rows at its rounded output times (its
// Plan entry still says farrow). It panics if w does not match c, which
// includes a c holding a stage FromChain refuses.
//
// The widths of an interpolation chain are in signal order (FromChain):
// c.Stages[c.SignalOrder()[k]] takes w.Stages[k]'s coefficients.
func QuantisedChain(c *chain.Chain, w *Widths) *chain.Chain {
	if len(w.Stages) != len(c.Stages) {
		panic("fixed: QuantisedChain with widths of another chain")
	}
	q := *c
	q.Stages = make([]chain.Stage, len(c.Stages))
	at := widthsIndex(c)
	for i, s := range c.Stages {
		// The same cases as FromChain's, so that no stage it takes is
		// passed on unquantised.
		switch st := s.(type) {
		case chain.CICStage, *chain.CICStage:
			q.Stages[i] = s
		case chain.FIRStage:
			st.Taps = w.Stages[at[i]].Coefficients.Float()
			q.Stages[i] = st
		case *chain.FIRStage:
			cp := *st
			cp.Taps = w.Stages[at[i]].Coefficients.Float()
			q.Stages[i] = cp
		case chain.PolyphaseStage, chain.FarrowStage, *chain.PolyphaseStage, *chain.FarrowStage:
			q.Stages[i] = quantisedFrac(s, &w.Stages[at[i]], c.Direction == chain.Interpolate)
		default:
			panic(fmt.Sprintf("fixed: QuantisedChain with widths of another chain (stage %d is a %T, which FromChain refuses)", i+1, s))
		}
	}
	return &q
}

// widthsIndex returns, for each of c.Stages, the index of its stage in the
// cascade FromChain makes (and so in its Widths): the same index for a
// decimation chain, its place in signal order for an interpolation chain.
func widthsIndex(c *chain.Chain) []int {
	at := make([]int, len(c.Stages))
	for k, i := range c.SignalOrder() {
		at[i] = k
	}
	return at
}
