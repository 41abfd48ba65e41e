package fixed

import "github.com/stepdown-dsp/stepdown/chain"

// cascadeChain returns the cascade as a chain.Chain, so that its response
// is the chain package's (chain.Analyze, Chain.Gain): FIR taps are w's
// quantised coefficients when quantised is set, else the float taps with
// their gain correction; CICs have the chain package's unit DC gain (see
// cicScale). The spec carries the cascade's rates and bands for
// chain.Analyze; its ripple and rejection targets are placeholders, since
// Analyze measures and does not judge. A fractional stage becomes a
// chain.PolyphaseStage of its float or quantised prototype (fracProto),
// and the chain gets the plan chain.Analyze reads.
//
// An interpolation cascade becomes its transpose, as the chain package
// holds an interpolation chain: the stages from the high rate down,
// InputRate the high rate, Direction Interpolate, and an interpolation
// spec (InputRate the channel rate).
func cascadeChain(c Cascade, w *Widths, quantised bool) (*chain.Chain, chain.Spec) {
	if c.Interpolate {
		return transposeChain(c, w, quantised)
	}
	ch := &chain.Chain{InputRate: c.InputRate, Complex: c.Complex, Designed: true}
	frac := false
	for i, st := range c.Stages {
		if st.fractional() {
			// As QuantisedChain holds it: a polyphase stage of the
			// (equivalent) prototype, float or quantised.
			taps := w.Stages[i].fracProto(st, quantised)
			ch.Stages = append(ch.Stages, chain.PolyphaseStage{Up: st.Up, Down: st.Down, Taps: taps, Length: len(taps)})
			frac = true
			continue
		}
		if st.CIC {
			ch.Stages = append(ch.Stages, chain.CICStage{N: st.N, M: st.M, R: st.R})
			continue
		}
		taps := w.Stages[i].floatTaps(st)
		if quantised {
			taps = w.Stages[i].Coefficients.Float()
		}
		ch.Stages = append(ch.Stages, chain.FIRStage{R: st.R, Taps: taps, Length: len(taps), HalfBand: st.HalfBand})
	}
	if frac {
		addPlan(ch)
	}
	spec := chain.Spec{InputRate: c.InputRate, OutputRate: c.ChannelRate(), Passband: c.Passband,
		Protected: c.Protected, RippleDB: 1, RejectionDB: 1, Complex: c.Complex}
	return ch, spec
}

// addPlan gives a fractional chain built from a cascade the plan its
// analysis reads.
func addPlan(ch *chain.Chain) {
	for _, s := range ch.Stages {
		p := chain.StagePlan{Kind: s.Kind(), Factor: s.Factor()}
		switch st := s.(type) {
		case chain.CICStage:
			p.CICOrder, p.CICDelay = st.N, st.M
		case chain.PolyphaseStage:
			p.Up, p.Down = st.Up, st.Down
		}
		ch.Plan = append(ch.Plan, p)
	}
}

// cicScale returns the product of the CIC stages' DC gains (StageWidths.Gain),
// which cascadeChain's unit-gain CICs leave out.
func cicScale(w *Widths) float64 {
	p := 1.0
	for _, sw := range w.Stages {
		if sw.CIC {
			p *= sw.Gain
		}
	}
	return p
}

// transposeChain is cascadeChain for an interpolation cascade. Its
// fractional stage, the first in signal order, becomes the last of the
// transpose: a chain.PolyphaseStage of the chain's L/M (fracView) whose
// prototype is the float or quantised one (fracProto).
func transposeChain(c Cascade, w *Widths, quantised bool) (*chain.Chain, chain.Spec) {
	rates := c.Rates()
	high := rates[len(rates)-1]
	ch := &chain.Chain{InputRate: high, Complex: c.Complex, Direction: chain.Interpolate, Designed: true}
	frac := false
	for i := len(c.Stages) - 1; i >= 0; i-- {
		st := c.Stages[i]
		if st.fractional() {
			l, m := st.fracView()
			taps := w.Stages[i].fracProto(st, quantised)
			ch.Stages = append(ch.Stages, chain.PolyphaseStage{Up: l, Down: m, Taps: taps, Length: len(taps)})
			frac = true
			continue
		}
		if st.CIC {
			ch.Stages = append(ch.Stages, chain.CICStage{N: st.N, M: st.M, R: st.R, Interpolator: true})
			continue
		}
		taps := w.Stages[i].floatTaps(st)
		if quantised {
			taps = w.Stages[i].Coefficients.Float()
		}
		ch.Stages = append(ch.Stages, chain.FIRStage{R: st.R, Taps: taps, Length: len(taps), HalfBand: st.HalfBand})
	}
	if frac {
		addPlan(ch)
	}
	spec := chain.Spec{InputRate: c.InputRate, OutputRate: high, Passband: c.Passband,
		Protected: c.Protected, RippleDB: 1, RejectionDB: 1, Complex: c.Complex}
	return ch, spec
}
