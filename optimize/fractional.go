package optimize

import (
	"context"
	"math"
	"runtime"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
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
)

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
// A d of 1 (the fractional stage alone) is tried only when nothing else
// fits.
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
		if d > 1 && ok(d) {
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

func gcdInt(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	return a
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
	var plans [][]chain.StagePlan
	for _, d := range fractionalSplits(spec, num, den, maxStages) {
		g := gcdInt(num, den*d)
		up, down := den*d/g, num/g
		if up == down {
			continue // d is the whole ratio: no fractional stage
		}
		// ints are the integer stages found for a polyphase stage to
		// follow, lowpassInts those for a Farrow stage (ending in the
		// lowpass FIR it needs).
		var ints, lowpassInts [][]chain.StagePlan
		if d == 1 {
			ints = [][]chain.StagePlan{nil}
		} else {
			fk := spec.InputRate / float64(d) * float64(up) / float64(down)
			exact := spec
			exact.OutputRate, exact.RatioTolerancePPM = fk, 0
			share := spec.RippleDB * 0.5
			// Two searches: the integer stages alone against their
			// aliases (the fractional stage is then the lowpass), and
			// ending in a lowpass FIR that holds the band above Keep
			// (which a Farrow stage needs).
			for _, lowpass := range []bool{false, true} {
				sub := chain.IntegerSpec(exact, d, spec.RippleDB-share, share, lowpass)
				ss := s
				ss.MaxStages = maxStages - 1
				ss.Kinds = integer
				ss.floatOnly = true
				ss.Progress, ss.Scoring = nil, nil
				ss.Cost.Multiplierless = false
				r, err := Plan(ctx, sub, ss)
				if err != nil {
					if ctx.Err() != nil {
						return nil, err
					}
					res.Dropped[ReasonDesignFailed]++
					continue
				}
				res.Candidates += r.Candidates
				n := 0
				for _, c := range r.Front {
					if n >= maxIntegerChains {
						break
					}
					p := slices.Clone(c.Plan)
					if lowpass {
						last := &p[len(p)-1]
						if last.Kind != chain.FIR {
							continue
						}
						last.Variant = chain.Lowpass
					}
					if lowpass {
						lowpassInts = append(lowpassInts, p)
					} else {
						ints = append(ints, p)
					}
					n++
				}
			}
		}
		add := func(ip []chain.StagePlan, k chain.Kind) {
			p := append(slices.Clone(ip), chain.StagePlan{Kind: k, Factor: 1, Up: up, Down: down})
			if !slices.ContainsFunc(plans, func(q []chain.StagePlan) bool { return slices.Equal(q, p) }) {
				plans = append(plans, p)
			}
		}
		for _, k := range frac {
			switch {
			case k == chain.Polyphase && up <= 256:
				for _, ip := range ints {
					add(ip, k)
				}
			case k == chain.Farrow:
				for _, ip := range lowpassInts {
					add(ip, k)
				}
			}
		}
	}
	res.Candidates += len(plans)
	// Word lengths of fractional chains are not planned: the search
	// ranks them on their float designs.
	fspec := spec
	fspec.CoefBits = 0
	des := realDesigner{ctx: ctx, spec: fspec, s: &s}
	out := make([]Candidate, len(plans))
	why := make([]Reason, len(plans))
	jobs := s.Jobs
	if jobs == 0 {
		jobs = runtime.GOMAXPROCS(0)
	}
	done := runAll(ctx, jobs, len(plans), func(i int) {
		c, w := des.design(plans[i])
		if w == "" {
			c, w = des.analyze(c)
		}
		out[i], why[i] = c, w
	}, s.Progress)
	var ok []Candidate
	for i := range plans {
		if !done[i] {
			res.Partial = true
			continue
		}
		res.Designed++
		if why[i] != "" {
			res.Dropped[why[i]]++
			continue
		}
		ok = append(ok, out[i])
	}
	if err := ctx.Err(); err != nil && len(ok) == 0 {
		return nil, err
	}
	res.FeasibleAll = len(ok)
	res.Feasible = ok
	res.Front = designedFront(ok)
	fs := make([]figs, len(res.Front))
	for i := range res.Front {
		fs[i] = candFigs(&res.Front[i])
	}
	res.Recommended, res.Reason = recommend(fs, &s, false)
	return res, nil
}
