package optimize

import (
	"context"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/cost"
)

// Check designs and measures one named plan exactly as the search's design
// tier does: the same design, the same re-design when the rejection misses
// by no more than the ripple, and, with a fixed coefficient width, the same
// re-design with the margin rounding needs. A chain the search would keep
// comes back with the figures Plan gives it, and reason "". A chain the
// search would drop comes back as first designed, measured, with the reason
// it would be dropped, so that a caller can still show it. The error is
// chain.Design's for a plan that cannot be designed (a *chain.PlanError for
// one the spec's bands rule out), or ctx's.
func Check(ctx context.Context, spec chain.Spec, plan []chain.StagePlan, s Settings) (Candidate, Reason, error) {
	ns, err := spec.Normalize()
	if err != nil {
		return Candidate{}, "", err
	}
	ns = ns.DecimationView() // plan is in decimation order (see Plan)
	if err := s.checkFor(ns); err != nil {
		return Candidate{}, "", err
	}
	// A fractional chain is designed and measured in floating point, then
	// judged on its rounded taps as the search judges it (judgeFractional).
	frac, coefBits := ns.Fractional(), ns.CoefBits
	if frac {
		// Its width priced as built (coefficient memory); floatOnly keeps
		// it out of the design and the float measurement.
		s.floatOnly = true
	}
	if s.Chain.Memo == nil {
		// The first design below and the design tier's share their stages.
		s.Chain.Memo = chain.NewStageMemo()
	}
	r := realDesigner{ctx: ctx, spec: ns, s: &s}
	c, err := chain.DesignContext(ctx, ns, plan, s.Chain)
	if err != nil {
		return Candidate{}, "", err
	}
	d, why := r.design(plan)
	if why == "" {
		d, why = r.analyze(d)
	}
	if why == "" && frac && coefBits > 0 && coefBits <= fixed.MaxBits {
		rs := ns
		rs.CoefBits = coefBits
		d, why = r.judgeFractional(d, rs)
	}
	if why == "" {
		return d, "", nil
	}
	if err := ctx.Err(); err != nil {
		return Candidate{}, "", err
	}
	// Dropped: the chain as first designed, measured.
	f, err := cost.EvaluateContext(ctx, ns, c, s.Cost)
	if err != nil {
		return Candidate{}, "", err
	}
	return Candidate{Plan: plan, Chain: c, Figures: f, MarginDB: f.Analysis.AliasRejectionDB - ns.RejectionDB}, why, nil
}
