package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/cost"
)

// MaxCandidates is the largest search space Plan scores. A larger one is
// refused with an error before any work, so that Plan finishes or refuses
// within its time budget (about 30 s on two cores for D up to 2^20).
const MaxCandidates = 1 << 24

// A designed chain that misses the rejection by no more than the ripple is
// designed again with the target raised by the shortfall plus
// redesignExtraDB (later steps scaled by the margin the last one bought,
// at most maxRaiseScale times), at most maxRedesigns times (see
// realDesigner.measure).
const (
	maxRedesigns    = 3
	redesignExtraDB = 0.005
	maxRaiseScale   = 4
)

// With a fixed coefficient width, a chain whose rounded taps miss the spec
// is designed again with its targets tightened by the margin rounding
// needs, at most maxRoundingRedesigns times, each time with
// roundingExtraDB more rejection than the measured rounding error calls
// for (see realDesigner.survive). Five tries, not three: at a width close
// to the target's own (10 bits for 66 dB), each re-design's longer taps
// round worse, and three tries left an 80 to 2.5 MS/s receiver with no
// chain at 66, 69 and 72 dB while 67, 68 and 70 dB found one that meets
// all three (TestRoundingRedesignsReach).
const (
	maxRoundingRedesigns = 5
	roundingExtraDB      = 1
)

// closeDB is how far under the target a chain's rounded taps, as first
// designed, may fall for a re-design whose own rounding comes out
// hopeless not to end its re-designs: the fixed margins are tried for a
// chain that nearly met, not for every chain.
const closeDB = 3

// roundingLadder are the fixed margins survive tries once the measured
// rule has run out: the rejection raised by raiseDB over the target and
// the ripple budget cut by the fraction cut of it. On an invented 40 to
// 5 MS/s receiver with 10-bit taps and a 0.05 dB ripple, where rounding
// alone moves the ripple by 0.026 to 0.077 dB from one design to the
// next, the rule found a chain at 6 of 14 targets from 60 to 74 dB and
// the ladder at 12 (TestRoundingLadder).
var roundingLadder = []struct{ raiseDB, cut float64 }{{3, 0.5}, {6, 0.75}, {4.5, 0.25}, {9, 0.6}}

// Plan searches every split of the spec's ratio.
func Plan(ctx context.Context, spec chain.Spec, s Settings) (*Result, error) {
	ns, err := spec.Normalize()
	if err != nil {
		return nil, err
	}
	if err := s.checkFor(ns); err != nil {
		return nil, err
	}
	ctx, cancel := withMeasureReserve(ctx)
	defer cancel()
	// An interpolation spec is searched as its transpose (the chains'
	// Plan and Stages run from the high rate down; see chain.Chain), and
	// its CICs take the recursive form, the one built for interpolation.
	ns = ns.DecimationView()
	if ns.Fractional() {
		return planFractional(ctx, ns, s)
	}
	if ns.Direction() == chain.Interpolate {
		s.CICForms = slices.DeleteFunc(slices.Clone(s.CICForms), func(f chain.CICForm) bool { return f == chain.NonRecursive })
	}
	p := newParams(ns, s.Cost.NoSymmetry)
	p.clock, p.lim, p.adders = s.Cost.Clock, s.Limits, s.Cost.Multiplierless
	p.d = ns.Decimation()
	if s.Chain.Memo == nil {
		// Most stage designs of a search repeat a stage of another chain
		// (the same bands, deviations and compensated CIC): each is
		// designed once.
		s.Chain.Memo = chain.NewStageMemo()
	}
	return search(ctx, p, &s, newEstimator(p, s.Tolerance), realDesigner{ctx: ctx, spec: ns, s: &s})
}

// checkFor is check, and the clock against spec's highest rate
// (chain.CheckClock).
func (s *Settings) checkFor(spec chain.Spec) error {
	if err := s.check(); err != nil {
		return err
	}
	if err := chain.CheckClock(math.Max(spec.InputRate, spec.OutputRate), s.Cost.Clock); err != nil {
		return fmt.Errorf("optimize: Settings.Cost.Clock = %g Hz: %v", s.Cost.Clock, err)
	}
	return nil
}

func (s *Settings) check() error {
	if s.MaxStages < 0 {
		return fmt.Errorf("optimize: MaxStages = %d: must not be negative", s.MaxStages)
	}
	for _, k := range s.Kinds {
		if !slices.Contains(chain.Kinds(), k) {
			return fmt.Errorf("optimize: Kinds contains %d: must be one of chain.Kinds()", int(k))
		}
	}
	for _, l := range []struct {
		name string
		v    int
	}{{"MaxRegisterBits", s.Limits.MaxRegisterBits}, {"MaxCICFactor", s.Limits.MaxCICFactor}, {"MaxMultipliers", s.Limits.MaxMultipliers}, {"MaxMemoryBits", s.Limits.MaxMemoryBits}} {
		if l.v < 0 {
			return fmt.Errorf("optimize: Limits.%s = %d: must not be negative (0 is no limit)", l.name, l.v)
		}
	}
	if s.Limits.MaxMultipliers > 0 && !(s.Cost.Clock > 0) {
		return fmt.Errorf("optimize: Limits.MaxMultipliers = %d needs Cost.Clock: multipliers are counted at the clock", s.Limits.MaxMultipliers)
	}
	if s.MaxStages > MaxStagesLimit {
		return fmt.Errorf("optimize: MaxStages = %d: must be at most %d", s.MaxStages, MaxStagesLimit)
	}
	for _, n := range s.CICOrders {
		if n < 1 || n > MaxCICOrder {
			return fmt.Errorf("optimize: CICOrders contains %d: must be 1 to %d", n, MaxCICOrder)
		}
	}
	for _, f := range s.CICForms {
		if f != chain.Recursive && f != chain.NonRecursive {
			return fmt.Errorf("optimize: CICForms contains %d: must be chain.Recursive or chain.NonRecursive", int(f))
		}
	}
	for _, m := range s.CICDelays {
		if m < 1 || m > MaxCICDelay {
			return fmt.Errorf("optimize: CICDelays contains %d: must be 1 to %d", m, MaxCICDelay)
		}
	}
	for _, w := range []struct {
		name string
		v    float64
	}{{"WeightMultiplies", s.WeightMultiplies}, {"WeightMemory", s.WeightMemory}, {"WeightLatency", s.WeightLatency}, {"Tolerance", s.Tolerance}, {"MaxWork", s.MaxWork}} {
		if w.v < 0 || math.IsNaN(w.v) || math.IsInf(w.v, 0) {
			return fmt.Errorf("optimize: %s = %g: must be finite and not negative", w.name, w.v)
		}
	}
	if s.Jobs < 0 {
		return fmt.Errorf("optimize: Jobs = %d: must not be negative", s.Jobs)
	}
	if s.MaxTaps < 0 {
		return fmt.Errorf("optimize: MaxTaps = %d: must not be negative", s.MaxTaps)
	}
	if s.MaxDesigns < 0 {
		return fmt.Errorf("optimize: MaxDesigns = %d: must not be negative", s.MaxDesigns)
	}
	if s.Rule != Knee && s.Rule != WeightedCost {
		return fmt.Errorf("optimize: Rule = %d: must be Knee or WeightedCost", int(s.Rule))
	}
	if err := s.Chain.Check(); err != nil {
		return errors.New("optimize: Settings.Chain." + strings.TrimPrefix(err.Error(), "chain: Settings."))
	}
	return nil
}

// newSpace fills in the settings' defaults for ratio d.
func newSpace(p *params, s *Settings) *space {
	sp := &space{d: p.d, interp: p.interp, maxStages: s.MaxStages, orders: s.CICOrders, delays: s.CICDelays}
	if sp.maxStages == 0 {
		sp.maxStages = DefaultMaxStages
	}
	if sp.orders == nil {
		sp.orders = DefaultCICOrders()
	}
	if sp.delays == nil {
		sp.delays = DefaultCICDelays()
	}
	sp.forms = s.CICForms
	if sp.forms == nil {
		sp.forms = []chain.CICForm{chain.Recursive}
	}
	if s.Kinds == nil {
		sp.cic, sp.halfBand, sp.fir = true, true, true
	}
	for _, k := range s.Kinds {
		switch k {
		case chain.CIC:
			sp.cic = true
		case chain.HalfBand:
			sp.halfBand = true
		case chain.FIR:
			sp.fir = true
		}
	}
	// The multiband layout's alias bands [k Fi - fa, k Fi + fa] cover the
	// whole of [Fi - fa, F(i-1)/2], as the lowpass one does, when the factor
	// is 2 or when 2 fa >= Fi.
	sp.sameLayout = func(prefix, f int) bool {
		out := p.f0 / float64(prefix*f)
		return f == 2 || 2*p.fa >= out
	}
	return sp
}

// designer designs one candidate for real and prices it (design), and
// measures a designed candidate's cascade against the spec (analyze, the
// costlier half for large ratios, so it is spent on front members only).
// Each returns the candidate, or a non-empty reason to drop it.
type designer interface {
	design(plan []chain.StagePlan) (Candidate, Reason)
	analyze(c Candidate) (Candidate, Reason)
}

type realDesigner struct {
	ctx  context.Context // stops designs, re-designs and word-length plans
	spec chain.Spec      // normalised
	s    *Settings
}

// under is the designer working under ctx instead (see designTier.salvage).
func (r realDesigner) under(ctx context.Context) designer {
	r.ctx = ctx
	return r
}

func (r realDesigner) design(plan []chain.StagePlan) (Candidate, Reason) {
	c, err := chain.DesignContext(r.ctx, r.spec, plan, r.s.Chain)
	if err != nil {
		return Candidate{}, ReasonDesignFailed
	}
	f, err := cost.Price(r.spec, c, r.s.Cost)
	if err != nil {
		return Candidate{}, ReasonEvaluateFailed
	}
	if why := overLimits(f, c, r.s.Limits); why != "" {
		return Candidate{}, why
	}
	cd := Candidate{Plan: plan, Chain: c, Figures: f}
	if r.rounded(r.spec) && r.atRisk(c) {
		// Rounding may cost this chain its margin: it is measured and, if
		// need be, re-designed now, so that what the search learns from it
		// is the chain as it will be built.
		return r.survive(cd, r.spec)
	}
	return cd, ""
}

// designPrefix designs plan's first n stages alone (the rest estimated,
// chain.DesignPrefixContext) and prices them: the figures of those stages
// are the ones the whole chain's design gives them, unless the whole chain
// is re-designed for its rounded taps (see design), which only its later
// stages can bring about. ok is false when it cannot: a stage designed is
// at risk from rounding (atRisk: design would measure the whole chain on
// its rounded taps), or the partial design failed; the caller then designs
// the whole chain (a failing stage is remembered by the stage memo, so
// that costs nothing twice). The limits (Settings.Limits) are not checked
// on a part: its stages are learnt, and the chains they make are checked
// whole.
func (r realDesigner) designPrefix(plan []chain.StagePlan, n int) (c Candidate, ok bool) {
	ch, err := chain.DesignPrefixContext(r.ctx, r.spec, plan, n, r.s.Chain)
	if err != nil {
		return Candidate{}, false
	}
	if r.rounded(r.spec) && r.atRisk(ch) {
		return Candidate{}, false
	}
	f, err := cost.Price(r.spec, ch, r.s.Cost)
	if err != nil {
		return Candidate{}, false
	}
	return Candidate{Plan: plan, Chain: ch, Figures: f}, true
}

// prefixDesigner is a designer that can design a plan's leading stages
// alone (realDesigner.designPrefix).
type prefixDesigner interface {
	designPrefix(plan []chain.StagePlan, n int) (Candidate, bool)
}

// riskRatio is the predicted rounding floor, as a fraction of a stage's
// stopband limit, from which design measures a chain on its rounded taps
// at once (see atRisk).
const riskRatio = 1.0 / 4

// atRisk reports whether a FIR or half-band stage of the designed chain c
// has a predicted rounding floor q sqrt(N/12) (see roundingFloor; its own
// largest tap and length) above riskRatio times its stopband limit Ds: the
// rounding error's peak, a few times that RMS, may then eat a dB or more of
// the stage's margin.
func (r realDesigner) atRisk(c *chain.Chain) bool {
	for _, st := range c.Stages {
		fs, ok := st.(chain.FIRStage)
		if !ok || len(fs.Taps) == 0 {
			continue
		}
		n, big := 0.0, 0.0
		for k, h := range fs.Taps {
			if h != 0 && !(fs.HalfBand && k == len(fs.Taps)/2) {
				n++ // a half-band's centre 1/2 and its zeros are exact
			}
			big = math.Max(big, math.Abs(h))
		}
		if roundingFloor(n, big, r.spec.CoefBits) > riskRatio*fs.Req.Ds {
			return true
		}
	}
	return false
}

func (r realDesigner) analyze(c Candidate) (Candidate, Reason) {
	c, why := r.measure(c)
	if why == "" {
		// A re-design (for rounding, or a shortfall within the ripple) is
		// longer, and may break a limit the first design kept.
		why = overLimits(c.Figures, c.Chain, r.s.Limits)
	}
	return c, why
}

// measure is analyze without the final check of the limits.
func (r realDesigner) measure(c Candidate) (Candidate, Reason) {
	f := c.Figures
	// A chain to be measured on its rounded taps has its word lengths
	// planned beside its float measurement; they are used if the float
	// chain needs no re-design, and waited for and dropped otherwise.
	var wl func() (*fixed.Widths, chain.Analysis, error)
	if !c.evaluated && !c.survived && r.rounded(r.spec) {
		wl = r.startWordLengths(r.spec, c.Chain)
	}
	if !c.evaluated {
		var err error
		if f, err = cost.EvaluateContext(r.ctx, r.spec, c.Chain, r.s.Cost); err != nil {
			if wl != nil {
				wl()
			}
			return Candidate{}, ReasonEvaluateFailed
		}
		if c.survived {
			// Its adders were counted on its rounded taps (survive):
			// pricing again rounds the taps its own way.
			f.KeepAdders(c.Figures)
		}
	}
	first := c.Chain
	margin := f.Analysis.AliasRejectionDB - r.spec.RejectionDB
	// The stages are designed to absolute stopband limits, but the chain's
	// rejection is measured against its gain at 0 Hz, which the passband
	// ripple lets fall to 1 - dp, and the other stages' passband gain can
	// lift an alias band as much: a chain with little to spare (a single
	// long stage, typically) misses by up to the ripple. Such a shortfall
	// is made good by designing the chain again with the rejection target
	// raised by it.
	//
	// The rejection does not follow the target one for one: the gain at
	// 0 Hz, its reference, falls as the stopband deepens (a 7.68 to
	// 10 MHz polyphase interpolator gained 0.08 dB of margin for 0.11 dB
	// of target). After the first re-design the step is scaled by the
	// margin the last one bought per dB (a secant step, at most
	// maxRaiseScale times the shortfall).
	raise, step, prev := 0.0, 0.0, margin
	// A ripple over the budget by less than half of it (the stages'
	// ripples add up to a hair more than the budget) is made good the
	// same way, the chain designed again with the budget cut by the
	// excess and a hundredth of it.
	cut, over := 0.0, f.Analysis.PassbandRippleDB-r.spec.RippleDB
	short := func() bool { return margin < 0 && margin >= -r.spec.RippleDB }
	wide := func() bool { return over > 0 && over < r.spec.RippleDB/2 }
	for try := 0; try < maxRedesigns && (short() || wide()) && r.ctx.Err() == nil; try++ {
		if short() {
			next := -margin + redesignExtraDB
			if gained := margin - prev; step > 0 && gained > 0 && gained < step {
				next *= math.Min(step/gained, maxRaiseScale)
			}
			step, prev = next, margin
			raise += next
		}
		if wide() {
			cut += over + r.spec.RippleDB/100
		}
		spec := r.spec.RejectionRaised(raise)
		spec.RippleDB -= cut
		ch, err := chain.DesignContext(r.ctx, spec, c.Plan, r.s.Chain)
		if err != nil {
			break
		}
		g, err := cost.EvaluateContext(r.ctx, r.spec, ch, r.s.Cost)
		if err != nil {
			break
		}
		c.Chain, f, c.raised, c.cut, c.survived = ch, g, raise, cut, false
		margin = f.Analysis.AliasRejectionDB - r.spec.RejectionDB
		over = f.Analysis.PassbandRippleDB - r.spec.RippleDB
	}
	if wl != nil && c.Chain != first {
		wl() // planned for the chain before its re-design: not wanted
		wl = nil
	}
	if why := floatMisses(r.spec, f.Analysis); why != "" {
		if wl != nil {
			wl()
		}
		// Kept measured: an empty front names the closest (Result.Closest).
		return Candidate{Plan: c.Plan, Chain: c.Chain, Figures: f, MarginDB: margin}, why
	}
	c.Figures, c.MarginDB, c.evaluated = f, margin, true
	if !r.rounded(r.spec) {
		if f.Multiplierless && r.spec.CoefBits == 0 && !r.s.floatOnly {
			// "auto" widths: count the adder graphs of the taps as the
			// word-length plan rounds them (the report's
			// coefficients_int), so that the front is ranked on the
			// adders report.json states, not on taps at a stand-in width.
			ws, _, err := fixed.PlanChainContext(r.ctx, r.spec, c.Chain, r.s.Fixed)
			if err != nil {
				return Candidate{acc: fixed.AsAccumulatorError(err)}, ReasonWordLengths
			}
			if err := c.Figures.CountInts(cx(c.Chain), planInts(c.Chain, ws)); err != nil {
				return Candidate{}, ReasonWordLengths
			}
		}
		return c, ""
	}
	if c.survived {
		c.MarginDB = c.Quantised.AliasRejectionDB - r.spec.RejectionDB
		return c, ""
	}
	if wl != nil {
		return r.surviveWith(c, r.spec, wl)
	}
	return r.survive(c, r.spec)
}

// limitReason says which limit binds when the limits dropped candidates
// (the one that dropped the most), or "".
func limitReason(d map[Reason]int) string {
	best, n := "", 0
	for _, l := range []struct {
		r    Reason
		name string
	}{{ReasonOverRegisterBits, "Limits.MaxRegisterBits"}, {ReasonOverCICFactor, "Limits.MaxCICFactor"},
		{ReasonOverMultipliers, "Limits.MaxMultipliers"}, {ReasonOverMemory, "Limits.MaxMemoryBits"}} {
		k := d[l.r]
		switch l.r {
		case ReasonOverRegisterBits:
			k += d[ReasonOverAccumulatorBits] // the same limit, on FIR accumulators
		case ReasonOverMultipliers:
			k += d[ReasonOverNativeMultipliers] // the same limit, in native blocks
		}
		if k > n {
			best, n = l.name, k
		}
	}
	if best == "" {
		return ""
	}
	return fmt.Sprintf("No chain meets the spec within the hardware limits: %s binds (it dropped %s); raise it, or relax ripple or rejection.", best, units.Count(n, "candidate", "candidates"))
}

// overLimits is the limit a designed chain c with figures f breaks, or ""
// (the estimate tier drops CICs beyond the register and factor limits
// already; optimize.Check meets them here).
func overLimits(f cost.Figures, c *chain.Chain, l Limits) Reason {
	if c != nil {
		for _, st := range c.Stages {
			if cs, ok := st.(chain.CICStage); ok {
				if l.MaxCICFactor > 0 && cs.R > l.MaxCICFactor {
					return ReasonOverCICFactor
				}
				if l.MaxRegisterBits > 0 && len(cs.RegisterBits) > 0 && slices.Max(cs.RegisterBits) > l.MaxRegisterBits {
					return ReasonOverRegisterBits
				}
			}
		}
	}
	if l.MaxMemoryBits > 0 && f.MemoryBits > l.MaxMemoryBits {
		return ReasonOverMemory
	}
	if l.MaxMultipliers > 0 && f.MultipliersAtClock > l.MaxMultipliers {
		return ReasonOverMultipliers
	}
	return ""
}

// Shortfall is how far analysis a falls short of spec, in dB: the larger
// of the rejection's shortfall and the ripple's excess (zero or less when
// it meets).
func Shortfall(spec chain.Spec, a chain.Analysis) float64 {
	return math.Max(spec.RejectionDB-a.AliasRejectionDB, a.PassbandRippleDB-spec.RippleDB)
}

// ClosestText says how far c, the chain that came closest to spec
// (Result.Closest), missed it, naming it in the spec's direction: "the
// closest, poly125/96, misses the 65 dB rejection by 0.105 dB (64.8946 dB)".
// A chain that misses both is said to miss both.
func ClosestText(c *Candidate, spec chain.Spec) string {
	a := c.Figures.Analysis
	var miss []string
	if short := spec.RejectionDB - a.AliasRejectionDB; short > 0 {
		miss = append(miss, fmt.Sprintf("misses the %g dB rejection by %.3g dB (%s dB)", spec.RejectionDB,
			short, strconv.FormatFloat(a.AliasRejectionDB, 'g', 6, 64)))
	}
	if over := a.PassbandRippleDB - spec.RippleDB; over > 0 {
		miss = append(miss, fmt.Sprintf("exceeds the %g dB ripple by %.3g dB (%s dB)", spec.RippleDB,
			over, strconv.FormatFloat(a.PassbandRippleDB, 'g', 6, 64)))
	}
	return fmt.Sprintf("the closest, %s, %s", spec.Direction().Notation(c.Plan), strings.Join(miss, " and "))
}

// closest returns the candidate of cs that missed the spec in floating
// point by the least (Shortfall), the first on a tie, or nil.
func closest(spec chain.Spec, cs []Candidate, whys []Reason) *Candidate {
	var best *Candidate
	for i := range cs {
		if w := whys[i]; (w != ReasonMissRejection && w != ReasonMissRipple) || cs[i].Chain == nil {
			continue
		}
		if best == nil || Shortfall(spec, cs[i].Figures.Analysis) < Shortfall(spec, best.Figures.Analysis) {
			best = &cs[i]
		}
	}
	if best == nil {
		return nil
	}
	c := *best
	return &c
}

// floatMisses returns the reason a chain measured a misses spec, or "".
func floatMisses(spec chain.Spec, a chain.Analysis) Reason {
	margin := a.AliasRejectionDB - spec.RejectionDB
	if margin < 0 || math.IsNaN(margin) {
		return ReasonMissRejection
	}
	if a.PassbandRippleDB > spec.RippleDB || math.IsNaN(a.PassbandRippleDB) {
		return ReasonMissRipple
	}
	return ""
}

// rounded reports whether chains are judged on their taps rounded to
// spec's coefficient width: a width is fixed, and within what package
// fixed plans (above fixed.MaxBits, 40, the rounding error lies below
// -200 dB, far under any target chain.Spec admits).
func (r realDesigner) rounded(spec chain.Spec) bool {
	return spec.CoefBits > 0 && spec.CoefBits <= fixed.MaxBits && !r.s.floatOnly
}

// survive measures a chain that meets spec in floating point with its taps
// rounded to spec.CoefBits (fixed.PlanChain), by the floating-point
// verdict's rule (chain.Analysis.Meets). When it misses, the rounding error is
// estimated as the excess of the rounded chain's worst alias over the
// floating-point one's, as linear deviations (the two add in the worst
// case), and the chain is designed again with the rejection target raised
// so that its floating-point deviation plus that excess meets the target,
// plus roundingExtraDB; a passband ripple pushed over the target by
// rounding is tightened likewise. It tries at most maxRoundingRedesigns
// times, giving up at once when the excess alone reaches the target, since
// no floating-point margin makes up for it at those lengths. A re-designed
// chain is priced and measured again (cost.Evaluate). It returns the chain
// that meets, or the floating-point chain with the reason it was dropped.
func (r realDesigner) survive(c Candidate, spec chain.Spec) (Candidate, Reason) {
	return r.surviveWith(c, spec, r.startWordLengths(spec, c.Chain))
}

// startWordLengths starts package fixed's word-length plan of ch on its own
// goroutine and returns the call that waits for it. Planning reads the
// chain only, so it may run beside its float measurement; a plan whose
// result is not wanted is waited for all the same (the call returns
// promptly once ctx is done).
func (r realDesigner) startWordLengths(spec chain.Spec, ch *chain.Chain) func() (*fixed.Widths, chain.Analysis, error) {
	type result struct {
		ws  *fixed.Widths
		qa  chain.Analysis
		err error
	}
	done := make(chan result, 1)
	go func() {
		ws, qa, err := fixed.PlanChainContext(r.ctx, spec, ch, r.s.Fixed)
		done <- result{ws, qa, err}
	}()
	return func() (*fixed.Widths, chain.Analysis, error) {
		res := <-done
		return res.ws, res.qa, res.err
	}
}

// surviveWith is survive with the rounded chain's word-length plan being
// made by wl (startWordLengths of c.Chain).
func (r realDesigner) surviveWith(c Candidate, spec chain.Spec, wl func() (*fixed.Widths, chain.Analysis, error)) (Candidate, Reason) {
	ws, qa, err := wl()
	if err != nil {
		c.acc = fixed.AsAccumulatorError(err)
		return c, ReasonWordLengths
	}
	// The stages whose rounded taps miss their own bands are blamed should
	// the chain be dropped (see designTier.learn).
	blame, hopeless := make([]bool, len(ws.Stages)), make([]bool, len(ws.Stages))
	for i, sw := range chainOrder(c.Chain, ws) {
		blame[i] = !sw.MeetsBands
		// A stage whose rounding adds its whole stopband limit to some
		// stopband (band 0 is the passband) misses in any chain.
		st, ok := c.Chain.Stages[i].(chain.FIRStage)
		for j := 1; ok && blame[i] && j < len(sw.Deviations) && j < len(sw.FloatDeviations); j++ {
			hopeless[i] = hopeless[i] || sw.Deviations[j]-sw.FloatDeviations[j] >= st.Req.Ds
		}
	}
	cur, f := c, c.Figures
	excess, rippleExcess := 0.0, 0.0
	ladder := 0
	close := false // the chain as first designed missed by under closeDB
	for try := 0; ; try++ {
		qm := qa.AliasRejectionDB - spec.RejectionDB
		over := qa.PassbandRippleDB - spec.RippleDB
		if qm >= 0 && over <= 0 {
			if f.Multiplierless {
				// Count the adder graphs of the taps as rounded for the
				// build (the report's coefficients_int), not as priced.
				if err := f.CountInts(cx(cur.Chain), planInts(cur.Chain, ws)); err != nil {
					return c, ReasonWordLengths
				}
			}
			if why := BuiltOverLimits(ws, r.s.Limits); len(why) > 0 {
				return c, why[0]
			}
			builtMemory(&f, cur.Chain, ws)
			cur.Figures, cur.Quantised, cur.MarginDB = f, qa, qm
			cur.survived = true
			if cur.redesigns > 0 {
				cur.first = c.Figures
			}
			return cur, ""
		}
		if r.ctx.Err() != nil || math.IsNaN(qm) || math.IsNaN(over) {
			break
		}
		// Rounded taps 6 dB or more under the target leave an excess of
		// at least the target's deviation over a float chain that meets
		// it: no need to measure the float chain to give up on the chain
		// as first designed. After a re-design it may be that design's
		// rounding alone: the fixed margins below are still tried.
		roundedOut := qm <= -20*math.Log10(2)
		if try == 0 {
			close = qm > -closeDB
		}
		if roundedOut && (try == 0 || !close) {
			break
		}
		if !cur.evaluated {
			g, err := cost.EvaluateContext(r.ctx, spec, cur.Chain, r.s.Cost)
			if err != nil {
				return c, ReasonEvaluateFailed
			}
			f, cur.evaluated = g, true
			if floatMisses(spec, f.Analysis) != "" {
				// The float chain misses: analyze re-designs or drops it.
				cur.Figures = f
				return cur, ""
			}
		}
		dt := chain.RejectionToDev(spec.RejectionDB)
		excess = math.Max(excess, chain.RejectionToDev(qa.AliasRejectionDB)-chain.RejectionToDev(f.Analysis.AliasRejectionDB))
		if excess >= dt {
			if try == 0 || !close {
				break // rounding alone misses the target
			}
			roundedOut = true
		}
		// The float design at cur.raised measured f; it must reach
		// target + need instead.
		need := -20*math.Log10(1-excess/dt) + roundingExtraDB
		raise := math.Max(cur.raised+need-(f.Analysis.AliasRejectionDB-spec.RejectionDB), cur.raised+roundingExtraDB/2)
		cut := cur.cut
		if over > 0 {
			rippleExcess = math.Max(rippleExcess, qa.PassbandRippleDB-f.Analysis.PassbandRippleDB)
			cut = math.Max(cut+over, rippleExcess) + spec.RippleDB/100
		}
		if roundedOut || try >= maxRoundingRedesigns || cut >= spec.RippleDB {
			// The measured rule has run out. How much rounding costs a
			// design is all but chance at a width near the target's own
			// (a longer design rounds no better), so a few fixed margins
			// are tried as well, each designed once.
			if ladder == len(roundingLadder) {
				break
			}
			raise, cut = roundingLadder[ladder].raiseDB, roundingLadder[ladder].cut*spec.RippleDB
			ladder++
		}
		tight := spec.RejectionRaised(raise)
		tight.RippleDB -= cut
		ch, err := chain.DesignContext(r.ctx, tight, c.Plan, r.s.Chain)
		if err != nil {
			break
		}
		// The float figures and the rounded ones of the new chain are
		// independent: measured side by side.
		wl := r.startWordLengths(spec, ch)
		g, err := cost.EvaluateContext(r.ctx, spec, ch, r.s.Cost)
		w2, q, werr := wl()
		if err != nil || werr != nil {
			break
		}
		ws = w2
		debugf("rounding re-design %s: raise %.2f dB, cut %.3f dB: rounded %.2f -> %.2f dB, float %.2f dB", chain.Notation(c.Plan), raise, cut, qa.AliasRejectionDB, q.AliasRejectionDB, g.Analysis.AliasRejectionDB)
		cur.Chain, cur.raised, cur.cut, cur.evaluated = ch, raise, cut, true
		cur.redesigns++
		f, qa = g, q
		if floatMisses(spec, f.Analysis) != "" {
			break
		}
	}
	c.redesigns, c.blame, c.hopeless = cur.redesigns, blame, hopeless
	return c, ReasonMissQuantised
}

// builtMemory gives f, the figures of chain c, the memory of its
// word-length plan ws, as the chain is built (the report's
// fixed_memory_bits): each stage's data memory (doubled for a complex
// chain) and coefficient memory. Pricing counts the same for most stages;
// an interpolating polyphase stage's partial sums, whose accumulator width
// only the plan knows, it counts at the data word.
func builtMemory(f *cost.Figures, c *chain.Chain, ws *fixed.Widths) {
	st := chainOrder(c, ws)
	if len(st) != len(f.Stages) {
		return
	}
	f.Stages = append([]cost.StageFigures(nil), f.Stages...) // not the caller's copy's
	for i, sw := range st {
		f.Stages[i].MemoryBits = sw.MemoryBits(c.Complex)
	}
	f.MemoryBits = ws.MemoryBits
}

// planInts are the rounded coefficients of c's word-length plan ws, in
// the order of c.Stages (empty for a CIC).
func planInts(c *chain.Chain, ws *fixed.Widths) [][]int64 {
	st := chainOrder(c, ws)
	out := make([][]int64, len(st))
	for i, sw := range st {
		out[i] = sw.Coefficients.Ints
	}
	return out
}

// chainOrder returns the stages of c's word-length plan ws in the order
// of c.Stages: ws lists them in signal order (package fixed), which an
// interpolation chain's Stages reverse (chain.Chain.SignalOrder). Figures
// and plans index stages as c.Stages does.
func chainOrder(c *chain.Chain, ws *fixed.Widths) []*fixed.StageWidths {
	out := make([]*fixed.StageWidths, len(ws.Stages))
	for k, i := range c.SignalOrder() {
		if k < len(ws.Stages) && i < len(out) {
			out[i] = &ws.Stages[k]
		}
	}
	return out
}

// cx is the number of real filters of c: 2 for a complex chain.
func cx(c *chain.Chain) int {
	if c.Complex {
		return 2
	}
	return 1
}

// judgeFractional judges a fractional chain c, designed and measured in
// floating point, on its taps rounded to spec.CoefBits as an integer
// chain is judged (survive: designed again where rounding misses); a chain
// whose float design then misses is dropped with those whose rounded taps
// do. The search and Check both call it, so a chain named to check gets
// the figures the plan gave it.
func (r realDesigner) judgeFractional(c Candidate, spec chain.Spec) (Candidate, Reason) {
	c, why := r.survive(c, spec)
	if why == "" && !c.survived {
		why = ReasonMissQuantised
	}
	return c, why
}

// meetsFrom returns the least coefficient width in [lo, hi] at which the
// chain, designed in floating point (c, as survive left it when dropped),
// meets the spec with its taps rounded, re-designed as survive does, and
// the chain that meets there (its figures are what that width costs);
// zero when none does or ctx is cancelled.
func (r realDesigner) meetsFrom(c Candidate, lo, hi int) (int, Candidate) {
	if !c.evaluated {
		f, err := cost.EvaluateContext(r.ctx, r.spec, c.Chain, r.s.Cost)
		if err != nil || floatMisses(r.spec, f.Analysis) != "" {
			return 0, Candidate{}
		}
		c.Figures, c.evaluated = f, true
	}
	for w := lo; w <= hi && r.ctx.Err() == nil; w++ {
		spec := r.spec
		spec.CoefBits = w
		if s, why := r.survive(c, spec); why == "" {
			return w, s
		}
	}
	return 0, Candidate{}
}

// scored is a candidate kept from the estimate tier.
type scored struct {
	plan  []chain.StagePlan
	f     figs
	slack float64
}

// maxBand bounds the estimate tier's band (the members nearest the front are
// kept), which bounds memory for the largest ratios.
const maxBand = 1 << 17

// search is Plan after validation, with the estimate and design tiers
// passed in so that tests can use fake figures.
func search(ctx context.Context, p params, s *Settings, est *estimator, des designer) (*Result, error) {
	p.ctx, est.p.ctx = ctx, ctx
	sp := newSpace(&p, s)
	est.orders, est.delays = sp.orders, sp.delays
	est.keepBeaten = s.Exhaustive
	auto := s.MaxTaps == 0
	if !auto {
		est.maxTaps = s.MaxTaps
	}
	if p.d < 1 {
		return nil, fmt.Errorf("optimize: decimation %d: must be at least 1", p.d)
	}
	if !sp.cic && !sp.halfBand && !sp.fir {
		return nil, fmt.Errorf("optimize: Kinds is empty: at least one stage kind is needed")
	}
	n := sp.count()
	if n > MaxCandidates {
		return nil, tooLarge(sp, n)
	}
	if n == 0 {
		return nil, noCandidate(sp)
	}
	res := &Result{Dropped: map[Reason]int{}, Recommended: -1}
	jobs := runJobs(s.Jobs)
	// One design tier serves every pass: what a pass designed is remembered,
	// and the design cap and work budget are shared.
	t := newDesignTier(ctx, jobs, des, est, s, res)
	first := est.maxTaps
	for {
		need := searchPass(ctx, &p, sp, s, est, t, res)
		again := nextPass(s, est, t, res, need, auto)
		if again == passDone {
			break
		}
		debugf("search again (%s): front %d, designed %d", again, len(res.Front), res.Designed)
		resetPass(res)
	}
	if !s.Exhaustive && !s.noSiblings && !res.Partial {
		ok, left := t.siblings(sp)
		res.Partial = !ok
		res.Unsettled += left
		res.Front = t.front()
	}
	res.MaxTaps = est.maxTaps
	fs := make([]figs, len(res.Front))
	for i := range res.Front {
		fs[i] = candFigs(&res.Front[i])
	}
	res.Recommended, res.Reason = recommend(fs, s, p.interp)
	if len(res.Front) == 0 {
		var cs []Candidate
		var whys []Reason
		for _, k := range t.order {
			cs, whys = append(cs, t.memo[k].c), append(whys, t.memo[k].reason)
		}
		res.Closest = closest(chain.Spec{RejectionDB: p.rejDB, RippleDB: p.rippleDB}, cs, whys)
	}
	switch {
	case len(res.Front) == 0 && !res.Partial && res.Dropped[ReasonMissQuantised] > 0:
		dir := chain.Decimate
		if p.interp {
			dir = chain.Interpolate
		}
		res.Reason = t.widthReason(p.fixedBits, dir)
		if lr := limitReason(res.Dropped); lr != "" {
			// The limits dropped candidates too: named first, since wider
			// coefficients cannot help a limit that binds.
			res.Reason = lr + " " + res.Reason
		}
		if res.Unsettled > 0 {
			res.Reason += fmt.Sprintf(" The design budget (a fixed amount of design work per run) left %s undesigned.", units.Count(res.Unsettled, "candidate", "candidates"))
		}
	case len(res.Front) == 0 && !res.Partial && res.Unsettled > 0:
		res.Reason = fmt.Sprintf("No chain was designed within the design budget (a fixed amount of design work per run) at a tap limit of %d; %s left undesigned.", est.maxTaps, units.CountWere(res.Unsettled, "candidate", "candidates"))
	case len(res.Front) == 0 && !res.Partial && limitReason(res.Dropped) != "":
		res.Reason = limitReason(res.Dropped)
	case len(res.Front) == 0 && !res.Partial:
		res.Reason = "No chain met the spec; Dropped says why each candidate was set aside."
	case len(res.Front) > 0 && est.maxTaps > first:
		res.Reason += fmt.Sprintf(" No chain met the spec with FIR and half-band stages of at most %d taps, so the limit was raised to %d.", first, est.maxTaps)
	}
	return res, nil
}

// siblings designs the front's CIC siblings (cicSiblings) and, with a
// fixed coefficient width, the rounding siblings (roundingSiblings) and
// then the CIC siblings of the front those make.
// The CIC siblings come first so that every chain the search designs
// without rounding siblings is designed with them too: the front can
// then gain chains but not lose one. It reports false when cancelled, and
// how many CIC siblings were left undesigned.
func (t *designTier) siblings(sp *space) (bool, int) {
	cicLeft := 0
	cic := func() bool {
		if len(t.front()) == 0 {
			return true
		}
		ok, n := t.cicSiblings()
		cicLeft = n
		return ok
	}
	if !cic() {
		return false, 0
	}
	if t.est.p.fixedBits == 0 {
		return true, cicLeft // no width fixed: nothing judged on rounded taps
	}
	if !t.roundingSiblings(sp) || !cic() {
		return false, 0
	}
	return true, cicLeft
}

// maxSiblingRounds bounds cicSiblings' rounds.
const maxSiblingRounds = 4

// cicSiblings designs, for each chain on the front whose first stage is a
// recursive CIC, the same chain with that CIC at every other order and
// delay searched that the estimate tier left out only because another CIC
// of the same factor beat it (cicBeaten), and takes the front again over
// every chain designed; it repeats for the new front members, at most
// maxSiblingRounds times, outside the design cap. The beaten rule assumes
// that a later stage correcting less droop is no longer, which the cascade
// rule breaks: a CIC of higher order or delay removes more of a later
// stage's aliases, and the later stage, credited with that, can come out
// shorter (at D = 4096 the front held cic4m1r512 > fir8, 46 multiplies
// per output, beaten by cic4m2r512 > fir8, 44, with less memory and the
// same latency). It reports false
// when cancelled, and how many siblings were left undesigned when the
// rounds ran out.
func (t *designTier) cicSiblings() (bool, int) {
	for round := 0; ; round++ {
		plans := t.siblingsToDesign()
		if len(plans) == 0 || t.ctx.Err() != nil {
			return t.ctx.Err() == nil, 0
		}
		if round == maxSiblingRounds {
			return true, len(plans)
		}
		// Outside the caps, which the band may have spent: at most
		// maxSiblingRounds times the front's size times the orders and
		// delays searched.
		debugf("siblings round %d: %d chains", round, len(plans))
		if !t.designAndSettle(plans) {
			return false, 0
		}
	}
}

// designAndSettle designs plans (designAll) and takes the front again over
// every chain designed that met, measuring its new members (settle). It
// reports false when cancelled.
func (t *designTier) designAndSettle(plans [][]chain.StagePlan) bool {
	if !t.designAll(plans) {
		return false
	}
	var pool [][]chain.StagePlan
	var fs []figs
	for _, k := range t.order {
		if o := t.memo[k]; o.reason == "" {
			pool = append(pool, o.c.Plan)
			fs = append(fs, candFigs(&o.c))
		}
	}
	// Every plan of the pool is designed: settle only measures.
	ok, _ := t.settle(pool, fs)
	return ok
}

// siblingsToDesign returns the CIC siblings of the front not designed yet
// (see cicSiblings): beaten by the rule, and feasible but for it (the CICs
// that beat are searched already).
func (t *designTier) siblingsToDesign() [][]chain.StagePlan {
	est := t.est
	keep := est.keepBeaten
	defer func() { est.keepBeaten = keep }()
	var plans [][]chain.StagePlan
	seen := map[string]bool{}
	for _, c := range t.front() {
		first := c.Plan[0]
		if first.Kind != chain.CIC || first.CICForm != chain.Recursive {
			continue
		}
		for _, n := range est.orders {
			for _, m := range est.delays {
				pl := clonePlan(c.Plan)
				pl[0].CICOrder, pl[0].CICDelay = n, m
				k := planKey(pl)
				if _, ok := t.memo[k]; ok || seen[k] {
					continue
				}
				seen[k] = true
				if !est.cicBeaten(first.Factor, n, m) {
					continue
				}
				est.keepBeaten = true
				_, drop := est.score(pl)
				est.keepBeaten = keep
				if drop == dropNone {
					plans = append(plans, pl)
				}
			}
		}
	}
	return plans
}

// passReason says why the search runs another pass, or passDone.
type passReason int

const (
	passDone passReason = iota
	// passLeaned: the pass leant on chains that failed to design or missed
	// the spec (a front point that set the band, or a CIC that pruned the
	// CICs it beats): the next runs without them, keeping what was designed.
	passLeaned
	// passRaiseTaps: the automatic tap limit left no chain: the next runs
	// at the first step of the limit that keeps a candidate it dropped.
	passRaiseTaps
)

func (r passReason) String() string {
	return [...]string{"done", "leant on failed chains", "tap limit raised"}[r]
}

// nextPass decides, after a pass, whether the search runs another and sets
// the estimator up for it (the one place that steers the passes). need is
// the least tap limit that keeps a candidate the pass's limit dropped.
func nextPass(s *Settings, est *estimator, t *designTier, res *Result, need float64, auto bool) passReason {
	retake, failed := t.retake, t.failed
	t.retake, t.failed = false, nil
	if res.Partial {
		return passDone
	}
	if !s.Exhaustive && (est.reinstate(failed, res.Front) || retake) {
		return passLeaned
	}
	// A longer stage rounds no better, so the limit is not raised when
	// chains met in floating point and missed with their taps rounded.
	if !auto || len(res.Front) > 0 || need > autoMaxTaps || res.Dropped[ReasonMissQuantised] > 0 {
		return passDone
	}
	next := est.maxTaps
	for float64(next) < need {
		next = 2*next + 1
	}
	est.maxTaps = min(next, autoMaxTaps)
	return passRaiseTaps
}

// resetPass clears what a search pass counts, before another pass.
func resetPass(res *Result) {
	res.Candidates, res.Feasible, res.FeasibleAll = 0, nil, 0
	for _, r := range dropNames {
		delete(res.Dropped, r)
	}
	res.Unsettled = 0
}

// autoMaxTaps is the highest tap limit the automatic MaxTaps reaches: the
// longest design the remez engine is tested at.
const autoMaxTaps = 16383

// searchPass runs both tiers once at the estimator's tap limit, filling in
// res (the design tier t carries what earlier passes designed). It returns
// the least tap limit that would keep a candidate this limit dropped
// (+Inf when none).
func searchPass(ctx context.Context, p *params, sp *space, s *Settings, est *estimator, t *designTier, res *Result) float64 {
	tol := est.tol
	// Both walks run on jobs goroutines, one first stage of the walk at a
	// time each (walkUnits), with an estimator each; their results are
	// merged in walk order, so that the pass is the same as one walk's.
	jobs := t.jobs
	// walked counts the candidates of both walks for Settings.Scoring.
	var walked atomic.Int64
	var scoreMu sync.Mutex
	total := 2 * sp.count()
	scoring := func() {
		if s.Scoring != nil {
			scoreMu.Lock()
			s.Scoring(min(walked.Load(), total), total)
			scoreMu.Unlock()
		}
	}
	// stop counts one candidate of a walk in *n; every 4096 it adds them
	// to walked, reports progress and says whether ctx is done. Between
	// those it reads halted, a flag set once ctx is done: a candidate can
	// cost as much as the estimated front is long, and 4096 of them took
	// up to 8 s to score on a 16 GS/s spec of nine stages (measured).
	var halted atomic.Bool
	defer context.AfterFunc(ctx, func() { halted.Store(true) })()
	stop := func(n *int) bool {
		if halted.Load() {
			return true
		}
		if *n++; *n&4095 != 0 {
			return false
		}
		walked.Add(4096)
		if ctx.Err() != nil {
			return true
		}
		scoring()
		return false
	}
	// The first-stage CICs that skipCIC drops are counted here, on the
	// pass's own estimator, whose CIC caches reinstate reads later.
	var drops [len(dropNames)]int
	var units []chain.StagePlan
	var skippedN int64
	for _, st := range sp.firsts() {
		if ctx.Err() != nil {
			res.Partial = true
			res.Front = t.front()
			return math.Inf(1)
		}
		if st.Kind == chain.CIC {
			if code := est.skipCIC(st); code != dropNone {
				n := sp.completions(sp.d/st.Factor, 1)
				drops[code] += int(n)
				res.Candidates += int(n)
				skippedN += n
				continue
			}
		}
		units = append(units, st)
	}
	if sp.d == 1 {
		units = nil
	}
	walked.Add(skippedN)

	// Pass 1: score everything, count drops, keep the estimated front.
	type pass1 struct {
		candidates int
		drops      [len(dropNames)]int
		need       float64
		feasible   int
		fr         frontSet
		plans      map[int][]chain.StagePlan
	}
	p1 := make([]pass1, len(units))
	var fr frontSet
	frontPlans := map[int][]chain.StagePlan{}
	need := math.Inf(1)
	feasible := 0
	offsets := make([]int, len(units))
	var frMu sync.Mutex
	forks, ok := walkUnits(ctx, jobs, len(units), est.fork, func(e *estimator, i int) bool {
		u := &p1[i]
		// The unit's front starts from the merged one (its points marked
		// -1): what they dominate is off the front whatever the timing,
		// and the unit's front stays short.
		frMu.Lock()
		u.fr.f = append(u.fr.f, fr.f...)
		for range fr.id {
			u.fr.id = append(u.fr.id, -1)
		}
		frMu.Unlock()
		u.need = math.Inf(1)
		u.plans = map[int][]chain.StagePlan{}
		steps := 0
		var gk []byte
		defer func() { walked.Add(int64(steps & 4095)) }()
		return sp.walkFrom(units[i], func(plan []chain.StagePlan) bool {
			u.candidates++
			if stop(&steps) {
				return false
			}
			f, drop := e.score(plan)
			if drop != dropNone {
				u.drops[drop]++
				if drop == dropLongFIR {
					u.need = math.Min(u.need, e.needTaps(plan))
				}
				return true
			}
			// A chain that failed in an earlier pass cannot stand on the
			// front that sets the band.
			if !t.goneWith(plan, &gk) && u.fr.add(f, u.feasible) {
				u.plans[u.feasible] = clonePlan(plan)
			}
			u.feasible++
			return true
		})
	}, func(i int) {
		u := &p1[i]
		res.Candidates += u.candidates
		for c, k := range u.drops {
			drops[c] += k
		}
		need = math.Min(need, u.need)
		offsets[i] = feasible
		frMu.Lock()
		for j, id := range u.fr.id {
			if id >= 0 && fr.add(u.fr.f[j], feasible+id) {
				frontPlans[feasible+id] = u.plans[id]
			}
		}
		frMu.Unlock()
		feasible += u.feasible
		p1[i] = pass1{}
	})
	cancelled := !ok
	// What the walkers computed serves the second walk and the design
	// tier.
	for _, f := range forks {
		est.absorb(f)
	}
	for c, k := range drops {
		if k > 0 {
			res.Dropped[dropNames[c]] = k
		}
	}
	res.FeasibleAll = feasible
	if cancelled {
		res.Partial = true
		res.Front = t.front()
		return need
	}
	// A point joins the merged front only if no point of it dominates it,
	// and a point it drops later leaves frontPlans unread: keep the plans
	// of the members only.
	for id := range frontPlans {
		if !slices.Contains(fr.id, id) {
			delete(frontPlans, id)
		}
	}
	// A front point designed in an earlier pass stands at its real
	// figures where they are worse than its estimate: a band taken near an
	// optimistic point misses the candidates near the real one.
	for j, id := range fr.id {
		if o, ok := t.memo[planKey(frontPlans[id])]; ok && o.reason == "" {
			fr.f[j] = worstOf(fr.f[j], candFigs(&o.c))
		}
	}

	var fronts []bandRef
	for _, id := range fr.id {
		fronts = append(fronts, est.ref(frontPlans[id]))
	}

	// Pass 2: the same walk, now that the front is known: collect the band
	// near the front (or everything, when exhaustive) and the thinned cloud.
	walked.Add(skippedN)
	scoring()
	var band []scored
	byBand := func(i, j int) bool {
		a, b := &band[i], &band[j]
		if a.slack != b.slack {
			return a.slack < b.slack
		}
		return comparePlans(a.plan, b.plan) < 0
	}
	type pass2 struct {
		band  []scored
		cloud []Candidate
	}
	p2 := make([]pass2, len(units))
	_, ok = walkUnits(ctx, jobs, len(units), est.view, func(e *estimator, i int) bool {
		u := &p2[i]
		idx, seen := offsets[i], 0
		defer func() { walked.Add(int64(seen & 4095)) }()
		return sp.walkFrom(units[i], func(plan []chain.StagePlan) bool {
			if stop(&seen) {
				return false
			}
			f, drop := e.score(plan)
			if drop != dropNone {
				return true
			}
			if keepInCloud(idx, feasible) {
				u.cloud = append(u.cloud, estimatedCandidate(plan, f, p))
			}
			idx++
			if s.Exhaustive {
				u.band = append(u.band, scored{plan: clonePlan(plan), f: f})
				return true
			}
			if sl := fr.slack(&f); sl < 1+tol && !e.excluded(fronts) {
				u.band = append(u.band, scored{plan: clonePlan(plan), f: f, slack: sl})
				if len(u.band) >= 2*maxBand {
					sortBand(u.band)
					u.band = u.band[:maxBand]
				}
			}
			return true
		})
	}, func(i int) {
		res.Feasible = append(res.Feasible, p2[i].cloud...)
		band = append(band, p2[i].band...)
		p2[i] = pass2{}
		if len(band) >= 2*maxBand {
			sort.Slice(band, byBand)
			band = band[:maxBand]
		}
	})
	if !ok {
		res.Partial = true
		res.Front = t.front()
		return need
	}
	walked.Store(total)
	scoring()
	sort.Slice(band, byBand)
	if len(band) > maxBand {
		band = band[:maxBand]
	}

	debugf("band %d", len(band))
	if s.Exhaustive {
		res.Partial = !t.exhaustive(band)
	} else {
		ok, left := t.learn(band)
		res.Unsettled = left
		res.Partial = !ok
	}
	res.Front = t.front()
	// The band was taken near the estimated front, and excluded() assumed
	// its points stand. When one failed, the band is taken again without
	// it (the search calls the pass again).
	// So is it when one came out worse than the band took it to be, by
	// more than the band's own tolerance on some axis (the estimate's
	// error the band allows for): the next pass takes it at its real
	// figures (above).
	for j, id := range fr.id {
		k := planKey(frontPlans[id])
		if t.gone[k] {
			t.retake = true
		}
		if o, ok := t.memo[k]; ok && o.reason == "" {
			r, f := candFigs(&o.c).axes(), fr.f[j].axes()
			for a := range r {
				if r[a] > f[a]*(1+tol) {
					debugf("front point %s optimistic on axis %d: %g > %g", chain.Notation(frontPlans[id]), a, r[a], f[a])
					t.retake = true
				}
			}
		}
	}
	return need
}

// worstOf is f with each axis the larger of f's and g's.
func worstOf(f, g figs) figs {
	f.mpo, f.bits, f.lat = max(f.mpo, g.mpo), max(f.bits, g.bits), max(f.lat, g.lat)
	return f
}

// sortBand sorts a band by slack, ties by the plans' total order.
func sortBand(band []scored) {
	sort.Slice(band, func(i, j int) bool {
		a, b := &band[i], &band[j]
		if a.slack != b.slack {
			return a.slack < b.slack
		}
		return comparePlans(a.plan, b.plan) < 0
	})
}

// walkUnits runs walk(e, i) for the units i in [0, n) on jobs goroutines,
// each with the estimator est() gives it (returned), and calls merge(i) in
// order of i, from one goroutine at a time, as soon as units 0..i are
// done: the merged result is the one of a walk in unit order, whatever the
// interleaving, and the finished units' results do not pile up. A walk
// returning false (cancelled) ends it; walkUnits then returns false, with
// the units merged so far.
func walkUnits(ctx context.Context, jobs, n int, est func() *estimator, walk func(e *estimator, i int) bool, merge func(i int)) ([]*estimator, bool) {
	if jobs < 1 {
		jobs = 1
	}
	jobs = max(1, min(jobs, n))
	ests := make([]*estimator, jobs)
	var next atomic.Int64
	var stop atomic.Bool
	done := make([]bool, n)
	var mu sync.Mutex
	merged := 0
	var wg sync.WaitGroup
	for w := 0; w < jobs; w++ {
		e := est()
		ests[w] = e
		wg.Add(1)
		go func() {
			defer wg.Done()
			for !stop.Load() {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				if !walk(e, i) || ctx.Err() != nil {
					stop.Store(true)
					return
				}
				mu.Lock()
				done[i] = true
				for merged < n && done[merged] {
					merge(merged)
					merged++
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	return ests, merged == n
}

// maxRounds bounds the attempts to learn a stage's real figures: a stage
// whose chains fail to design this many times is given up, and so are the
// candidates that contain it.
const maxRounds = 4

// learn is the design tier. A stage's real design and price
// depend only on its realKey, so designing one chain that contains a stage
// teaches its real figures for every candidate that contains it. Rounds of
// designs first teach every stage of the band; the band is then priced
// exactly from what was learnt, and the front of that pricing is designed
// for real (most of it already was), dropping and replacing members whose
// design misses the spec until the front stands.
//
// It returns false when cancelled, and how many band candidates were left
// unpriced or undesigned because the design cap was reached.
func (t *designTier) learn(band []scored) (bool, int) {
	est, memo := t.est, t.memo
	// What earlier passes learnt holds in this one: a stage's real
	// figures do not depend on the tap limit nor on the band.
	learnt, tries := t.learnt, t.tries
	partial := t.partial
	capped := false
	trim := func(b [][]chain.StagePlan) [][]chain.StagePlan {
		if n := t.fit(b); n < len(b) {
			capped = true
			return b[:n]
		}
		return b
	}
	for round := 0; round < maxRounds; round++ {
		var reps [][]chain.StagePlan
		// upto[i]: the stages of reps[i] to design, up to the last one it
		// is wanted for; the stages after it are learnt or claimed.
		var upto []int
		claimed := map[realKey]bool{}
		for i := range band {
			pl := band[i].plan
			if _, ok := memo[planKey(pl)]; ok {
				continue
			}
			est.keysOf(pl)
			// Every stage neither learnt nor claimed is designed (one
			// backing off after failures too, as a whole design would),
			// but the chain is taken only for a stage not backing off.
			last, wanted, whole := -1, false, false
			for j, k := range est.keys {
				if _, ok := learnt[k]; ok || claimed[k] {
					continue
				}
				last = j
				if tries[k] <= round {
					wanted = true
					// A CIC's figures are exact already: it is wanted
					// for the chain it makes, designed whole, since
					// the stages after it are keyed on its factor
					// alone (realKey).
					whole = whole || chain.Kind(k.kind) == chain.CIC
				}
			}
			if !wanted {
				continue
			}
			if whole {
				last = len(pl) - 1
			}
			for _, k := range est.keys {
				claimed[k] = true
			}
			reps = append(reps, pl)
			upto = append(upto, last+1)
		}
		if reps = trim(reps); len(reps) == 0 {
			break
		}
		upto = upto[:len(reps)]
		debugf("round %d reps %d", round, len(reps))
		parts, ok := t.designLearn(reps, upto)
		for r, pl := range reps {
			if c := parts[r]; c != nil {
				est.keysOf(pl)
				p := prefixFigs{n: upto[r]}
				for i, k := range est.keys[:upto[r]] {
					g := stageFigs(&c.Figures, i)
					learnt[k] = g
					p.f.addAxes(g, 1)
				}
				partial[planKey(pl)] = p
				continue
			}
			o, done := memo[planKey(pl)]
			if !done {
				continue
			}
			est.keysOf(pl)
			st := o.c.Figures.Stages
			if o.reason != "" || len(st) != len(pl) {
				// A chain dropped for its rounded taps blames the stages
				// that miss their own bands once rounded; the others are
				// learnt from it.
				blamed := o.reason == ReasonMissQuantised && len(o.c.blame) == len(pl) && len(st) == len(pl)
				for i, k := range est.keys {
					if _, ok := learnt[k]; ok {
						continue
					}
					if blamed && !o.c.blame[i] {
						learnt[k] = stageFigs(&o.c.Figures, i)
						continue
					}
					tries[k]++
				}
				continue
			}
			for i, k := range est.keys {
				learnt[k] = stageFigs(&o.c.Figures, i)
			}
		}
		if !ok {
			return false, 0
		}
	}

	// Exact pricing of the band from the learnt stages (settle uses the
	// real figures of the plans designed).
	// A representative designed in part is priced on its own stages as
	// designed and the learnt figures of the rest (tail).
	exact := make([]figs, 0, len(band))
	plans := make([][]chain.StagePlan, 0, len(band))
	var tails []figs
	var known []bool // every stage's figures known (a designed plan may lack some)
	unpriced := 0
	for i := range band {
		pl := band[i].plan
		est.keysOf(pl)
		p, isPart := partial[planKey(pl)]
		var f, tail figs
		all := true
		for j, k := range est.keys {
			if j < p.n {
				continue
			}
			g, ok := learnt[k]
			if !ok {
				all = false
				break
			}
			f.addAxes(g, 1)
		}
		if isPart {
			tail = f
			f.addAxes(p.f, 1)
		}
		if _, ok := memo[planKey(pl)]; !all && !ok {
			unpriced++
			for _, k := range est.keys {
				if _, ok := learnt[k]; !ok && tries[k] >= maxRounds {
					t.fail(pl) // given up, as if it had failed
					break
				}
			}
			continue
		}
		exact = append(exact, f)
		plans = append(plans, pl)
		tails = append(tails, tail)
		known = append(known, all)
	}
	// A representative designed in part would have been designed whole
	// had its later stages not been learnt already, from other chains,
	// whose earlier stages differ and so credit them differently: they may
	// come out shorter in it (by 10 to 16% on each axis for a fir2 after a
	// half-band at D = 96, measured). Those that would not be beaten by
	// the priced front were their later stages shorter by the band's own
	// tolerance (Settings.Tolerance: 15%, which keeps that chain; at 20%,
	// 239 of the 285 designed in part at D = 4096 would be designed again,
	// and the plan would take as long as designing them whole) are
	// designed whole (charged already, see designTier.charged).
	partTolerance := est.tol
	// The front they are held to is settle's: real figures where
	// designed, failed chains and plans not wholly priced left out.
	var fr frontSet
	for i, pl := range plans {
		if o, ok := memo[planKey(pl)]; ok {
			if o.reason == "" {
				fr.add(candFigs(&o.c), i)
			}
			continue
		}
		if known[i] {
			fr.add(exact[i], i)
		}
	}
	var finish [][]chain.StagePlan
	for i, pl := range plans {
		if _, ok := partial[planKey(pl)]; !ok {
			continue
		}
		if _, ok := memo[planKey(pl)]; ok {
			continue
		}
		o := exact[i]
		o.addAxes(tails[i], -partTolerance)
		beaten := false
		for j := range fr.f {
			if fr.id[j] != i && dominates(&fr.f[j], &o) {
				beaten = true
				break
			}
		}
		if !beaten {
			finish = append(finish, pl)
		}
	}
	if !t.designAll(finish) {
		return false, 0
	}
	ok, short := t.settle(plans, exact)
	if short > 0 || (capped && unpriced > 0) {
		return ok, short + unpriced
	}
	return ok, 0
}

// prefixFigs are a plan's figures over its first n stages.
type prefixFigs struct {
	f figs
	n int
}

// planKey is a compact map key for a plan.
func planKey(plan []chain.StagePlan) string {
	return string(appendPlanKey(make([]byte, 0, 8*len(plan)), plan))
}

// appendPlanKey appends plan's planKey to dst.
func appendPlanKey(dst []byte, plan []chain.StagePlan) []byte {
	for _, st := range plan {
		dst = append(dst, byte(st.Factor), byte(st.Factor>>8), byte(st.Factor>>16), byte(st.Factor>>24),
			byte(st.Kind), byte(st.Variant)|byte(st.CICForm)<<4, byte(st.CICOrder), byte(st.CICDelay))
	}
	return dst
}

// costAxis is a chain's figure on the front's cost axis: its multiplies
// per output, or its hardware adders when it was priced multiplierless.
func costAxis(f *cost.Figures) float64 {
	if f.Multiplierless {
		return float64(f.Adders)
	}
	return f.MultipliesPerOutput
}

// stageFigs is stage i's share of a priced chain's figures, on the axes
// of the front.
func stageFigs(f *cost.Figures, i int) figs {
	st := &f.Stages[i]
	g := figs{mpo: st.MultipliesPerOutput, bits: float64(st.MemoryBits), lat: st.LatencyS}
	if f.Multiplierless {
		g.mpo = float64(st.Adders)
	}
	return g
}

func candFigs(c *Candidate) figs {
	return figs{
		mpo:    costAxis(&c.Figures),
		bits:   float64(c.Figures.MemoryBits),
		lat:    c.Figures.LatencyS,
		margin: c.MarginDB,
	}
}

// designedFront returns the non-dominated designed candidates sorted by
// multiplies, then memory, latency, larger margin and the plan order.
func designedFront(cs []Candidate) []Candidate {
	fs := make([]figs, len(cs))
	for i := range cs {
		fs[i] = candFigs(&cs[i])
	}
	ids := front(fs)
	out := make([]Candidate, len(ids))
	for i, id := range ids {
		out[i] = cs[id]
	}
	sort.Slice(out, func(i, j int) bool {
		a, b := candFigs(&out[i]), candFigs(&out[j])
		switch {
		case a.mpo != b.mpo:
			return a.mpo < b.mpo
		case a.bits != b.bits:
			return a.bits < b.bits
		case a.lat != b.lat:
			return a.lat < b.lat
		case a.margin != b.margin:
			return a.margin > b.margin
		}
		return comparePlans(out[i].Plan, out[j].Plan) < 0
	})
	return out
}

// keepInCloud thins the cloud of n feasible candidates to CloudSize by
// keeping the i-th exactly when floor((i+1) C / n) > floor(i C / n): evenly
// spread over the enumeration order, the same set every run.
func keepInCloud(i, n int) bool {
	if n <= CloudSize {
		return true
	}
	return (int64(i)+1)*CloudSize/int64(n) > int64(i)*CloudSize/int64(n)
}

func estimatedCandidate(plan []chain.StagePlan, f figs, p *params) Candidate {
	mpo, adders := f.mpo, 0
	if p.adders {
		mpo, adders = 0, int(f.mpo)
	}
	return Candidate{
		Plan: clonePlan(plan),
		Figures: cost.Figures{
			MultipliesPerOutput: mpo,
			Adders:              adders,
			Multiplierless:      p.adders,
			MemoryWords:         int(f.words),
			MemoryBits:          int(f.bits),
			LatencyS:            f.lat,
			LatencySamples:      f.lat * p.fk,
			Analysis:            chain.Analysis{AliasRejectionDB: p.rejDB + f.margin},
		},
		MarginDB: f.margin,
	}
}

func clonePlan(plan []chain.StagePlan) []chain.StagePlan {
	return append([]chain.StagePlan(nil), plan...)
}

// tooLarge is the refusal of a search space of n > MaxCandidates
// candidates: it names the largest MaxStages whose space fits, found by
// counting the space (exactly, as count does) for fewer stages; one stage
// always fits, since it holds only the single-stage chains of d. The
// counts are memoised over the divisors of d and take microseconds.
func tooLarge(sp *space, n int64) error {
	stages := sp.maxStages
	fit, fitN := 0, int64(0)
	for m := stages - 1; m >= 1; m-- {
		t := *sp
		t.maxStages, t.memo = m, nil
		if c := t.count(); c <= MaxCandidates {
			fit, fitN = m, c
			break
		}
	}
	if fit == 0 {
		return fmt.Errorf("optimize: %s within %d stages gives %s candidates, more than the %d this search scores; narrow Kinds, CICOrders or CICDelays",
			sp.ratio(), stages, countString(n), MaxCandidates)
	}
	return fmt.Errorf("optimize: %s within %d stages gives %s candidates, more than the %d this search scores; MaxStages = %d is the most that fits (%d candidates), or narrow Kinds, CICOrders or CICDelays",
		sp.ratio(), stages, countString(n), MaxCandidates, fit, fitN)
}

// errNoCandidate marks noCandidate's refusals.
var errNoCandidate = errors.New("no candidate")

// noCandidateError is a refusal of an empty search space, in words.
type noCandidateError struct{ msg string }

func (e *noCandidateError) Error() string        { return e.msg }
func (e *noCandidateError) Is(target error) bool { return target == errNoCandidate }

// noCandidate is the refusal of an empty search space: it names the least
// MaxStages that gives a candidate, or, when none up to MaxStagesLimit
// does, why: a prime factor of d above chain.MaxStageFactor, or the kinds
// searched. The cause it names is the stage factor's limit only when d is
// beyond one stage's reach; otherwise the kinds (a half-band decimates by
// 2 only, a CIC comes first) leave the stages too few.
func noCandidate(sp *space) error {
	errorf := func(format string, args ...any) error {
		return &noCandidateError{fmt.Sprintf(format, args...)}
	}
	why := "with the stage kinds searched (a half-band decimates by 2 only, a CIC comes first)"
	if sp.d > chain.MaxStageFactor {
		why = fmt.Sprintf("(a stage takes a factor of at most %d)", chain.MaxStageFactor)
	}
	stages := "stages"
	if sp.maxStages == 1 {
		stages = "stage"
	}
	for m := sp.maxStages + 1; m <= MaxStagesLimit; m++ {
		t := *sp
		t.maxStages, t.memo = m, nil
		if t.count() > 0 {
			return errorf("optimize: %s within %d %s gives no candidate %s; MaxStages = %d is the least that gives one",
				sp.ratio(), sp.maxStages, stages, why, m)
		}
	}
	n := sp.d
	for p := 2; p*p <= n; p++ {
		for n%p == 0 {
			n /= p
		}
	}
	if n > chain.MaxStageFactor {
		return errorf("optimize: decimation %d has the prime factor %d, above the %d one stage can take: no chain of integer stages makes it; choose rates whose ratio has no prime factor above %d",
			sp.d, n, chain.MaxStageFactor, chain.MaxStageFactor)
	}
	return errorf("optimize: %s gives no candidate %s: widen Kinds", sp.ratio(), why)
}

func countString(n int64) string {
	if n >= satMax {
		return "more than 4.6e18"
	}
	return fmt.Sprint(n)
}

// withMeasureReserve returns the context a search designs under: ctx, but
// when ctx has a deadline, one that ends measureReserve (at most a
// measureReserveShare of the time left) before it, so that a search
// stopped by the deadline before it measured any chain still has time to
// measure the front of those it designed (designTier.salvage) within the
// caller's deadline. An invented 2^30 receiver at --timeout 8s designed 43
// chains and measured none. The caller's context is kept in the returned
// one's values (measureOuter).
func withMeasureReserve(ctx context.Context) (context.Context, context.CancelFunc) {
	d, ok := ctx.Deadline()
	if !ok || ctx.Value(outerKey{}) != nil {
		return ctx, func() {}
	}
	reserve := min(measureReserve, time.Duration(measureReserveShare*float64(time.Until(d))))
	inner, cancel := context.WithDeadline(context.WithValue(ctx, outerKey{}, ctx), d.Add(-max(reserve, 0)))
	return inner, cancel
}

// measureReserve and measureReserveShare bound withMeasureReserve's time.
const (
	measureReserve      = 1500 * time.Millisecond
	measureReserveShare = 0.15
)

// outerKey keys the caller's context in a search's (withMeasureReserve).
type outerKey struct{}

// measureOuter is the caller's context of a search's context ctx: the one
// whose deadline salvage may measure up to; nil when none was reserved.
func measureOuter(ctx context.Context) context.Context {
	o, _ := ctx.Value(outerKey{}).(context.Context)
	return o
}

// runJobs is how many designs a search runs at once for Settings.Jobs n:
// n, or runtime.GOMAXPROCS(0) for 0, and at most maxJobsPerCPU per CPU.
// Designs beyond the CPUs only wait, each holding its engine's memory: a
// sweep of two values at once asked for 1024 ran past 1 GiB. The results
// are the same whatever the number (see the package doc).
func runJobs(n int) int {
	cpus := runtime.GOMAXPROCS(0)
	if n <= 0 {
		n = cpus
	}
	return min(n, maxJobsPerCPU*cpus)
}

// maxJobsPerCPU bounds runJobs.
const maxJobsPerCPU = 4

// defaultTolerance is Settings.Tolerance's default.
const defaultTolerance = 0.15

// bandRef is a front point's stages as the band test needs them.
type bandRef struct {
	keys []stageKey
	vals []stageVal
}

func (e *estimator) ref(plan []chain.StagePlan) bandRef {
	e.score(plan)
	var r bandRef
	for _, k := range e.keys {
		r.keys = append(r.keys, k.stageKey)
		r.vals = append(r.vals, e.cache[k.stageKey])
	}
	return r
}

// excluded reports whether the candidate last scored (its keys in e.keys)
// is beaten by one of the front points even when every estimated stage the
// two do not share comes out at the favourable end of its range for the
// candidate and the unfavourable end for the front point. Stages they share
// (same estimate key) are taken to cost the same in both, and CIC figures
// are exact.
func (e *estimator) excluded(fronts []bandRef) bool {
	var used [64]bool
	for fi := range fronts {
		d := &fronts[fi]
		if len(d.keys) > len(used) {
			continue
		}
		for j := range d.keys {
			used[j] = false
		}
		var cLo, dHi [3]float64
		for _, rk := range e.keys {
			k := rk.stageKey
			shared := false
			for j := range d.keys {
				if !used[j] && d.keys[j] == k {
					used[j] = true
					shared = true
					break
				}
			}
			if !shared {
				lo := e.cache[k].lo.axes()
				for a := range lo {
					cLo[a] += lo[a]
				}
			}
		}
		for j := range d.keys {
			if !used[j] {
				hi := d.vals[j].hi.axes()
				for a := range hi {
					dHi[a] += hi[a]
				}
			}
		}
		if dHi[0] <= cLo[0] && dHi[1] <= cLo[1] && dHi[2] <= cLo[2] &&
			(dHi[0] < cLo[0] || dHi[1] < cLo[1] || dHi[2] < cLo[2]) {
			return true
		}
	}
	return false
}

// designWork is the budget of design work, in taps squared summed over
// the stages of the chains designed (see estimator.work): enough to settle
// the whole band of the D = 4096 benchmark (3.3e7), and about 10 s of
// designs and measurements on two cores at D = 2^20. Like the design cap
// it is counted, not timed, so the result does not depend on the machine.
const designWork = 4e7

// defaultMaxDesigns is Settings.MaxDesigns' default.
const defaultMaxDesigns = 600

// debugf traces the tiers in tests.
var debugf = func(string, ...any) {}
