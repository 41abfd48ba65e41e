package remez

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/internal/chunks"
	"gonum.org/v1/gonum/dsp/fourier"
)

// Convergence: the exchange stops when the largest error on the grid (each
// extremum at its parabolic vertex) exceeds the levelled deviation by at
// most this fraction.
const (
	tolContinuous = 1e-5
	tolGrid       = 1e-10
	// A reference that the exchange maps to itself counts as converged
	// when the largest error is within this fraction of delta.
	tolFixed = 1e-6
	// Shorter designs only seed the reference of longer ones.
	tolSeed = 1e-2
	// References of at most this many points start evenly spread; longer
	// ones are scaled from a design of about half the length.
	seedMin = 64
	// A seed design is this many times shorter.
	seedRatio = 2
	// Coarse grid density and tolerance of the first stage of a long design.
	coarseDensity = 4
	tolCoarse     = 1e-2
	// Local steps that leave delta unchanged this many times running
	// without converging hand the design to the grid exchange.
	stallSteps = 4
	// Fewer iterations than this make a tiny levelled deviation no
	// evidence of a specification met to rounding level.
	minLaxIter = 10
)

// ErrNotConverged is wrapped by the error Design returns, together with a
// best-effort Result, when the exchange does not reach equiripple.
var ErrNotConverged = errors.New("remez: exchange did not converge")

// ErrRoundingLevel is wrapped by the error of a design whose bands are met
// only to rounding level (every deviation, or the levelled deviation over
// the largest weight, within RoundingLevel(n) of the largest desired gain):
// the error is too small for double precision to level, because the length
// is far beyond what the specification needs or a limit is that small.
// MinLength takes such a length as "too long" whatever the taps measure,
// and wraps it too when the shortest length that meets is met only so.
var ErrRoundingLevel = errors.New("the specification is too lax for double precision")

// errRounding is ErrRoundingLevel (the package's older name).
var errRounding = ErrRoundingLevel

// RoundingLevel is the deviation, relative to the largest desired gain,
// at or below which a design of n taps counts as met only to rounding
// level: max(1e-13, n 1e-14), the rounding of a sum of n taps.
func RoundingLevel(n int) float64 { return math.Max(1e-13, 1e-14*float64(n)) }

// errCannotMeet ends a design whose levelled deviation passed
// engine.failAbove: no filter of its length meets the limit.
var errCannotMeet = errors.New("no filter of this length meets the limit")

// Design returns the length-n linear-phase (type I for odd n, type II for
// even n) filter that minimises the weighted maximum error over bands.
//
// When the exchange does not converge within Settings.MaxIterations it
// returns the best reference's filter (Result.Converged false) together with
// an error wrapping ErrNotConverged that says what to change; only when the
// arithmetic breaks down so far that no finite filter is left is that
// Result nil. For any other error (an invalid specification) the Result is
// nil.
func Design(n int, rate float64, bands []Band, s Settings) (*Result, error) {
	return DesignContext(context.Background(), n, rate, bands, s)
}

// DesignContext is Design stopped by ctx: the context is checked before
// every iteration of the exchange (and of the shorter designs that seed
// it), so a design of any length returns soon after ctx is done, with no
// Result and an error wrapping ctx.Err().
func DesignContext(ctx context.Context, n int, rate float64, bands []Band, s Settings) (*Result, error) {
	if err := ctx.Err(); err != nil {
		return nil, &stopError{n: n, err: err}
	}
	e, err := newEngine(n, rate, bands, s)
	if err != nil {
		return nil, err
	}
	e.ctx = ctx
	e.probe = true
	return e.design()
}

func (e *engine) design() (*Result, error) {
	if e.ctx != nil && e.halt == nil {
		// Long loops poll a flag rather than the context itself.
		e.halt = new(atomic.Bool)
		stop := context.AfterFunc(e.ctx, func() { e.halt.Store(true) })
		defer stop()
	}
	e.initRef()
	tol := tolContinuous
	if e.gridOnly {
		tol = tolGrid
	}
	it, conv, err := e.run(tol, e.maxIter)
	if serr := e.stopped(); serr != nil {
		return nil, serr
	}
	if errors.Is(err, errCannotMeet) {
		return nil, err
	}
	// A seeded start can be wrong in structure (a seed's reference scaled
	// onto many narrow bands, or the even spread the seeding fell back to)
	// and break down: try the evenly spread start of the 1973 program
	// (slower but robust) unless the design began with it, then an equal
	// share of points a band, with the iterations left, and keep whichever
	// run did best. Short designs, which start evenly spread, are not
	// retried within a search (MinLength): from other starts the exchange
	// can converge, at lengths far beyond what narrow bands with wide gaps
	// between them need, on a polynomial so large in the gaps that the taps
	// cannot hold it, where the even spread breaks down at rounding level
	// and MinLength searches lower, as it should (a review found 9 of 80
	// random such specs left without a length when they were).
	starts := []func(){e.bandRef}
	if !e.spread {
		starts = []func(){e.uniformRef, e.bandRef}
	}
	// A short design asked for by length (DesignContext, not a search)
	// tries bandRef too, kept only when its taps hold the levelled
	// response: there the even spread's breakdown at rounding level was
	// reported as bands met to rounding level where the design at that
	// length misses them (an adversarial review; 40 to 60 taps of a random
	// multiband spec, converging from bandRef at 22 to 0.63 times the
	// limits).
	probe := !e.seeded && e.probe
	for _, start := range starts {
		if conv || !(e.seeded || probe) || e.gridOnly || it >= e.maxIter {
			break
		}
		first := append([]point(nil), e.ref...)
		firstGap, firstErr := e.bestGap, err
		e.local, e.stepGap = false, math.Inf(1)
		e.best = e.best[:0]
		start()
		it2, conv2, err2 := e.run(tol, e.maxIter-it)
		it += it2
		if serr := e.stopped(); serr != nil {
			return nil, serr
		}
		if errors.Is(err2, errCannotMeet) {
			return nil, err2
		}
		if probe && conv2 && !e.tapsHold() {
			conv2, err2 = false, errors.New("remez: the taps do not hold the levelled response (numerical breakdown)")
		}
		if conv2 || (err2 == nil && (firstErr != nil || e.bestGap < firstGap)) {
			conv, err = conv2, err2
		} else {
			e.bestGap = firstGap
			e.ref = append(e.ref[:0], first...)
			if lerr := e.level(); lerr == nil {
				e.evalGrid()
				e.extrema(true)
			}
		}
	}
	if err != nil && len(e.xr) == 0 {
		return nil, err
	}
	res := &Result{Iterations: it, Converged: conv, Delta: math.Abs(e.delta)}
	if res.Taps, err = e.taps(); err != nil {
		return nil, err
	}
	for _, v := range res.Taps {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			// No finite filter to return. A levelled deviation far below any
			// realistic band limit means the length is far beyond what the
			// bands need (MinLength then searches lower).
			if _, wmax := e.gridScale(); !(math.Abs(e.delta)/wmax > 1e-9) {
				return nil, fmt.Errorf("remez: n = %d: numerical breakdown (non-finite coefficients, levelled deviation %.2g): %w (%w): shorten the filter or relax the bands", e.n, math.Abs(e.delta), errRounding, ErrNotConverged)
			}
			return nil, fmt.Errorf("remez: n = %d: numerical breakdown (non-finite coefficients); the specification is probably too demanding for double precision (%w): shorten the filter or relax the bands", e.n, ErrNotConverged)
		}
	}
	res.Deviations, e.wdev = e.deviations(res.Taps)
	if serr := e.stopped(); serr != nil {
		return nil, serr
	}
	if tiny := e.laxCheck(res.Deviations, conv); tiny != nil {
		return res, tiny
	}
	if err != nil {
		return res, fmt.Errorf("%w after %d iterations: %v", ErrNotConverged, it, err)
	}
	if !conv {
		return res, fmt.Errorf("%w after %d iterations (n = %d, levelled deviation %.3g): raise Settings.MaxIterations, check that the bands leave transition room, or change the length", ErrNotConverged, it, e.n, res.Delta)
	}
	return res, nil
}

// tapsHold reports whether the taps of the current levelled polynomial
// reproduce its weighted error at the reference points within twice the
// levelled deviation (and rounding): their amplitude by direct sum
// (Amplitude) against each band's desired gain and weight. Far beyond the
// length the bands need, the exchange can converge on a polynomial so
// large between the bands that its taps lose it.
func (e *engine) tapsHold() bool {
	h, err := e.taps()
	if err != nil {
		return false
	}
	scale, wmax := e.gridScale()
	lim := 2*math.Abs(e.delta) + RoundingLevel(e.n)*scale*wmax
	for _, p := range e.ref {
		b := &e.bands[p.band]
		if d := b.wt(p.f) * (b.desired(p.f) - Amplitude(h, p.f, 1)); !(math.Abs(d) <= lim) {
			return false
		}
	}
	return true
}

// gridScale returns the largest |desired gain| (1 when all are zero) and
// the largest weight on the grid (measured by buildGrid).
func (e *engine) gridScale() (scale, wmax float64) { return e.gscale, e.gwmax }

// laxCheck reports a specification met to rounding level, where the
// optimum is not defined in double precision: every band's deviation, or
// (when the exchange failed) the levelled deviation in every band, is below
// max(1e-13, n 1e-14) of the largest desired gain.
func (e *engine) laxCheck(dev []float64, conv bool) error {
	scale, wmax := e.gridScale()
	// Rounding in a sum of n taps is about n eps of the largest gain.
	lim := RoundingLevel(e.n) * scale
	tiny := true
	for _, d := range dev {
		tiny = tiny && d <= lim
	}
	// A levelled deviation only bounds the optimum from below, so a tiny
	// one is evidence of a lax specification only when the exchange had a
	// real budget to work with; a run cut short by a small MaxIterations
	// may simply not have found the structure yet.
	if !conv && e.maxIter >= minLaxIter && math.Abs(e.delta)/wmax <= lim {
		tiny = true
	}
	if !tiny {
		return nil
	}
	if !conv {
		return fmt.Errorf("remez: n = %d: the bands are met to rounding level (deviation below %.0e): %w (%w); shorten the filter, narrow the transitions or tighten the bands", e.n, lim, errRounding, ErrNotConverged)
	}
	return fmt.Errorf("remez: n = %d: the bands are met to rounding level (deviation below %.0e): %w; shorten the filter, narrow the transitions or tighten the bands", e.n, lim, errRounding)
}

// initRef chooses the starting reference. Short designs and GridOnly start
// evenly spread, as the 1973 program does. Longer ones first converge
// loosely on a coarse grid of the same length, whose own start is scaled
// from a coarse design of about half the length (reference scaling, Filip
// 2016); coarse iterations cost a fraction of dense ones, so the dense
// exchange starts close to the optimum and needs few iterations.
func (e *engine) initRef() {
	if len(e.warm) > 0 && !e.gridOnly {
		// A neighbouring length's converged reference, scaled, is as good
		// a start as a seed design and costs nothing; seeded, so that a
		// start wrong in structure falls back to the even spread.
		e.seeded = true
		e.scaledRef(e.warm, e.bands, nil, 0)
		return
	}
	if e.gridOnly || e.r+1 <= seedMin {
		e.uniformRef()
		return
	}
	e.seeded = true
	if e.density > coarseDensity {
		c := e.sibling(e.n, coarseDensity)
		c.handOff = true
		if c.buildGrid() == nil {
			c.initRef()
			if _, _, err := c.run(tolCoarse, e.seedIter()); err == nil && len(c.ref) == e.r+1 {
				e.ref = append(e.ref[:0], c.ref...)
				e.local = true
				e.stepGap = c.stepGap
				return
			}
		}
	}
	n2 := e.n / seedRatio
	if n2%2 != e.n%2 {
		n2++
	}
	sub := e.sibling(n2, e.density)
	if sub.buildGrid() != nil {
		e.uniformRef()
		return
	}
	sub.initRef()
	if _, _, err := sub.run(tolSeed, e.seedIter()); err != nil || len(sub.ref) != sub.r+1 {
		e.uniformRef()
		return
	}
	e.scaledRef(sub.ref, sub.bands, sub.seedCnt, sub.seedM)
	e.seedCnt = make([]int, len(e.bands))
	for _, p := range sub.ref {
		e.seedCnt[p.band]++
	}
	e.seedM = len(sub.ref)
}

// seedIter bounds each seeding phase (coarse grid, shorter seed design):
// at most 50 iterations, and never more than Settings.MaxIterations.
func (e *engine) seedIter() int { return min(50, e.maxIter) }

// sibling returns an engine for length n at grid density d with the same
// bands, its grid not yet built.
func (e *engine) sibling(n, d int) *engine {
	s := &engine{ctx: e.ctx, halt: e.halt, n: n, rate: e.rate, density: d, maxIter: e.maxIter, bands: e.bands, type2: e.type2, stepGap: math.Inf(1)}
	if s.type2 {
		s.r = n / 2
	} else {
		s.r = (n + 1) / 2
	}
	return s
}

// tapsCheckEvery is how many of taps' O(r) samples (or of the final
// deviations' O(n) amplitudes) a worker takes between looks at the
// design's context: a few milliseconds of work at the longest lengths.
const tapsCheckEvery = 64

// taps returns the impulse response of the current polynomial: P is
// sampled at Chebyshev extreme points, its cosine coefficients come from a
// DCT-I done with gonum's real FFT on the even extension, and the taps
// follow from the type I or type II relations. It returns the design's
// stop error once its context is done.
func (e *engine) taps() ([]float64, error) {
	r := e.r
	// P has r cosine coefficients (degree r-1).
	a := make([]float64, r)
	l := r - 1
	if l == 0 {
		a[0] = e.bary1(0)
	} else {
		seq := make([]float64, 2*l)
		// r samples of O(r) each: seconds at tens of thousands of taps,
		// so they are spread over the cores (each sample is computed alone,
		// so the taps are the same whatever the number of cores) and the
		// design's context is checked between runs of them.
		chunks.Run(l+1, (l+1)*r, func(lo, hi int) {
			for j := lo; j < hi; j++ {
				if (j-lo)%tapsCheckEvery == 0 && e.stopped() != nil {
					return
				}
				seq[j] = e.bary1(float64(j) / float64(2*l))
			}
		})
		if err := e.stopped(); err != nil {
			return nil, err
		}
		for j := 1; j < l; j++ {
			seq[2*l-j] = seq[j]
		}
		coef := fourier.NewFFT(2*l).Coefficients(nil, seq)
		for k := 0; k <= l; k++ {
			a[k] = real(coef[k]) / float64(l)
		}
		a[0] /= 2
		a[l] /= 2
	}
	h := make([]float64, e.n)
	if !e.type2 {
		m := r - 1 // centre index
		h[m] = a[0]
		for k := 1; k < r; k++ {
			h[m-k] = a[k] / 2
			h[m+k] = a[k] / 2
		}
		return h, nil
	}
	// Type II: A = cos(w/2) sum b_k cos(k w) = sum_m g_m cos((m-1/2) w),
	// m = 1..M, with h[M-m] = h[M-1+m] = g_m/2 and M = r.
	mm := r
	g := func(m int) float64 {
		var v float64
		if m-1 >= 0 && m-1 < r {
			v += a[m-1] / 2
		}
		if m < r {
			v += a[m] / 2
		}
		if m == 1 {
			v += a[0] / 2
		}
		return v
	}
	for m := 1; m <= mm; m++ {
		v := g(m) / 2
		h[mm-m] = v
		h[mm-1+m] = v
	}
	return h, nil
}

// deviations measures, per band, the largest |A(f) - D(f)| and the largest
// |A(f) - D(f)| times the WeightFunc shape (1 when nil) on the response of
// h. Every local maximum of the grid error is first refined by safeguarded
// parabolic search on the interpolant, then evaluated on h itself; band
// edges are always included. It expects evalGrid to have run on the
// current polynomial.
func (e *engine) deviations(h []float64) (dev, wdev []float64) {
	nb := len(e.bands)
	dev = make([]float64, nb)
	wdev = make([]float64, nb)
	slow := make([]bool, nb)
	for b := range nb {
		slow[b] = e.gridOnly || e.bands[b].weightFn != nil
	}
	e.fastDeviations(h, dev, wdev, slow)
	for b := range nb {
		if !slow[b] {
			continue
		}
		bd := &e.bands[b]
		g := e.grid[e.bstart[b]:e.bstart[b+1]]
		// The band's weight at a grid point: the point's own for type I;
		// a type II point's carries cos(pi f), so it is asked again. A
		// weight function can be costly (the cascade rule's limit), so
		// each is asked once a point, and the weights of the frequencies
		// a refinement visits are kept (seen) for measure's shape.
		wt := func(p *point) float64 {
			if e.type2 {
				return bd.wt(p.f)
			}
			return p.w
		}
		var seen []point
		// Signed unweighted error D - A (the weight is positive) off the
		// grid.
		fu := func(f float64) float64 {
			w := bd.wt(f)
			q := e.mkpointDW(f, b, bd.desired(f), w)
			seen = append(seen, point{f: f, w: w})
			return e.errAt(&q) / w
		}
		measure := func(f float64) {
			d := math.Abs(Amplitude(h, f, 1) - bd.desired(f))
			dev[b] = math.Max(dev[b], d)
			shape := 1.0
			if bd.weightFn != nil {
				shape = math.NaN()
				for k := len(seen) - 1; k >= 0; k-- {
					if seen[k].f == f {
						shape = seen[k].w
						break
					}
				}
				if math.IsNaN(shape) {
					shape = bd.weightFn(bd.spec(f))
				}
			}
			wdev[b] = math.Max(wdev[b], d*shape)
		}
		// Signed unweighted errors of the grid points, each computed once
		// as the window i-1, i, i+1 slides.
		var ul, uc, ur float64
		if len(g) > 1 {
			uc, ur = g[0].e/wt(&g[0]), g[1].e/wt(&g[1])
		}
		for i := range g {
			if i == 0 || i == len(g)-1 {
				seen = append(seen[:0], point{f: g[i].f, w: wt(&g[i])})
				measure(g[i].f)
				continue
			}
			ul, uc = uc, ur
			ur = g[i+1].e / wt(&g[i+1])
			s := 1.0
			if uc < 0 {
				s = -1
			}
			if !(s*uc >= s*ul && s*uc >= s*ur) {
				continue
			}
			seen = append(seen[:0], point{f: g[i].f, w: wt(&g[i])})
			sfu := func(f float64) float64 { return s * fu(f) }
			measure(refineMax(sfu, g[i-1].f, g[i].f, g[i+1].f, s*ul, s*uc, s*ur))
		}
		// A type II response is zero at rate/2, off the grid: search the
		// last lobe up to rate/2 on h itself.
		if last := len(g) - 1; e.type2 && b == nb-1 && bd.hi > g[last].f && last >= 1 {
			fa := func(f float64) float64 { return math.Abs(Amplitude(h, f, 1) - bd.desired(f)) }
			measure(goldenMax(fa, g[last-1].f, bd.hi))
		}
	}
	return dev, wdev
}

// fastDeviations measures the bands not marked slow at the points where
// the final error has its maxima: the reference (each point on its lobe's
// top after the last local step or exchange), the candidate extrema of the
// last grid pass (refined unless inside a reference lobe) and the band
// edges. With a constant weight the weighted and unweighted errors peak at
// the same places, so no further search is needed.
func (e *engine) fastDeviations(h []float64, dev, wdev []float64, slow []bool) {
	pts := e.meas[:0]
	for _, p := range e.ref {
		if !slow[p.band] {
			pts = append(pts, p)
		}
	}
	for _, p := range e.cand {
		if !slow[p.band] {
			pts = append(pts, p)
		}
	}
	for b := range e.bands {
		if !slow[b] {
			g := e.grid[e.bstart[b]:e.bstart[b+1]]
			pts = append(pts, g[0], g[len(g)-1])
		}
	}
	e.meas = pts
	vals := grow(e.measV, len(pts))
	e.measV = vals
	chunks.Run(len(pts), len(pts)*len(h)/2, func(lo, hi int) {
		for i := lo; i < hi; i++ {
			if (i-lo)%tapsCheckEvery == 0 && e.stopped() != nil {
				return // the design is stopped: design returns its error
			}
			bd := &e.bands[pts[i].band]
			vals[i] = math.Abs(Amplitude(h, pts[i].f, 1) - bd.desired(pts[i].f))
		}
	})
	for i, p := range pts {
		dev[p.band] = math.Max(dev[p.band], vals[i])
		wdev[p.band] = dev[p.band]
	}
	// A type II response is zero at rate/2, off the grid: search the last
	// lobe up to rate/2 on h itself.
	nb := len(e.bands)
	if bd := &e.bands[nb-1]; e.type2 && !slow[nb-1] {
		g := e.grid[e.bstart[nb-1]:e.bstart[nb]]
		if last := len(g) - 1; bd.hi > g[last].f && last >= 1 {
			fa := func(f float64) float64 { return math.Abs(Amplitude(h, f, 1) - bd.desired(f)) }
			f := goldenMax(fa, g[last-1].f, bd.hi)
			dev[nb-1] = math.Max(dev[nb-1], fa(f))
			wdev[nb-1] = dev[nb-1]
		}
	}
}

// refineMax returns an abscissa of a local maximum of fn in (a, c) near b,
// where fn(b) = fb is at least fa and fc, by safeguarded successive
// parabolic interpolation.
func refineMax(fn func(float64) float64, a, b, c, fa, fb, fc float64) float64 {
	// Near the top a step of 1e-7 of the first bracket changes the value
	// by about 1e-14 of the lobe: stop there.
	stop := 1e-7 * (c - a)
	for range 8 {
		v := vertex(a, b, c, fa, fb, fc)
		if v == b || math.Abs(v-b) <= stop {
			break
		}
		fv := fn(v)
		if fv > fb {
			if v < b {
				c, fc = b, fb
			} else {
				a, fa = b, fb
			}
			b, fb = v, fv
		} else {
			if v < b {
				a, fa = v, fv
			} else {
				c, fc = v, fv
			}
		}
	}
	return b
}

// goldenMaxN is an abscissa of the maximum of fn on [a, b] after at most
// iters golden-section steps (GoldenMax).
func goldenMaxN(fn func(float64) float64, a, b float64, iters int) float64 {
	x, _ := GoldenMax(fn, a, b, iters, 0)
	return x
}

// goldenMax is an abscissa of the maximum of fn on [a, b], assumed
// unimodal there (GoldenMax to a bracket of 1e-15).
func goldenMax(fn func(float64) float64, a, b float64) float64 {
	x, _ := GoldenMax(fn, a, b, 60, 1e-15)
	return x
}
