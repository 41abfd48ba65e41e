package remez

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/internal/chunks"
)

// point is a frequency of the dense grid or of a reference, with what the
// exchange needs there. f is normalised (cycles per sample); x = cos(2 pi f);
// y = sin^2(pi f) and z = cos^2(pi f) give x differences to full relative
// precision near x = 1 and x = -1; d and w are the desired value and the
// weight of the approximation problem (divided and multiplied by
// cos(pi f) for type II); e is the weighted error there.
type point struct {
	f, x, y, z float64
	d, w, e    float64
	band       int
}

// xdiff returns x_a - x_b without the cancellation of subtracting two
// numbers close to 1 (or to -1).
func xdiff(a, b *point) float64 {
	if a.x+b.x >= 0 {
		return 2 * (b.y - a.y)
	}
	return 2 * (a.z - b.z)
}

type nband struct {
	lo, hi   float64 // normalised edges
	gain     float64
	weight   float64
	gainFn   func(float64) float64
	weightFn func(float64) float64
	rate     float64
	// A seed design's band is an affine image of the user's band; specLo
	// and specScale map its frequencies back for GainFunc and WeightFunc.
	specLo, specScale float64
}

// spec maps a normalised frequency of this band to Hz in the user's band.
func (b *nband) spec(f float64) float64 {
	if b.specScale == 0 {
		return f * b.rate
	}
	return (b.specLo + (f-b.lo)*b.specScale) * b.rate
}

func (b *nband) desired(f float64) float64 {
	if b.gainFn != nil {
		return b.gainFn(b.spec(f))
	}
	return b.gain
}

func (b *nband) wt(f float64) float64 {
	if b.weightFn != nil {
		return b.weightFn(b.spec(f))
	}
	return b.weight
}

// engine holds one design's grid, reference and work space.
type engine struct {
	ctx      context.Context // checked every iteration; nil never stops
	halt     *atomic.Bool    // set once ctx is done; polled inside long loops
	n, r     int             // taps, basis functions (reference has r+1 points)
	type2    bool
	rate     float64
	density  int
	maxIter  int
	gridOnly bool
	local    bool // start with grid-free local steps (seeded reference)
	// warm, when not empty, is the converged reference of a design of
	// another length of the same bands: initRef scales it instead of
	// seeding from a coarse grid or a shorter design.
	warm    []point
	handOff bool // stop once a grid pass finds the structure right
	bands   []nband
	grid    []point
	bstart  []int // grid[bstart[b]:bstart[b+1]] is band b

	ref   []point // r+1
	delta float64
	// failAbove, when positive, stops run as soon as the levelled
	// deviation exceeds it (errCannotMeet). The levelled deviation on any
	// reference of r+1 points in the bands is a lower bound of the least
	// weighted error any filter of this length reaches on them (de la
	// Vallee Poussin's theorem; the basis is a Chebyshev system on the
	// bands), hence on the bands: no design of this length meets a limit
	// below it.
	failAbove float64
	// interpolation data of the levelled polynomial on the first r
	// reference points
	xr, mu, c, c2 []float64
	lam           []float64
	mant          []float64
	expo          []int

	cand     []point // candidate extrema
	cidx     []int32 // their grid indices, -1 at band edges
	ry, rz   []float64
	meas     []point
	measV    []float64
	tmp      []point
	trim     trimmer
	best     []point
	prevF    []float64
	emax     int     // scale of lam: true weights are lam * 2^(emax+m-1)
	q        int     // the reference point left out of the interpolation
	localGap float64 // gap of the last local step that converged
	stepGap  float64 // gap of the last local step (+Inf before any)
	// per-band reference counts of the design that seeded this one, and
	// its reference size
	seedCnt []int
	seedM   int
	seeded  bool // the start was scaled or coarse, not evenly spread
	spread  bool // uniformRef has laid a start
	// probe is set for a design asked for by length (DesignContext): a
	// short one that breaks down also tries bandRef (see design).
	probe   bool
	bestGap float64 // smallest relative gap of the last run's grid passes
	// wdev is the deviations' WeightFunc-shaped twin measured with the
	// Result's Deviations (see deviations), for MinLength.
	wdev []float64
	// gscale and gwmax are gridScale's figures, taken as the grid is laid.
	gscale, gwmax float64
}

// bary1 evaluates the levelled polynomial at normalised frequency f by the
// first (modified Lagrange) barycentric formula, which is backward stable
// everywhere (Higham 2004), also in the transition gaps where the second
// formula's denominator cancels. It is O(r) with scaling and is used only
// for the samples that give the taps.
func (e *engine) bary1(f float64) float64 {
	s, c := math.Sincos(math.Pi * f)
	pt := point{f: f, x: (c - s) * (c + s), y: s * s, z: c * c}
	prod, ex := 1.0, 0
	var sum float64
	k := 0
	for i := range e.ref {
		if i == e.q {
			continue
		}
		d := xdiff(&pt, &e.ref[i])
		if d == 0 {
			return e.c[k]
		}
		prod *= d
		if k&7 == 7 {
			fr, x := math.Frexp(prod)
			prod, ex = fr, ex+x
		}
		sum += e.mu[k] * e.c[k] / d
		k++
	}
	return math.Ldexp(prod*sum, ex+e.emax)
}

// mkpoint fills a point at normalised frequency f in band b.
func (e *engine) mkpoint(f float64, b int) point {
	bd := &e.bands[b]
	return e.mkpointDW(f, b, bd.desired(f), bd.wt(f))
}

// mkpointDW is mkpoint with band b's desired gain d and weight w at f
// already known.
func (e *engine) mkpointDW(f float64, b int, d, w float64) point {
	s, c := math.Sincos(math.Pi * f)
	p := point{f: f, x: (c - s) * (c + s), y: s * s, z: c * c, band: b, d: d, w: w}
	if e.type2 {
		p.d /= c
		p.w *= c
	}
	return p
}

// validateSpec checks what does not depend on the length.
func validateSpec(rate float64, bands []Band, s Settings) error {
	if !(rate > 0) || math.IsInf(rate, 0) {
		return fmt.Errorf("remez: rate = %v Hz: must be positive and finite", rate)
	}
	if len(bands) == 0 {
		return errors.New("remez: no bands: give at least one band")
	}
	if err := s.Check(); err != nil {
		return err
	}
	nyq := rate / 2
	for i, b := range bands {
		switch {
		case math.IsNaN(b.Lo) || math.IsNaN(b.Hi) || b.Lo < 0 || b.Hi > nyq:
			return fmt.Errorf("remez: band %d edges [%v, %v] Hz: must lie within [0, %v] (rate/2)", i, b.Lo, b.Hi, nyq)
		case !(b.Lo < b.Hi):
			return fmt.Errorf("remez: band %d edges [%v, %v] Hz: Lo must be below Hi (zero-width or reversed band)", i, b.Lo, b.Hi)
		case i > 0 && b.Lo < bands[i-1].Hi:
			return fmt.Errorf("remez: band %d starts at %v Hz, inside band %d ending at %v Hz: bands must be in increasing order and must not overlap", i, b.Lo, i-1, bands[i-1].Hi)
		case b.GainFunc == nil && (math.IsNaN(b.Gain) || math.IsInf(b.Gain, 0)):
			return fmt.Errorf("remez: band %d Gain = %v: must be finite", i, b.Gain)
		case b.WeightFunc == nil && (math.IsNaN(b.Weight) || math.IsInf(b.Weight, 0) || b.Weight < 0):
			return fmt.Errorf("remez: band %d Weight = %v: must be positive and finite (0 means 1)", i, b.Weight)
		}
	}
	return nil
}

// nyquistGain returns the gain the last band wants at rate/2, and whether
// it reaches rate/2 at all (to within a part in 1e9, as an edge computed
// at rate/2 can miss it): an even-length (type II) filter is zero there.
func nyquistGain(rate float64, bands []Band) (g float64, ok bool) {
	last := &bands[len(bands)-1]
	if !(last.Hi >= rate/2*(1-1e-9)) {
		return 0, false // ends short of rate/2 (but for rounding)
	}
	return gainAt(last, rate/2), true
}

// newEngine validates the specification and builds the grid.
func newEngine(n int, rate float64, bands []Band, s Settings) (*engine, error) {
	if n < 3 {
		return nil, fmt.Errorf("remez: length n = %d: need at least 3 taps", n)
	}
	if n > 2*MaxGridPoints {
		// Even at density 1 the grid would pass MaxGridPoints (and the
		// counts below would overflow).
		return nil, fmt.Errorf("%w: length n = %d: at most %d taps, the longest whose grid fits in MaxGridPoints = %d at density 1", ErrGridTooLarge, n, 2*MaxGridPoints, MaxGridPoints)
	}
	if err := validateSpec(rate, bands, s); err != nil {
		return nil, err
	}
	e := &engine{n: n, rate: rate, density: s.Density, maxIter: s.MaxIterations, gridOnly: s.GridOnly, stepGap: math.Inf(1)}
	if e.density == 0 {
		e.density = DefaultDensity
	}
	if e.maxIter == 0 {
		e.maxIter = 100
	}
	e.type2 = n%2 == 0
	e.r = (n + 1) / 2
	if g, ok := nyquistGain(rate, bands); e.type2 && ok && g != 0 {
		return nil, fmt.Errorf("remez: n = %d taps (even) but band %d wants gain %v at rate/2, where an even-length symmetric filter is zero: use an odd length", n, len(bands)-1, g)
	}
	for _, b := range bands {
		w := b.Weight
		if w == 0 {
			w = 1
		}
		e.bands = append(e.bands, nband{lo: b.Lo / rate, hi: b.Hi / rate, gain: b.Gain, weight: w,
			gainFn: b.GainFunc, weightFn: b.WeightFunc, rate: rate})
	}
	if len(bands) > e.r {
		return nil, fmt.Errorf("remez: %d bands for n = %d taps: a length-%d filter has %d degrees of freedom, so use at most %d bands or a longer filter: %w", len(bands), n, n, e.r, e.r, ErrTooManyBands)
	}
	if err := e.buildGrid(); err != nil {
		return nil, err
	}
	return e, nil
}

// DefaultDensity is Settings.Density's zero value: grid points per
// extremum, as in McClellan, Parks and Rabiner (1973).
const DefaultDensity = 16

// MaxGridPoints bounds a design's dense grid. The grid holds about
// density x n/2 points of 64 bytes, and a design's peak memory, with the
// shorter designs that seed it, its work arrays and the garbage collector's
// headroom, is about 270 bytes a grid point (1.15 GB measured at 2^22
// points), so 2^21 points keep a design near 600 MB. This allows the
// longest design, 65535 taps, at density 63, and lengths up to about 4090
// at the largest density the command line accepts (1024).
const MaxGridPoints = 1 << 21

// ErrTooManyBands is wrapped by the error of a design given more bands
// than its length has degrees of freedom ((n+1)/2 for n taps).
var ErrTooManyBands = errors.New("more bands than degrees of freedom")

// LeastTaps is the shortest length that can shape nb bands, one degree of
// freedom a band: 2 nb - 1 taps (odd), and one more for an even length.
func LeastTaps(nb int) int { return 2*nb - 1 }

// ErrGridTooLarge is wrapped by the error of a design whose dense grid
// would exceed MaxGridPoints.
var ErrGridTooLarge = errors.New("remez: grid too large")

// gridPoints returns the number of points buildGrid lays for n taps at
// density d (an upper bound under GridOnly), computed without laying them.
func gridPoints(n int, bands []nband, d int, gridOnly bool) float64 {
	r := (n + 1) / 2
	if n%2 == 0 {
		r = n / 2
	}
	w := 0.0
	for _, b := range bands {
		w += b.hi - b.lo
	}
	delf := 0.5 / (float64(d) * float64(r))
	if !gridOnly {
		delf = math.Min(0.5, w) / (float64(d) * float64(r))
	}
	total := 0.0
	for _, b := range bands {
		steps := math.Ceil((b.hi - b.lo) / delf)
		if gridOnly {
			steps++ // the 1973 placement may add a point at the edge
		} else {
			steps = math.Max(steps, minBandPoints-1)
		}
		total += steps + 1
	}
	return total
}

// MaxDensity returns the largest grid density (at most 1<<20) at which a
// length-n design on bands keeps its grid within MaxGridPoints, or 0 when
// none does.
func MaxDensity(n int, rate float64, bands []Band) int {
	nb := make([]nband, len(bands))
	for i, b := range bands {
		nb[i] = nband{lo: b.Lo / rate, hi: b.Hi / rate}
	}
	lo, hi := 0, 1<<20
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if gridPoints(n, nb, mid, false) <= MaxGridPoints {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// minBandPoints is the fewest grid points any band gets without GridOnly,
// whatever the density: a band narrower than one grid spacing still holds
// a reference point or two (band edges and a lobe between them), and the
// exchange must see its error's sign change there.
const minBandPoints = 16

// gridCheckEvery is how many grid points buildGrid fills between looks at
// the design's halt flag.
const gridCheckEvery = 1 << 14

// buildGrid lays the dense grid. With GridOnly the spacing is
// 0.5/(density r) and the points are placed exactly as the 1973 program
// placed them (so results can be compared with implementations that follow
// it). Otherwise the r+1 extrema lie in the bands, not across [0, 1/2], so
// the spacing is W/(density r) when the bands cover a total width W below
// 1/2 (narrow bands would otherwise get fewer grid points than extrema: a
// short half-band on a narrow passband had 2 points for 3 unknowns); each
// band is split into equal steps no longer than that, so both of its edges
// are on the grid, and into at least minBandPoints points. It looks at the
// design's halt flag every gridCheckEvery points it fills.
func (e *engine) buildGrid() error {
	delf := 0.5 / float64(e.density*e.r)
	if !e.gridOnly {
		w := 0.0
		for _, b := range e.bands {
			w += b.hi - b.lo
		}
		delf = math.Min(0.5, w) / float64(e.density*e.r)
	}
	pts := gridPoints(e.n, e.bands, e.density, e.gridOnly)
	if pts > MaxGridPoints {
		return fmt.Errorf("%w: n = %d at Settings.Density = %d needs %.0f grid points, more than the %d allowed: lower the density (at most %d at this length) or shorten the filter",
			ErrGridTooLarge, e.n, e.density, pts, MaxGridPoints, MaxDensity(e.n, e.rate, e.userBands()))
	}
	if want := int(pts) + len(e.bands); cap(e.grid) < want {
		// Laid in one allocation: growing it point by point took about a
		// tenth of a length search's CPU time.
		e.grid = make([]point, 0, want)
	}
	e.grid = e.grid[:0]
	e.bstart = append(e.bstart[:0], 0)
	for bi := range e.bands {
		b := &e.bands[bi]
		if e.gridOnly {
			f := b.lo
			for {
				e.grid = append(e.grid, point{f: f})
				f += delf
				if f > b.hi {
					e.grid[len(e.grid)-1].f = b.hi
					break
				}
			}
		} else {
			steps := int(math.Ceil((b.hi - b.lo) / delf * (1 - 1e-12)))
			steps = max(steps, minBandPoints-1)
			for k := 0; k <= steps; k++ {
				f := b.lo + (b.hi-b.lo)*float64(k)/float64(steps)
				if k == steps {
					f = b.hi
				}
				e.grid = append(e.grid, point{f: f})
			}
		}
		// A type II filter is zero at rate/2: the 1973 program drops a last
		// point closer than one spacing to it, and so do we.
		// Without GridOnly only a point at rate/2 itself goes: the next one
		// is at most a spacing away, as everywhere else on the grid.
		if e.type2 && bi == len(e.bands)-1 {
			limit := 0.5 - delf
			if !e.gridOnly {
				limit = 0.5 - 1e-9*delf
			}
			if last := len(e.grid) - 1; e.grid[last].f > limit && last >= e.bstart[bi] {
				e.grid = e.grid[:last]
			}
		}
		if len(e.grid) == e.bstart[bi] {
			return fmt.Errorf("remez: band %d [%v, %v] Hz has no grid point left (an even length forces a zero at rate/2): use an odd length or end the band lower", bi, b.lo*e.rate, b.hi*e.rate)
		}
		e.bstart = append(e.bstart, len(e.grid))
	}
	scale, wmax := 0.0, 0.0
	for bi := range e.bands {
		bd := &e.bands[bi]
		for i := e.bstart[bi]; i < e.bstart[bi+1]; i++ {
			if i%gridCheckEvery == 0 && e.halted() {
				if err := e.stopped(); err != nil {
					return err
				}
			}
			// Each band's gain and weight functions are called once a
			// point (they can be costly: a compensator's CIC droop);
			// gridScale's figures are taken here.
			f := e.grid[i].f
			d, wt := bd.desired(f), bd.wt(f)
			g := e.mkpointDW(f, bi, d, wt)
			if math.IsNaN(g.d) || math.IsInf(g.d, 0) {
				return fmt.Errorf("remez: band %d GainFunc(%v Hz) = %v: the desired gain must be finite", bi, g.f*e.rate, d)
			}
			if !(wt > 0) || math.IsInf(wt, 0) {
				return fmt.Errorf("remez: band %d WeightFunc(%v Hz) = %v: the weight must be positive and finite", bi, g.f*e.rate, wt)
			}
			scale = math.Max(scale, math.Abs(d))
			wmax = math.Max(wmax, wt)
			e.grid[i] = g
		}
	}
	if scale == 0 {
		scale = 1
	}
	e.gscale, e.gwmax = scale, wmax
	if len(e.grid) < e.r+1 {
		return fmt.Errorf("remez: only %d grid points for n = %d taps (%d needed): raise Settings.Density, widen the bands or shorten the filter", len(e.grid), e.n, e.r+1)
	}
	return nil
}

// uniformRef places the initial reference at evenly spaced grid indices,
// as the 1973 program does.
func (e *engine) uniformRef() {
	e.spread = true
	e.ref = e.ref[:0]
	ng := len(e.grid)
	step := float64(ng-1) / float64(e.r)
	for j := 0; j < e.r; j++ {
		e.ref = append(e.ref, e.grid[int(float64(j)*step)])
	}
	e.ref = append(e.ref, e.grid[ng-1])
}

// bandRef places the initial reference with an equal share of the r+1
// points in every band (a band with fewer grid points than its share
// gives the rest to the others), evenly spread over each band's grid
// points, both edges included. It is the last start a design tries: the
// even spread over the grid gives a band points in proportion to its
// grid points, and where many narrow bands each hold many more extrema of
// the optimum than their width's share of the grid (each band's edges are
// extrema, and so are the lobes the weights crowd into it), that start can
// be so far from the optimum that its levelled deviation sits at rounding
// level and the exchange breaks down from it.
func (e *engine) bandRef() {
	nb := len(e.bands)
	// A band that touches the one before it (its first grid point is the
	// other's last) leaves its first point out.
	skip := make([]int, nb)
	room := make([]int, nb)
	for b := range nb {
		lo := e.bstart[b]
		if b > 0 && lo > 0 && e.grid[lo].f <= e.grid[lo-1].f {
			skip[b] = 1
		}
		room[b] = e.bstart[b+1] - lo - skip[b]
	}
	// Water-filling: the largest level L with every band given
	// min(room, L) points in all at most r+1, then one more to the first
	// bands with room to spare until there are r+1 (the grid holds at
	// least r+1 points, buildGrid checks).
	total := func(l int) int {
		t := 0
		for _, rm := range room {
			t += min(rm, l)
		}
		return t
	}
	lo, hi := 0, e.r+1
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if total(mid) <= e.r+1 {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	cnt := make([]int, nb)
	left := e.r + 1
	for b := range nb {
		cnt[b] = min(room[b], lo)
		left -= cnt[b]
	}
	for b := 0; b < nb && left > 0; b++ {
		if cnt[b] < room[b] {
			cnt[b]++
			left--
		}
	}
	e.ref = e.ref[:0]
	for b := range nb {
		first, n := e.bstart[b]+skip[b], room[b]
		switch c := cnt[b]; c {
		case 0:
		case 1:
			e.ref = append(e.ref, e.grid[first+(n-1)/2])
		default:
			for k := range c {
				e.ref = append(e.ref, e.grid[first+int(math.Round(float64(k)*float64(n-1)/float64(c-1)))])
			}
		}
	}
}

// scaledRef sets the initial reference from the converged reference sub of
// a shorter design of the same bands (reference scaling, Filip 2016): each
// band gets its share of points in proportion, placed by interpolating the
// shorter design's points in that band.
func (e *engine) scaledRef(sub []point, sub0 []nband, prev []int, prevM int) {
	m := e.r + 1
	nb := len(e.bands)
	cnt := make([]int, nb)
	for _, p := range sub {
		cnt[p.band]++
	}
	// A band's share of the reference is about alpha m + beta, the
	// constant coming from its edges; with the counts of two shorter
	// designs both are known, otherwise the share is taken as
	// proportional.
	share := func(b int) float64 {
		m2 := float64(len(sub))
		v := float64(cnt[b]) * float64(m) / m2
		if prev != nil && prevM < len(sub) {
			a := float64(cnt[b]-prev[b]) / (m2 - float64(prevM))
			if x := float64(cnt[b]) + a*(float64(m)-m2); x >= 1 || cnt[b] == 0 {
				v = x
			}
		}
		return math.Max(v, 0)
	}
	want := make([]int, nb)
	frac := make([]float64, nb)
	tot := 0
	for b := range nb {
		v := share(b)
		want[b] = int(v)
		frac[b] = v - float64(want[b])
		tot += want[b]
	}
	for tot < m { // hand the remainder to the largest fractions
		bi := 0
		for b := range nb {
			if frac[b] > frac[bi] {
				bi = b
			}
		}
		want[bi]++
		frac[bi] = -1
		tot++
	}
	for tot > m { // and take any excess from the largest bands
		bi := 0
		for b := range nb {
			if want[b] > want[bi] {
				bi = b
			}
		}
		want[bi]--
		tot--
	}
	if !e.placeScaled(sub, sub0, cnt, want) {
		e.uniformRef()
	}
}

// placeScaled lays want[b] points in each band b by interpolating the
// shorter design's points there (cnt[b] of them, in order in sub), mapped
// affinely from the seed's band sub0[b]. It reports false if the points do
// not come out strictly increasing.
func (e *engine) placeScaled(sub []point, sub0 []nband, cnt, want []int) bool {
	nb := len(e.bands)
	e.ref = e.ref[:0]
	pos := 0
	for b := range nb {
		ps := sub[pos : pos+cnt[b]]
		pos += cnt[b]
		k := want[b]
		lo, hi := e.grid[e.bstart[b]].f, e.grid[e.bstart[b+1]-1].f
		slo, shi := sub0[b].lo, sub0[b].hi
		scale := (e.bands[b].hi - e.bands[b].lo) / (shi - slo)
		at := func(i int) float64 { return e.bands[b].lo + (ps[i].f-slo)*scale }
		for j := range k {
			var f float64
			switch {
			case len(ps) >= 2 && k >= 2:
				t := float64(j) * float64(len(ps)-1) / float64(k-1)
				i0 := int(t)
				if i0 >= len(ps)-1 {
					i0 = len(ps) - 2
				}
				u := t - float64(i0)
				f = at(i0) + u*(at(i0+1)-at(i0))
			case len(ps) == 1 && k == 1:
				f = at(0)
			case k == 1:
				f = 0.5 * (lo + hi)
			default:
				f = lo + (hi-lo)*float64(j)/float64(k-1)
			}
			f = math.Min(math.Max(f, lo), hi)
			e.ref = append(e.ref, e.mkpoint(f, b))
		}
	}
	for i := 1; i < len(e.ref); i++ {
		if !(e.ref[i].f > e.ref[i-1].f) {
			return false
		}
	}
	return true
}

// level computes the levelled deviation delta of the current reference and
// the barycentric data of the polynomial that interpolates
// d_i - (-1)^i delta / w_i, following Berrut and Trefethen (2004). The
// weights are products of r differences, kept as mantissa and exponent so
// that they neither underflow nor overflow.
func (e *engine) level() error {
	m := len(e.ref)
	e.lam = grow(e.lam, m)
	e.mant = grow(e.mant, m)
	if cap(e.expo) < m {
		e.expo = make([]int, m)
	}
	e.expo = e.expo[:m]
	e.ry = grow(e.ry, m)
	e.rz = grow(e.rz, m)
	for i := range m {
		e.ry[i], e.rz[i] = e.ref[i].y, e.ref[i].z
	}
	// x falls as the index rises; for point i the differences use y
	// (accurate near x = 1) while x_i + x_j >= 0, z (near x = -1) after.
	chunks.Run(m, m*m, func(lo, hi int) {
		for i := lo; i < hi; i++ {
			if e.halted() {
				return // cancelled: run returns without reading mant
			}
			xi := e.ref[i].x
			p := sort.Search(m, func(j int) bool { return e.ref[j].x+xi < 0 })
			prod, ex := 1.0, 0
			yi, zi := e.ry[i], e.rz[i]
			if i < p {
				prod, ex = prodY(e.ry[:i], yi, prod, ex)
				prod, ex = prodY(e.ry[i+1:p], yi, prod, ex)
				prod, ex = prodZ(e.rz[p:], zi, prod, ex)
			} else {
				prod, ex = prodY(e.ry[:p], yi, prod, ex)
				prod, ex = prodZ(e.rz[p:i], zi, prod, ex)
				prod, ex = prodZ(e.rz[i+1:], zi, prod, ex)
			}
			if prod == 0 || math.IsNaN(prod) || math.IsInf(prod, 0) {
				e.mant[i] = math.NaN()
				continue
			}
			e.mant[i] = 1 / prod
			e.expo[i] = -ex
		}
	})
	emax := math.MinInt
	for i := range m {
		if math.IsNaN(e.mant[i]) {
			return errors.New("remez: reference points coincide (numerical breakdown)")
		}
		emax = max(emax, e.expo[i])
	}
	for i := range m {
		e.lam[i] = math.Ldexp(e.mant[i], e.expo[i]-emax)
	}
	e.emax = emax
	// Interpolate on every point but a middle one, q, and choose delta so
	// that the error at q is levelled too, computed by the same barycentric
	// evaluation that later reads the error: P = P0 - delta Q with P0
	// interpolating d_i and Q interpolating (-1)^i / w_i. This keeps the
	// levelling consistent to rounding where the textbook ratio of
	// alternating sums loses digits (long filters, crowded points near
	// x = +-1).
	q := m / 2
	e.q = q
	pq := &e.ref[q]
	r := m - 1
	e.xr = grow(e.xr, r)
	e.mu = grow(e.mu, r)
	e.c = grow(e.c, r)
	e.c2 = grow(e.c2, r)
	sgn := func(i int) float64 {
		if i%2 == 1 {
			return -1
		}
		return 1
	}
	k := 0
	for i := range m {
		if i == q {
			continue
		}
		p := &e.ref[i]
		e.xr[k] = p.x
		e.mu[k] = e.lam[i] * xdiff(p, pq)
		e.c[k] = p.d
		e.c2[k] = sgn(i) / p.w
		k++
	}
	p0 := bary(pq.x, e.xr, e.mu, e.c)
	q0 := bary(pq.x, e.xr, e.mu, e.c2)
	den := q0 - sgn(q)/pq.w
	if den == 0 || math.IsNaN(p0) || math.IsNaN(q0) {
		return errors.New("remez: levelled deviation undefined (numerical breakdown)")
	}
	e.delta = (p0 - pq.d) / den
	if math.IsNaN(e.delta) || math.IsInf(e.delta, 0) {
		return errors.New("remez: levelled deviation undefined (numerical breakdown)")
	}
	k = 0
	for i := range m {
		if i == q {
			continue
		}
		e.c[k] = e.ref[i].d - sgn(i)*e.delta/e.ref[i].w
		k++
	}
	return nil
}

// prodY multiplies prod (mantissa, exponent ex) by 2 (y_j - yi) over ys.
// Four partial products break the multiply latency chain; each is
// renormalised every 32 factors, which cannot leave the range of normal
// numbers (each factor is at most 4 and only near neighbours are small).
func prodY(ys []float64, yi, prod float64, ex int) (float64, int) {
	p0, p1, p2, p3 := prod, 1.0, 1.0, 1.0
	k := 0
	for ; k+3 < len(ys); k += 4 {
		p0 *= 2 * (ys[k] - yi)
		p1 *= 2 * (ys[k+1] - yi)
		p2 *= 2 * (ys[k+2] - yi)
		p3 *= 2 * (ys[k+3] - yi)
		if k&127 == 124 {
			p0, p1, p2, p3, ex = renorm4(p0, p1, p2, p3, ex)
		}
	}
	for ; k < len(ys); k++ {
		p0 *= 2 * (ys[k] - yi)
	}
	p0, p1, p2, p3, ex = renorm4(p0, p1, p2, p3, ex)
	fr, x := math.Frexp(p0 * p1 * p2 * p3)
	return fr, ex + x
}

// prodZ is prodY for the factors 2 (zi - z_j).
func prodZ(zs []float64, zi, prod float64, ex int) (float64, int) {
	p0, p1, p2, p3 := prod, 1.0, 1.0, 1.0
	k := 0
	for ; k+3 < len(zs); k += 4 {
		p0 *= 2 * (zi - zs[k])
		p1 *= 2 * (zi - zs[k+1])
		p2 *= 2 * (zi - zs[k+2])
		p3 *= 2 * (zi - zs[k+3])
		if k&127 == 124 {
			p0, p1, p2, p3, ex = renorm4(p0, p1, p2, p3, ex)
		}
	}
	for ; k < len(zs); k++ {
		p0 *= 2 * (zi - zs[k])
	}
	p0, p1, p2, p3, ex = renorm4(p0, p1, p2, p3, ex)
	fr, x := math.Frexp(p0 * p1 * p2 * p3)
	return fr, ex + x
}

// renorm4 moves the exponents of four partial products into ex.
func renorm4(p0, p1, p2, p3 float64, ex int) (float64, float64, float64, float64, int) {
	f0, e0 := math.Frexp(p0)
	f1, e1 := math.Frexp(p1)
	f2, e2 := math.Frexp(p2)
	f3, e3 := math.Frexp(p3)
	return f0, f1, f2, f3, ex + e0 + e1 + e2 + e3
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// bary evaluates the interpolating polynomial at x by the second (true)
// barycentric formula. Terms are taken in fours sharing one division (the
// differences are at least ~1e-12 apart, so their products stay normal).
func bary(x float64, xr, mu, c []float64) float64 {
	n := len(xr)
	mu = mu[:n]
	c = c[:n]
	var n0, d0, n1, d1 float64
	k := 0
	if haveAVX2 && n >= 16 {
		k = n &^ 15
		n0, d0 = baryAVX2(x, &xr[0], &mu[0], &c[0], k)
	}
	for ; k+3 < n; k += 4 {
		a := x - xr[k]
		b := x - xr[k+1]
		cc := x - xr[k+2]
		d := x - xr[k+3]
		ab := a * b
		cd := cc * d
		q := 1 / (ab * cd)
		qab := cd * q // 1/(a b)
		qcd := ab * q // 1/(c d)
		t0 := mu[k] * b * qab
		t1 := mu[k+1] * a * qab
		t2 := mu[k+2] * d * qcd
		t3 := mu[k+3] * cc * qcd
		n0 += t0*c[k] + t1*c[k+1]
		d0 += t0 + t1
		n1 += t2*c[k+2] + t3*c[k+3]
		d1 += t2 + t3
	}
	for ; k < n; k++ {
		t := mu[k] / (x - xr[k])
		n0 += t * c[k]
		d0 += t
	}
	p := (n0 + n1) / (d0 + d1)
	if math.IsNaN(p) || math.IsInf(p, 0) {
		for k := range xr {
			if x == xr[k] {
				return c[k]
			}
		}
	}
	return p
}

// errAt is the weighted error at point p of the current polynomial.
func (e *engine) errAt(p *point) float64 {
	return p.w * (p.d - bary(p.x, e.xr, e.mu, e.c))
}

// evalGrid sets e on every grid point. Points are independent, so the
// split over goroutines cannot change any result.
func (e *engine) evalGrid() {
	chunks.Run(len(e.grid), len(e.grid)*len(e.xr), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			if i&63 == 0 && e.halted() {
				return
			}
			e.grid[i].e = e.errAt(&e.grid[i])
		}
	})
}

// vertex returns the abscissa of the parabola's vertex through (a, fa),
// (b, fb), (c, fc), or b when the three are collinear.
func vertex(a, b, c, fa, fb, fc float64) float64 {
	p := (b-a)*(fb-fc) - (b-c)*(fb-fa)
	if p == 0 {
		return b
	}
	v := b - 0.5*((b-a)*(b-a)*(fb-fc)-(b-c)*(b-c)*(fb-fa))/p
	if !(v > a && v < c) {
		return b
	}
	return v
}

// extrema collects into e.cand the signed local extrema of the grid error
// in every band (band edges always included) and returns the largest
// |error| among them. Unless GridOnly each interior one is moved off the
// grid: by one parabolic step through its neighbours, or, when full, by a
// safeguarded parabolic search of its bracket to the true local extremum
// (a parabola is a poor model where the error changes sign between grid
// points, as beside a band edge).
func (e *engine) extrema(full bool) float64 { return e.extremaMode(full, false) }

// extremaMode is extrema; with confirm, the candidates inside the lobe of a
// reference point that a local step has just put on its lobe's top are
// not refined again: their lobe's maximum is delta to within the last
// local gap, which is counted instead.
func (e *engine) extremaMode(full, confirm bool) float64 {
	e.cand = e.cand[:0]
	e.cidx = e.cidx[:0]
	for b := range e.bands {
		g := e.grid[e.bstart[b]:e.bstart[b+1]]
		for i := range g {
			p := &g[i]
			if i > 0 && i < len(g)-1 {
				l, r := g[i-1].e, g[i+1].e
				if !((p.e > 0 && p.e >= l && p.e >= r) || (p.e < 0 && p.e <= l && p.e <= r)) {
					continue
				}
				e.cidx = append(e.cidx, int32(e.bstart[b]+i))
			} else {
				e.cidx = append(e.cidx, -1)
			}
			e.cand = append(e.cand, *p)
		}
	}
	if !e.gridOnly {
		evals := 1
		if full {
			evals = 8
		}
		chunks.Run(len(e.cand), evals*len(e.cand)*len(e.xr), func(lo, hi int) {
			for k := lo; k < hi; k++ {
				gi := e.cidx[k]
				if gi < 0 || e.halted() {
					continue
				}
				if confirm && e.ownedByRef(&e.cand[k]) {
					continue
				}
				a, c := &e.grid[gi-1], &e.grid[gi+1]
				e.cand[k] = e.refine(e.cand[k], e.cand[k].band, a.f, c.f, a.e, c.e, full)
			}
		})
	}
	maxErr := 0.0
	for k := range e.cand {
		if confirm && e.cidx[k] >= 0 && e.ownedByRef(&e.cand[k]) {
			continue
		}
		maxErr = math.Max(maxErr, math.Abs(e.cand[k].e))
	}
	if confirm {
		maxErr = math.Max(maxErr, math.Abs(e.delta)*(1+math.Max(e.localGap, 0)))
	}
	return maxErr
}

// ownedByRef reports whether the grid extremum p lies in the lobe of a
// reference point of the same band and sign: between the midpoints to
// that point's neighbours.
func (e *engine) ownedByRef(p *point) bool {
	m := len(e.ref)
	j := sort.Search(m, func(i int) bool { return e.ref[i].f >= p.f })
	for _, i := range [2]int{j - 1, j} {
		if i < 0 || i >= m || e.ref[i].band != p.band {
			continue
		}
		s := e.delta
		if i%2 == 1 {
			s = -s
		}
		if s*p.e <= 0 {
			continue
		}
		lo, hi := e.bands[p.band].lo, e.bands[p.band].hi
		if i > 0 && e.ref[i-1].band == p.band {
			lo = 0.5 * (e.ref[i-1].f + e.ref[i].f)
		}
		if i+1 < m && e.ref[i+1].band == p.band {
			hi = 0.5 * (e.ref[i].f + e.ref[i+1].f)
		}
		if p.f >= lo && p.f <= hi {
			return true
		}
	}
	return false
}

// refine moves the grid extremum p, bracketed by neighbours at a and c
// with errors ea and ec, towards the local extremum of the error.
func (e *engine) refine(p point, b int, a, c, ea, ec float64, full bool) point {
	s := 1.0
	if p.e < 0 {
		s = -1
	}
	if !full {
		v := vertex(a, p.f, c, ea, p.e, ec)
		if v != p.f {
			q := e.mkpoint(v, b)
			q.e = e.errAt(&q)
			if s*q.e > s*p.e {
				return q
			}
		}
		return p
	}
	fn := func(f float64) float64 {
		q := e.mkpoint(f, b)
		return s * e.errAt(&q)
	}
	v := refineMax(fn, a, p.f, c, s*ea, s*p.e, s*ec)
	if v == p.f {
		return p
	}
	q := e.mkpoint(v, b)
	q.e = e.errAt(&q)
	if s*q.e > s*p.e {
		return q
	}
	return p
}

// exchange builds the next reference from the candidates and the current
// reference: merged in frequency order, reduced to one point (the largest)
// per run of equal sign, then trimmed to r+1 points keeping alternation.
func (e *engine) exchange() error {
	m := e.r + 1
	// Current reference errors are +-delta by construction.
	for i := range e.ref {
		if i%2 == 0 {
			e.ref[i].e = e.delta
		} else {
			e.ref[i].e = -e.delta
		}
	}
	e.tmp = e.tmp[:0]
	i, j := 0, 0
	for i < len(e.cand) || j < len(e.ref) {
		var p point
		if j >= len(e.ref) || (i < len(e.cand) && e.cand[i].f <= e.ref[j].f) {
			p = e.cand[i]
			i++
		} else {
			p = e.ref[j]
			j++
		}
		if p.e == 0 {
			continue
		}
		if k := len(e.tmp) - 1; k >= 0 && (e.tmp[k].e > 0) == (p.e > 0) {
			if math.Abs(p.e) > math.Abs(e.tmp[k].e) {
				e.tmp[k] = p
			}
			continue
		}
		e.tmp = append(e.tmp, p)
	}
	s := e.trim.do(e.tmp, m)
	if len(s) < m {
		return fmt.Errorf("remez: only %d alternating extrema for %d reference points (numerical breakdown)", len(s), m)
	}
	e.ref = append(e.ref[:0], s...)
	return nil
}

// localStep replaces every reference point by the extremum of the current
// error in its own lobe, bracketed by the midpoints to its neighbours (or
// the band edges), and returns the relative gap of the new points over
// delta. It reports false, leaving the reference alone, when a bracket
// does not hold an extremum of the expected sign (the structure has to
// change: only the grid search can do that).
func (e *engine) localStep() (float64, bool) {
	m := len(e.ref)
	e.tmp = append(e.tmp[:0], e.ref...)
	ad := math.Abs(e.delta)
	bad := atomic.Bool{}
	chunks.Run(m, 6*m*len(e.xr), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			if e.halted() {
				bad.Store(true)
				return
			}
			p := e.ref[i]
			bd := &e.bands[p.band]
			s := 1.0
			if i%2 == 1 {
				s = -1
			}
			if e.delta < 0 {
				s = -s
			}
			a, c := bd.lo, bd.hi
			if i > 0 && e.ref[i-1].band == p.band {
				a = 0.5 * (e.ref[i-1].f + p.f)
			}
			if i+1 < m && e.ref[i+1].band == p.band {
				c = 0.5 * (p.f + e.ref[i+1].f)
			}
			fn := func(f float64) float64 {
				q := e.mkpoint(f, p.band)
				return s * e.errAt(&q)
			}
			var v float64
			// A sixteenth of a lobe, an eighth of that once the points
			// have almost stopped moving: the parabola's top is then
			// accurate to far below the convergence tolerance.
			h := 0.5 / float64(16*e.r)
			if e.stepGap < 1e-2 {
				h /= 8
			}
			switch {
			case p.f <= a || p.f >= c:
				v = goldenMaxN(fn, a, c, 30)
			default:
				// A parabola models the lobe's top well over one grid
				// spacing either side; the whole lobe is the fallback.
				l, r := math.Max(a, p.f-h), math.Min(c, p.f+h)
				fl, fr := fn(l), fn(r)
				if fl <= ad && fr <= ad {
					v = refineMax(fn, l, p.f, r, fl, ad, fr)
					break
				}
				// The lobe's top is farther: search the whole lobe. A
				// band edge at its end may hold the maximum (the point
				// then moves onto the edge); a midpoint may not.
				fa, fc := fn(a), fn(c)
				aEdge, cEdge := a == bd.lo, c == bd.hi
				if (fa > ad && !aEdge) || (fc > ad && !cEdge) {
					bad.Store(true)
					continue
				}
				switch {
				case fa > ad && fa >= fc:
					v = goldenMaxN(fn, a, p.f, 30)
				case fc > ad:
					v = goldenMaxN(fn, p.f, c, 30)
				default:
					v = refineMax(fn, a, p.f, c, fa, ad, fc)
				}
			}
			q := e.mkpoint(v, p.band)
			q.e = e.errAt(&q)
			if s*q.e < ad {
				q = p
				q.e = s * ad
			}
			e.tmp[i] = q
		}
	})
	if bad.Load() {
		return math.Inf(1), false
	}
	maxErr := 0.0
	for i := 1; i < m; i++ {
		if !(e.tmp[i].f > e.tmp[i-1].f) {
			return math.Inf(1), false
		}
	}
	for i := range m {
		maxErr = math.Max(maxErr, math.Abs(e.tmp[i].e))
	}
	e.ref, e.tmp = e.tmp, e.ref
	e.stepGap = (maxErr - ad) / ad
	return e.stepGap, true
}

// userBands returns the bands' edges in Hz (for MaxDensity).
func (e *engine) userBands() []Band {
	out := make([]Band, len(e.bands))
	for i, b := range e.bands {
		out[i] = Band{Lo: b.lo * e.rate, Hi: b.hi * e.rate}
	}
	return out
}

// halted reports, cheaply enough for inner loops, that the design's context
// is done; the loops then leave their work unfinished and run returns.
func (e *engine) halted() bool { return e.halt != nil && e.halt.Load() }

// stopped returns a non-nil error wrapping the context's error once the
// design's context is done.
func (e *engine) stopped() error {
	if e.ctx == nil {
		return nil
	}
	if err := e.ctx.Err(); err != nil {
		return &stopError{n: e.n, err: err}
	}
	return nil
}

// stopError is the error of a design stopped by its context.
type stopError struct {
	n   int
	err error
}

func (s *stopError) Error() string {
	return fmt.Sprintf("remez: n = %d: design stopped: %v", s.n, s.err)
}

func (s *stopError) Unwrap() error { return s.err }

// run iterates the exchange from the current reference until the largest
// error exceeds the levelled deviation by at most tol (relative). It
// returns the iteration count and whether it converged. On failure the
// engine holds the best reference seen, levelled.
func (e *engine) run(tol float64, maxIter int) (int, bool, error) {
	bestGap := math.Inf(1)
	var err error
	it := 0
	conv := false
	full := false
	// A reference with the right structure (seeded from a converged coarse
	// design, or repaired by a grid iteration) takes grid-free local steps:
	// each point moves to its lobe's extremum in a few evaluations instead
	// of Density per point. Convergence is always confirmed on the whole
	// grid, and a step that finds the structure wrong hands over to it.
	useLocal := e.local && !e.gridOnly
	confirm := false
	// Local steps that keep delta fixed to rounding without closing the
	// gap are stalled on noise in the error they read (long filters, deep
	// stopbands): after stallSteps of them the grid exchange, with fully
	// refined extrema, finishes the design alone.
	noLocal, stall, prevDelta := false, 0, math.NaN()
	for it < maxIter {
		if cerr := e.stopped(); cerr != nil {
			// Cancelled: no clean-up pass, the caller returns at once.
			return it, false, cerr
		}
		it++
		if err = e.level(); err != nil {
			if cerr := e.stopped(); cerr != nil {
				return it, false, cerr
			}
			break
		}
		if e.failAbove > 0 && math.Abs(e.delta) > e.failAbove {
			return it, false, errCannotMeet
		}
		if useLocal {
			gap, ok := e.localStep()
			if cerr := e.stopped(); cerr != nil {
				return it, false, cerr
			}
			if ok && gap > tol && math.Abs(e.delta-prevDelta) <= 1e-9*math.Abs(e.delta) {
				stall++
			} else {
				stall = 0
			}
			prevDelta = e.delta
			if stall >= stallSteps {
				noLocal, full, ok = true, true, false
			}
			if ok {
				if gap <= tol {
					useLocal = false // confirm on the grid next
					confirm = true
					e.localGap = gap
				}
				continue
			}
			useLocal = false // the levelled reference goes to the grid now
		}
		e.evalGrid()
		if cerr := e.stopped(); cerr != nil {
			return it, false, cerr
		}
		ad := math.Abs(e.delta)
		var maxErr float64
		if confirm {
			confirm = false
			maxErr = e.extremaMode(true, true)
			if ad > 0 && (maxErr-ad)/ad <= tol {
				conv = true
				break
			}
			full = true
		}
		maxErr = e.extrema(full)
		if cerr := e.stopped(); cerr != nil {
			return it, false, cerr
		}
		gap := math.Inf(1)
		if ad > 0 {
			gap = (maxErr - ad) / ad
		}
		// Confirm an apparent convergence with fully refined extrema;
		// from then on every iteration refines fully.
		if gap <= tol && !full && !e.gridOnly && tol < 1e-4 {
			full = true
			maxErr = e.extrema(true)
			gap = (maxErr - ad) / ad
		}
		if gap < bestGap {
			bestGap = gap
			e.best = append(e.best[:0], e.ref...)
		}
		if gap <= tol {
			conv = true
			break
		}
		if e.handOff && gap < 0.5 {
			// The structure is right: the dense stage's local steps take
			// it from here.
			conv = true
			break
		}
		useLocal = !e.gridOnly && !noLocal && gap < 0.5
		e.prevF = e.prevF[:0]
		for i := range e.ref {
			e.prevF = append(e.prevF, e.ref[i].f)
		}
		if err = e.exchange(); err != nil {
			break
		}
		// A reference that maps to itself is the exchange's fixed point
		// (the 1973 program's stopping rule): only rounding separates the
		// largest error from delta.
		same := len(e.prevF) == len(e.ref)
		for i := 0; same && i < len(e.ref); i++ {
			same = e.ref[i].f == e.prevF[i]
		}
		if same {
			conv = gap <= tolFixed
			break
		}
	}
	if cerr := e.stopped(); cerr != nil {
		// A pass cut short may have looked converged: discard it.
		return it, false, cerr
	}
	e.bestGap = bestGap
	if !conv && len(e.best) > 0 {
		e.ref = append(e.ref[:0], e.best...)
		if lerr := e.level(); lerr != nil && err == nil {
			err = lerr
		}
		e.evalGrid()
		e.extrema(true)
	}
	return it, conv, err
}
