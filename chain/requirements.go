package chain

import (
	"cmp"
	"fmt"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"math"
	"slices"
	"sort"
)

// Interval is a closed frequency band [Lo, Hi] in Hz.
type Interval struct{ Lo, Hi float64 }

// Requirement is what one stage must do, derived from the spec and the
// stage's place in the chain (docs/design.md §4). Frequencies are in Hz on the
// stage's input axis, within [0, InputRate/2].
type Requirement struct {
	Kind       Kind
	Factor     int
	Variant    Variant
	InputRate  float64 // F(i-1)
	OutputRate float64 // Fi
	Last       bool

	// Passband is the edge of the band the stage keeps flat: fp, or for a
	// half-band its (possibly wider) symmetric edge.
	Passband float64
	// RippleDB is the stage's share of the ripple budget (0 for a CIC).
	RippleDB float64
	// Dp and Ds are the linear passband and stopband deviations the stage is
	// designed for (a half-band uses min(dp_i, Ds) for both). Ds is absolute:
	// the target's ds times StopbandScale.
	Dp, Ds float64
	// StopbandScale (at most 1) is the factor by which the stage's absolute
	// stopband limit is set below the target's ds so that the cascade's
	// rejection relative to its gain at 0 Hz (docs/design.md §7) meets the target:
	// prod_j (1 - dp_j) / prod_{j != i} (1 + dp_j) over the chain's ripple-
	// bearing stages j (see the package doc). 1 for a chain without them.
	StopbandScale float64
	// Stopbands must be attenuated by Ds (for a CIC: the bands its rejection
	// is read on).
	Stopbands []Interval
	// Compensates lists the indices of the CIC stages whose droop this stage's
	// passband corrects (desired gain 1/prod|H_cic| on [0, fp]).
	Compensates []int
	// DroopDB is a CIC's droop over [0, fp]; UncorrectedDroopDB the part of
	// it no later stage corrects and that therefore comes out of the budget.
	DroopDB            float64
	UncorrectedDroopDB float64
	// GapLimit, when above zero, holds a multiband FIR's gain between its
	// stopbands and above the last one (its don't-care bands) to at most
	// GapLimit: the integer stages of a fractional chain, whose fractional
	// stage carries frequencies from those bands into the protected band
	// at its stopband's attenuation (package documentation, Fractional
	// stages). Zero leaves them free.
	GapLimit float64

	// credit, under the cascade rule, relaxes the stopband limit of a FIR
	// stage after another stage by what the earlier stages remove
	// (StopbandLimitFunc); nil under the stage-alone rule. Design sets it once
	// the earlier stages are designed.
	credit *stopCredit
	// protect, under the cascade rule, bounds a compensator's gain on
	// (fp, fa], where the CICs' own aliases land and its transition lifts
	// them: at most the CICs' limit over the earlier stages' attenuation of
	// those aliases (an alias-only stopCredit); nil otherwise.
	protect *stopCredit
	// cascadeBase is, under the cascade rule, a FIR stage's limit before
	// the credit (see stopCredit.base); 0 under the stage-alone rule.
	cascadeBase float64
}

// PlanError says why a plan cannot meet a spec, or what is wrong with it.
type PlanError struct {
	Stage int // 0-based stage index, -1 for the plan as a whole
	Plan  string
	Rule  string
}

func (e *PlanError) Error() string {
	if e.Stage < 0 {
		return fmt.Sprintf("chain: plan %q: %s", e.Plan, e.Rule)
	}
	return fmt.Sprintf("chain: plan %q: stage %d: %s", e.Plan, e.Stage+1, e.Rule)
}

func planErr(plan []StagePlan, stage int, rule string, args ...any) error {
	return &PlanError{Stage: stage, Plan: Notation(plan), Rule: fmt.Sprintf(rule, args...)}
}

// validatePlan checks the plan's own consistency and its product against D.
func validatePlan(plan []StagePlan, d int) error {
	if len(plan) == 0 {
		return planErr(plan, -1, "has no stages")
	}
	prod := 1
	for i, p := range plan {
		switch p.Kind {
		case CIC:
			if p.CICOrder < 1 || p.CICOrder > maxCICOrder {
				return planErr(plan, i, "CICOrder = %d: must lie in [1, %d]", p.CICOrder, maxCICOrder)
			}
			if p.CICDelay < 1 || p.CICDelay > maxCICDelay {
				return planErr(plan, i, "CICDelay = %d: must lie in [1, %d]", p.CICDelay, maxCICDelay)
			}
			switch p.CICForm {
			case Recursive:
			case NonRecursive:
				if err := NonRecursiveOK(p.CICDelay, p.Factor); err != nil {
					return planErr(plan, i, "%v", err)
				}
			default:
				return planErr(plan, i, "CICForm = %d: must be Recursive or NonRecursive", int(p.CICForm))
			}
		case HalfBand:
			if p.Factor != 2 {
				return planErr(plan, i, "Factor = %d: a half-band decimates by 2 only", p.Factor)
			}
		case FIR:
		default:
			return planErr(plan, i, "Kind = %d: not a stage kind", int(p.Kind))
		}
		if p.Factor < 2 || p.Factor > maxNotationFactor {
			return planErr(plan, i, "Factor = %d: must lie in [2, %d]", p.Factor, maxNotationFactor)
		}
		prod *= p.Factor
		if prod > d {
			break
		}
	}
	if prod != d {
		return planErr(plan, -1, "the factors multiply to %d, the spec's ratio is %d", prod, d)
	}
	return nil
}

// Requirements derives every stage's requirement from the spec (normalised
// here) and the plan (docs/design.md §4, with the choices in the package
// doc) under the stage-alone rule: the ripple budget split equally, and
// every stage's flat stopband limit Ds. It is what Estimate uses under
// either rule.
func Requirements(spec Spec, plan []StagePlan) ([]Requirement, error) {
	return requirements(spec, plan, true)
}

// RequirementsFor is Requirements under s's rule. With s.StageAlone it is
// Requirements; under the cascade rule (the default) the ripple budget is
// split where it buys most (package doc, Cascade requirements). The
// stopband credit of the earlier stages is not in these requirements: it
// depends on their designs, and Design adds it to each FIR stage's
// requirement once the stages before it are designed (Requirement.Credited,
// StopbandLimit).
func RequirementsFor(spec Spec, plan []StagePlan, s Settings) ([]Requirement, error) {
	return requirements(spec, plan, s.StageAlone)
}

func requirements(spec Spec, plan []StagePlan, stageAlone bool) ([]Requirement, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return nil, err
	}
	spec = spec.DecimationView()
	if err := validatePlan(plan, spec.Decimation()); err != nil {
		return nil, err
	}
	fp, fa, fs := spec.Passband, spec.Protected, spec.Stopband
	fk := spec.OutputRate
	ds := RejectionToDev(spec.RejectionDB)
	k := len(plan)
	reqs := make([]Requirement, k)

	comp := Compensator(plan)

	rate := spec.InputRate
	nRipple := 0
	uncorrected := 0.0
	for i, p := range plan {
		out := rate / float64(p.Factor)
		r := Requirement{Kind: p.Kind, Factor: p.Factor,
			InputRate: rate, OutputRate: out, Last: i == k-1, Passband: fp, Ds: ds}
		if p.Kind == FIR {
			r.Variant = p.Variant
		}
		switch p.Kind {
		case CIC:
			r.Stopbands = aliasBands(out, rate, fa, r.Last, fs)
			droop, ok := CICStage{N: p.CICOrder, M: p.CICDelay, R: p.Factor}.DroopDB(fp, rate)
			if !ok {
				return nil, planErr(plan, i, "the CIC's first null at %s Hz lies inside the passband [0, %s Hz]",
					fmtNum(rate/float64(p.Factor*p.CICDelay)), fmtNum(fp))
			}
			r.DroopDB = droop
			if comp < i {
				r.UncorrectedDroopDB = droop
				uncorrected += droop
			}
		case HalfBand:
			edge := HalfBandEdge(fp, fa, fs, fk, r.Last)
			if edge >= out/2 {
				// Name the edge that binds: the passband, the protected
				// edge, or (last) the output rate less the stopband.
				// The channel side is the output of a decimation
				// chain, the input of an interpolation chain.
				channel, last, side := "OutputRate", "last", "output"
				if spec.Direction() == Interpolate {
					channel, last, side = "InputRate", "first", "input"
				}
				what := "passband edge"
				switch {
				case edge > fp && r.Last:
					what = "edge " + channel + " - Stopband ="
				case edge > fp:
					what = "protected edge"
				}
				return nil, planErr(plan, i,
					"a half-band needs its %s %s Hz below half its %s rate, %s Hz (as the %s stage it needs Stopband > %s Hz)",
					what, fmtNum(edge), side, fmtNum(out/2), last, fmtNum(fk/2))
			}
			r.Passband = edge
			r.Stopbands = []Interval{{rate/2 - edge, rate / 2}}
			nRipple++
		case FIR:
			if p.Variant == Lowpass {
				r.Stopbands = []Interval{{StopEdge(out, fa, fs, r.Last), rate / 2}}
			} else {
				r.Stopbands = aliasBands(out, rate, fa, r.Last, fs)
				if spec.capGaps {
					r.GapLimit = 1
				}
			}
			if i == comp {
				for j := 0; j < i; j++ {
					if plan[j].Kind == CIC {
						r.Compensates = append(r.Compensates, j)
					}
				}
			}
			nRipple++
		}
		if len(r.Stopbands) == 0 || r.Stopbands[0].Lo <= r.Passband {
			return nil, planErr(plan, i, "no transition band between the passband edge %s Hz and the stopband", fmtNum(r.Passband))
		}
		reqs[i] = r
		rate = out
	}

	share, ok := RippleShare(spec.RippleDB, uncorrected, nRipple)
	if !ok {
		return nil, planErr(plan, -1, "the uncorrected CIC droop %.4g dB at %s Hz is more than the %s dB of ripple these stages may take (ripple; with a fractional stage they have half of it): a FIR after the CIC would correct it",
			uncorrected, fmtNum(fp), fmtNum(spec.RippleDB))
	}
	for i := range reqs {
		reqs[i].StopbandScale = 1
	}
	if nRipple == 0 {
		return reqs, nil
	}
	if stageAlone {
		dp := RippleToDev(share)
		for i := range reqs {
			scale := StopbandScale(dp, nRipple, reqs[i].Kind != CIC)
			setDevs(&reqs[i], share, dp, ds, scale)
		}
		return reqs, nil
	}
	var ripple []int
	for i, r := range reqs {
		if r.Kind != CIC {
			ripple = append(ripple, i)
		}
	}
	shares := splitRipple(reqs, ripple, spec.RippleDB-uncorrected, ds, fk)
	dps := make([]float64, len(shares))
	for q, sh := range shares {
		dps[q] = RippleToDev(sh)
	}
	q := 0
	for i := range reqs {
		if reqs[i].Kind == CIC {
			setDevs(&reqs[i], 0, 0, ds, stopbandScaleOf(dps, -1, false))
			continue
		}
		setDevs(&reqs[i], shares[q], dps[q], ds, stopbandScaleOf(dps, q, true))
		// A FIR after another stage takes their credit; with a
		// rejection mask the first FIR too takes the mask's (its limit
		// at x is the mask's at x, credit.go).
		if reqs[i].Kind == FIR && (i > 0 || spec.RejectionMask != nil) {
			reqs[i].cascadeBase = ds * laterScale(dps, q)
		}
		q++
	}
	return reqs, nil
}

// setDevs sets r's ripple share and deviations: Dp = dp, Ds = ds scale
// (a half-band min(dp, Ds) on both bands; a CIC only its Ds).
func setDevs(r *Requirement, share, dp, ds, scale float64) {
	r.StopbandScale = scale
	r.Ds = ds * scale
	if r.Kind == CIC {
		return
	}
	r.RippleDB = share
	r.Dp = dp
	if r.Kind == HalfBand {
		dev := math.Min(dp, r.Ds)
		r.Dp, r.Ds = dev, dev
	}
}

// Compensator is the index of the stage that corrects the CIC droop in
// plan, the last FIR stage after the first CIC, or -1 when none does.
func Compensator(plan []StagePlan) int {
	firstCIC, comp := -1, -1
	for i, p := range plan {
		if p.Kind == CIC && firstCIC < 0 {
			firstCIC = i
		}
		if p.Kind == FIR && firstCIC >= 0 {
			comp = i
		}
	}
	return comp
}

// StopEdge is where a FIR stage with output rate out starts to attenuate
// (docs/design.md §4): at its first alias band, out - fa, or as the last
// stage at min(fs, out - fa), out being then FK.
func StopEdge(out, fa, fs float64, last bool) float64 {
	if last {
		return math.Min(fs, out-fa)
	}
	return out - fa
}

// HalfBandEdge is the band a half-band stage keeps flat: up to max(fp,
// fa), or as the last stage max(fp, FK - fs), since its mirror image about
// a quarter of its input rate must fall in the stopband.
func HalfBandEdge(fp, fa, fs, fk float64, last bool) float64 {
	if last {
		return math.Max(fp, fk-fs)
	}
	return math.Max(fp, fa)
}

// RippleShare is each ripple-bearing stage's share of the ripple budget:
// what the spec's rippleDB leaves after the CIC droop no stage corrects
// (uncorrectedDB), split equally in dB over the n half-band and FIR stages;
// ok is false when the droop alone spends the budget.
func RippleShare(rippleDB, uncorrectedDB float64, n int) (share float64, ok bool) {
	left := rippleDB - uncorrectedDB
	if left <= 0 || (n == 0 && uncorrectedDB > rippleDB) {
		return 0, false
	}
	if n == 0 {
		return 0, true
	}
	return left / float64(n), true
}

// aliasBands returns the bands of a stage's input [0, in/2] that fold onto
// [0, fa] at its output rate out: [k out - fa, k out + fa], k = 1..floor(D/2),
// clipped and merged. For the last stage the first band starts at the final
// stopband edge fs instead (docs/design.md §4: min(fs, FK - fa), and fs <= FK - fa).
func aliasBands(out, in, fa float64, last bool, fs float64) []Interval {
	d := int(math.Round(in / out))
	var bands []Interval
	for k := 1; k <= d/2; k++ {
		lo, hi := float64(k)*out-fa, float64(k)*out+fa
		if k == 1 {
			lo = StopEdge(out, fa, fs, last)
		}
		if hi > in/2 {
			hi = in / 2
		}
		if lo < hi {
			bands = append(bands, Interval{lo, hi})
		}
	}
	return mergeIntervals(bands)
}

func mergeIntervals(b []Interval) []Interval {
	if len(b) < 2 {
		return b
	}
	sort.Slice(b, func(i, j int) bool { return b[i].Lo < b[j].Lo })
	out := b[:1]
	for _, v := range b[1:] {
		last := &out[len(out)-1]
		if v.Lo <= last.Hi*(1+1e-12) {
			if v.Hi > last.Hi {
				last.Hi = v.Hi
			}
			continue
		}
		out = append(out, v)
	}
	return out
}

// StopbandScale returns the factor by which a stage's absolute stopband limit
// lies below the target's ds in a chain of n ripple-bearing stages (FIR and
// half-band) that each have passband deviation dp: every one of them may sit
// at 1 - dp at 0 Hz, and every one but the stage whose band it is may lift an
// alias by 1 + dp (package doc, "Stopband limits"):
//
//	(1 - dp)^n / (1 + dp)^(n-1)  for a ripple-bearing stage (own true),
//	(1 - dp)^n / (1 + dp)^n      for a CIC (own false).
//
// It is 1 when n is 0.
func StopbandScale(dp float64, n int, own bool) float64 {
	if n <= 0 {
		return 1
	}
	others := n
	if own {
		others--
	}
	return math.Pow(1-dp, float64(n)) / math.Pow(1+dp, float64(others))
}

// Bands are the bands a FIR or half-band stage with requirement r must
// meet, as the design engine takes them (remez.Band, MaxError the limit of
// each band's weighted error): the passband [0, Passband] within Dp of 1,
// each stopband within Ds of 0, or, for a stage whose requirement carries
// the cascade rule's credit (Credited), within StopbandLimitFunc's limit
// at f: a weight 1/limit(f) against a limit of 1. With droop (the gain of the CICs the stage
// corrects, at f Hz), the passband's desired gain is 1/droop and its error
// is weighted by droop/Dp against a limit of 1, so that it is met when
// |A droop - 1| <= Dp: relative, and on the same scale as the stopbands'
// 1/Ds. The one statement of a stage's bands: the design (Design) and the
// judging of its rounded taps (package fixed) both use it.
func (r Requirement) Bands(droop func(f float64) float64) []remez.Band {
	pass := remez.Band{Lo: 0, Hi: r.Passband, Gain: 1, MaxError: r.Dp, Weight: 1 / r.Dp}
	if droop != nil {
		dp := r.Dp
		pass = remez.Band{Lo: 0, Hi: r.Passband, MaxError: 1,
			GainFunc:   func(f float64) float64 { return 1 / droop(f) },
			WeightFunc: func(f float64) float64 { return droop(f) / dp }}
	}
	bands := []remez.Band{pass}
	var limit func(float64) float64
	if r.credit != nil {
		limit = r.StopbandLimitFunc()
	}
	if p := r.protect; p != nil && len(p.stop) == 1 {
		lim := p.table().limit
		lo, hi := p.stop[0].Lo, p.stop[0].Hi
		gap := protectedGap * (hi - lo)
		bands = append(bands, remez.Band{Lo: lo + gap, Hi: hi - gap, MaxError: 1,
			WeightFunc: func(f float64) float64 { return 1 / lim(f) }})
	}
	for _, b := range r.Stopbands {
		if limit != nil {
			// The cascade rule: the limit follows the earlier stages'
			// attenuation through the weight.
			bands = append(bands, remez.Band{Lo: b.Lo, Hi: b.Hi, MaxError: 1,
				WeightFunc: func(f float64) float64 { return 1 / limit(f) }})
			continue
		}
		bands = append(bands, remez.Band{Lo: b.Lo, Hi: b.Hi, MaxError: r.Ds, Weight: 1 / r.Ds})
	}
	if r.GapLimit > 0 {
		bands = append(bands, r.gapBands()...)
		slices.SortStableFunc(bands, func(a, b remez.Band) int { return cmp.Compare(a.Lo, b.Lo) })
	}
	return bands
}

// gapBands are the bands GapLimit holds: the last three quarters of the
// transition band, the gaps between the stopbands and above the last one
// up to half the input rate, each as a band of desired gain 0 met when
// |A| <= GapLimit. The first quarter of the transition is left free for
// the fall from the passband; gaps narrower than 1e-6 of the input rate
// are left free too: the engine's grid would not resolve them, and a
// filter cannot rise far within one.
func (r Requirement) gapBands() []remez.Band {
	var out []remez.Band
	half := r.InputRate / 2
	minGap := 1e-6 * r.InputRate
	if len(r.Stopbands) > 0 {
		s1 := r.Stopbands[0].Lo
		if lo := r.Passband + (s1-r.Passband)/4; s1-lo > minGap {
			out = append(out, remez.Band{Lo: lo, Hi: s1, MaxError: r.GapLimit, Weight: 1 / r.GapLimit})
		}
	}
	for i, b := range r.Stopbands {
		hi := half
		if i+1 < len(r.Stopbands) {
			hi = r.Stopbands[i+1].Lo
		}
		if hi-b.Hi > minGap {
			out = append(out, remez.Band{Lo: b.Hi, Hi: hi, MaxError: r.GapLimit, Weight: 1 / r.GapLimit})
		}
	}
	return out
}
