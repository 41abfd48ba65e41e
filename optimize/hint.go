package optimize

import (
	"context"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Hint is a cheaper way to the channel that the search found outside the
// spec's own ratio, with its figures: a nearby output rate whose integer
// ratio splits well, or the spec's own output rate through a fractional
// stage.
type Hint struct {
	// Text is one sentence with the figures, in the user's words.
	Text string
	// OutputRateHz and Ratio ("54", "625/24") are the alternative's.
	OutputRateHz float64
	Ratio        string
	// Chain is the alternative's recommended chain, in signal order, and
	// MultipliesPerOutput its cost on the front's axis (multiplies, or
	// adders when multiplierless).
	Chain               string
	MultipliesPerOutput float64
}

// hintSaving is how much cheaper an alternative must be to be named: 20 %.
const hintSaving = 0.8

// largestPrime returns n's largest prime factor (1 for n < 2).
func largestPrime(n int) int {
	p := 1
	for f := 2; f*f <= n; f++ {
		for n%f == 0 {
			p, n = f, n/f
		}
	}
	if n > 1 {
		p = max(p, n)
	}
	return p
}

// Hints looks for a cheaper way to the channel when the spec's integer
// ratio D has a prime factor above 7 (a prime D = 53 plans one long FIR):
// it plans the nearest ratios below and above D whose prime factors are
// at most 7, at their own output rates F0/D' with the same band edges,
// and the spec's own output rate through a fractional stage, and names
// each whose recommended chain costs at most 80 % of res's. The figures
// are from real designs (float), as the search's own. It returns nil for
// a fractional or interpolation spec, for D without such a factor, and
// when nothing is that much cheaper.
func Hints(ctx context.Context, spec chain.Spec, s Settings, res *Result) ([]Hint, error) {
	ns, err := spec.Normalize()
	if err != nil {
		return nil, err
	}
	if ns.Fractional() || ns.Direction() == chain.Interpolate {
		return nil, nil
	}
	d := ns.Decimation()
	if p := largestPrime(d); p <= 7 {
		return nil, nil
	}
	base := math.Inf(1)
	if res != nil && res.Recommended >= 0 {
		base = costAxis(&res.Front[res.Recommended].Figures)
	}
	s.floatOnly = true
	s.Progress, s.Scoring = nil, nil
	var out []Hint
	try := func(alt chain.Spec, what string) error {
		r, err := Plan(ctx, alt, s)
		if err != nil {
			if ctx.Err() != nil {
				return err
			}
			return nil // the bands do not fit there
		}
		if r.Recommended < 0 {
			return nil
		}
		c := r.Front[r.Recommended]
		m := costAxis(&c.Figures)
		if !(m <= hintSaving*base) {
			return nil
		}
		n := alt.Direction().Notation(c.Plan)
		had := "no chain meets the spec"
		if !math.IsInf(base, 1) {
			had = fmt.Sprintf("the recommended chain costs %.4g %s per output", base, s.axisName())
		}
		out = append(out, Hint{
			Text: fmt.Sprintf("D = %d has the prime factor %d and %s; %s costs %.4g (%s).",
				d, largestPrime(d), had, what, m, n),
			OutputRateHz: c.Chain.OutputRate(), Ratio: alt.RatioString(), Chain: n, MultipliesPerOutput: m,
		})
		return nil
	}
	lo, hi := 0, 0
	for _, v := range smoothUpTo(2 * d) {
		if v < d && v >= 2 {
			lo = v
		}
		if v > d && hi == 0 {
			hi = v
		}
	}
	for _, alt := range []int{lo, hi} {
		if alt == 0 {
			continue
		}
		// The spec as given: the default stopband edge, FK - fa,
		// follows the new output rate.
		a := spec
		a.OutputRate = ns.InputRate / float64(alt)
		if a.Stopband == ns.OutputRate-ns.Protected {
			a.Stopband = 0 // the default edge, which follows the rate
		}
		if _, err := a.Normalize(); err != nil {
			continue
		}
		if err := try(a, fmt.Sprintf("output rate %s (D = %d)", fmtHz(a.OutputRate), alt)); err != nil {
			return nil, err
		}
	}
	// The spec's own output rate, through a fractional stage.
	r, err := planFractional(ctx, ns, s)
	if err != nil {
		if ctx.Err() != nil {
			return nil, err
		}
		return out, nil
	}
	if r.Recommended >= 0 {
		c := r.Front[r.Recommended]
		if m := costAxis(&c.Figures); m <= hintSaving*base {
			n := chain.Notation(c.Plan)
			out = append(out, Hint{
				Text: fmt.Sprintf("D = %d has the prime factor %d; the same output rate through a fractional stage costs %.4g %s per output (%s)%s.",
					d, largestPrime(d), m, s.axisName(), n, map[bool]string{true: "", false: fmt.Sprintf(", against %.4g", base)}[math.IsInf(base, 1)]),
				OutputRateHz: c.Chain.OutputRate(), Ratio: ns.RatioString(), Chain: n, MultipliesPerOutput: m,
			})
		}
	}
	return out, nil
}

// fmtHz writes a rate as the rest of the output does ("1.06 MHz"), to the
// millihertz.
func fmtHz(v float64) string { return units.FormatFrequency(math.Round(v*1e3) / 1e3) }
