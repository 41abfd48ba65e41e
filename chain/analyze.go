package chain

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// Analysis is the truth of a designed cascade (docs/design.md §7).
//
// With a rejection mask (Spec.RejectionMask) AliasRejectionDB is the
// mask's largest rejection R plus the worst margin over the mask,
// R + min over the alias bands of (rejection(g) - mask(g)): it reaches R
// exactly when every alias meets the mask, so the verdict (Meets) and the
// margin over the target read as with a flat target, and WorstAliasHz is
// where the margin is least.
type Analysis struct {
	AliasRejectionDB float64 // positive dB
	WorstAliasHz     float64 // input frequency of the worst alias
	PassbandRippleDB float64 // peak-to-peak dB over [0, fp]
	// WorstPath and WorstOutputHz, for a chain that ends in a fractional
	// stage, are the worst alias's path k and the output frequency, in
	// [0, fa], where it lands (PathGains); zero for an integer chain.
	WorstPath     int
	WorstOutputHz float64
}

// Analyze measures a designed chain against spec (docs/design.md §7):
//
//	alias rejection = -20 log10(max |H(g)|/|H(0)| over g in [k FK - fa, k FK + fa], k >= 1, g <= F0/2)
//	passband ripple = 20 log10(max |H| / min |H|) over [0, fp]
//
// with every extremum refined on the direct response to well under 0.01 dB.
// For a chain that is only estimated (Designed false) it returns the
// per-stage estimate instead: the least of the stages' rejections on their
// own bands (each FIR meets its Ds; a CIC's is computed exactly), and the sum
// of the stages' ripple shares plus the uncorrected CIC droop.
func Analyze(c *Chain, spec Spec) (Analysis, error) {
	return AnalyzeContext(context.Background(), c, spec)
}

// AnalyzeContext is Analyze stopped by ctx: the certified search checks it
// every few hundred steps, and once ctx is done it returns an error wrapping
// ctx.Err().
func AnalyzeContext(ctx context.Context, c *Chain, spec Spec) (Analysis, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return Analysis{}, err
	}
	spec = spec.DecimationView()
	if err := checkChain(c, spec); err != nil {
		return Analysis{}, err
	}
	if fracIndex(c) >= 0 {
		if !c.Designed || !hasTaps(c) {
			return estimateFractional(c, spec)
		}
		return measureFractional(ctx, c, spec)
	}
	if !c.Designed || !hasTaps(c) {
		return estimateAnalysis(c, spec)
	}
	return measure(ctx, c, spec)
}

// dcImagesDoubled says whether c is a real interpolation chain, whose
// images of a DC input come out at twice a tone's (package documentation,
// The truth of an interpolation chain): a real tone of amplitude A is two
// components of A/2, each image of which is an output tone of amplitude
// A |H|; a DC level A is one component of A, whose image at n FK, with
// its mirror at -n FK, is an output tone of amplitude 2 A |H(n FK)|,
// against the DC's own A |H(0)| (but at half the output rate, where the
// image is its own mirror). A transmitter's baseband offset is such
// an input. A complex chain's DC is one complex component (no mirror),
// and a decimation chain's aliases land in its passband, where a DC
// output of a real tone is at most the tone's amplitude times the gain.
func dcImagesDoubled(c *Chain) bool {
	return c.Direction == Interpolate && !c.Complex
}

func hasTaps(c *Chain) bool {
	for _, s := range c.Stages {
		if f, ok := s.(FIRStage); ok && f.Taps == nil {
			return false
		}
		if p, ok := s.(PolyphaseStage); ok && p.Taps == nil {
			return false
		}
		if f, ok := s.(FarrowStage); ok && f.Filter.Coef == nil {
			return false
		}
	}
	return true
}

func checkChain(c *Chain, spec Spec) error {
	if c == nil || len(c.Stages) == 0 {
		return errors.New("chain: empty chain")
	}
	if math.Abs(c.InputRate-spec.InputRate) > 1e-12*spec.InputRate {
		return fmt.Errorf("chain: chain InputRate = %s Hz differs from the spec's InputRate = %s Hz",
			fmtNum(c.InputRate), fmtNum(spec.InputRate))
	}
	if spec.Fractional() || fracIndex(c) >= 0 {
		num, den := spec.Fraction()
		if n, d := c.Fraction(); n != num || d != den {
			return fmt.Errorf("chain: the chain's ratio is %d/%d, the spec's %d/%d", n, d, num, den)
		}
		if _, _, err := fractionalPlan(c.Plan, num, den, spec.Direction()); err != nil {
			return err
		}
		if len(c.Plan) != len(c.Stages) {
			return fmt.Errorf("chain: the chain's plan %q has %d stages, its Stages %d", Notation(c.Plan), len(c.Plan), len(c.Stages))
		}
		if c.Direction != spec.Direction() {
			return fmt.Errorf("chain: the chain's direction, %s, is not the spec's, %s", c.Direction, spec.Direction())
		}
		return nil
	}
	if d := c.Decimation(); d != spec.Decimation() {
		return fmt.Errorf("chain: chain decimates by %d, the spec's ratio is %d", d, spec.Decimation())
	}
	if c.Direction != spec.Direction() {
		return fmt.Errorf("chain: the chain's direction, %s, is not the spec's, %s", c.Direction, spec.Direction())
	}
	return nil
}

func estimateAnalysis(c *Chain, spec Spec) (Analysis, error) {
	reqs, err := Requirements(spec, c.Plan)
	if err != nil {
		return Analysis{}, err
	}
	if len(reqs) != len(c.Stages) {
		return Analysis{}, fmt.Errorf("chain: the chain's plan %q has %d stages, its Stages %d", Notation(c.Plan), len(reqs), len(c.Stages))
	}
	a := Analysis{AliasRejectionDB: MaxFigureDB}
	for i, r := range reqs {
		if k := c.Stages[i].Kind(); k != r.Kind {
			return Analysis{}, fmt.Errorf("chain: stage %d is a %s stage, the chain's plan %q says %s", i+1, k, Notation(c.Plan), r.Kind)
		}
		var rej, worst float64
		// The cases cover every kind (FIR and half-band are FIRStages); see
		// Kinds. Pointers are taken as measure (newStageBounder) takes them.
		switch st := c.Stages[i].(type) {
		case CICStage:
			rej, worst = st.RejectionDB(r.Stopbands, r.InputRate)
			a.PassbandRippleDB += r.UncorrectedDroopDB
		case *CICStage:
			rej, worst = st.RejectionDB(r.Stopbands, r.InputRate)
			a.PassbandRippleDB += r.UncorrectedDroopDB
		case FIRStage, *FIRStage:
			// The stage's absolute limit Ds is StopbandScale below the target
			// so that the cascade's rejection relative to |H(0)| is Ds/scale.
			rej, worst = -toDB(r.Ds/r.StopbandScale), r.Stopbands[0].Lo
			a.PassbandRippleDB += DevToRipple(r.Dp)
		default:
			return Analysis{}, fmt.Errorf("chain: stage %d is a %T; Analyze takes CICStage and FIRStage values", i+1, st)
		}
		if rej < a.AliasRejectionDB {
			a.AliasRejectionDB, a.WorstAliasHz = rej, worst
		}
	}
	return a, nil
}

// maximizeBands returns the maximum of f over the bands: each band is
// sampled at per(band)+1 points, and the grid maxima within 0.5 dB of the
// best (at most 16) are refined by golden-section search. When bound is not
// nil it gives an upper bound of f on a band, and bands that cannot beat the
// best so far are skipped.
func maximizeBands(f func(float64) float64, bands []Interval, per func(Interval) int, bound func(Interval) float64) (float64, float64) {
	type pt struct{ x, v, lo, hi, h float64 }
	var cands []pt
	best := 0.0
	win := math.Pow(10, -candidateWindow/20)
	for _, b := range bands {
		if bound != nil && bound(b) < best*win {
			continue
		}
		n := max(8, min(per(b), 1<<16))
		h := (b.Hi - b.Lo) / float64(n)
		prev2, prev1 := math.Inf(-1), math.Inf(-1)
		for j := 0; j <= n+1; j++ {
			v := math.Inf(-1)
			if j <= n {
				v = f(b.Lo + float64(j)*h)
			}
			if j >= 1 && prev1 >= prev2 && prev1 >= v && prev1 >= best*win {
				cands = append(cands, pt{b.Lo + float64(j-1)*h, prev1, b.Lo, b.Hi, h})
				best = math.Max(best, prev1)
			}
			prev2, prev1 = prev1, v
		}
	}
	sort.SliceStable(cands, func(i, j int) bool { return cands[i].v > cands[j].v })
	bx, bv := 0.0, 0.0
	for i, cd := range cands {
		if i >= 16 || cd.v < best*win {
			break
		}
		x, v := refine(f, cd.x, cd.h, cd.lo, cd.hi, 1)
		if v > bv {
			bx, bv = x, v
		}
	}
	return bx, bv
}

// refine maximises sign*f near the grid extremum x by golden-section search
// on [x-h, x+h] within [lo, hi]. On a very flat peak the grid's extremum can
// sit more than a step from the true one; when the search ends on an inner
// end of its window, the window moves there and the search goes on.
func refine(f func(float64) float64, x, h, lo, hi, sign float64) (float64, float64) {
	var v float64
	for try := 0; try < 8; try++ {
		a, b := math.Max(lo, x-h), math.Min(hi, x+h)
		x, v = golden(f, a, b, sign)
		tol := 1e-6 * h
		if !(x-a < tol && a > lo) && !(b-x < tol && b < hi) {
			break
		}
	}
	return x, v
}

// golden maximises sign*f on [a, b] by golden-section search
// (remez.GoldenMax) and returns the best point seen (ends included) and f
// there.
func golden(f func(float64) float64, a, b float64, sign float64) (float64, float64) {
	x, v := remez.GoldenMax(func(x float64) float64 { return sign * f(x) }, a, b, 60, 1e-12*math.Max(1, math.Abs(a)))
	return x, sign * v
}

// candidateWindow is how far below the best grid value (dB) a grid
// extremum may lie and still be refined by maximizeBands.
const candidateWindow = 0.5

// gridPointsPerTap sets the bound grids' density: 16 points per tap over
// [0, rate/2], so that the Taylor terms of a grid bound (bound.go) stay
// within a few per cent of the magnitude at a ripple's peak.
const gridPointsPerTap = 16

// minGridPoints keeps short filters' grids fine enough that their bounds are
// tight.
const minGridPoints = 1024

func nextPow2(n int) int {
	p := 1
	for p < n {
		p <<= 1
	}
	return p
}

// How far above the largest evaluated gain (below the smallest, for a
// minimum) the certified bound may stay when the search stops: the figures
// are pessimistic by at most this much and never optimistic. The passband's
// is far tighter because designs meet the ripple budget with little to
// spare, and its few ripples are cheap to certify.
const (
	aliasCertifyDB  = 0.002
	rippleCertifyDB = 1e-5
)

// maxBoundSteps bounds the branch-and-bound's work per figure. When it runs
// out, the figure is the bound reached so far: still safe, less tight.
const maxBoundSteps = 1 << 18

// maxOpenIntervals bounds the intervals a search holds at once (48 bytes
// each, so about 50 MB): splitting groups of alias bands costs no step, and
// at D = 2^30 (536 870 912 alias bands of a 1 Hz output) the groups of a
// CIC's nearly equal bounds held 6 million intervals, 900 MB for two
// searches at once. Past it the search stops as when its steps run out:
// the figure is the bound reached, safe, less tight.
const maxOpenIntervals = 1 << 20

// cascade evaluates and bounds a chain's |H| at input frequencies.
type cascade struct {
	c      *Chain
	stages []stageBounder
}

func newCascade(c *Chain) (*cascade, error) {
	rates := c.Rates()
	cs := &cascade{c: c}
	for i, s := range c.Stages {
		b, err := newStageBounder(s, rates[i])
		if err != nil {
			return nil, fmt.Errorf("chain: stage %d: %w", i+1, err)
		}
		cs.stages = append(cs.stages, b)
	}
	return cs, nil
}

// bounds returns lo <= |H(f)| <= up over [a, b] as the products of the
// stages' bounds, coarse or not.
func (cs *cascade) bounds(a, b float64, coarse bool) (lo, up float64) {
	lo, up = 1, 1
	for _, s := range cs.stages {
		var l, u float64
		if coarse {
			l, u = s.coarse(a, b)
		} else {
			l, u = s.bounds(a, b)
		}
		lo *= l
		up *= u
	}
	return lo, up
}

// extreme is the result of a certified search: v = |H(x)| evaluated, and a
// bound: for a maximum, bound >= every |H| over the bands and
// bound <= v 10^(certifyDB/20) unless the step budget ran out; for a
// minimum the same with the inequalities reversed.
type extreme struct{ x, v, bound float64 }

// ivl is one interval of the branch-and-bound, key its bound times sign;
// coarse says the key came from the stages' coarse bounds.
type ivl struct {
	lo, hi, key float64
	coarse      bool
	// k0 < k1 marks a group of the bands k0..k1 (lo, hi their hull), split
	// by index when it reaches the top.
	k0, k1 int
}

type ivlHeap []ivl

func (h *ivlHeap) push(v ivl) {
	*h = append(*h, v)
	a := *h
	i := len(a) - 1
	for i > 0 {
		p := (i - 1) / 2
		if a[p].key >= a[i].key {
			break
		}
		a[p], a[i] = a[i], a[p]
		i = p
	}
}

func (h *ivlHeap) pop() ivl {
	a := *h
	top := a[0]
	last := len(a) - 1
	a[0] = a[last]
	a = a[:last]
	i := 0
	for {
		l, r, m := 2*i+1, 2*i+2, i
		if l < len(a) && a[l].key > a[m].key {
			m = l
		}
		if r < len(a) && a[r].key > a[m].key {
			m = r
		}
		if m == i {
			break
		}
		a[m], a[i] = a[i], a[m]
		i = m
	}
	*h = a
	return top
}

// bandSet is the bands a search runs over, by index 0..n-1 in increasing
// frequency, without holding them all: a chain at D = 2^24 has 2^23 alias
// bands.
type bandSet struct {
	n    int
	band func(k int) Interval
	// weight, when not nil, scales |H| at x (a rejection mask's
	// 10^((mask(x) - target)/20)), and weightMax bounds it over an
	// interval; the search then finds the largest weighted gain.
	weight    func(x float64) float64
	weightMax func(a, b float64) float64
	// floor, in a search for a maximum, is a value already evaluated
	// elsewhere (another path of a fractional chain): intervals whose
	// bound cannot beat it by more than the certify margin are dropped.
	// The search's bound is then at most max(its best, floor) times the
	// margin.
	floor float64
}

// search finds the largest (sign > 0) or smallest (sign < 0) |H| over the
// bands by branch and bound: the interval with the most extreme bound is
// split at its midpoint, where |H| is evaluated, until no interval's bound
// can beat the best evaluated value by more than certifyDB. Only evaluated
// gains ever become the best, and only rigorous bounds prune, so the
// returned bound is never on the optimistic side of the truth.
func (cs *cascade) search(ctx context.Context, bands bandSet, sign, certifyDB float64) (extreme, error) {
	return searchOn(ctx, cs, bands, sign, certifyDB)
}

// gain returns the cascade's |H(x)|.
func (cs *cascade) gain(x float64) float64 { return cs.c.Gain(x) }

// gainBounder is what the certified search evaluates and bounds: a
// cascade, or one path through a fractional chain (fractionalPath).
type gainBounder interface {
	gain(x float64) float64
	bounds(a, b float64, coarse bool) (lo, up float64)
}

// searchOn is the search of (*cascade).search on any gainBounder.
func searchOn(ctx context.Context, cs gainBounder, bands bandSet, sign, certifyDB float64) (extreme, error) {
	tol := math.Pow(10, certifyDB/20)
	key := func(a, b float64, coarse bool) float64 {
		lo, up := cs.bounds(a, b, coarse)
		if sign > 0 {
			if bands.weightMax != nil {
				up *= bands.weightMax(a, b)
			}
			return up
		}
		return -lo
	}
	// done says the key k cannot beat the best value v by more than tol.
	done := func(k, v float64) bool {
		if sign > 0 {
			return k <= math.Max(v, bands.floor)*tol
		}
		return -k >= v/tol
	}
	best := extreme{v: math.Inf(int(-sign))}
	eval := func(x float64) {
		v := cs.gain(x)
		if bands.weight != nil {
			v *= bands.weight(x)
		}
		if sign*v > sign*best.v {
			best.x, best.v = x, v
		}
	}
	// The bands enter as one group under a coarse key (a CIC's exact bound
	// over their hull times each FIR's largest gain), which is a bound over
	// every band in it. A group that reaches the top is split by index; a
	// single band's coarse key is replaced by its fine one when it reaches
	// the top. Most bands, deep in some stage's stopband, are never taken
	// out of a group, so memory follows the work done, not the band count.
	group := func(k0, k1 int) ivl {
		lo, hi := bands.band(k0).Lo, bands.band(k1).Hi
		return ivl{lo: lo, hi: hi, key: key(lo, hi, true), coarse: true, k0: k0, k1: k1}
	}
	var h ivlHeap
	h.push(group(0, bands.n-1))
	eval(bands.band(0).Lo)
	// dropped is the most extreme key of the intervals discarded unsplit.
	dropped := math.Inf(-1)
	for steps := 0; len(h) > 0; {
		if steps%256 == 0 {
			if err := ctx.Err(); err != nil {
				return extreme{}, fmt.Errorf("chain: analysis stopped: %w", err)
			}
		}
		top := h.pop()
		if done(top.key, best.v) {
			dropped = math.Max(dropped, top.key)
			break
		}
		if len(h)+2 > maxOpenIntervals {
			dropped = math.Max(dropped, top.key)
			break
		}
		if top.k1 > top.k0 {
			m := top.k0 + (top.k1-top.k0)/2
			h.push(group(top.k0, m))
			h.push(group(m+1, top.k1))
			continue
		}
		if top.coarse {
			top.key, top.coarse = key(top.lo, top.hi, false), false
			h.push(top)
			continue
		}
		if !(top.hi > top.lo) {
			// A band that is one point: its value is exact.
			eval(top.lo)
			continue
		}
		steps++
		mid := top.lo + (top.hi-top.lo)/2
		if steps >= maxBoundSteps || !(mid > top.lo && mid < top.hi) {
			dropped = math.Max(dropped, top.key)
			break
		}
		eval(mid)
		for _, p := range [2][2]float64{{top.lo, mid}, {mid, top.hi}} {
			k := key(p[0], p[1], false)
			if done(k, best.v) {
				dropped = math.Max(dropped, k)
				continue
			}
			h.push(ivl{lo: p[0], hi: p[1], key: k})
		}
	}
	for _, it := range h {
		dropped = math.Max(dropped, it.key)
	}
	best.bound = best.v
	if sign > 0 {
		best.bound = math.Max(best.v, dropped)
	} else if !math.IsInf(dropped, -1) {
		best.bound = math.Min(best.v, -dropped)
	}
	return best, nil
}

// measure computes the docs/design.md §7 figures of a chain with taps, certified by
// (*cascade).search: the rejection is taken at the upper bound of the worst
// alias band and the ripple from the upper bound of the passband's maximum
// over the lower bound of its minimum, so that both are pessimistic by at
// most aliasCertifyDB and 2 rippleCertifyDB and never optimistic. WorstAliasHz is where the
// largest alias gain was evaluated.
func measure(ctx context.Context, c *Chain, spec Spec) (Analysis, error) {
	cs, err := newCascade(c)
	if err != nil {
		return Analysis{}, err
	}
	fk, fa, fp := spec.OutputRate, spec.Protected, spec.Passband
	if spec.RatioTolerancePPM > 0 {
		// The ratio moved within the tolerance: the chain's own output
		// rate is the one its aliases fold at.
		fk = c.OutputRate()
	}
	f0h := c.InputRate / 2
	h0 := c.Gain(0)
	if !(h0 > 0) {
		return Analysis{AliasRejectionDB: 0, PassbandRippleDB: MaxFigureDB}, nil
	}
	// Alias band k (from 0) is [(k+1) FK - fa, (k+1) FK + fa] within
	// [0, F0/2]; the last one's start lies at or below F0/2, and one that
	// would be empty (it starts at F0/2 exactly) is cut to a point.
	nb := int(math.Floor((f0h + fa) / fk))
	for nb > 0 && float64(nb)*fk-fa > f0h {
		nb--
	}
	aliases := bandSet{n: nb, band: func(k int) Interval {
		lo := float64(k+1)*fk - fa
		return Interval{lo, math.Max(lo, math.Min(float64(k+1)*fk+fa, f0h))}
	}}
	if m := spec.RejectionMask; m != nil {
		// Each alias is held to the mask at its input frequency: the
		// search finds the largest |H(g)| 10^((mask(g) - R)/20), R the
		// mask's largest rejection (spec.RejectionDB), so the rejection
		// it gives is R plus the worst margin over the mask, met when it
		// reaches R, and WorstAliasHz is where the margin is least.
		r := spec.RejectionDB
		aliases.weight = func(x float64) float64 { return math.Pow(10, (m.At(x)-r)/20) }
		aliases.weightMax = func(a, b float64) float64 { return math.Pow(10, (m.MaxOver(a, b)-r)/20) }
	}
	a := Analysis{AliasRejectionDB: MaxFigureDB}
	if nb > 0 {
		w, err := cs.search(ctx, aliases, 1, aliasCertifyDB)
		if err != nil {
			return Analysis{}, err
		}
		a.AliasRejectionDB, a.WorstAliasHz = -toDB(w.bound/h0), w.x
	}
	if dcImagesDoubled(c) {
		// The images of a DC input, at the alias bands' centres n FK
		// below F0/2 (at F0/2 itself the image is its own mirror: one
		// real component, no doubling).
		nd := int(math.Floor(f0h / fk))
		if float64(nd)*fk >= f0h*(1-1e-12) {
			nd--
		}
		dcs := bandSet{n: nd, weight: aliases.weight, weightMax: aliases.weightMax, band: func(k int) Interval {
			g := float64(k+1) * fk
			return Interval{g, g}
		}}
		if nd > 0 {
			w, err := cs.search(ctx, dcs, 1, aliasCertifyDB)
			if err != nil {
				return Analysis{}, err
			}
			if r := -toDB(2 * w.bound / h0); r < a.AliasRejectionDB {
				a.AliasRejectionDB, a.WorstAliasHz = r, w.x
			}
		}
	}
	pass := bandSet{n: 1, band: func(int) Interval { return Interval{0, fp} }}
	hi, err := cs.search(ctx, pass, 1, rippleCertifyDB)
	if err != nil {
		return Analysis{}, err
	}
	lo, err := cs.search(ctx, pass, -1, rippleCertifyDB)
	if err != nil {
		return Analysis{}, err
	}
	a.PassbandRippleDB = toDB(hi.bound / lo.bound)
	if !(lo.bound > 0) {
		a.PassbandRippleDB = MaxFigureDB
	}
	return a, nil
}

// Meets says whether the figures meet spec's rejection target and ripple
// budget: the rejection at least the target and the ripple at most the
// budget, with no allowance. The figures are certified (the rejection
// never above the chain's, the ripple never below it), so a chain that
// meets here meets in fact. It is the one verdict on a chain: the search,
// the word-length planner and the report all call it.
//
// With a rejection mask the target is the mask's largest rejection (see
// Analysis), whether or not spec is normalised.
func (a Analysis) Meets(spec Spec) bool {
	target := spec.RejectionDB
	if spec.RejectionMask != nil {
		target = spec.RejectionMask.Max()
	}
	return a.AliasRejectionDB >= target && a.PassbandRippleDB <= spec.RippleDB
}
