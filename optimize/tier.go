package optimize

import (
	"context"
	"fmt"
	"math"
	"sort"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
)

// outcome is what one real design gave, and whether its cascade has been
// analysed.
type outcome struct {
	c        Candidate
	reason   Reason
	analyzed bool
}

// designTier runs the real designs of one search: it remembers every
// outcome by plan, spends the design cap and the work budget, and reports
// progress and drops into the result.
type designTier struct {
	ctx  context.Context
	jobs int
	des  designer
	est  *estimator
	s    *Settings
	res  *Result

	memo  map[string]outcome
	order []string // memo keys in the order designed
	total int      // work units scheduled, for Progress

	maxDesigns int
	workLeft   float64

	// gone holds the plan keys of the chains that failed to design or
	// missed the spec, and of the band candidates given up because their
	// stages would not design: the estimated front is taken without them
	// (see searchPass). failed lists those not yet handed to
	// estimator.reinstate.
	gone   map[string]bool
	failed [][]chain.StagePlan
	// learnt holds the real figures of the stages learnt so far, and
	// tries how often a stage's chains failed (see learn).
	learnt map[realKey]figs
	tries  map[realKey]int
	// partial holds the representatives learn designed in part, by plan
	// key: their own figures over the stages designed. charged holds the
	// plan keys of those: each was charged as a whole design when first
	// designed in part (Result.Designed, the caps), and is not charged
	// again, however it is designed later.
	partial map[string]prefixFigs
	charged map[string]bool
	// retake is set by a search pass whose estimated front held a chain
	// that failed.
	retake bool
}

func newDesignTier(ctx context.Context, jobs int, des designer, est *estimator, s *Settings, res *Result) *designTier {
	t := &designTier{ctx: ctx, jobs: jobs, des: des, est: est, s: s, res: res,
		memo: map[string]outcome{}, gone: map[string]bool{}, learnt: map[realKey]figs{}, tries: map[realKey]int{}, partial: map[string]prefixFigs{}, charged: map[string]bool{}, maxDesigns: s.MaxDesigns, workLeft: s.MaxWork}
	if t.maxDesigns == 0 {
		t.maxDesigns = defaultMaxDesigns
	}
	if t.workLeft == 0 {
		t.workLeft = designWork
	}
	if s.Exhaustive {
		t.maxDesigns, t.workLeft = math.MaxInt, math.Inf(1)
	}
	return t
}

func (t *designTier) progress() func(int, int) {
	if t.s.Progress == nil {
		return nil
	}
	base := t.total
	return func(d, _ int) { t.s.Progress(base+d, t.total) }
}

// designAll designs the plans not designed yet, in parallel, each into its
// own slot, and reports whether all of them ran.
func (t *designTier) designAll(plans [][]chain.StagePlan) bool {
	upto := make([]int, len(plans))
	for i, pl := range plans {
		upto[i] = len(pl)
	}
	_, ok := t.designLearn(plans, upto)
	return ok
}

// record remembers the outcome of a whole chain's design.
func (t *designTier) record(plan []chain.StagePlan, o outcome) {
	k := planKey(plan)
	if n := o.c.redesigns; n > 0 {
		t.workLeft -= float64(n) * t.est.work(plan)
	}
	t.hopeless(plan, o)
	t.memo[k] = o
	t.order = append(t.order, k)
	if !t.charged[k] {
		t.res.Designed++
	}
	if o.reason != "" {
		t.dropped(plan, o)
	}
}

// designLearn designs the plans not designed yet (designAll) or the
// representatives of one of learn's rounds: reps[i] whole, remembered
// (record), where upto[i] = len(reps[i]), else, when the designer can,
// its first upto[i] stages alone, which is all the round learns from it
// (the stages after them are learnt or claimed by another
// representative). Where the partial design cannot be made (see
// realDesigner.designPrefix) the whole chain is designed and remembered.
// It returns the partial designs (nil where none) and false when
// cancelled.
func (t *designTier) designLearn(reps [][]chain.StagePlan, upto []int) ([]*Candidate, bool) {
	pd, can := t.des.(prefixDesigner)
	type result struct {
		part    *Candidate
		o       outcome
		stopped bool // cancelled before the whole design: nothing to record
	}
	var todo []int
	seen := map[string]bool{}
	for i, pl := range reps {
		k := planKey(pl)
		if _, ok := t.memo[k]; ok || seen[k] {
			continue
		}
		seen[k] = true
		todo = append(todo, i)
	}
	outs := make([]result, len(todo))
	prog := t.progress()
	t.total += len(todo)
	keys := make([][]realKey, len(todo))
	for j, i := range todo {
		t.est.keysOf(reps[i])
		for m, k := range t.est.keys {
			if chain.Kind(k.kind) != chain.CIC && m < upto[i] {
				keys[j] = append(keys[j], k)
			}
		}
	}
	done := runApart(t.ctx, t.jobs, len(todo), keys, func(j int) {
		pl, n := reps[todo[j]], upto[todo[j]]
		if can && n < len(pl) {
			if c, ok := pd.designPrefix(pl, n); ok {
				outs[j].part = &c
				return
			}
			if t.ctx.Err() != nil {
				outs[j].stopped = true
				return
			}
		}
		c, why := t.des.design(pl)
		outs[j].o = outcome{c: c, reason: why}
	}, prog)
	parts := make([]*Candidate, len(reps))
	all := true
	for j, ok := range done {
		if !ok || outs[j].stopped {
			all = false
			continue
		}
		i := todo[j]
		if outs[j].part != nil {
			parts[i] = outs[j].part
			if k := planKey(reps[i]); !t.charged[k] {
				t.charged[k] = true
				t.res.Designed++
			}
			continue
		}
		t.record(reps[i], outs[j].o)
	}
	return parts, all
}

// hopeless gives up at once the stages of a chain dropped for its rounded
// taps whose rounding error alone exceeds their stopband limit: any chain
// with them misses, so they are not tried again (see learn).
func (t *designTier) hopeless(plan []chain.StagePlan, o outcome) {
	if o.reason != ReasonMissQuantised || len(o.c.hopeless) != len(plan) {
		return
	}
	t.est.keysOf(plan)
	for i, k := range t.est.keys {
		if o.c.hopeless[i] {
			if _, ok := t.learnt[k]; !ok {
				t.tries[k] = max(t.tries[k], maxRounds)
			}
		}
	}
}

// dropped counts a designed chain dropped for o.reason, and records it as
// failed.
func (t *designTier) dropped(plan []chain.StagePlan, o outcome) {
	t.res.Dropped[o.reason]++
	t.fail(plan)
	if o.c.acc != nil {
		t.res.AccumulatorExcess.Add(o.c.acc)
	}
}

// fail records a chain that failed.
func (t *designTier) fail(plan []chain.StagePlan) {
	if k := planKey(plan); !t.gone[k] {
		t.gone[k] = true
		t.failed = append(t.failed, clonePlan(plan))
	}
}

// analyzeAll analyses the designed, unanalysed plans among plans.
func (t *designTier) analyzeAll(plans [][]chain.StagePlan) bool {
	var todo []string
	for _, pl := range plans {
		k := planKey(pl)
		if o, ok := t.memo[k]; ok && o.reason == "" && !o.analyzed {
			todo = append(todo, k)
		}
	}
	sort.Strings(todo)
	// The calls get their inputs from a slice, not from the memo, which
	// the loop below writes while an abandoned call may still run.
	ins := make([]Candidate, len(todo))
	for i, k := range todo {
		ins[i] = t.memo[k].c
	}
	outs := make([]outcome, len(todo))
	prog := t.progress()
	t.total += len(todo)
	done := runAll(t.ctx, t.jobs, len(todo), func(i int) {
		c, why := t.des.analyze(ins[i])
		outs[i] = outcome{c: c, reason: why, analyzed: true}
	}, prog)
	all := true
	for i, ok := range done {
		if !ok {
			all = false
			continue
		}
		// Re-designs for rounding are charged to the work budget (not to
		// the design count), so that a width no chain meets at cannot run
		// up unbounded work.
		if n := outs[i].c.redesigns; n > 0 {
			t.workLeft -= float64(n) * t.est.work(ins[i].Plan)
		}
		t.hopeless(ins[i].Plan, outs[i])
		t.memo[todo[i]] = outs[i]
		if outs[i].reason != "" {
			t.dropped(ins[i].Plan, outs[i])
		}
	}
	return all
}

// fit returns how many of plans, in order, the design cap and the work
// budget still allow, and charges their work.
func (t *designTier) fit(plans [][]chain.StagePlan) int {
	n, fresh := 0, 0
	for _, pl := range plans {
		k := planKey(pl)
		if _, ok := t.memo[k]; ok || t.charged[k] {
			n++
			continue
		}
		w := t.est.work(pl)
		if t.res.Designed+fresh >= t.maxDesigns || w > t.workLeft {
			break
		}
		t.workLeft -= w
		n++
		fresh++
	}
	return n
}

// settle takes the front of a pool of plans with their figures (real where
// designed, exact from learnt stages otherwise), and designs and analyses
// its members until every member is designed, analysed and meets the spec,
// replacing those that fail. It reports false when cancelled, and how many
// front members the caps left undesigned.
func (t *designTier) settle(plans [][]chain.StagePlan, fs []figs) (bool, int) {
	gone := make([]bool, len(plans))
	for {
		for i, pl := range plans {
			if o, ok := t.memo[planKey(pl)]; ok {
				if o.reason != "" {
					gone[i] = true
				} else {
					fs[i] = candFigs(&o.c)
				}
			}
		}
		var fr frontSet
		for i := range fs {
			if !gone[i] {
				fr.add(fs[i], i)
			}
		}
		var need, members [][]chain.StagePlan
		for _, i := range fr.id {
			members = append(members, plans[i])
			if _, ok := t.memo[planKey(plans[i])]; !ok {
				need = append(need, plans[i])
			}
		}
		debugf("settle: front %d, to design %d", len(members), len(need))
		// A member re-designed when analysed (for rounding, or a shortfall
		// within the ripple) comes back with other costs, which can let
		// another plan onto the front: the front is then taken again.
		before := make([]figs, len(members))
		for j, pl := range members {
			if o, ok := t.memo[planKey(pl)]; ok {
				before[j] = candFigs(&o.c)
			}
		}
		if len(need) > 0 {
			n := len(need)
			need = need[:t.fit(need)]
			if !t.designAll(need) {
				return false, 0
			}
			if len(need) < n {
				if !t.analyzeAll(members) {
					return false, 0
				}
				return true, n - len(need)
			}
			continue
		}
		if !t.analyzeAll(members) {
			return false, 0
		}
		again := false
		for j, pl := range members {
			if o := t.memo[planKey(pl)]; o.reason != "" || candFigs(&o.c).axes() != before[j].axes() {
				again = true
			}
		}
		if !again {
			return true, 0
		}
	}
}

// exhaustive designs every plan of the band and settles its front.
func (t *designTier) exhaustive(band []scored) bool {
	plans := make([][]chain.StagePlan, len(band))
	for i := range band {
		plans[i] = band[i].plan
	}
	if !t.designAll(plans) {
		return false
	}
	ok, _ := t.settle(plans, make([]figs, len(plans)))
	return ok
}

// front returns the front of the chains designed, analysed and meeting
// the spec.
func (t *designTier) front() []Candidate {
	var designed []Candidate
	for _, k := range t.order {
		if o := t.memo[k]; o.reason == "" && o.analyzed {
			designed = append(designed, o.c)
		}
	}
	if fr := designedFront(designed); len(fr) > 0 || t.ctx.Err() == nil {
		return fr
	}
	return t.salvage()
}

// salvageGrace bounds the measurements salvage makes after the search's
// context is done.
const salvageGrace = 300 * time.Millisecond

// regrounder is a designer that can work under another context
// (realDesigner): salvage measures with it after the search's own
// context is done.
type regrounder interface {
	under(ctx context.Context) designer
}

// salvage is the front of a search stopped before any chain was measured:
// the chains designed so far, priced, have their front measured (analyze)
// for at most salvageGrace; members that miss the spec are dropped and the
// front taken again. When the time runs out first, it is the front of the
// chains measured by then that meet. Only measured chains are returned, so
// a partial front holds no estimate either; it may be empty.
func (t *designTier) salvage() []Candidate {
	rg, ok := t.des.(regrounder)
	if !ok {
		return nil
	}
	// The time reserved before the caller's deadline (withMeasureReserve)
	// when there is some; else salvageGrace past the search's end.
	ctx, cancel := context.WithTimeout(context.WithoutCancel(t.ctx), salvageGrace)
	if o := measureOuter(t.ctx); o != nil && o.Err() == nil {
		cancel()
		ctx, cancel = context.WithCancel(o)
	}
	defer cancel()
	des := rg.under(ctx)
	measured := map[string]outcome{}
	for ctx.Err() == nil {
		var priced []Candidate
		for _, k := range t.order {
			o := t.memo[k]
			if m, ok := measured[k]; ok {
				o = m
			}
			if o.reason == "" {
				priced = append(priced, o.c)
			}
		}
		fr := designedFront(priced)
		var todo []Candidate
		for _, c := range fr {
			if o := t.memo[planKey(c.Plan)]; !o.analyzed {
				if _, ok := measured[planKey(c.Plan)]; !ok {
					todo = append(todo, c)
				}
			}
		}
		if len(todo) == 0 {
			return fr
		}
		outs := make([]outcome, len(todo))
		done := runAll(ctx, t.jobs, len(todo), func(i int) {
			c, why := des.analyze(todo[i])
			outs[i] = outcome{c: c, reason: why, analyzed: true}
		}, nil)
		for i, ok := range done {
			if ok {
				measured[planKey(todo[i].Plan)] = outs[i]
			}
		}
	}
	// Out of time: the front of the chains measured and meeting, which is
	// all the search can vouch for.
	var met []Candidate
	for _, k := range t.order {
		if o, ok := measured[k]; ok && o.reason == "" {
			met = append(met, o.c)
		}
	}
	return designedFront(met)
}

// widener is a designer that can name the coefficient width a dropped
// chain needs (realDesigner.meetsFrom).
type widener interface {
	meetsFrom(c Candidate, lo, hi int) (int, Candidate)
}

// widestTried is the widest coefficient width neededWidth tries.
const widestTried = 32

// namedChains is how many of the cheapest chains dropped for rounding
// neededWidth tries.
const namedChains = 3

// neededWidth names the least coefficient width above bits, up to
// widestTried, at which one of the namedChains cheapest of dropped (chains
// dropped for missing with rounded taps) meets the spec (the front of
// those chains by their floating-point figures, fewest multiplies first).
// It returns the chain as it meets at that width (re-designed, with what
// it costs there), the width and the chain's rank among those tried (0:
// the cheapest), and how many were tried; the width is zero when none
// meets or the designer cannot tell.
func neededWidth(ctx context.Context, jobs int, des designer, dropped []Candidate, bits int) (c Candidate, width, rank, tried int) {
	w, ok := des.(widener)
	if !ok {
		return Candidate{}, 0, 0, 0
	}
	best := designedFront(dropped)
	if len(best) > namedChains {
		best = best[:namedChains]
	}
	widths, met := make([]int, len(best)), make([]Candidate, len(best))
	done := runAll(ctx, jobs, len(best), func(i int) {
		widths[i], met[i] = w.meetsFrom(best[i], bits+1, widestTried)
	}, nil)
	bi := -1
	for i := range best {
		if done[i] && widths[i] > 0 && (bi < 0 || widths[i] < widths[bi]) {
			bi = i
		}
	}
	if bi < 0 {
		return Candidate{}, 0, 0, len(best)
	}
	return met[bi], widths[bi], bi, len(best)
}

// widthReason is Result.Reason when no chain met the spec with its taps
// rounded to bits-bit coefficients (dropped: the chains dropped for it, in
// a deterministic order), naming the width that would do and what the
// chain costs at that width, in dir's notation, and sets
// res.NeededCoefBits.
func widthReason(ctx context.Context, jobs int, des designer, dropped []Candidate, bits int, dir chain.Direction, res *Result) string {
	n := res.Dropped[ReasonMissQuantised]
	c, w, rank, tried := neededWidth(ctx, jobs, des, dropped, bits)
	msg := fmt.Sprintf("No chain meets the spec with %d-bit coefficients: %d chains that met it in floating point missed it with their taps rounded.", bits, n)
	cheapest := "The cheapest of them"
	if n == 1 {
		msg = fmt.Sprintf("No chain meets the spec with %d-bit coefficients: the one chain that met it in floating point missed it with its taps rounded.", bits)
		cheapest = "That chain"
	}
	figure := func(c *Candidate) string {
		if c.Figures.Multiplierless {
			return fmt.Sprintf("%d adders", c.Figures.Adders)
		}
		if dir == chain.Interpolate {
			// An interpolation chain's figures are per input sample.
			return fmt.Sprintf("%.4g multiplies per input", c.Figures.MultipliesPerOutput)
		}
		return fmt.Sprintf("%.4g multiplies per output", c.Figures.MultipliesPerOutput)
	}
	switch {
	case w > 0 && rank == 0:
		res.NeededCoefBits = w
		msg += fmt.Sprintf(" %s, %s, meets from %d bits (re-designed, %s there).", cheapest, dir.Notation(c.Plan), w, figure(&c))
	case w > 0:
		res.NeededCoefBits = w
		msg += fmt.Sprintf(" Of the %d cheapest of them, %s meets from the fewest bits, %d (re-designed, %s there).", tried, dir.Notation(c.Plan), w, figure(&c))
	case tried > 0 && ctx.Err() == nil:
		if n == 1 {
			msg += fmt.Sprintf(" It does not meet with coefficients of up to %d bits.", widestTried)
			break
		}
		msg += fmt.Sprintf(" None of the %d cheapest of them meets with coefficients of up to %d bits.", tried, widestTried)
	}
	return msg
}

// widthReason is the package's widthReason over the chains this tier
// dropped for their rounded taps.
func (t *designTier) widthReason(bits int, dir chain.Direction) string {
	var dropped []Candidate
	for _, k := range t.order {
		if o := t.memo[k]; o.reason == ReasonMissQuantised {
			dropped = append(dropped, o.c)
		}
	}
	return widthReason(t.ctx, t.jobs, t.des, dropped, bits, dir, t.res)
}

// goneWith reports whether plan failed, without allocating: scratch is
// the caller's buffer for its key, since the estimate tier's walkers read
// t.gone concurrently.
func (t *designTier) goneWith(plan []chain.StagePlan, scratch *[]byte) bool {
	if len(t.gone) == 0 {
		return false
	}
	*scratch = appendPlanKey((*scratch)[:0], plan)
	return t.gone[string(*scratch)]
}
