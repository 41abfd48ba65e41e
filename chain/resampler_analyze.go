package chain

import (
	"context"
	"errors"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// The truth of a chain that ends in a fractional stage (package
// documentation, Fractional stages). A real tone at input frequency g
// leaves the integer stages at g (their rate Fm folds it, which their
// gains, each periodic at its own rate, already account for) with gain
// A(g) = prod_j |H_j(g)|. The fractional stage turns it into one tone per
// path k: at g + k Fm, for k = 0 .. Up-1 (polyphase: the zeros between
// samples make Up images, the prototype P weighs each) or for every
// integer k (Farrow: the structure is a continuous-time filter H sampled at
// the output times), with gain A(g) |R(g + k Fm)|, R the prototype or the
// continuous response. The output rate FK then folds it to
// y = fold(g + k Fm mod FK). Path (k, g) is an alias when y lies in the
// protected band [0, fa] and it is not the tone itself (k = 0 and
// g <= fa). The rejection is the worst path's gain over the gain at 0 Hz,
// A(0) R(0), found by the certified search of every path; the passband
// ripple is that of the path k = 0 over [0, fp].

// fractionalPath is the path k through a fractional chain: the integer
// stages' cascade at g and the fractional stage at g + shift.
type fractionalPath struct {
	cs    *cascade
	shift float64
	rg    func(h float64) float64
	rb    stageBounder
}

func (p fractionalPath) gain(x float64) float64 { return p.cs.gain(x) * p.rg(x+p.shift) }

func (p fractionalPath) bounds(a, b float64, coarse bool) (lo, up float64) {
	lo, up = p.cs.bounds(a, b, coarse)
	var l2, u2 float64
	if coarse {
		l2, u2 = p.rb.coarse(a+p.shift, b+p.shift)
	} else {
		l2, u2 = p.rb.bounds(a+p.shift, b+p.shift)
	}
	return lo * l2, up * u2
}

// fractionalParts splits a fractional chain into the integer stages
// before its fractional stage (a chain of their own) and the gain of the
// rest: the fractional stage's and, after it, the integer stages' (whose
// gain at a path's frequency h is their cascade's, periodic at their input
// rate F2), its bounder, the shifts of its paths, k Fm for k = 0 .. Up-1
// (a Farrow stage through its sampled prototype, FarrowPrototype).
type fractionalParts struct {
	ic       *Chain
	taps     []float64 // the prototype (a Farrow stage's sampled one)
	tail     *Chain    // the stages after the fractional stage, or nil
	rg       func(h float64) float64
	rb       stageBounder
	shifts   []float64
	fm       float64
	up, down int // the fractional stage's L and M
	db       int // the decimation of the stages after it
}

// tailBounder bounds the product of a fractional stage's gain and the
// cascade of the stages after it, both on the path's axis h.
type tailBounder struct {
	frac stageBounder
	tail *cascade
}

func (t tailBounder) bounds(a, b float64) (lo, up float64) {
	l1, u1 := t.frac.bounds(a, b)
	l2, u2 := t.tail.bounds(a, b, false)
	return l1 * l2, u1 * u2
}

func (t tailBounder) coarse(a, b float64) (lo, up float64) {
	l1, u1 := t.frac.coarse(a, b)
	l2, u2 := t.tail.bounds(a, b, true)
	return l1 * l2, u1 * u2
}

func (t tailBounder) upper(a, b float64) float64 {
	_, u := t.tail.bounds(a, b, false)
	return t.frac.upper(a, b) * u
}

func splitFractional(c *Chain) (fractionalParts, error) {
	f := fracIndex(c)
	if f < 0 {
		return fractionalParts{}, errors.New("chain: the chain has no fractional stage")
	}
	rates := c.Rates()
	fm := rates[f]
	up, down := stageRatio(c.Stages[f])
	p := fractionalParts{fm: fm, up: up, down: down, db: 1,
		ic: &Chain{InputRate: c.InputRate, Complex: c.Complex, Plan: c.Plan[:min(f, len(c.Plan))], Stages: c.Stages[:f], Designed: c.Designed}}
	var taps []float64
	switch st := c.Stages[f].(type) {
	case PolyphaseStage:
		taps = st.Taps
	case FarrowStage:
		// At its output times m Down/Up the structure is exactly the
		// polyphase Up/Down stage whose prototype is h sampled at 1/Up
		// (FarrowPrototype): its paths k and k + Up land together at
		// every input frequency and add, so it is analysed as that.
		var err error
		if taps, err = FarrowPrototype(st); err != nil {
			return p, err
		}
	default:
		return p, fmt.Errorf("chain: stage %d is a %s stage: not a fractional stage Analyze knows", f+1, c.Stages[f].Kind())
	}
	rate := fm * float64(up)
	b, err := newFIRBounder(taps, rate)
	if err != nil {
		return p, err
	}
	p.rg = func(h float64) float64 { return remez.Magnitude(taps, h, rate) }
	p.rb, p.taps = b, taps
	if f < len(c.Stages)-1 {
		tc := &Chain{InputRate: rates[f+1], Complex: c.Complex, Stages: c.Stages[f+1:], Designed: c.Designed}
		p.tail = tc
		tail, err := newCascade(tc)
		if err != nil {
			return p, err
		}
		p.db = tc.Decimation()
		rg := p.rg
		p.rg = func(h float64) float64 { return rg(h) * tail.gain(h) }
		p.rb = tailBounder{frac: b, tail: tail}
	}
	for k := 0; k < up; k++ {
		p.shifts = append(p.shifts, float64(k)*fm)
	}
	return p, nil
}

func measureFractional(ctx context.Context, c *Chain, spec Spec) (Analysis, error) {
	fp0, err := splitFractional(c)
	if err != nil {
		return Analysis{}, err
	}
	cs, err := newCascade(fp0.ic)
	if err != nil {
		return Analysis{}, err
	}
	fk, fa, fp := c.OutputRate(), spec.Protected, spec.Passband
	f0h := c.InputRate / 2
	h0 := fp0.ic.Gain(0) * fp0.rg(0)
	if !(h0 > 0) {
		return Analysis{AliasRejectionDB: 0, PassbandRippleDB: MaxFigureDB}, nil
	}
	var weight func(float64) float64
	var weightMax func(a, b float64) float64
	if m := spec.RejectionMask; m != nil {
		r := spec.RejectionDB
		weight = func(x float64) float64 { return math.Pow(10, (m.At(x)-r)/20) }
		weightMax = func(a, b float64) float64 { return math.Pow(10, (m.MaxOver(a, b)-r)/20) }
	}
	best := extreme{}
	bestShift := 0.0
	bound := 0.0
	searchPaths := func(shifts []float64) error {
		for _, shift := range shifts {
			// Path k lands in [0, fa] for g in
			// [n FK - shift - fa, n FK - shift + fa].
			nlo := int(math.Ceil((shift - fa) / fk))
			nhi := int(math.Floor((f0h + shift + fa) / fk))
			if shift == 0 {
				nlo = max(nlo, 1) // n = 0 of path 0 is the tone itself
			}
			if nhi < nlo {
				continue
			}
			bs := bandSet{n: nhi - nlo + 1, weight: weight, weightMax: weightMax, floor: best.v,
				band: func(i int) Interval {
					c := float64(nlo+i)*fk - shift
					lo := math.Min(math.Max(0, c-fa), f0h)
					return Interval{lo, math.Max(lo, math.Min(c+fa, f0h))}
				}}
			p := fractionalPath{cs: cs, shift: shift, rg: fp0.rg, rb: fp0.rb}
			w, err := searchOn(ctx, p, bs, 1, aliasCertifyDB)
			if err != nil {
				return err
			}
			if w.v > best.v {
				best, bestShift = w, shift
			}
			bound = math.Max(bound, w.bound)
		}
		return nil
	}
	if err := searchPaths(fp0.shifts); err != nil {
		return Analysis{}, err
	}
	if dcImagesDoubled(c) {
		// The images of a DC input (dcImagesDoubled): path k of the
		// input frequencies g = n FK - k Fm lands on the channel's 0 Hz,
		// at twice its gain.
		for _, shift := range fp0.shifts {
			nlo := int(math.Ceil(shift / fk))
			nhi := int(math.Floor((f0h + shift) / fk))
			if float64(nhi)*fk-shift >= f0h*(1-1e-12) {
				nhi-- // at F0/2 the image is its own mirror
			}
			if shift == 0 {
				nlo = max(nlo, 1) // the DC itself
			}
			if nhi < nlo {
				continue
			}
			dcs := bandSet{n: nhi - nlo + 1, weight: weight, weightMax: weightMax, band: func(i int) Interval {
				g := math.Max(0, float64(nlo+i)*fk-shift)
				return Interval{g, g}
			}}
			w, err := searchOn(ctx, fractionalPath{cs: cs, shift: shift, rg: fp0.rg, rb: fp0.rb}, dcs, 1, aliasCertifyDB)
			if err != nil {
				return Analysis{}, err
			}
			if v := 2 * w.bound; v > bound {
				bound = v
				best, bestShift = extreme{x: w.x, v: 2 * w.v, bound: v}, shift
			}
		}
	}
	if !c.Complex {
		// A real tone's paths can meet on one output frequency, where
		// they add (coincidentPaths).
		w, g, k, err := coincidentPaths(ctx, fp0, cs, fk, fa, f0h, weight)
		if errors.Is(err, errTooManyCoincidences) {
			// Too many points to visit: two paths at most meet, so twice
			// the worst one bounds them (6 dB on the safe side).
			w, g, k, err = 2*bound, best.x, int(math.Round(bestShift/fp0.fm)), nil
		}
		if err != nil {
			return Analysis{}, err
		}
		if w > bound {
			bound = w
			best = extreme{x: g, v: w, bound: w}
			bestShift = float64(k) * fp0.fm
		}
	}
	a := Analysis{AliasRejectionDB: MaxFigureDB}
	if bound > 0 {
		a.AliasRejectionDB, a.WorstAliasHz = -toDB(bound/h0), best.x
		a.WorstPath = int(math.Round(bestShift / fp0.fm))
		y := math.Mod(best.x+bestShift, fk)
		if y < 0 {
			y += fk
		}
		a.WorstOutputHz = math.Min(y, fk-y)
	}
	p0 := fractionalPath{cs: cs, rg: fp0.rg, rb: fp0.rb}
	pass := bandSet{n: 1, band: func(int) Interval { return Interval{0, fp} }}
	hi, err := searchOn(ctx, p0, pass, 1, rippleCertifyDB)
	if err != nil {
		return Analysis{}, err
	}
	lo, err := searchOn(ctx, p0, pass, -1, rippleCertifyDB)
	if err != nil {
		return Analysis{}, err
	}
	a.PassbandRippleDB = toDB(hi.bound / lo.bound)
	if !(lo.bound > 0) {
		a.PassbandRippleDB = MaxFigureDB
	}
	return a, nil
}

// errTooManyCoincidences is coincidentPaths' refusal of a chain with
// more than maxCoincidentWork points times paths.
var errTooManyCoincidences = errors.New("chain: too many coincident paths to visit")

// maxCoincidentWork bounds the points times paths coincidentPaths
// visits; beyond it the sum of two paths is bounded by twice the worst
// one (see coincidentPaths).
const maxCoincidentWork = 1 << 24

// coincidentPaths returns the largest sum of the gains of two paths of
// one real tone that land on the same output frequency in [0, fa] (the
// tone itself left out), weighted by the rejection mask at the tone, with
// the tone's frequency and the larger path's index. For a real tone at g
// the fractional stage makes a component at g + k Fm and its mirror at
// -(g + k Fm), k = 0 .. L-1; two of them meet on one output frequency
// when g + k1 Fm = -(g + k2 Fm) mod FK (two +-components never meet: k1 Fm
// = k2 Fm mod FK needs k1 - k2 a multiple of L), that is 2 g = n FK -
// (k1 + k2) Fm for some integer n: g a multiple of Fm / (2 M), since
// FK = Fm L / M and L, M are coprime. At most one such pair lands on each
// output frequency. Their output tone's amplitude is at most the sum of
// the two paths' gains, reached for some phases of the prototype, so each
// such g is evaluated; the certified search of single paths does not see
// these isolated points. When the points times paths exceed
// maxCoincidentWork it returns errTooManyCoincidences without visiting
// them, and the caller takes the safe side: twice the worst single path.
func coincidentPaths(ctx context.Context, p fractionalParts, cs *cascade, fk, fa, f0h float64, weight func(float64) float64) (w, at float64, worstK int, err error) {
	step := p.fm / float64(2*p.down*p.db)
	npts := int(math.Floor(f0h/step)) + 1
	if float64(npts)*float64(p.up) > maxCoincidentWork {
		return 0, 0, 0, errTooManyCoincidences
	}
	tol := 1e-9 * fk
	type hit struct {
		y float64
		k int
	}
	var hits []hit
	// Where many paths land together, all L path gains at once
	// (PolyphasePaths) cost less than one direct evaluation each.
	pp := NewPolyphasePaths(p.taps, p.up, p.fm)
	var all []float64
	for j := 0; j < npts; j++ {
		if j&1023 == 0 {
			if err := ctx.Err(); err != nil {
				return 0, 0, 0, err
			}
		}
		g := float64(j) * step
		hits = hits[:0]
		for k := 0; k < p.up; k++ {
			if k == 0 && g <= fa {
				continue // the tone itself
			}
			y := math.Mod(g+float64(k)*p.fm, fk)
			if y < 0 {
				y += fk
			}
			y = math.Min(y, fk-y)
			if y <= fa+tol {
				hits = append(hits, hit{y, k})
			}
		}
		if len(hits) < 2 {
			continue
		}
		var a float64
		gain := func(k int) float64 { return p.rg(g + float64(k)*p.fm) }
		if len(hits) > 8 {
			all = pp.Gains(g, all)
			gain = func(k int) float64 {
				v := all[k]
				if p.tail != nil {
					v *= p.tail.Gain(g + float64(k)*p.fm)
				}
				return v
			}
		}
		for i := range hits {
			for i2 := i + 1; i2 < len(hits); i2++ {
				if math.Abs(hits[i].y-hits[i2].y) > tol {
					continue
				}
				if a == 0 {
					a = cs.gain(g)
					if weight != nil {
						a *= weight(g)
					}
				}
				g1, g2 := gain(hits[i].k), gain(hits[i2].k)
				if v := a * (g1 + g2); v > w {
					// The larger path names the pair; of two equal
					// within rounding, the lower k.
					w, at, worstK = v, g, min(hits[i].k, hits[i2].k)
					if math.Abs(g1-g2) > 1e-9*math.Max(g1, g2) {
						worstK = hits[i].k
						if g2 > g1 {
							worstK = hits[i2].k
						}
					}
				}
			}
		}
	}
	return w, at, worstK, nil
}

// estimateFractional is Analyze of an estimated fractional chain: the
// integer stages' estimate against their own spec (IntegerSpec) and the
// fractional stage's requirement, each met by design.
func estimateFractional(c *Chain, spec Spec) (Analysis, error) {
	n := len(c.Stages)
	if f := fracIndex(c); f >= 0 && f < n-1 {
		return estimateAfterCIC(c, spec, f)
	}
	var req FractionalRequirement
	switch st := c.Stages[n-1].(type) {
	case PolyphaseStage:
		req = st.Req
	case FarrowStage:
		req = st.Req
	default:
		return Analysis{}, fmt.Errorf("chain: stage %d is a %T: not a fractional stage Analyze knows", n, c.Stages[n-1])
	}
	a := Analysis{AliasRejectionDB: spec.RejectionDB, WorstAliasHz: req.OutputRate - spec.Protected, PassbandRippleDB: req.RippleDB}
	if n == 1 {
		a.PassbandRippleDB = spec.RippleDB
		return a, nil
	}
	d := c.Decimation()
	sub := IntegerSpec(spec, d, spec.RippleDB-req.RippleDB, req.RippleDB, req.Keep > 0)
	ic := &Chain{InputRate: c.InputRate, Complex: c.Complex, Plan: c.Plan[:n-1], Stages: c.Stages[:n-1]}
	ia, err := estimateAnalysis(ic, sub)
	if err != nil {
		return Analysis{}, err
	}
	if r := ia.AliasRejectionDB - req.RippleDB; r < a.AliasRejectionDB {
		a.AliasRejectionDB, a.WorstAliasHz = r, ia.WorstAliasHz
	}
	a.PassbandRippleDB += ia.PassbandRippleDB
	return a, nil
}

// estimateAfterCIC is estimateFractional of a chain whose polyphase
// stage, at place f, comes after its CIC (buildAfterCIC): the CIC's
// aliases into [0, fa] at its output rate, computed exactly, the
// polyphase stage's requirement, met by design, and the stages after it
// against their own spec (tailSpec), each lifted by the others' ripple
// shares. The CIC's droop is the polyphase stage's to compensate.
func estimateAfterCIC(c *Chain, spec Spec, f int) (Analysis, error) {
	pp, ok := c.Stages[f].(PolyphaseStage)
	if !ok || f != 1 {
		return Analysis{}, fmt.Errorf("chain: stage %d is a %s stage after the CIC: only a polyphase stage is planned there", f+1, c.Stages[f].Kind())
	}
	req := pp.Req
	rates := c.Rates()
	tail := tailSpec(spec, rates[f+1], req.RippleDB)
	tc := &Chain{InputRate: rates[f+1], Complex: c.Complex, Plan: c.Plan[f+1:], Stages: c.Stages[f+1:]}
	ta, err := estimateAnalysis(tc, tail)
	if err != nil {
		return Analysis{}, err
	}
	a := Analysis{AliasRejectionDB: spec.RejectionDB, WorstAliasHz: req.OutputRate - spec.Protected,
		PassbandRippleDB: req.RippleDB + ta.PassbandRippleDB}
	if r := ta.AliasRejectionDB - req.RippleDB; r < a.AliasRejectionDB {
		a.AliasRejectionDB, a.WorstAliasHz = r, ta.WorstAliasHz
	}
	cic := IntegerSpec(spec, c.Stages[0].Factor(), spec.RippleDB, 0, false)
	ca, err := estimateAnalysis(&Chain{InputRate: c.InputRate, Complex: c.Complex, Plan: c.Plan[:1], Stages: c.Stages[:1]}, cic)
	if err != nil {
		return Analysis{}, err
	}
	if r := ca.AliasRejectionDB - spec.RippleDB; r < a.AliasRejectionDB {
		a.AliasRejectionDB, a.WorstAliasHz = r, ca.WorstAliasHz
	}
	return a, nil
}

// PathGain is one path of a tone through a fractional chain: K, the
// image index, and the path's gain and output frequency.
type PathGain struct {
	K        int
	OutputHz float64 // folded into [0, FK/2]
	Gain     float64 // A(g) |R(g + K Fm)|, relative to nothing (divide by Gain(0) for dB re the passband)
}

// PathGains returns the paths of a tone at input frequency g through a
// designed chain that ends in a fractional stage: every K of a polyphase
// stage, and K = -maxK..maxK of a Farrow stage (maxK <= 0 means 16), in
// increasing K. For an integer chain it returns the one path, K = 0.
func PathGains(c *Chain, g float64, maxK int) []PathGain {
	if c == nil || len(c.Stages) == 0 {
		return nil
	}
	fk := c.OutputRate()
	fold := func(f float64) float64 {
		f = math.Mod(f, fk)
		if f < 0 {
			f += fk
		}
		return math.Min(f, fk-f)
	}
	if fracIndex(c) < 0 {
		return []PathGain{{K: 0, OutputHz: fold(g), Gain: c.Gain(g)}}
	}
	p, err := splitFractional(c)
	if err != nil {
		return nil
	}
	ks := make([]int, len(p.shifts))
	for i := range ks {
		ks[i] = i
	}
	a := p.ic.Gain(g)
	out := make([]PathGain, len(ks))
	for i, k := range ks {
		h := g + float64(k)*p.fm
		out[i] = PathGain{K: k, OutputHz: fold(h), Gain: a * p.rg(h)}
	}
	return out
}
