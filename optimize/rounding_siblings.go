package optimize

import (
	"sort"

	"github.com/stepdown-dsp/stepdown/chain"
)

// maxRoundingParents and maxRoundingSiblings bound roundingSiblings: the
// parent chains whose siblings are tried in one round (the cheapest with a
// sibling not designed yet), and the siblings designed in one round
// (outside the caps, like cicSiblings'). maxRoundingRounds bounds its
// rounds.
const (
	maxRoundingParents  = 4
	maxRoundingSiblings = 24
	maxRoundingRounds   = 2
)

// roundingSiblings designs, when chains are judged on their rounded taps,
// the siblings of the chains dropped for them, and of those that met only
// after re-designs for rounding that raised their cost beyond the band's
// tolerance (priced as first designed), that the front does not beat on
// every axis: the same chain with each FIR stage in its other layout
// (multiband or lowpass, where the two differ), and with its first stage,
// a recursive CIC, at every order and delay searched, in either layout.
//
// At a coefficient width near the target's own, what rounding costs a
// design is all but chance, and the estimate tier keeps neither the
// lowpass layout beside a cheaper multiband one nor a CIC beaten by
// another order or delay: a 50 to 2 MS/s receiver at 77 dB with 12-bit
// taps found no chain while cic4m2r5 > fir5L, a sibling of the cheapest
// chain that missed, meets (TestRoundingSiblings). Siblings are taken for
// the maxRoundingParents cheapest such chains with a sibling not designed
// yet, cheapest estimate first, at most maxRoundingSiblings a round; the
// front is then taken again (settle). It reports false when cancelled.
// Siblings left when the rounds run out are not counted in
// Result.Unsettled: they lie outside the estimate tier's model, whose
// completeness that count is about.
func (t *designTier) roundingSiblings(sp *space) bool {
	for round := 0; round < maxRoundingRounds; round++ {
		plans := t.roundingSiblingsToDesign(sp)
		if len(plans) == 0 || t.ctx.Err() != nil {
			return t.ctx.Err() == nil
		}
		plans = plans[:min(len(plans), maxRoundingSiblings)]
		debugf("rounding siblings round %d: %d chains", round, len(plans))
		if !t.designAndSettle(plans) {
			return false
		}
	}
	return true
}

// roundingSiblingsToDesign returns the siblings roundingSiblings designs
// next: those not designed yet and feasible by estimate (a CIC beaten by
// another order or delay included), parent by parent from the cheapest,
// each parent's by estimated cost.
func (t *designTier) roundingSiblingsToDesign(sp *space) [][]chain.StagePlan {
	front := t.front()
	ff := make([]figs, len(front))
	for i := range front {
		ff[i] = candFigs(&front[i])
	}
	type parent struct {
		plan []chain.StagePlan
		f    figs
	}
	var parents []parent
	for _, k := range t.order {
		o := t.memo[k]
		var f figs
		switch {
		case o.c.Plan == nil:
			continue
		case o.reason == ReasonMissQuantised:
			f = candFigs(&o.c)
		case o.reason == "" && o.c.redesigns > 0 && costAxis(&o.c.Figures) > (1+t.est.tol)*costAxis(&o.c.first):
			// Met only after re-designs for rounding that put its cost
			// beyond the band's tolerance of its cost as first designed,
			// which is what a sibling that rounds better would have (a
			// margin of a dB or so at a comfortable width moves it by a
			// tap or two, and its siblings would round no differently).
			f = candFigs(&Candidate{Figures: o.c.first})
		default:
			continue
		}
		beaten := false
		for i := range ff {
			if ff[i].mpo <= f.mpo && ff[i].bits <= f.bits && ff[i].lat <= f.lat {
				beaten = true
				break
			}
		}
		if !beaten {
			parents = append(parents, parent{o.c.Plan, f})
		}
	}
	sort.SliceStable(parents, func(i, j int) bool { return parents[i].f.mpo < parents[j].f.mpo })
	est := t.est
	keep := est.keepBeaten
	defer func() { est.keepBeaten = keep }()
	est.keepBeaten = true
	var plans [][]chain.StagePlan
	seen := map[string]bool{}
	taken := 0
	for _, p := range parents {
		if taken == maxRoundingParents {
			break
		}
		type sib struct {
			plan []chain.StagePlan
			cost float64
		}
		var sibs []sib
		for _, pl := range siblingPlans(p.plan, sp) {
			k := planKey(pl)
			if _, ok := t.memo[k]; ok || seen[k] {
				continue
			}
			seen[k] = true
			if f, drop := est.score(pl); drop == dropNone {
				sibs = append(sibs, sib{pl, f.mpo})
			}
		}
		if len(sibs) == 0 {
			continue // every sibling designed: the next parent's turn
		}
		taken++
		sort.SliceStable(sibs, func(i, j int) bool { return sibs[i].cost < sibs[j].cost })
		for _, s := range sibs {
			plans = append(plans, s.plan)
		}
	}
	return plans
}

// siblingPlans returns plan's layout variants (each FIR stage whose two
// layouts differ in either, every combination) and, when its first stage
// is a recursive CIC, each of those at every CIC order and delay searched.
// plan itself is among them.
func siblingPlans(plan []chain.StagePlan, sp *space) [][]chain.StagePlan {
	var flip []int
	prefix := 1
	for i, st := range plan {
		if st.Kind == chain.FIR && !sp.sameLayout(prefix, st.Factor) {
			flip = append(flip, i)
		}
		prefix *= st.Factor
	}
	// At most 2^3 layouts: a chain has few FIR stages whose layouts
	// differ (the last one's factor is rarely 2).
	if len(flip) > 3 {
		flip = flip[len(flip)-3:]
	}
	var layouts [][]chain.StagePlan
	for mask := 0; mask < 1<<len(flip); mask++ {
		pl := clonePlan(plan)
		for b, i := range flip {
			if mask&(1<<b) != 0 {
				if pl[i].Variant == chain.Lowpass {
					pl[i].Variant = chain.Multiband
				} else {
					pl[i].Variant = chain.Lowpass
				}
			}
		}
		layouts = append(layouts, pl)
	}
	first := plan[0]
	if first.Kind != chain.CIC || first.CICForm != chain.Recursive {
		return layouts
	}
	var out [][]chain.StagePlan
	for _, n := range sp.orders {
		for _, m := range sp.delays {
			for _, l := range layouts {
				pl := clonePlan(l)
				pl[0].CICOrder, pl[0].CICDelay = n, m
				out = append(out, pl)
			}
		}
	}
	return out
}
