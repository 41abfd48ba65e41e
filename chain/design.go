package chain

import (
	"context"
	"errors"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// Estimate returns the chain with FIR lengths from order estimates (no design).
//
// FIR stages take remez.HerrmannLength(dp_i, ds, first stopband edge - fp,
// F(i-1)); half-bands the same estimate for min(dp_i, ds) on both bands,
// rounded up to the next length 4K-1. CIC stages need no design and are
// complete (pruned registers included). Settings.MaxTaps does not bound
// estimates (the caller compares them with its own limit).
func Estimate(spec Spec, plan []StagePlan, s Settings) (*Chain, error) {
	return build(context.Background(), spec, plan, s, false)
}

// Design designs every stage for real: FIR stages by remez.MinLength on their
// requirement's bands, searching no length above s.MaxTaps, half-bands by
// remez.MinHalfBand, refused when longer than s.MaxTaps.
func Design(spec Spec, plan []StagePlan, s Settings) (*Chain, error) {
	return build(context.Background(), spec, plan, s, true)
}

// DesignContext is Design stopped by ctx: the context is checked before
// every stage and inside every stage's design (remez.MinLengthContext,
// remez.MinHalfBandContext), and once it is done DesignContext returns no
// chain and an error wrapping ctx.Err().
func DesignContext(ctx context.Context, spec Spec, plan []StagePlan, s Settings) (*Chain, error) {
	return build(ctx, spec, plan, s, true)
}

// DesignPrefixContext designs plan's first n stages (from the high rate;
// 1 <= n <= len(plan)) exactly as DesignContext designs them, and only
// estimates the lengths of the stages after them (Herrmann's estimate, as
// Estimate's, but on the requirements of the design's rule): a stage's
// design depends on the stages before it and on the whole plan's
// requirements (the later stages' kinds and factors set its ripple share
// and limits), never on the designs after it, so each designed stage is
// the one DesignContext gives, and so are its priced figures
// (cost.Price). The chain's Designed is false unless n = len(plan). A search that learns a stage's real
// figures from a chain it will not build pays for that stage and those
// before it only. A plan with a fractional stage is refused.
func DesignPrefixContext(ctx context.Context, spec Spec, plan []StagePlan, n int, s Settings) (*Chain, error) {
	if n < 1 || n > len(plan) {
		return nil, fmt.Errorf("chain: DesignPrefixContext: n = %d stages of %d: must be 1 to %d", n, len(plan), len(plan))
	}
	if n == len(plan) {
		return build(ctx, spec, plan, s, true)
	}
	if spec.Fractional() || planFracIndex(plan) >= 0 {
		return nil, fmt.Errorf("chain: DesignPrefixContext: %q has a fractional stage: design it whole", Notation(plan))
	}
	return buildN(ctx, spec, plan, s, n)
}

// stopped is the error of a design stopped by its context.
func stopped(plan []StagePlan, err error) error {
	return fmt.Errorf("chain: design of %q stopped: %w", Notation(plan), err)
}

func build(ctx context.Context, spec Spec, plan []StagePlan, s Settings, design bool) (*Chain, error) {
	n := 0
	if design {
		n = len(plan)
	}
	return buildN(ctx, spec, plan, s, n)
}

// buildN designs plan's first n stages and estimates the rest: n = 0 is
// Estimate, n = len(plan) Design.
func buildN(ctx context.Context, spec Spec, plan []StagePlan, s Settings, n int) (*Chain, error) {
	design := n > 0
	user, err := spec.Normalize()
	if err != nil {
		return nil, err
	}
	spec = user.DecimationView()
	if spec.Direction() == Interpolate && !spec.Complex && !spec.dcRaised {
		// A real interpolation chain's images of a DC input come out at
		// twice a tone's (dcImagesDoubled): every stage is designed
		// 20 log10 2 dB deeper, once (the specs of its parts keep the
		// mark).
		spec = spec.RejectionRaised(pairDB)
		spec.dcRaised = true
	}
	if err := s.Check(); err != nil {
		return nil, err
	}
	if spec.Fractional() || planFracIndex(plan) >= 0 {
		// A fractional stage ends the chain or follows its CIC; an
		// integer ratio may be made up of one too (fir5 > fir10 >
		// poly50/53 for D = 53). A fractional stage elsewhere is refused
		// there, in the words of where it may go.
		return buildFractional(ctx, spec, plan, s, n == len(plan))
	}
	// Estimates keep the stage-alone rule's limits: the credit needs the
	// earlier stages' taps, and the flat limits over-estimate safely.
	reqs, err := requirements(spec, plan, s.StageAlone || !design)
	if err != nil {
		return nil, err
	}
	c := &Chain{InputRate: spec.InputRate, Complex: spec.Complex, Direction: spec.Direction(),
		Plan: append([]StagePlan(nil), plan...), Designed: n == len(plan)}
	bits := spec.InputBits
	for i, p := range plan {
		if c.Direction == Interpolate {
			// The CIC of an interpolation chain takes the words between
			// stages (OutputBits), or the input word when no stage comes
			// before it in signal order.
			bits = spec.OutputBits
			if i == len(plan)-1 {
				bits = spec.InputBits
			}
		}
		if err := ctx.Err(); err != nil {
			return nil, stopped(plan, err)
		}
		r := reqs[i]
		if design && i >= n && p.Kind != CIC {
			// Past the designed prefix: a length estimate only.
			var st FIRStage
			if p.Kind == HalfBand {
				st, err = halfBandStage(ctx, r, s, false)
			} else {
				st, err = firStage(ctx, r, c.Stages, s, false)
			}
			if err != nil {
				return nil, planErr(plan, i, "%v", err)
			}
			c.Stages = append(c.Stages, st)
			bits = spec.OutputBits
			continue
		}
		switch p.Kind {
		case CIC:
			cs, err := newCIC(c.Direction, p, bits, spec.OutputBits)
			if err != nil {
				return nil, planErr(plan, i, "%v", err)
			}
			bits = cs.OutputBits
			c.Stages = append(c.Stages, cs)
			continue
		case HalfBand:
			st, err := s.Memo.stage(ctx, design, r, c.Stages, s, func() (FIRStage, error) { return halfBandStage(ctx, r, s, design) })
			if cerr := ctx.Err(); cerr != nil {
				return nil, stopped(plan, cerr)
			}
			if err != nil {
				return nil, planErr(plan, i, "%v", err)
			}
			c.Stages = append(c.Stages, st)
		case FIR:
			if r.cascadeBase > 0 {
				// The cascade rule: the stages before this one are
				// designed, and their attenuation relaxes its stopbands.
				r.credit = newStopCredit(r.cascadeBase, spec.InputRate, c.Stages, r.Stopbands)
				r.credit.mask, r.credit.top = spec.RejectionMask, spec.RejectionDB
				r.credit.share = s.Memo.creditShare()
				if len(r.Compensates) > 0 {
					// The compensator's transition on (fp, fa] lifts
					// the CICs' own aliases that land there: bound it
					// by the CICs' limit over what the earlier stages
					// give those aliases.
					if hi := math.Min(spec.Protected, r.Stopbands[0].Lo); hi > r.Passband*(1+1e-9) {
						p := newStopCredit(reqs[r.Compensates[0]].Ds, spec.InputRate, c.Stages, []Interval{{r.Passband, hi}})
						p.aliasOnly, p.cap = true, maxProtectedLimit
						p.mask, p.top = spec.RejectionMask, spec.RejectionDB
						p.share = s.Memo.creditShare()
						// Where the aliases landing just above fp ask
						// for less than the passband's own gain there,
						// no compensator can meet the target: the band
						// is left out, the design goes on as the
						// stage-alone rule's would, and Analyze finds the
						// shortfall.
						droop := compGain(r, c.Stages)
						if p.table().limit(r.Passband) >= (1+r.Dp)/droop(r.Passband) {
							r.protect = p
						}
					}
				}
				if comp := Compensator(plan); comp > i {
					// A later compensator lifts what this stage lets
					// through by up to 1/|H_cic| at the folded frequency.
					for _, j := range reqs[comp].Compensates {
						q := plan[j]
						r.credit.lift = append(r.credit.lift, CICStage{N: q.CICOrder, M: q.CICDelay, R: q.Factor})
						r.credit.liftRates = append(r.credit.liftRates, reqs[j].InputRate)
					}
					r.credit.out, r.credit.fp = r.OutputRate, spec.Passband
				}
			}
			st, err := s.Memo.stage(ctx, design, r, c.Stages, s, func() (FIRStage, error) { return firStage(ctx, r, c.Stages, s, design) })
			if cerr := ctx.Err(); cerr != nil {
				return nil, stopped(plan, cerr)
			}
			if err != nil {
				return nil, planErr(plan, i, "%v", err)
			}
			c.Stages = append(c.Stages, st)
		}
		bits = spec.OutputBits
	}
	return c, nil
}

func halfBandStage(ctx context.Context, r Requirement, s Settings, design bool) (FIRStage, error) {
	st := FIRStage{R: 2, HalfBand: true, Req: r}
	if !design {
		n := remez.HerrmannLength(r.Dp, r.Ds, r.InputRate/2-2*r.Passband, r.InputRate)
		if n == 0 {
			return st, fmt.Errorf("no half-band length estimate for deviation %.3g", r.Dp)
		}
		k := (n + 1 + 3) / 4
		if k < 1 {
			k = 1
		}
		st.Length = 4*k - 1
		return st, nil
	}
	res, err := remez.MinHalfBandContext(ctx, r.Passband, r.InputRate, r.Dp, s.Remez)
	if err != nil {
		return st, fmt.Errorf("half-band design: %w", err)
	}
	// MinHalfBand has no length bound; half-bands are short and cheap to
	// design, so the bound is checked on the answer.
	if s.MaxTaps > 0 && len(res.Taps) > s.MaxTaps {
		return st, fmt.Errorf("half-band design: needs %d taps, more than Settings.MaxTaps = %d", len(res.Taps), s.MaxTaps)
	}
	st.Taps = res.Taps
	st.Length = len(res.Taps)
	return st, nil
}

// compGain returns the product of the compensated CICs' gains at f.
func compGain(r Requirement, stages []Stage) func(f float64) float64 {
	type cr struct {
		c    CICStage
		rate float64
	}
	var cics []cr
	for _, j := range r.Compensates {
		cs := stages[j].(CICStage)
		// f < fp lies below every earlier Nyquist rate, so the frequency on the
		// compensator's axis is the input frequency.
		rate := r.InputRate
		for k := j; k < len(stages); k++ {
			rate *= float64(stages[k].Factor())
		}
		cics = append(cics, cr{cs, rate})
	}
	return func(f float64) float64 {
		g := 1.0
		for _, v := range cics {
			g *= v.c.Gain(f, v.rate)
		}
		return g
	}
}

func firStage(ctx context.Context, r Requirement, prev []Stage, s Settings, design bool) (FIRStage, error) {
	st := FIRStage{R: r.Factor, Variant: r.Variant, CompensatesCIC: len(r.Compensates) > 0, Req: r}
	if !design {
		n := remez.HerrmannLength(r.Dp, r.Ds, r.Stopbands[0].Lo-r.Passband, r.InputRate)
		if n == 0 {
			return st, errors.New("no length estimate for its bands")
		}
		st.Length = n
		return st, nil
	}
	var droop func(float64) float64
	if st.CompensatesCIC {
		droop = compGain(r, prev)
	}
	res, err := remez.MinLengthContext(ctx, r.InputRate, r.Bands(droop), 0, s.MaxTaps, s.Remez)
	if err != nil {
		if s.MaxTaps > 0 {
			return st, fmt.Errorf("FIR design with Settings.MaxTaps = %d: %w", s.MaxTaps, err)
		}
		return st, fmt.Errorf("FIR design: %w", err)
	}
	st.Taps = res.Taps
	st.Length = len(res.Taps)
	return st, nil
}

// newCIC is the CIC stage of plan p on inBits-wide input with an
// outBits-wide output: a decimator (NewCICStageForm) or an interpolator
// (NewCICInterpolator, recursive only).
func newCIC(d Direction, p StagePlan, inBits, outBits int) (CICStage, error) {
	if d == Interpolate {
		if p.CICForm != Recursive {
			return CICStage{}, fmt.Errorf("chain: the non-recursive CIC is built for decimation only; an interpolation chain takes the recursive form")
		}
		return NewCICInterpolator(p.CICOrder, p.CICDelay, p.Factor, inBits, outBits), nil
	}
	return NewCICStageForm(p.CICForm, p.CICOrder, p.CICDelay, p.Factor, inBits, outBits)
}
