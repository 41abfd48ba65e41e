package chain

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain/farrow"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// PolyphaseStage is a fractional stage that changes the rate by Up/Down:
// it raises the rate Up times (zeros between the samples), filters with
// one prototype lowpass at Up times its input rate, and keeps every
// Down-th sample. Each output costs the taps of one phase,
// ceil(Length/Up).
type PolyphaseStage struct {
	Up, Down int
	// Taps is the prototype at Up times the stage's input rate, designed
	// for a gain of 1 at 0 Hz within its passband deviation (the data path
	// multiplies by Up); nil when estimated.
	Taps   []float64
	Length int // number of taps (estimated or len(Taps))
	// Req is what the stage was designed (or estimated) to meet.
	Req FractionalRequirement
}

// Kind returns Polyphase.
func (PolyphaseStage) Kind() Kind { return Polyphase }

// Factor returns 1: a fractional stage's rate change is Up/Down.
func (PolyphaseStage) Factor() int { return 1 }

func (PolyphaseStage) isStage() {}

// Gain returns the prototype's |P(f)| at f Hz, rate being the stage's
// input rate (the prototype runs at Up times it): the gain of the path
// that keeps a tone at f where it is.
func (s PolyphaseStage) Gain(f, rate float64) float64 {
	if s.Taps == nil {
		return 1
	}
	return remez.Magnitude(s.Taps, f, rate*float64(s.Up))
}

// PhaseTaps returns the multiplies of one output, ceil(Length/Up). An
// interpolation chain holds its stages transposed (Up is then the signal's
// down factor M), so there it is the multiplies of one input sample.
func (s PolyphaseStage) PhaseTaps() int { return (s.Length + s.Up - 1) / s.Up }

// FarrowStage is a fractional stage that changes the rate by Up/Down with
// a Farrow structure (package farrow): Degree+1 subfilters of Length taps
// on the input, combined by Horner's rule in the fractional delay mu of
// each output, so any ratio costs the same: (Degree+1) Length + Degree
// multiplies per output.
type FarrowStage struct {
	Up, Down int
	// Filter is the designed structure (farrow.Convention); its Coef is
	// nil when the stage is estimated.
	Filter         farrow.Filter
	Degree, Length int
	// Req is what the stage was designed to meet.
	Req FractionalRequirement
}

// Kind returns Farrow.
func (FarrowStage) Kind() Kind { return Farrow }

// Factor returns 1: a fractional stage's rate change is Up/Down.
func (FarrowStage) Factor() int { return 1 }

func (FarrowStage) isStage() {}

// Gain returns the gain of the path that keeps a tone at f Hz where it
// is, rate being the stage's input rate: at its output times the
// structure is the polyphase stage of FarrowPrototype, whose prototype's
// |P(f)| this is (built on each call: for the odd figure, not for loops).
// A stage FarrowPrototype refuses gives its continuous |H(f/rate)|.
func (s FarrowStage) Gain(f, rate float64) float64 {
	if s.Filter.Coef == nil {
		return 1
	}
	taps, err := FarrowPrototype(s)
	if err != nil {
		return s.Filter.Gain(f / rate)
	}
	return remez.Magnitude(taps, f, rate*float64(s.Up))
}

// MultipliesPerOutput returns (Degree+1) Length + Degree (farrow.Cost).
func (s FarrowStage) MultipliesPerOutput() int { return farrow.Cost(s.Degree, s.Length) }

// FractionalRequirement is what a fractional stage is designed to meet,
// on its own input axis (package documentation, Fractional stages).
type FractionalRequirement struct {
	InputRate, OutputRate float64
	Passband              float64 // fp
	// Keep, when above zero, is the half-width of the bands around the
	// multiples of the input rate that the stage must attenuate: the
	// integer stages before end in a lowpass FIR with stopband edge Keep,
	// min(fs, min(input rate, output rate) - fa), so only the images of
	// [0, Keep] need the fractional stage. Zero means the stage is a
	// lowpass of its own from Stop up.
	Keep float64
	// Stop is the edge from which the stage attenuates everything when
	// Keep is zero: min(fs, min(input rate, output rate) - fa).
	Stop   float64
	Dp, Ds float64
	// RippleDB is the stage's share of the ripple budget.
	RippleDB float64
	// Droop, when its R is above zero, is the CIC just before the stage
	// (a polyphase stage placed after the chain's CIC), at DroopRate, its
	// input rate: the stage compensates it, its passband being
	// 1/|H_cic(f)| within Dp (|P H_cic - 1| <= Dp on [0, fp]), continued
	// flat at 1/|H_cic(fp)| within Dp up to Hold, the protected band's
	// edge fa: the CIC's own aliases land in (fp, fa], and a compensator
	// left free there would lift them (by several dB where its
	// transition overshoots).
	Droop     CICStage
	DroopRate float64
	Hold      float64
	// GapLimit, when above zero, holds the prototype's gain over the last
	// three quarters of its transition to at most GapLimit (as
	// Requirement.GapLimit does a multiband FIR's): stages after it
	// reject what lands there, and a wide transition left free can rise
	// tens of dB.
	GapLimit float64
}

// passband returns the stage's passband as a remez band: unit gain within
// Dp, or, when it compensates a CIC (Droop), 1/|H_cic(min(f, fp))| within
// Dp up to max(fp, Hold).
func (r FractionalRequirement) passband() remez.Band {
	if r.Droop.R == 0 {
		return remez.Band{Lo: 0, Hi: r.Passband, Gain: 1, MaxError: r.Dp, Weight: 1 / r.Dp}
	}
	cic, rate, dp, fp := r.Droop, r.DroopRate, r.Dp, r.Passband
	droop := func(f float64) float64 { return cic.Gain(math.Min(f, fp), rate) }
	return remez.Band{Lo: 0, Hi: math.Max(fp, r.Hold), MaxError: 1,
		GainFunc:   func(f float64) float64 { return 1 / droop(f) },
		WeightFunc: func(f float64) float64 { return droop(f) / dp }}
}

// Bands returns the bands a polyphase stage of up phases (or a Farrow
// stage's equivalent prototype, FarrowPrototype) meets, on the
// prototype's axis at up times the input rate, as Requirement.Bands
// states a stage's (met when |A - D| w <= MaxError on each): the passband
// (unit gain within Dp, or the CIC's compensation, Droop), the
// transition's hold (GapLimit) and PolyphaseBands below Ds.
func (r FractionalRequirement) Bands(up int) []remez.Band {
	stops := PolyphaseBands(r, up)
	bands := []remez.Band{r.passband()}
	if len(stops) == 0 {
		return bands
	}
	edge := r.passbandEdge()
	if lo, hi := edge+(stops[0].Lo-edge)/4, stops[0].Lo; r.GapLimit > 0 && hi-lo > 1e-6*float64(up)*r.InputRate {
		bands = append(bands, remez.Band{Lo: lo, Hi: hi, MaxError: r.GapLimit, Weight: 1 / r.GapLimit})
	}
	for _, b := range stops {
		bands = append(bands, remez.Band{Lo: b.Lo, Hi: b.Hi, Gain: 0, MaxError: r.Ds, Weight: 1 / r.Ds})
	}
	return bands
}

// passbandEdge is where the stage's passband band ends: fp, or Hold when
// it compensates a CIC and Hold is above fp.
func (r FractionalRequirement) passbandEdge() float64 {
	if r.Droop.R == 0 {
		return r.Passband
	}
	return math.Max(r.Passband, r.Hold)
}

// stageRatio returns a stage's output rate over its input rate as up/down.
func stageRatio(s Stage) (up, down int) {
	switch st := s.(type) {
	case PolyphaseStage:
		return st.Up, st.Down
	case *PolyphaseStage:
		return st.Up, st.Down
	case FarrowStage:
		return st.Up, st.Down
	case *FarrowStage:
		return st.Up, st.Down
	}
	return 1, s.Factor()
}

// fractionalPlan checks that plan (decimation order) suits the fractional
// ratio num/den and returns the integer stages' D and the fractional
// stage's place f. The fractional stage either ends the chain (integer
// stages of any kind before it) or comes just after a leading CIC
// (package documentation, Fractional stages): a polyphase stage, followed
// by FIR and half-band stages only, whose decimation Db shares no factor
// with its L (else two of its paths would land together at every
// frequency). Its messages speak in signal order for direction dir: an
// interpolation chain begins (or, after the CIC, ends just before it)
// with the fractional stage, which changes the rate by Down/Up there.
func fractionalPlan(plan []StagePlan, num, den int, dir Direction) (d, f int, err error) {
	if len(plan) == 0 {
		return 0, 0, errors.New("chain: empty plan")
	}
	end, lm := "end", func(up, down int) (int, int) { return up, down }
	// Stages later in decimation order come later in signal order for a
	// decimation chain, earlier for an interpolation one; the CIC begins
	// a decimation chain and ends an interpolation one.
	later, cicEnd := "after", "begins"
	if dir == Interpolate {
		end, lm = "begin", func(up, down int) (int, int) { return down, up }
		later, cicEnd = "before", "ends"
	}
	f = planFracIndex(plan)
	if f < 0 {
		return 0, 0, planErr(plan, len(plan)-1, "the ratio %d/%d is a fraction: the chain must %s with a fractional stage (polyphase or farrow), or have a polyphase stage just %s its CIC", num, den, end, later)
	}
	mid := f < len(plan)-1
	if mid && (f != 1 || plan[0].Kind != CIC || plan[f].Kind != Polyphase) {
		return 0, 0, planErr(plan, f, "a fractional stage may only %s the chain, or be a polyphase stage just %s a CIC that %s it", end, later, cicEnd)
	}
	d = 1
	for i, p := range plan {
		if i == f {
			continue
		}
		if p.Kind.Fractional() {
			return 0, 0, planErr(plan, i, "a chain has one fractional stage")
		}
		if i > f && p.Kind == CIC {
			return 0, 0, planErr(plan, i, "no CIC may come %s the fractional stage", later)
		}
		if p.Factor < 2 {
			return 0, 0, planErr(plan, i, "factor %d: must be at least 2", p.Factor)
		}
		if d > math.MaxInt32/p.Factor {
			return 0, 0, planErr(plan, i, "the factors' product is beyond %d", math.MaxInt32)
		}
		d *= p.Factor
	}
	fs := plan[f]
	l, m := lm(fs.Up, fs.Down)
	if fs.Up < 1 || fs.Down < 1 || fs.Up > MaxFractionDen || fs.Down > math.MaxInt32/max(1, d) {
		return 0, 0, planErr(plan, f, "rate change %d/%d: out of range", l, m)
	}
	if fs.Up == fs.Down {
		return 0, 0, planErr(plan, f, "rate change %d/%d changes no rate: drop the stage", l, m)
	}
	// The chain's ratio d Down/Up must be num/den.
	if int64(d)*int64(fs.Down)*int64(den) != int64(num)*int64(fs.Up) {
		g := gcd(d*den, num)
		nl, nm := lm(d*den/g, num/g)
		if nl == nm {
			// The other stages make the whole ratio already.
			return 0, 0, planErr(plan, f, "rate change %d/%d: the integer stages' %d make the ratio %d/%d already: drop the stage", l, m, d, num, den)
		}
		if d == 1 {
			return 0, 0, planErr(plan, f, "rate change %d/%d: the ratio %d/%d needs %d/%d", l, m, num, den, nl, nm)
		}
		return 0, 0, planErr(plan, f, "rate change %d/%d: with the integer stages' %d the ratio %d/%d needs %d/%d", l, m, d, num, den, nl, nm)
	}
	if gcd(fs.Up, fs.Down) != 1 {
		return 0, 0, planErr(plan, f, "rate change %d/%d: write it in lowest terms", l, m)
	}
	if mid {
		db := d / plan[0].Factor
		if g := gcd(db, fs.Up); g != 1 {
			return 0, 0, planErr(plan, f, "rate change %d/%d: the stages %s it change the rate by %d, which shares the factor %d with its %d phases (their paths would land together): write the ratio with other stages", l, m, later, db, g, fs.Up)
		}
	}
	return d, f, nil
}

// planFracIndex returns the place of plan's first fractional stage, or -1.
func planFracIndex(plan []StagePlan) int {
	return slices.IndexFunc(plan, func(p StagePlan) bool { return p.Kind.Fractional() })
}

// fracIndex returns the place of c's first fractional stage, or -1.
func fracIndex(c *Chain) int {
	if c == nil {
		return -1
	}
	return slices.IndexFunc(c.Stages, func(s Stage) bool { return s.Kind().Fractional() })
}

// IntegerSpec returns the spec the integer stages of a fractional chain
// are planned against when they decimate by d (package documentation,
// Fractional stages): output rate Fm = F0/d, the same passband and
// protected band, the ripple budget's share rippleDB, and the rejection
// target raised by the fractional stage's ripple share fracRippleDB (its
// passband lifts the integer stages' aliases). With lowpass set the
// integer stages end in a lowpass FIR that holds the whole band above
// Keep = min(fs, min(Fm, FK) - fa) (KeepEdge): the spec's stopband edge
// is Keep. Without it only their aliases into [0, fa] count (the stopband
// edge is Fm - fa), and the fractional stage is the lowpass. spec is the
// fractional spec, normalised, its OutputRate the chain's.
func IntegerSpec(spec Spec, d int, rippleDB, fracRippleDB float64, lowpass bool) Spec {
	sub := spec
	sub.OutputRate = spec.InputRate / float64(d)
	sub.RatioTolerancePPM = 0
	sub.capGaps = true
	sub.Stopband = sub.OutputRate - spec.Protected
	if lowpass {
		sub.Stopband = KeepEdge(spec, sub.OutputRate)
	}
	sub.RippleDB = rippleDB
	sub = sub.RejectionRaised(fracRippleDB)
	return sub
}

// KeepEdge is min(fs, min(fm, FK) - fa) for the fractional stage's input
// rate fm: the edge above which the integer stages before a Farrow stage
// hold the band (and a polyphase prototype's stopband edge), at most
// fm - fa. spec is normalised, its OutputRate the chain's.
func KeepEdge(spec Spec, fm float64) float64 {
	return math.Min(spec.Stopband, math.Min(fm, spec.OutputRate)-spec.Protected)
}

// coincidentDB is the margin a real decimation chain's fractional stage
// (and the stages after one placed after the CIC) is designed with: two
// paths of one real tone can land on the same output frequency and add
// (coincidentPaths), 20 log10 2 dB. A complex chain's paths never meet;
// a real interpolation chain's whole spec is already raised by as much
// (build: the images of a DC input), and no point has both.
func coincidentDB(spec Spec) float64 {
	if spec.Complex || spec.Direction() == Interpolate {
		return 0
	}
	return pairDB
}

// pairDB is 20 log10 2: two equal paths adding, or a DC input's image and
// its mirror (dcImagesDoubled).
var pairDB = 20 * math.Log10(2)

// FractionalRippleShare is the share of the ripple budget a fractional
// stage takes when integer stages come before it: half.
const FractionalRippleShare = 0.5

func buildFractional(ctx context.Context, spec Spec, plan []StagePlan, s Settings, design bool) (*Chain, error) {
	num, den := spec.Fraction()
	d, f, err := fractionalPlan(plan, num, den, spec.Direction())
	if err != nil {
		return nil, err
	}
	if spec.NoiseShaped {
		return nil, errors.New("chain: a noise-shaped input is planned for integer ratios only")
	}
	if f < len(plan)-1 {
		return buildAfterCIC(ctx, spec, plan, d, s, design)
	}
	// The chain's own output rate is the fraction's: within the ratio
	// tolerance of the spec's.
	fm := spec.InputRate / float64(d)
	fk := fm * float64(plan[len(plan)-1].Up) / float64(plan[len(plan)-1].Down)
	spec.OutputRate = fk
	keep := KeepEdge(spec, fm)
	if !(keep > spec.Passband) || spec.Protected >= fm/2 {
		return nil, planErr(plan, len(plan)-1, "its input rate %s Hz leaves no band for it: it needs min(input rate, output rate) - fa = %s Hz above fp = %s Hz and fa below half its input rate",
			fmtNum(fm), fmtNum(math.Min(fm, fk)-spec.Protected), fmtNum(spec.Passband))
	}
	c := &Chain{InputRate: spec.InputRate, Complex: spec.Complex, Direction: spec.Direction(),
		Plan: append([]StagePlan(nil), plan...), Designed: design}
	fracRipple := spec.RippleDB
	// A polyphase stage is the chain's lowpass from Stop; a Farrow stage
	// takes over from a lowpass FIR that holds the band above Keep.
	last := plan[len(plan)-1]
	lowpass := last.Kind == Farrow
	if lowpass {
		n := len(plan)
		// Plans run from the high rate down: in signal order the FIR
		// comes before a decimating Farrow stage and after an
		// interpolating one.
		where := "just before it"
		if spec.Direction() == Interpolate {
			where = "just after it"
		}
		switch {
		case n >= 2 && plan[n-2].Kind == FIR && plan[n-2].Variant != Lowpass && keep < fm/2:
			return nil, planErr(plan, n-1, "a farrow stage needs the FIR %s in its lowpass layout: write fir%dL, not fir%d", where, plan[n-2].Factor, plan[n-2].Factor)
		case n < 2 || plan[n-2].Kind != FIR || plan[n-2].Variant != Lowpass || !(keep < fm/2):
			return nil, planErr(plan, n-1, "a farrow stage needs a lowpass FIR (fir<D>L) %s, at a rate Fm above twice min(fs, min(Fm, output rate) - fa) = %s Hz (here Fm = %s Hz)",
				where, fmtNum(keep), fmtNum(fm))
		}
	}
	if d > 1 {
		fracRipple = spec.RippleDB * FractionalRippleShare
		sub := IntegerSpec(spec, d, spec.RippleDB-fracRipple, fracRipple, lowpass)
		ic, err := build(ctx, sub, plan[:len(plan)-1], s, design)
		if err != nil {
			return nil, err
		}
		c.Stages = ic.Stages
	}
	intRipple := spec.RippleDB - fracRipple
	req := FractionalRequirement{InputRate: fm, OutputRate: fk, Passband: spec.Passband, Stop: keep,
		RippleDB: fracRipple, Dp: RippleToDev(fracRipple),
		// The integer stages' passband can lift what this stage lets
		// through by their ripple share; a real tone's two paths that
		// meet on one output frequency add (coincidentPaths), so a real
		// chain's stage is held 6 dB lower.
		Ds: RejectionToDev(spec.RejectionDB + intRipple + coincidentDB(spec))}
	if lowpass {
		// The lowpass before holds [Keep, Fm/2]: only the images of
		// [0, Keep] are left to this stage.
		req.Keep = keep
	}
	if err := ctx.Err(); err != nil {
		return nil, stopped(plan, err)
	}
	if last.Kind != Polyphase && last.Kind != Farrow {
		return nil, planErr(plan, len(plan)-1, "a %s stage cannot be designed", last.Kind)
	}
	// Every chain that ends in this stage shares its design (Settings.Memo).
	st, err := s.Memo.fractional(ctx, design, last, req, s, func() (Stage, error) {
		if last.Kind == Polyphase {
			return polyphaseStage(ctx, last, req, s, design)
		}
		return farrowStage(ctx, last, req)
	})
	if err != nil {
		if cerr := ctx.Err(); cerr != nil {
			return nil, stopped(plan, cerr)
		}
		return nil, planErr(plan, len(plan)-1, "%v", err)
	}
	c.Stages = append(c.Stages, st)
	return c, nil
}

// buildAfterCIC builds a chain whose polyphase stage comes just after its
// leading CIC (package documentation, Fractional stages): the CIC
// decimates by R to F1, the polyphase stage changes the rate by L/M to F2
// and the FIR and half-band stages after it decimate by Db to FK. The CIC
// is the plan's; the polyphase stage compensates its droop and is a
// lowpass from F2 - fa (what lands in [0, fa] at F2; the stages after it
// hold the rest) with half the ripple budget and the rejection raised by
// the other half; the stages after it are an integer chain from F2 to FK
// on the spec's bands with the other half of the ripple, their rejection
// raised by the polyphase stage's ripple.
func buildAfterCIC(ctx context.Context, spec Spec, plan []StagePlan, d int, s Settings, design bool) (*Chain, error) {
	cp, pp := plan[0], plan[1]
	f1 := spec.InputRate / float64(cp.Factor)
	f2 := f1 * float64(pp.Up) / float64(pp.Down)
	fk := f2 / float64(d/cp.Factor)
	spec.OutputRate = fk
	fa := spec.Protected
	stop := f2 - fa
	if !(stop > spec.Passband) || fa >= f1/2 {
		return nil, planErr(plan, 1, "its output rate %s Hz leaves no band for it: it needs output rate - fa = %s Hz above fp = %s Hz and fa below half its input rate %s Hz",
			fmtNum(f2), fmtNum(stop), fmtNum(spec.Passband), fmtNum(f1))
	}
	c := &Chain{InputRate: spec.InputRate, Complex: spec.Complex, Direction: spec.Direction(),
		Plan: append([]StagePlan(nil), plan...), Designed: design}
	// The CIC takes the input word; an interpolation chain's comes last
	// in signal order and takes the words between stages.
	bits := spec.InputBits
	if c.Direction == Interpolate {
		bits = spec.OutputBits
	}
	cs, err := newCIC(c.Direction, cp, bits, spec.OutputBits)
	if err != nil {
		return nil, planErr(plan, 0, "%v", err)
	}
	fracRipple := spec.RippleDB * FractionalRippleShare
	tailRipple := spec.RippleDB - fracRipple
	req := FractionalRequirement{InputRate: f1, OutputRate: f2, Passband: spec.Passband, Stop: stop,
		RippleDB: fracRipple, Dp: RippleToDev(fracRipple),
		Ds:    RejectionToDev(spec.RejectionDB + tailRipple + coincidentDB(spec)),
		Droop: cs, DroopRate: spec.InputRate, Hold: fa, GapLimit: 1}
	if err := ctx.Err(); err != nil {
		return nil, stopped(plan, err)
	}
	st, err := s.Memo.fractional(ctx, design, pp, req, s, func() (Stage, error) {
		return polyphaseStage(ctx, pp, req, s, design)
	})
	if err != nil {
		if cerr := ctx.Err(); cerr != nil {
			return nil, stopped(plan, cerr)
		}
		return nil, planErr(plan, 1, "%v", err)
	}
	tail := tailSpec(spec, f2, fracRipple)
	if p, ok := st.(PolyphaseStage); ok && p.Taps != nil {
		// What lands in the stages' stopbands after it passes the CIC
		// and the prototype's transition, which may rise above its
		// passband: their rejection is raised by that excess, found on
		// a grid (a design choice; Analyze measures the truth).
		tail = tail.RejectionRaised(transitionExcessDB(p, cs, spec.InputRate, fa, stop))
	}
	tc, err := build(ctx, tail, plan[2:], s, design)
	if err != nil {
		var pe *PlanError
		if errors.As(err, &pe) && pe.Stage >= 0 {
			return nil, planErr(plan, pe.Stage+2, "%s", pe.Rule)
		}
		return nil, err
	}
	c.Stages = append([]Stage{cs, st}, tc.Stages...)
	return c, nil
}

// transitionExcessDB returns by how many dB the CIC cs (at rate, its
// input rate) times the polyphase stage p rises above 1 over its
// transition [lo, hi], on a grid of 1024 points; 0 when it does not.
func transitionExcessDB(p PolyphaseStage, cs CICStage, rate, lo, hi float64) float64 {
	peak := 1.0
	const n = 1024
	for i := 0; i <= n; i++ {
		f := lo + (hi-lo)*float64(i)/n
		peak = math.Max(peak, cs.Gain(f, rate)*p.Gain(f, p.Req.InputRate))
	}
	return 20 * math.Log10(peak)
}

// TailSpec is the spec the stages after a polyphase stage placed after
// the CIC are planned against (buildAfterCIC), f2 the polyphase stage's
// output rate: from f2 to the chain's output rate, the ripple budget less
// the polyphase stage's share (FractionalRippleShare), the rejection
// raised by that share and, for a real chain, by 20 log10 2 dB (two paths
// of a real tone can meet through their stopbands). The design raises it
// further by what the CIC and the designed polyphase stage's transition
// rise above unity. spec is the fractional spec, normalised, its
// OutputRate the chain's.
func TailSpec(spec Spec, f2 float64) Spec {
	return tailSpec(spec, f2, spec.RippleDB*FractionalRippleShare)
}

// tailSpec is TailSpec with the polyphase stage's ripple share fracRipple.
func tailSpec(spec Spec, f2, fracRipple float64) Spec {
	tail := spec
	tail.InputRate, tail.RatioTolerancePPM = f2, 0
	tail.RippleDB = spec.RippleDB - fracRipple
	// A real tone's two paths through the polyphase stage can land on
	// one output frequency through these stages' stopbands and add
	// (coincidentPaths): a real chain's are held 6 dB lower.
	return tail.RejectionRaised(fracRipple + coincidentDB(spec))
}

// PolyphaseBands returns the prototype's stopbands on its own axis, at Up
// times the stage's input rate Fm (package documentation, Fractional
// stages): after a lowpass (Keep above zero) [k Fm - Keep, k Fm + Keep]
// for k = 1 .. Up/2, cut at Up Fm / 2 and merged where they touch; else
// one band [Stop, Up Fm / 2].
func PolyphaseBands(r FractionalRequirement, up int) []Interval {
	half := float64(up) * r.InputRate / 2
	if r.Keep <= 0 {
		return []Interval{{r.Stop, half}}
	}
	var b []Interval
	for k := 1; k <= up/2+1; k++ {
		lo, hi := float64(k)*r.InputRate-r.Keep, math.Min(float64(k)*r.InputRate+r.Keep, half)
		if lo >= half {
			break
		}
		b = append(b, Interval{lo, hi})
	}
	return mergeIntervals(b)
}

// MaxFractionalUp bounds a fractional stage's Up (its phases): a polyphase
// prototype is about Up times as long as a FIR at its input rate, and a
// Farrow stage is analysed as such a prototype (FarrowPrototype).
// polyphaseMaxTaps bounds the prototype's estimated length (Herrmann),
// which bounds its design's time.
const (
	MaxFractionalUp  = 256
	polyphaseMaxTaps = 8192
)

// MaxFarrowUp bounds a Farrow stage's Up: its cost does not grow with L,
// but it is analysed as the polyphase stage of L N taps it is at its
// output times (FarrowPrototype), whose L paths the analysis searches.
const MaxFarrowUp = 1024

func polyphaseStage(ctx context.Context, p StagePlan, r FractionalRequirement, s Settings, design bool) (PolyphaseStage, error) {
	st := PolyphaseStage{Up: p.Up, Down: p.Down, Req: r}
	if p.Up > MaxFractionalUp {
		return st, fmt.Errorf("a polyphase stage of %d phases: at most %d (a farrow stage takes any ratio)", p.Up, MaxFractionalUp)
	}
	rate := float64(p.Up) * r.InputRate
	stops := PolyphaseBands(r, p.Up)
	maxTaps := 0
	if s.MaxTaps > 0 {
		// MaxTaps bounds the taps of one phase: the multiplies of an output.
		maxTaps = min(65535, s.MaxTaps*p.Up)
	}
	n := remez.HerrmannLength(r.Dp, r.Ds, stops[0].Lo-r.passbandEdge(), rate)
	if n == 0 {
		return st, errors.New("no length estimate for its bands")
	}
	if n > polyphaseMaxTaps {
		return st, fmt.Errorf("its prototype would need about %d taps, more than the %d a polyphase stage is designed with: a wider transition (a lower passband or protected edge), an integer stage beside it where the ratio leaves room, or a farrow stage", n, polyphaseMaxTaps)
	}
	if !design {
		st.Length = n
		return st, nil
	}
	res, err := remez.MinLengthContext(ctx, rate, r.Bands(p.Up), 0, maxTaps, s.Remez)
	if err != nil {
		return st, fmt.Errorf("polyphase prototype design: %w", err)
	}
	st.Taps = res.Taps
	st.Length = len(res.Taps)
	return st, nil
}

// farrowMaxSampled bounds a Farrow stage's Up times its length: the taps
// of the polyphase stage it is at its output times (FarrowPrototype),
// which Analyze measures.
const farrowMaxSampled = 1 << 16

// FarrowPrototype returns the taps of the polyphase Up/Down stage that a
// Farrow stage is at its output times m Down/Up: y = Up sum_j p[j]
// u[m Down - j] with p[j] = h((j - Up N/2)/Up)/Up, h the structure's
// impulse response (farrow.Convention), N its length: the output delayed
// by N/2 input samples, which changes no gain. Its paths k and k + Up
// land on the same output frequency at every input frequency and add;
// this prototype sums them. It refuses a stage with more than
// MaxFractionalUp phases or more than farrowMaxSampled taps.
func FarrowPrototype(st FarrowStage) ([]float64, error) {
	if err := st.Filter.Validate(); err != nil {
		return nil, err
	}
	n := st.Filter.Len()
	if st.Up < 1 || st.Up > MaxFarrowUp || st.Up*n > farrowMaxSampled {
		return nil, fmt.Errorf("a farrow stage of rate change %d/%d and %d taps is not analysed: its L x taps, %d, is above %d or its L above %d (its images fold onto each other at every frequency); allow a simpler ratio (ratio_tolerance_ppm)",
			st.Up, st.Down, n, st.Up*n, farrowMaxSampled, MaxFarrowUp)
	}
	taps := make([]float64, st.Up*n)
	for j := range taps {
		taps[j] = st.Filter.Impulse(float64(j-st.Up*n/2)/float64(st.Up)) / float64(st.Up)
	}
	return taps, nil
}

// farrowMaxCost bounds a Farrow stage's multiplies per output in its
// design search.
const farrowMaxCost = 400

// farrowStage designs a Farrow stage by farrow.MinDesign: the cheapest
// structure whose passband [0, fp] is within Dp of 1 and whose image
// bands [k Fm - Keep, k Fm + Keep], k >= 1, are below Ds. It needs a
// lowpass FIR before it (Keep above zero, below Fm/2): a Farrow structure
// cannot itself be the lowpass of a whole band. Estimates are designed
// too: the structures are small.
func farrowStage(ctx context.Context, p StagePlan, r FractionalRequirement) (FarrowStage, error) {
	st := FarrowStage{Up: p.Up, Down: p.Down, Req: r}
	if p.Up > MaxFarrowUp {
		return st, fmt.Errorf("a farrow stage of %d phases (L = %d): at most %d, for its images fold onto each other and it is analysed as a polyphase stage; allow a simpler ratio (ratio_tolerance_ppm)", p.Up, p.Up, MaxFarrowUp)
	}
	if r.Keep <= 0 {
		return st, errors.New("a farrow stage needs a lowpass FIR (fir<D>L) just before it")
	}
	f, _, err := farrow.MinDesign(ctx, r.Passband/r.InputRate, r.Keep/r.InputRate, r.Dp, r.Ds, farrowMaxCost)
	if err != nil {
		return st, err
	}
	st.Filter, st.Degree, st.Length = f, f.Degree(), f.Len()
	if _, err := FarrowPrototype(st); err != nil {
		return st, err
	}
	return st, nil
}
