package remez

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
)

// MinLength returns the shortest filter that meets every band's MaxError,
// measured on the real response with extrema refined locally. Parity, when
// 1 or 2, restricts the search to odd (1) or even (2) lengths; 0 allows both.
// maxTaps bounds the search (0 means 65535).
//
// The designs weight each band by 1/MaxError (times its WeightFunc, when
// given), so that the equiripple optimum balances the bands against their
// own limits; Band.Weight is ignored. The search starts from the largest
// Herrmann-Rabiner-Chan estimate over the transitions between bands, adjacent
// or not, whose gains differ by more than both allow (don't-care gaps
// between bands of equal gain are not transitions), then steps by a safeguarded secant on the log of the
// worst error ratio (the first step by the estimate's own slope) until it
// brackets the answer and closes the bracket; it assumes that within one
// parity a longer filter never does worse. Each design after the first
// starts from the nearest designed length's reference. With parity 0 it finds the shortest odd
// length and then tries the even lengths below it. Even lengths are skipped
// when a band asks for a non-zero gain at rate/2, where they are zero.
//
// The search is bounded: at most 40 designs for each parity, and it stops when eight
// times the estimate has not halved the error. A length whose design is met
// to rounding level counts as too long. When the search cannot finish, the
// error wraps ErrNotConverged.
func MinLength(rate float64, bands []Band, parity, maxTaps int, s Settings) (*Result, error) {
	r, _, err := minLength(context.Background(), rate, bands, parity, maxTaps, s)
	return r, err
}

// MinLengthContext is MinLength stopped by ctx: the context is checked
// before every design of the search and every iteration of each design
// (see DesignContext), and once it is done the search returns no Result
// and an error wrapping ctx.Err().
func MinLengthContext(ctx context.Context, rate float64, bands []Band, parity, maxTaps int, s Settings) (*Result, error) {
	r, _, err := minLength(ctx, rate, bands, parity, maxTaps, s)
	return r, err
}

// minLength is MinLength that also returns its search state (for tests).
func minLength(ctx context.Context, rate float64, bands []Band, parity, maxTaps int, s Settings) (*Result, *lengthSearch, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, searchStopped(err)
	}
	if err := validateSpec(rate, bands, s); err != nil {
		return nil, nil, err
	}
	if parity < 0 || parity > 2 {
		return nil, nil, fmt.Errorf("remez: parity = %d: must be 0 (any), 1 (odd) or 2 (even)", parity)
	}
	if maxTaps == 0 {
		maxTaps = 65535
	}
	if maxTaps < 3 {
		return nil, nil, fmt.Errorf("remez: maxTaps = %d: must be at least 3 (0 means 65535)", maxTaps)
	}
	for i, b := range bands {
		if !(b.MaxError > 0) || math.IsInf(b.MaxError, 0) {
			return nil, nil, fmt.Errorf("remez: band %d MaxError = %v: MinLength needs a positive, finite error limit for every band", i, b.MaxError)
		}
	}
	wb := limitWeighted(bands)
	g, atNyq := nyquistGain(rate, bands)
	evenOK := !atNyq || g == 0
	if parity == 2 && !evenOK {
		return nil, nil, fmt.Errorf("remez: parity = 2 (even lengths) but band %d wants gain %v at rate/2, where an even-length symmetric filter is zero: use parity 0 or 1", len(bands)-1, g)
	}
	// Lengths whose grid would exceed MaxGridPoints cannot be designed:
	// the search stops below them and says so.
	density := s.Density
	if density == 0 {
		density = DefaultDensity
	}
	nb := make([]nband, len(bands))
	for i, b := range bands {
		nb[i] = nband{lo: b.Lo / rate, hi: b.Hi / rate}
	}
	gridCap := false
	if gridPoints(maxTaps, nb, density, s.GridOnly) > MaxGridPoints {
		lo, hi := 2, maxTaps
		for hi-lo > 1 {
			mid := (lo + hi) / 2
			if gridPoints(mid, nb, density, s.GridOnly) <= MaxGridPoints {
				lo = mid
			} else {
				hi = mid
			}
		}
		if lo < 3 {
			return nil, nil, fmt.Errorf("%w: Settings.Density = %d leaves no length within MaxGridPoints = %d: lower the density", ErrGridTooLarge, density, MaxGridPoints)
		}
		maxTaps, gridCap = lo, true
	}
	m := &lengthSearch{ctx: ctx, gridCap: gridCap, rate: rate, bands: bands, wb: wb, s: s, maxTaps: maxTaps, cache: map[int]*Result{}, ratio: map[int]float64{}, lax: map[int]bool{}}
	r, err := m.solve(parity, evenOK)
	return r, m, err
}

// solve searches the shortest length of the given parity (0: either)
// meeting the bands; evenOK says whether an even length can.
func (m *lengthSearch) solve(parity int, evenOK bool) (*Result, error) {
	est := m.estimate()
	switch parity {
	case 1:
		return m.finish(m.search(est, 1))
	case 2:
		return m.finish(m.search(est, 0))
	}
	n, err := m.search(est, 1)
	if err != nil {
		if !evenOK || m.ctxErr() != nil {
			return nil, err
		}
		return m.finish(m.search(est, 0))
	}
	if !evenOK || n-1 < 4 || !m.meets(n-1) {
		return m.finish(n, nil)
	}
	ne, err := m.search(n-1, 0)
	if err != nil && m.ctxErr() == nil && m.cache[n-1] != nil {
		// n-1 taps meet, so the even search failed only below them (its
		// designs ran out): n-1 is the shortest known to meet.
		ne, err = n-1, nil
	}
	return m.finish(ne, err)
}

type lengthSearch struct {
	ctx     context.Context // stops the search and its designs
	gridCap bool            // maxTaps was lowered to keep the grid within MaxGridPoints
	rate    float64
	bands   []Band // the caller's, for MaxError and WeightFunc
	wb      []Band // weighted for the design
	s       Settings
	maxTaps int
	cache   map[int]*Result  // results that meet
	ratio   map[int]float64  // worst measured/allowed error per length
	lax     map[int]bool     // lengths met to rounding level, taps unusable
	designs int              // designs run, bounded by maxDesigns
	refs    map[int]startRef // the reference each length designed ended on
	// perNeper is the taps that Herrmann's estimate adds for each factor
	// e of error at the binding transition (0 when unknown): the search's
	// first step and its guard against a flat secant.
	perNeper float64
	// designFn, when not nil, replaces design (MinHalfBand searches the
	// length of its single-band G with it).
	designFn func(n int) (*Result, []float64, bool)
}

// ErrNoLength is wrapped by the error of a length search in which no
// length up to its limit meets the bands.
var ErrNoLength = errors.New("remez: no length up to the limit meets the bands")

// SearchError is the error of a length search that ended without an
// answer (other than by its context). errors.Is matches the sentinels it
// wraps: ErrNotConverged, ErrRoundingLevel, ErrNoLength, ErrGridTooLarge.
type SearchError struct {
	Fail int // the longest length found to fail (0: none)
	Met  int // the shortest length found to meet, to rounding level only (0: none)
	// Limit is the longest length searched (maxTaps, or less where the
	// grid had to fit MaxGridPoints).
	Limit int
	msg   string
	errs  []error
}

func (e *SearchError) Error() string   { return e.msg }
func (e *SearchError) Unwrap() []error { return e.errs }

func (m *lengthSearch) fail(lo, hi int, msg string, errs ...error) error {
	return &SearchError{Fail: lo, Met: hi, Limit: m.maxTaps, msg: msg, errs: errs}
}

// limitWeighted returns bands weighted as MinLength designs them: each by
// the inverse of its MaxError (times its WeightFunc), so that a weighted
// error of 1 is every band's limit.
func limitWeighted(bands []Band) []Band {
	wb := make([]Band, len(bands))
	for i, b := range bands {
		wb[i] = b
		wb[i].Weight = 1 / b.MaxError
		if wf := b.WeightFunc; wf != nil {
			lim := b.MaxError
			wb[i].WeightFunc = func(f float64) float64 { return wf(f) / lim }
		}
	}
	return wb
}

// breakdownFactor is how far above a shorter failing length's error ratio
// a longer design's must lie to count as a numerical breakdown.
const breakdownFactor = 1e3

// maxDesigns bounds the designs of one parity's search (MinLength with
// parity 0 runs up to two, odd then even). The search needs a
// handful; the bound only stops a search that the error ratios cannot
// guide (designs that do not converge, say) in bounded time.
const maxDesigns = 40

// estimate is the largest Herrmann-Rabiner-Chan length over the
// transitions between bands whose desired gains differ by more than the
// two bands allow (common practice for multiband specifications), or 3
// without any. Every pair of bands counts, not only adjacent ones: a band
// between them that allows the gain of either side (a protected band
// whose limit is loose next to the passband) does not make the transition
// across it free. A gap between two bands that want the same gain (the
// don't-care slivers between alias stopbands) is no transition: the
// response may simply stay on that gain across it, so a 1 Hz gap there
// costs nothing and must not make the estimate thousands of taps long.
func (m *lengthSearch) estimate() int {
	est := 3
	pair := func(i, j int) {
		a, b := &m.bands[i], &m.bands[j]
		tr := b.Lo - a.Hi
		if tr <= 0 || math.Abs(gainAt(a, a.Hi)-gainAt(b, b.Lo)) <= allowedAt(a, a.Hi)+allowedAt(b, b.Lo) {
			return
		}
		d1 := math.Min(allowedAt(a, a.Hi), 0.5)
		d2 := math.Min(allowedAt(b, b.Lo), 0.5)
		if n := HerrmannLength(d1, d2, tr, m.rate); n > est {
			est = n
			// Herrmann's D(dp, ds)/df, taken with every error limit a
			// factor e tighter, says how many taps a factor e of error
			// costs at this transition: the prior slope of the search.
			m.perNeper = (HerrmannD(d1/math.E, d2/math.E) - HerrmannD(d1, d2)) / (tr / m.rate)
		}
	}
	// Two bands that both want gain 0 make no transition, so a band that
	// wants 0 is paired only with the bands that want another gain (the
	// passbands), in the same order: a FIR decimating by R has R/2 alias
	// stopbands, and all their pairs took seconds at R = 2^17.
	var some []int // the bands that want a gain other than 0, ascending
	for i := range m.bands {
		if b := &m.bands[i]; b.Gain != 0 || b.GainFunc != nil {
			some = append(some, i)
		}
	}
	for i := 0; i+1 < len(m.bands); i++ {
		if _, ok := slices.BinarySearch(some, i); ok {
			for j := i + 1; j < len(m.bands); j++ {
				pair(i, j)
			}
			continue
		}
		k, _ := slices.BinarySearch(some, i+1)
		for _, j := range some[k:] {
			pair(i, j)
		}
	}
	return min(est, m.maxTaps)
}

// allowedAt is the unweighted error band b allows at f Hz: MaxError over
// the WeightFunc shape (a compensator's passband allows dp/|H_cic|).
func allowedAt(b *Band, f float64) float64 {
	if b.WeightFunc != nil {
		if w := b.WeightFunc(f); w > 0 && !math.IsInf(w, 0) {
			return b.MaxError / w
		}
	}
	return b.MaxError
}

// gainAt is the desired gain of band b at f Hz.
func gainAt(b *Band, f float64) float64 {
	if b.GainFunc != nil {
		return b.GainFunc(f)
	}
	return b.Gain
}

// meets designs length n (once) and reports whether every band is met on
// the measured response; it records the worst ratio of measured to allowed
// error, which guides the search. A design met to rounding level counts as
// meeting (its length is far beyond the answer) but is kept as an answer
// only if its taps measure within the limits; otherwise its ratio is
// recorded as tiny and the search moves down.
func (m *lengthSearch) meets(n int) bool {
	if _, ok := m.ratio[n]; !ok {
		m.designs++
		r, wdev, lax, floor := m.design(n)
		worst := math.Inf(1)
		switch {
		case r != nil:
			worst = 0
			for b := range m.bands {
				worst = math.Max(worst, m.bandRatio(b, wdev[b]))
			}
		case floor > 1:
			// Stopped on the levelled deviation: a lower bound of the
			// ratio, enough for the verdict and close enough for the
			// secant.
			worst = floor
		}
		if worst <= 1 {
			m.cache[n] = r
		} else if lax {
			m.lax[n] = true
			worst = laxRatio
		}
		m.ratio[n] = worst
	}
	return m.ratio[n] <= 1
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// laxRatio stands for the error ratio of a design met to rounding level.
const laxRatio = 1e-12

// bandRatio is band b's measured error over its limit, from the weighted
// deviation wdev that the design measured: with a WeightFunc the engine's
// weight is WeightFunc/MaxError already (see minLength), so wdev is the
// ratio itself; with a constant weight wdev is the plain deviation.
func (m *lengthSearch) bandRatio(b int, wdev float64) float64 {
	if m.bands[b].WeightFunc != nil {
		return wdev
	}
	return wdev / m.bands[b].MaxError
}

// design designs length n. It returns the result, its weighted deviations
// and whether it was met only to rounding level; or, for a design stopped
// because no filter of this length can meet the bands, no result and the
// levelled deviation that proved it (floor, a lower bound of the error
// ratio; 0 otherwise).
func (m *lengthSearch) design(n int) (res *Result, wdev []float64, lax bool, floor float64) {
	if m.designFn != nil {
		res, wdev, lax = m.designFn(n)
		return res, wdev, lax, 0
	}
	e, err := newEngine(n, m.rate, m.wb, m.s)
	if err != nil {
		return nil, nil, false, 0
	}
	e.ctx = m.ctx
	// The weights are the limits' inverses, so the levelled deviation is
	// an error ratio: once it passes 1 the verdict is known. The margin
	// keeps a deviation levelled at 1 to rounding out of it.
	if floorStop {
		e.failAbove = 1 + failMargin
	}
	if warmStart {
		e.warm = m.refs[m.nearestRef(n)].pts
	}
	res, err = e.design()
	if errors.Is(err, errCannotMeet) {
		// A design stopped by the floor is not converged, but its
		// reference, a few exchanges in, starts the next length far
		// better than a cold seed (a third of a D = 4096 plan's cold
		// starts are such next lengths).
		if len(e.ref) == e.r+1 {
			m.keepRef(n, e.ref, false)
		}
		return nil, nil, false, math.Abs(e.delta)
	}
	if res != nil && res.Converged {
		m.keepRef(n, e.ref, true)
	}
	lax = errors.Is(err, errRounding)
	if res == nil {
		return nil, nil, lax, 0
	}
	// design measured the taps already: the weighted deviations are its.
	return res, e.wdev, lax, 0
}

// floorStop stops designs on their levelled deviation (design); tests
// turn it off to compare.
var floorStop = true

// failMargin is how far (relative) the levelled deviation must pass 1
// before a design stops as failing: far above its rounding, far below
// anything the search's steps resolve.
const failMargin = 1e-6

// warmStart starts each design of a length search from the nearest
// designed length's reference; tests turn it off to compare with the cold
// start.
var warmStart = true

// startRef is a designed length's last reference and whether its design
// converged.
type startRef struct {
	pts       []point
	converged bool
}

// keepRef records the reference a design of n taps ended on.
func (m *lengthSearch) keepRef(n int, ref []point, converged bool) {
	if m.refs == nil {
		m.refs = map[int]startRef{}
	}
	m.refs[n] = startRef{append([]point(nil), ref...), converged}
}

// nearestRef is the designed length nearest to n whose reference can start
// n's design, or 0 for none: on a tie, a converged one, then the shorter.
func (m *lengthSearch) nearestRef(n int) int {
	best := 0
	for k, r := range m.refs {
		if best == 0 || abs(k-n) < abs(best-n) {
			best = k
			continue
		}
		if abs(k-n) > abs(best-n) {
			continue
		}
		if b := m.refs[best]; r.converged != b.converged {
			if r.converged {
				best = k
			}
		} else if k < best {
			best = k
		}
	}
	return best
}

// search returns the shortest length of the given parity (n%2 == odd) that
// meets, starting from n0.
func (m *lengthSearch) search(n0, odd int) (int, error) {
	// A length of this parity with r coefficients shapes at most r bands
	// (Design refuses more): LeastTaps when odd, one more when even, and 3
	// or 4 at least.
	nb := len(m.bands)
	lowest := max(3, LeastTaps(nb))
	if odd == 0 {
		lowest = max(4, LeastTaps(nb)+1)
	}
	top := m.maxTaps
	if top%2 != odd {
		top--
	}
	if top < lowest {
		if lowest > 4 {
			return 0, fmt.Errorf("remez: %d bands need at least %d taps of this parity (one coefficient a band), more than maxTaps = %d: %w", nb, lowest, m.maxTaps, ErrTooManyBands)
		}
		return 0, fmt.Errorf("remez: maxTaps = %d leaves no length of this parity", m.maxTaps)
	}
	n0 = max(lowest, min(n0, top))
	if n0%2 != odd {
		n0++
		if n0 > top {
			n0 -= 2
		}
	}
	// The log of the worst error ratio falls about linearly with the
	// length (Herrmann's D/df law), so a safeguarded secant (regula falsi)
	// on it finds the crossing in a few designs; steps are clamped to the
	// bracket, and to doubling or halving before one exists.
	var lo, hi int // longest failing, shortest meeting (0: none yet)
	// broken is the shortest length whose design broke down (0: none): its
	// error ratio is over breakdownFactor times a shorter failing length's,
	// which no optimum does (a longer filter never does worse), so it is
	// rounding, not the bands. The search stays below it.
	broken := 0
	var pn [2]int
	var pg [2]float64
	np := 0
	eval := func(n int) {
		if m.meets(n) {
			if hi == 0 || n < hi {
				hi = n
			}
		} else if lo > 0 && n > lo && m.ratio[n] > breakdownFactor*m.ratio[lo] {
			if broken == 0 || n < broken {
				broken = n
			}
			return // no bound and no slope
		} else if n > lo {
			lo = n
		}
		if g := math.Log(m.ratio[n]); !m.lax[n] && !math.IsInf(g, 0) && !math.IsNaN(g) {
			pn[0], pg[0] = pn[1], pg[1]
			pn[1], pg[1] = n, g
			np++
		}
	}
	// Ratios already measured at the other parity lie on nearly the same
	// curve: the two nearest to n0 seed the secant.
	var known []int
	for n, r := range m.ratio {
		if g := math.Log(r); n != n0 && !m.lax[n] && !math.IsInf(g, 0) && !math.IsNaN(g) {
			known = append(known, n)
		}
	}
	sort.Slice(known, func(a, b int) bool {
		da, db := abs(known[a]-n0), abs(known[b]-n0)
		return da < db || (da == db && known[a] < known[b])
	})
	for i := min(2, len(known)) - 1; i >= 0; i-- {
		pn[0], pg[0] = pn[1], pg[1]
		pn[1], pg[1] = known[i], math.Log(m.ratio[known[i]])
		np++
	}
	// Each parity's search has its own budget of designs: the even
	// search that follows an odd one (or replaces a failed one) must not
	// start with none left.
	budget := m.designs + maxDesigns
	eval(n0)
	r0 := m.ratio[n0]
	last, same, blind := 0, 0, 0
	wRef, sec := 0, 0 // bracket width to halve, secant steps since
	for steps := 0; m.designs < budget; steps++ {
		if err := m.ctxErr(); err != nil {
			return 0, searchStopped(err)
		}
		if steps > 4*maxDesigns {
			// Steps that land on lengths already designed make no
			// progress; the design budget alone would not end them.
			return 0, m.fail(lo, hi, fmt.Sprintf("%v: remez: MinLength: the length search made no progress between %d and %d taps", ErrNotConverged, lo, hi), ErrNotConverged)
		}
		if hi > 0 && (hi == lowest || (lo > 0 && hi-lo <= 2)) {
			if m.cache[hi] == nil {
				return 0, m.fail(lo, hi, fmt.Sprintf("%v: remez: MinLength: %d taps fail and %d taps are met only to rounding level (no usable taps): relax or tighten the bands", ErrNotConverged, lo, hi), ErrNotConverged, ErrRoundingLevel)
			}
			return hi, nil
		}
		if hi == 0 && lo >= top {
			if m.gridCap {
				return 0, m.fail(lo, 0, fmt.Sprintf("%v: the bands are not met by any length up to %d taps, the longest whose grid at Settings.Density = %d fits in MaxGridPoints = %d: lower the density", ErrGridTooLarge, m.maxTaps, m.s.Density, MaxGridPoints), ErrGridTooLarge, ErrNoLength)
			}
			return 0, m.fail(lo, 0, fmt.Sprintf("remez: the bands are not met by any length up to maxTaps = %d: widen the transitions, relax MaxError or raise maxTaps", m.maxTaps), ErrNoLength)
		}
		// Eight times the estimate without halving the error: the error
		// ratios do not fall with the length, so longer designs will not
		// help (the exchange fails on this specification).
		if hi == 0 && lo >= 8*max(n0, 16) && !(m.ratio[lo] < 0.5*r0) {
			return 0, m.fail(lo, 0, fmt.Sprintf("%v: remez: MinLength: the error does not fall with the length (%.3g of the limit at %d taps, %.3g at %d): check the bands", ErrNotConverged, r0, n0, m.ratio[lo], lo), ErrNotConverged)
		}
		var c float64
		// Without a secant (a single usable ratio: the others failed or
		// were met to rounding level) the step grows fourfold each time, a
		// gallop from 2 % up to the doubling or halving clamp below.
		step := 0.02 * math.Pow(4, float64(blind))
		// The secant's taps per factor e of error. A ratio that rose with
		// the length (a design stopped by the floor records a lower bound,
		// often just above 1, and the next length's can lie far above it)
		// gives no slope: stepping along such a secant went backwards and
		// was clamped to lo+2, two taps a design.
		perNeper := 0.0
		if np >= 2 && pn[0] != pn[1] && pg[0] != pg[1] {
			perNeper = -float64(pn[1]-pn[0]) / (pg[1] - pg[0])
		}
		switch {
		case perNeper > 0:
			if m.perNeper > 0 && !(perNeper < 4*m.perNeper) {
				// A secant through two nearly equal ratios (noise on a
				// slowly falling error) would leap far past the answer;
				// no more than four times Herrmann's slope.
				perNeper = 4 * m.perNeper
			}
			c = float64(pn[1]) + pg[1]*perNeper
			blind = 0
		case np >= 1 && m.perNeper > 0:
			// One usable ratio: Herrmann's slope, aimed a tenth beyond
			// the crossing so that the step usually lands on the side
			// that meets and the next one closes the bracket.
			c = float64(pn[1]) + pg[1]*m.perNeper*1.1
			blind = 0
		case hi == 0:
			c = float64(lo) * (1 + step)
			blind++
		default:
			c = float64(hi) * (1 - math.Min(step, 0.5))
			blind++
		}
		if math.IsNaN(c) {
			c = float64(lo + hi)
		}
		// Before a bracket exists, two or more aimed steps in a row that
		// land on the same side gallop: a ratio recorded by a design
		// stopped on its floor is a lower bound, often just above 1, so a
		// secant through such ratios says the answer is a step or two
		// away however far it is, and the search crept two taps a design
		// until its designs ran out. The forced step grows fourfold each
		// time, from 8 % to the doubling or halving clamp.
		if same >= 1 && (hi == 0 || lo == 0) {
			g := 0.02 * math.Pow(4, float64(same))
			if hi == 0 {
				c = math.Max(c, float64(lo)*(1+g))
			} else {
				c = math.Min(c, float64(hi)*(1-math.Min(g, 0.5)))
			}
		}
		switch {
		case hi == 0:
			c = math.Min(math.Max(c, float64(lo+2)), float64(min(top, 2*lo+2)))
		case lo == 0:
			c = math.Max(math.Min(c, float64(hi-2)), math.Max(float64(lowest), float64(hi/2)))
		default:
			// The error ratio can plateau (multiband stages gain little
			// from some lengths) and then the secant creeps: two steps
			// that do not halve the bracket are followed by a bisection.
			w := hi - lo
			if wRef == 0 || w <= wRef/2 {
				wRef, sec = w, 0
			}
			if same >= 2 || sec >= 2 {
				c = float64(lo+hi) / 2
				wRef, sec = w, 0
			} else {
				sec++
			}
			// And a step at least a sixth of the bracket from either end.
			in := math.Max(2, float64(w)/6)
			c = math.Min(math.Max(c, float64(lo)+in), float64(hi)-in)
		}
		n := int(math.Ceil(c))
		if n%2 != odd {
			n++
		}
		if hi > 0 && n >= hi {
			n -= 2
		}
		if n <= lo {
			n = lo + 2
		}
		n = min(n, top)
		if broken > 0 && n >= broken {
			// Below the breakdown: halfway from the longest failing length.
			n = lo + (broken-lo)/2
			if n%2 != odd {
				n--
			}
			if n <= lo {
				return 0, m.fail(lo, 0, fmt.Sprintf("%v: remez: MinLength: %d taps fail (%.3g of the limit) and the design breaks down numerically at %d (%.3g): relax the bands", ErrNotConverged, lo, m.ratio[lo], broken, m.ratio[broken]), ErrNotConverged)
			}
		}
		if _, done := m.ratio[n]; done {
			// Already designed: close the bracket by one step instead.
			if hi > 0 {
				n = hi - 2
			} else {
				n = lo + 2
			}
		}
		met := m.meets(n)
		side := 1
		if met {
			side = -1
		}
		if side == last {
			same++
		} else {
			same = 0
		}
		last = side
		eval(n)
	}
	if err := m.ctxErr(); err != nil {
		return 0, searchStopped(err)
	}
	if hi > 0 && m.cache[hi] != nil {
		return hi, nil
	}
	return 0, m.fail(lo, hi, fmt.Sprintf("%v: remez: MinLength: length search did not settle within %d designs (last bracket %d..%d taps)", ErrNotConverged, maxDesigns, lo, hi), ErrNotConverged)
}

// ctxErr is the search's context's error (nil without a context).
func (m *lengthSearch) ctxErr() error {
	if m.ctx == nil {
		return nil
	}
	return m.ctx.Err()
}

// searchStopped is the error of a length search stopped by its context.
func searchStopped(err error) error {
	return fmt.Errorf("remez: length search stopped: %w", err)
}

func (m *lengthSearch) finish(n int, err error) (*Result, error) {
	if err != nil {
		return nil, err
	}
	if m.cache[n] == nil {
		return nil, m.fail(0, n, fmt.Sprintf("%v: remez: MinLength: no usable design at %d taps", ErrNotConverged, n), ErrNotConverged)
	}
	return m.cache[n], nil
}
