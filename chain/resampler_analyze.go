package chain

import (
	"context"
	"fmt"
	"math"
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

// fractionalParts splits a fractional chain into its integer stages (a
// chain of their own) and the fractional stage's gain, its bounder and its
// paths' shifts.
func fractionalParts(c *Chain) (ic *Chain, rg func(float64) float64, rb stageBounder, shifts []float64, err error) {
	n := len(c.Stages)
	rates := c.Rates()
	fm := rates[n-1]
	ic = &Chain{InputRate: c.InputRate, Complex: c.Complex, Plan: c.Plan[:n-1], Stages: c.Stages[:n-1], Designed: c.Designed}
	switch st := c.Stages[n-1].(type) {
	case PolyphaseStage:
		rate := fm * float64(st.Up)
		b, err := newFIRBounder(st.Taps, rate)
		if err != nil {
			return nil, nil, nil, nil, err
		}
		rg = func(h float64) float64 { return st.Gain(h, fm) }
		for k := 0; k < st.Up; k++ {
			shifts = append(shifts, float64(k)*fm)
		}
		return ic, rg, b, shifts, nil
	}
	return nil, nil, nil, nil, fmt.Errorf("chain: stage %d is a %T: not a fractional stage Analyze knows", n, c.Stages[n-1])
}

func measureFractional(ctx context.Context, c *Chain, spec Spec) (Analysis, error) {
	ic, rg, rb, shifts, err := fractionalParts(c)
	if err != nil {
		return Analysis{}, err
	}
	cs, err := newCascade(ic)
	if err != nil {
		return Analysis{}, err
	}
	fk, fa, fp := c.OutputRate(), spec.Protected, spec.Passband
	f0h := c.InputRate / 2
	h0 := c.Gain(0)
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
	a := Analysis{AliasRejectionDB: MaxFigureDB}
	best := extreme{}
	bound := 0.0
	for k, shift := range shifts {
		// Path k lands in [0, fa] for g in [n FK - shift - fa, n FK - shift + fa].
		nlo := int(math.Ceil((shift - fa) / fk))
		nhi := int(math.Floor((f0h + shift + fa) / fk))
		if k == 0 {
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
		p := fractionalPath{cs: cs, shift: shift, rg: rg, rb: rb}
		w, err := searchOn(ctx, p, bs, 1, aliasCertifyDB)
		if err != nil {
			return Analysis{}, err
		}
		if w.v > best.v {
			best = w
		}
		bound = math.Max(bound, w.bound)
	}
	if bound > 0 {
		a.AliasRejectionDB, a.WorstAliasHz = -toDB(bound/h0), best.x
	}
	p0 := fractionalPath{cs: cs, rg: rg, rb: rb}
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

// estimateFractional is Analyze of an estimated fractional chain: the
// integer stages' estimate against their own spec (IntegerSpec) and the
// fractional stage's requirement, each met by design.
func estimateFractional(c *Chain, spec Spec) (Analysis, error) {
	n := len(c.Stages)
	var req FractionalRequirement
	switch st := c.Stages[n-1].(type) {
	case PolyphaseStage:
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
	sub := IntegerSpec(spec, d, spec.RippleDB-req.RippleDB, req.RippleDB)
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
