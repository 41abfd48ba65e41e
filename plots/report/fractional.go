package report

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain"
)

// The response figure of a chain that ends in a fractional stage draws two
// curves over input frequency g instead of one: the kept path (the path
// K = 0 that leaves a tone where it is, chain.Chain.Gain) and, at each g,
// the largest gain of any path that lands in the protected band [0, fa]
// other than the tone itself (K = 0 with g <= fa): the aliases that
// chain.PathGains lists and chain.Analyze bounds. Both are relative to the
// gain at 0 Hz.
//
// chain.PathGains gives those paths one frequency at a time and sets up
// the stage's rigorous bounds on every call, too slow for the figure's
// tens of thousands of points; fractionalCurves evaluates the same paths
// from the stages' own Gain methods (TestFractionalCurvesMatchPathGains
// holds it to chain.PathGains), and a polyphase stage's L paths at once
// (chain.PolyphasePaths: one pass over the taps and an L-point FFT).

// fractionalWork is the most evaluations (taps and DFT terms) the curves
// may take; a longer grid is thinned to fit (thinGrid), so that the
// figure's curves take about a second at most on one core, whatever the stage's L.
const fractionalWork = 2e8

// fractionalParts is a fractional chain split for the figure: its integer
// stages, the fractional stage, its input rate Fm and the output rate FK.
//
// A polyphase stage placed after the CIC has stages after it too (tail):
// a path k's gain is then also theirs at g + k Fm (periodic at their input
// rate), as chain.PathGains counts it.
type fractionalParts struct {
	ic     *chain.Chain
	last   chain.Stage
	tail   *chain.Chain // nil when the fractional stage ends the chain
	fm, fk float64
	dc     float64
}

func splitChain(c *chain.Chain) (fractionalParts, error) {
	n := len(c.Stages)
	f := slices.IndexFunc(c.Stages, func(s chain.Stage) bool { return s.Kind().Fractional() })
	if f < 0 {
		return fractionalParts{}, fmt.Errorf("response plot: the chain has no fractional stage")
	}
	rates := c.Rates()
	p := fractionalParts{
		ic:   &chain.Chain{InputRate: c.InputRate, Complex: c.Complex, Direction: c.Direction, Plan: c.Plan[:min(f, len(c.Plan))], Stages: c.Stages[:f]},
		last: c.Stages[f],
		fm:   rates[f],
		fk:   c.OutputRate(),
		dc:   c.Gain(0),
	}
	if f < n-1 {
		p.tail = &chain.Chain{InputRate: rates[f+1], Complex: c.Complex, Stages: c.Stages[f+1:]}
	}
	if !(p.dc > 0) || !finite(p.dc) {
		return p, fmt.Errorf("response plot: the chain's DC gain is %v", p.dc)
	}
	if !(p.fm > 0) || !(p.fk > 0) {
		return p, fmt.Errorf("response plot: the fractional stage's rates %v Hz in, %v Hz out", p.fm, p.fk)
	}
	switch st := p.last.(type) {
	case chain.PolyphaseStage:
		if st.Up < 1 || len(st.Taps) == 0 {
			return p, fmt.Errorf("response plot: the polyphase stage has no designed taps")
		}
	case chain.FarrowStage:
		// At its output times a Farrow stage is the polyphase stage of
		// its sampled impulse response (chain.FarrowPrototype), as
		// chain.Analyze measures it: drawn as that.
		taps, err := chain.FarrowPrototype(st)
		if err != nil {
			return p, fmt.Errorf("response plot: %v", err)
		}
		p.last = chain.PolyphaseStage{Up: st.Up, Down: st.Down, Taps: taps, Length: len(taps)}
		p.dc = p.ic.Gain(0) * p.last.Gain(0, p.fm) * p.tailGain(0)
	default:
		return p, fmt.Errorf("response plot: stage %d is a %T, not a fractional stage", n, p.last)
	}
	return p, nil
}

// work is the evaluations one grid point costs.
func (p fractionalParts) work() float64 {
	w := 0.0
	for _, s := range p.ic.Stages {
		if f, ok := s.(chain.FIRStage); ok {
			w += float64(len(f.Taps))
		}
	}
	switch st := p.last.(type) {
	case chain.PolyphaseStage:
		w += float64(len(st.Taps)) + float64(st.Up)*float64(st.Up)
		if p.tail != nil {
			for _, s := range p.tail.Stages {
				if f, ok := s.(chain.FIRStage); ok {
					w += float64(st.Up) * float64(len(f.Taps))
				}
			}
		}
	}
	return w
}

// tailGain is the gain of the stages after the fractional stage at h (1
// when there are none).
func (p fractionalParts) tailGain(h float64) float64 {
	if p.tail == nil {
		return 1
	}
	return p.tail.Gain(h)
}

// fold is f folded into [0, FK/2] by the output rate, as chain.PathGains
// folds it.
func (p fractionalParts) fold(f float64) float64 {
	f = math.Mod(f, p.fk)
	if f < 0 {
		f += p.fk
	}
	return math.Min(f, p.fk-f)
}

// curves returns the kept path's gain and the largest alias's at g, both
// relative to the gain at 0 Hz; the alias is 0 when no path lands in
// [0, fa]. pp evaluates the polyphase stage's L paths at once and gains
// is its scratch of L values.
func (p fractionalParts) curves(g, fa float64, pp *chain.PolyphasePaths, gains []float64) (kept, alias float64) {
	a := p.ic.Gain(g) / p.dc
	if pp == nil {
		return kept, alias
	}
	gains = pp.Gains(g, gains)
	for k, v := range gains {
		gain := a * v * p.tailGain(g+float64(k)*p.fm)
		if k == 0 {
			kept = gain
		}
		if k == 0 && g <= fa {
			continue
		}
		if p.fold(g+float64(k)*p.fm) <= fa {
			alias = math.Max(alias, gain)
		}
	}
	return kept, alias
}

// fractionalCurves returns, in dB re the gain at 0 Hz, the kept path and
// the largest alias into [0, fa] of the fractional chain c at each input
// frequency of grid (-Inf where no path lands there). The points are
// shared among the cores, each written by one, so the result does not
// depend on their number.
func fractionalCurves(c *chain.Chain, fa float64, grid []float64) (kept, alias []float64, err error) {
	p, err := splitChain(c)
	if err != nil {
		return nil, nil, err
	}
	kept, alias = make([]float64, len(grid)), make([]float64, len(grid))
	st, _ := p.last.(chain.PolyphaseStage)
	const chunk = 512
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			// Each worker its own evaluator (they are not shared).
			var pp *chain.PolyphasePaths
			if st.Up > 0 {
				pp = chain.NewPolyphasePaths(st.Taps, st.Up, p.fm)
			}
			var gains []float64
			for lo := range next {
				for i := lo; i < min(lo+chunk, len(grid)); i++ {
					k, a := p.curves(grid[i], fa, pp, gains)
					kept[i], alias[i] = db(k), db(a)
				}
			}
		}()
	}
	for lo := 0; lo < len(grid); lo += chunk {
		next <- lo
	}
	close(next)
	wg.Wait()
	return kept, alias, nil
}

// thinGrid keeps every s-th point of grid (and its last), the least s
// that brings points x work within fractionalWork.
func thinGrid(grid []float64, work float64) []float64 {
	if work <= 0 || float64(len(grid))*work <= fractionalWork {
		return grid
	}
	s := int(math.Ceil(float64(len(grid)) * work / fractionalWork))
	out := make([]float64, 0, len(grid)/s+2)
	for i := 0; i < len(grid); i += s {
		out = append(out, grid[i])
	}
	if last := grid[len(grid)-1]; out[len(out)-1] != last {
		out = append(out, last)
	}
	return out
}
