package optimize

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/cost"
)

// A spec whose ratio is a fraction (chain.Spec.Fraction, num/den) is
// searched as integer stages down to a rate Fm = F0/d followed by one
// fractional stage from Fm to FK (package documentation, Fractional
// ratios). For each d among fractionalSplits, the integer stages are
// searched on their own spec (chain.IntegerSpec) by the integer search,
// whose few cheapest front chains, and their variants ending in a lowpass
// FIR, are completed with every allowed fractional stage, designed,
// measured as whole chains and priced. The front is taken over all of
// them.

// Fractional search limits.
const (
	// maxFractionalSplits bounds the rates Fm tried.
	maxFractionalSplits = 6
	// maxIntegerChains bounds the integer front chains completed per Fm.
	maxIntegerChains = 3
	// maxSmooth bounds the integers d enumerated as Fm candidates.
	maxSmoothCandidates = 1 << 16
	// fracMaxDesigns bounds the whole chains designed; fracEstimateSlack
	// is how far above the cheapest designed chain an estimate may lie
	// and still be designed.
	fracMaxDesigns    = 12
	fracEstimateSlack = 2
)

// planRule is the rule a plan error states, without the package's and the
// plan's names (a *chain.PlanError's Rule), or err's text.
func planRule(err error) string {
	var pe *chain.PlanError
	if errors.As(err, &pe) {
		return pe.Rule
	}
	return err.Error()
}

// fractionalSplits returns the integer decimations d tried before the
// fractional stage, at most maxFractionalSplits, in increasing order,
// among the d whose Fm = F0/d leaves the fractional stage a band
// (Fm > fp + fa and Fm > 2 fa) and whose largest prime factor is at most 7
// (the integer stages then split well), or that are the integers next to
// the ratio:
//
//   - for a polyphase stage, whose prototype costs about what a FIR at Fm
//     with the channel's transition would, Fm near FK: the two largest
//     d at most the ratio and the smallest above it;
//   - for a Farrow stage, which needs a lowpass FIR before it and Fm above
//     twice the stopband edge FK - fa, Fm from 2.2 to 5 times FK: the two
//     largest such d.
//
// A d of 1 (the fractional stage alone, no integer stage before it) is a
// candidate like any other: below a ratio of 2 it is the largest d at most
// the ratio, and often the cheapest chain (a 5/4 resampler needs no
// half-band in front of it). It is also the only one tried when nothing
// else fits.
func fractionalSplits(spec chain.Spec, num, den int, maxStages int) []int {
	if maxStages < 2 {
		return []int{1}
	}
	ratio := float64(num) / float64(den)
	fp, fa := spec.Passband, spec.Protected
	ok := func(d int) bool {
		fm := spec.InputRate / float64(d)
		return fm > fp+fa && fm > 2*fa
	}
	lim := int(math.Min(2*ratio+1, math.MaxInt32))
	var cands []int
	for _, d := range smoothUpTo(lim) {
		if ok(d) {
			cands = append(cands, d)
		}
	}
	for _, d := range []int{int(math.Floor(ratio)), int(math.Ceil(ratio))} {
		if d >= 2 && ok(d) && !slices.Contains(cands, d) {
			cands = append(cands, d)
		}
	}
	slices.Sort(cands)
	var pick []int
	add := func(d int) {
		if len(pick) < maxFractionalSplits && !slices.Contains(pick, d) {
			pick = append(pick, d)
		}
	}
	for i, n := len(cands)-1, 0; i >= 0 && n < 2; i-- {
		if float64(cands[i]) <= ratio {
			add(cands[i])
			n++
		}
	}
	for _, d := range cands {
		if float64(d) > ratio {
			add(d)
			break
		}
	}
	for i, n := len(cands)-1, 0; i >= 0 && n < 2; i-- {
		if over := ratio / float64(cands[i]); over >= 2.2 && over <= 5 {
			add(cands[i])
			n++
		}
	}
	if len(pick) == 0 {
		pick = []int{1}
	}
	slices.Sort(pick)
	return pick
}

// smoothUpTo returns the integers 1..n whose prime factors are at most 7,
// in increasing order, at most maxSmoothCandidates of them.
func smoothUpTo(n int) []int {
	out := []int{1}
	for _, p := range []int{2, 3, 5, 7} {
		for i := 0; i < len(out); i++ {
			if v := out[i] * p; v <= n && len(out) < maxSmoothCandidates && !slices.Contains(out, v) {
				out = append(out, v)
			}
		}
	}
	slices.Sort(out)
	return out
}

// subSettings are the settings of an integer search inside the fractional
// search: at most maxStages stages of kinds (nil: every kind), on float
// designs (the whole chains' word lengths are planned later), one job
// (the searches themselves run side by side), no progress or scoring of
// their own, and multiplies priced as multiplies.
func subSettings(s Settings, maxStages int, kinds []chain.Kind) Settings {
	s.MaxStages = maxStages
	s.Kinds = kinds
	s.floatOnly = true
	s.noSiblings = true
	s.Jobs = 1
	s.Progress, s.Scoring = nil, nil
	s.Cost.Multiplierless = false
	return s
}

// maxAfterCICSplits bounds the decimations Db after a polyphase stage
// placed after the CIC tried per CIC.
const maxAfterCICSplits = 2

// afterCICPlans returns the plans whose polyphase stage follows the CIC
// (chain package, Fractional stages), and the integer candidates their
// searches weighed. The CICs are those that begin the integer searches'
// front chains (cics, in order). For each, with R its decimation and
// num/(den R) = a/b in lowest terms, the polyphase stage is L/M with
// L = b (at most chain.MaxFractionalUp) and M = a/Db, for the
// maxAfterCICSplits smallest divisors Db >= 2 of a whose rate F2 = FK Db
// is at most the CIC's output rate F1 and leaves the stage a band
// (F2 - fa > fp, fa < F1/2). The FIR and half-band stages after it are
// searched as an integer chain of their own (chain.TailSpec) and their
// maxIntegerChains cheapest front chains completed.
func afterCICPlans(ctx context.Context, spec chain.Spec, num, den int, cics []chain.StagePlan, s Settings, integer []chain.Kind, maxStages, jobs int) ([][]chain.StagePlan, int) {
	var kinds []chain.Kind
	for _, k := range []chain.Kind{chain.HalfBand, chain.FIR} {
		if integer == nil || slices.Contains(integer, k) {
			kinds = append(kinds, k)
		}
	}
	if len(kinds) == 0 || maxStages < 3 {
		return nil, 0
	}
	fk := spec.InputRate * float64(den) / float64(num)
	exact := spec
	exact.OutputRate, exact.RatioTolerancePPM = fk, 0
	fp, fa := spec.Passband, spec.Protected
	type tailSearch struct {
		cic        chain.StagePlan
		up, down   int
		spec       chain.Spec
		front      [][]chain.StagePlan
		candidates int
	}
	var tails []*tailSearch
	for _, cp := range cics {
		r := cp.Factor
		if r < 2 || den > math.MaxInt32/r {
			continue
		}
		g := chain.GCD(num, den*r)
		a, b := num/g, den*r/g
		if b < 2 || b > chain.MaxFractionalUp {
			continue
		}
		f1 := spec.InputRate / float64(r)
		if fa >= f1/2 {
			continue
		}
		found := 0
		for db := 2; db <= a && found < maxAfterCICSplits; db++ {
			if a%db != 0 {
				continue
			}
			f2 := fk * float64(db)
			if f2 > f1 {
				break
			}
			if !(f2-fa > fp) {
				continue
			}
			tails = append(tails, &tailSearch{cic: cp, up: b, down: a / db, spec: chain.TailSpec(exact, f2)})
			found++
		}
	}
	runAll(ctx, jobs, len(tails), func(i int) {
		t := tails[i]
		r, err := Plan(ctx, t.spec, subSettings(s, maxStages-2, kinds))
		if err != nil {
			return
		}
		t.candidates = r.Candidates
		for _, c := range r.Front {
			if len(t.front) >= maxIntegerChains {
				break
			}
			t.front = append(t.front, c.Plan)
		}
	}, nil)
	var plans [][]chain.StagePlan
	n := 0
	for _, t := range tails {
		n += t.candidates
		for _, tp := range t.front {
			p := append([]chain.StagePlan{t.cic, {Kind: chain.Polyphase, Factor: 1, Up: t.up, Down: t.down}}, tp...)
			plans = append(plans, p)
		}
	}
	return plans, n
}

// fractionalKinds returns the fractional kinds the settings allow (those
// Kinds lists, or every one when it lists none), and the integer kinds for
// the stages before (nil: every one).
func fractionalKinds(s *Settings) (frac, integer []chain.Kind) {
	for _, k := range s.Kinds {
		if k.Fractional() {
			frac = append(frac, k)
		} else {
			integer = append(integer, k)
		}
	}
	if len(frac) == 0 {
		frac = chain.FractionalKinds()
	}
	return frac, integer
}

func planFractional(ctx context.Context, spec chain.Spec, s Settings) (*Result, error) {
	num, den := spec.Fraction()
	frac, integer := fractionalKinds(&s)
	if s.Chain.Memo == nil {
		s.Chain.Memo = chain.NewStageMemo()
	}
	maxStages := s.MaxStages
	if maxStages == 0 {
		maxStages = DefaultMaxStages
	}
	res := &Result{Recommended: -1, Dropped: map[Reason]int{}}
	jobs := runJobs(s.Jobs)
	// The integer searches, one per rate Fm and kind of ending: alone
	// against their aliases (a polyphase stage is then the lowpass), or
	// ending in a lowpass FIR that holds the band above Keep (which a
	// Farrow stage needs). They run side by side, one job each.
	type subSearch struct {
		d, up, down int
		lowpass     bool
		spec        chain.Spec
		front       [][]chain.StagePlan
		candidates  int
		failed      bool
	}
	var subs []*subSearch
	for _, d := range fractionalSplits(spec, num, den, maxStages) {
		g := chain.GCD(num, den*d)
		up, down := den*d/g, num/g
		if up == down {
			continue // d is the whole ratio: no fractional stage
		}
		if d == 1 {
			if up <= chain.MaxFractionalUp && slices.Contains(frac, chain.Polyphase) {
				subs = append(subs, &subSearch{d: 1, up: up, down: down, front: [][]chain.StagePlan{nil}})
			} else {
				res.Dropped[ReasonNoFractionalSplit]++
			}
			continue
		}
		fm := spec.InputRate / float64(d)
		fk := fm * float64(up) / float64(down)
		nsubs := len(subs)
		exact := spec
		exact.OutputRate, exact.RatioTolerancePPM = fk, 0
		share := spec.RippleDB * chain.FractionalRippleShare
		for _, lowpass := range []bool{false, true} {
			if lowpass && !(chain.KeepEdge(exact, fm) < fm/2 && slices.Contains(frac, chain.Farrow) && up <= chain.MaxFarrowUp) {
				continue // no Farrow stage can follow: Keep is not below Fm/2
			}
			if !lowpass && !(slices.Contains(frac, chain.Polyphase) && up <= chain.MaxFractionalUp) {
				continue
			}
			subs = append(subs, &subSearch{d: d, up: up, down: down, lowpass: lowpass,
				spec: chain.IntegerSpec(exact, d, spec.RippleDB-share, share, lowpass)})
		}
		if len(subs) == nsubs {
			res.Dropped[ReasonNoFractionalSplit]++
		}
	}
	runAll(ctx, jobs, len(subs), func(i int) {
		sub := subs[i]
		if sub.d == 1 {
			return
		}
		r, err := Plan(ctx, sub.spec, subSettings(s, maxStages-1, integer))
		if errors.Is(err, errNoCandidate) {
			// No integer chain of these kinds and stages makes d: nothing
			// was designed, nothing failed.
			return
		}
		if err != nil {
			sub.failed = true
			return
		}
		sub.candidates = r.Candidates
		for _, c := range r.Front {
			if len(sub.front) >= maxIntegerChains {
				break
			}
			p := slices.Clone(c.Plan)
			if sub.lowpass {
				last := &p[len(p)-1]
				if last.Kind != chain.FIR {
					continue
				}
				last.Variant = chain.Lowpass
			}
			sub.front = append(sub.front, p)
		}
	}, nil)
	if ctx.Err() != nil {
		// Stopped: a partial result, with whatever was designed (nothing
		// yet), which the caller reports as such.
		res.Partial = true
		return res, nil
	}
	var plans [][]chain.StagePlan
	for _, sub := range subs {
		if sub.failed {
			res.Dropped[ReasonDesignFailed]++
			continue
		}
		res.Candidates += sub.candidates
		kind := chain.Polyphase
		if sub.lowpass {
			kind = chain.Farrow
		}
		for _, ip := range sub.front {
			if sub.d == 1 && kind == chain.Polyphase && (sub.up > chain.MaxFractionalUp || !slices.Contains(frac, chain.Polyphase)) {
				continue
			}
			p := append(slices.Clone(ip), chain.StagePlan{Kind: kind, Factor: 1, Up: sub.up, Down: sub.down})
			if !slices.ContainsFunc(plans, func(q []chain.StagePlan) bool { return slices.Equal(q, p) }) {
				plans = append(plans, p)
			}
		}
	}
	if slices.Contains(frac, chain.Polyphase) {
		var cics []chain.StagePlan
		for _, sub := range subs {
			for _, ip := range sub.front {
				if len(ip) > 0 && ip[0].Kind == chain.CIC && !slices.Contains(cics, ip[0]) {
					cics = append(cics, ip[0])
				}
			}
		}
		ap, n := afterCICPlans(ctx, spec, num, den, cics, s, integer, maxStages, jobs)
		res.Candidates += n
		for _, p := range ap {
			if !slices.ContainsFunc(plans, func(q []chain.StagePlan) bool { return slices.Equal(q, p) }) {
				plans = append(plans, p)
			}
		}
	}
	res.Candidates += len(plans)
	// Fractional chains are ranked on their float designs. With the
	// coefficient width fixed, a chain that meets in floating point is
	// then judged on its taps rounded to that width as an integer chain
	// is (realDesigner.judgeFractional): designed again with tightened targets
	// where rounding misses, dropped under ReasonMissQuantised where that
	// fails, and under ReasonWordLengths where its word lengths cannot be
	// planned (an accumulator past fixed.MaxAccumulatorBits).
	// The designs and their float measurements take the spec as it is:
	// floatOnly (above) keeps its width out of them, and pricing counts
	// coefficient memory at that width, as the chain is built.
	fspec := spec
	des := realDesigner{ctx: ctx, spec: fspec, s: &s}
	planWords := spec.CoefBits > 0 && spec.CoefBits <= fixed.MaxBits
	// The estimate tier: every plan estimated (Herrmann lengths; a Farrow
	// stage is designed, it is small) and priced; the plans are designed
	// in order of their estimate, a batch of jobs at a time, until the
	// next estimate is above fracEstimateSlack times the cheapest chain
	// designed that meets, or fracMaxDesigns are designed.
	est := make([]float64, len(plans))
	estErr := make([]error, len(plans))
	runAll(ctx, jobs, len(plans), func(i int) {
		est[i] = math.Inf(1)
		c, err := chain.Estimate(fspec, plans[i], s.Chain)
		if err != nil {
			estErr[i] = err
			return
		}
		if f, err := cost.Price(fspec, c, s.Cost); err == nil {
			est[i] = costAxis(&f)
		}
	}, nil)
	order := make([]int, len(plans))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(est[a], est[b]) })
	// The plans taken are a prefix of the order, decided one plan at a
	// time: the same whatever the number of jobs. Designs run a batch of
	// jobs ahead; a design past the prefix's end is not used.
	var ok, missed []Candidate // missed: dropped for their rounded taps
	best := math.Inf(1)
	outs := make([]Candidate, len(order))
	whys := make([]Reason, len(order))
	have := make([]bool, len(order))
	for i := 0; i < len(order) && i < fracMaxDesigns; i++ {
		if e := est[order[i]]; math.IsInf(e, 1) || e > fracEstimateSlack*best {
			break
		}
		if !have[i] {
			if err := ctx.Err(); err != nil {
				res.Partial = true
				break
			}
			batch := order[i:min(len(order), i+jobs, fracMaxDesigns)]
			done := runAll(ctx, jobs, len(batch), func(b int) {
				c, w := des.design(plans[batch[b]])
				if w == "" {
					c, w = des.analyze(c)
				}
				if w == "" && planWords {
					c, w = des.judgeFractional(c, spec)
					if w != "" && ctx.Err() != nil {
						w = ""
					}
				}
				outs[i+b], whys[i+b] = c, w
			}, nil)
			for b := range batch {
				have[i+b] = done[b]
			}
			if !have[i] {
				res.Partial = true
				break
			}
		}
		res.Designed++
		if whys[i] != "" {
			res.Dropped[whys[i]]++
			if a := outs[i].acc; a != nil {
				res.AccumulatorExcess.Add(a)
			}
			if whys[i] == ReasonMissQuantised {
				missed = append(missed, outs[i])
			}
		} else {
			ok = append(ok, outs[i])
			best = math.Min(best, costAxis(&outs[i].Figures))
		}
		if s.Progress != nil {
			s.Progress(i+1, min(len(order), fracMaxDesigns))
		}
	}
	if ctx.Err() != nil {
		res.Partial = true
	}
	// Feasible by estimate: every plan estimated and priced (the designed
	// ones are a prefix of them); the cloud drawn is the designed chains
	// that meet.
	for _, e := range est {
		if !math.IsInf(e, 1) {
			res.FeasibleAll++
		}
	}
	res.FeasibleAll = max(res.FeasibleAll, len(ok))
	res.Feasible = ok
	res.Front = designedFront(ok)
	fs := make([]figs, len(res.Front))
	for i := range res.Front {
		fs[i] = candFigs(&res.Front[i])
	}
	res.Recommended, res.Reason = recommend(fs, &s, spec.Direction() == chain.Interpolate)
	var notBuilt error
	for i, err := range estErr {
		if err != nil && ctx.Err() == nil {
			res.Dropped[ReasonFractionalNotBuilt]++
			if notBuilt == nil {
				notBuilt = fmt.Errorf("%s cannot be built: %s", spec.Direction().Notation(plans[i]), planRule(err))
			}
		}
	}
	if len(res.Front) == 0 {
		res.Closest = closest(spec, outs, whys)
		if notBuilt != nil && res.Designed == 0 && !res.Partial {
			res.Reason = "No chain meets the spec: " + notBuilt.Error() + "."
		}
	}
	if len(res.Front) == 0 && !res.Partial && res.Dropped[ReasonMissQuantised] > 0 {
		res.Reason = widthReason(ctx, jobs, des, missed, spec.CoefBits, spec.Direction(), res)
	}
	return res, nil
}
