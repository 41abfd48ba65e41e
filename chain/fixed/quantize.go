package fixed

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// Coefficients is a set of filter taps in two's-complement fixed point.
// The real value of tap k is Ints[k] * 2^-Frac. Every Ints[k] lies in
// [-(2^(Bits-1)-1), 2^(Bits-1)-1]: the most negative code is left unused so
// that negating a coefficient can never overflow.
type Coefficients struct {
	Bits int     // word width in bits, sign included
	Frac int     // fractional bits; may exceed Bits-1 for small taps, or be negative for taps of 2^(Bits-1) or more
	Ints []int64 // the full impulse response, zeros included

	// Adjusted counts the taps that the local search moved off plain
	// rounding, both members of a symmetric pair counted. Zero means plain
	// rounding.
	Adjusted int
}

// Float returns the real values of the coefficients.
func (c Coefficients) Float() []float64 {
	out := make([]float64, len(c.Ints))
	s := math.Ldexp(1, -c.Frac)
	for k, v := range c.Ints {
		out[k] = float64(v) * s
	}
	return out
}

// AbsSum returns the sum of |Ints[k]|, the worst-case gain in integer units.
func (c Coefficients) AbsSum() int64 {
	var s int64
	for _, v := range c.Ints {
		if v < 0 {
			s -= v
		} else {
			s += v
		}
	}
	return s
}

// MaxBits is the widest coefficient word the package handles, so that every
// product and accumulator of the data path fits an int64.
const MaxBits = 40

// fracFor returns the largest Frac at which round(maxAbs*2^Frac) still fits
// bits-bit two's complement without its most negative code.
func fracFor(maxAbs float64, bits int) int {
	if maxAbs == 0 || math.IsNaN(maxAbs) || math.IsInf(maxAbs, 0) {
		return bits - 1
	}
	_, e := math.Frexp(maxAbs) // maxAbs in [2^(e-1), 2^e)
	f := bits - 1 - e
	lim := math.Ldexp(1, bits-1) - 1
	for math.Round(math.Ldexp(maxAbs, f)) > lim {
		f--
	}
	return f
}

// Quantize rounds taps to bits-bit coefficients, each to the nearest code
// (halves away from zero, so a symmetric filter stays symmetric). The scale
// is the power of two 2^Frac that puts the largest |tap| in the top code range:
// Frac = Bits-1 (format Q1.(Bits-1)) for taps in [1/2, 1), more fractional
// bits for smaller taps, and fewer (integer headroom) when max|tap| >= 1.
// A half-band's centre of exactly 1/2 becomes 2^(Frac-1), a power of two,
// and its zero taps stay zero. It panics if bits is outside [2, MaxBits] or
// a tap is not a finite number.
func Quantize(taps []float64, bits int) Coefficients {
	if bits < 2 || bits > MaxBits {
		panic(fmt.Sprintf("fixed: Quantize with %d bits, outside [2, %d]", bits, MaxBits))
	}
	if !finite(taps) {
		panic("fixed: Quantize of taps that are not all finite numbers")
	}
	maxAbs := 0.0
	for _, t := range taps {
		maxAbs = math.Max(maxAbs, math.Abs(t))
	}
	f := fracFor(maxAbs, bits)
	c := Coefficients{Bits: bits, Frac: f, Ints: make([]int64, len(taps))}
	for k, t := range taps {
		c.Ints[k] = int64(math.Round(math.Ldexp(t, f)))
	}
	return c
}

func maxAbsInt(v []int64) int64 {
	var m int64
	for _, x := range v {
		m = max(m, x, -x)
	}
	return m
}

// IsHalfBand reports whether taps look like a half-band filter: odd length
// 4K-1, centre 1/2 and every other tap (even offsets from the centre) zero,
// within tol (zero means 1e-9).
func IsHalfBand(taps []float64, tol float64) bool {
	if tol == 0 {
		tol = 1e-9
	}
	n := len(taps)
	if n < 3 || n%4 != 3 {
		return false
	}
	c := n / 2
	if math.Abs(taps[c]-0.5) > tol {
		return false
	}
	for k := 2; k <= c; k += 2 {
		if math.Abs(taps[c-k]) > tol || math.Abs(taps[c+k]) > tol {
			return false
		}
	}
	return true
}

// QuantizeHalfBand is Quantize for a half-band filter: the zero taps are set
// to exactly zero and the centre to exactly 2^(Frac-1), whatever tiny
// floating-point residue the design left. It returns an error when taps are
// not a half-band (see IsHalfBand with tolerance 1e-6).
func QuantizeHalfBand(taps []float64, bits int) (Coefficients, error) {
	if !IsHalfBand(taps, 1e-6) {
		return Coefficients{}, fmt.Errorf("fixed: taps of length %d are not a half-band (length 4K-1, centre 1/2, every other tap zero)", len(taps))
	}
	c := Quantize(taps, bits)
	if c.Frac < 1 {
		return Coefficients{}, fmt.Errorf("fixed: a %d-bit half-band with taps up to %g cannot hold its centre 1/2 exactly", bits, math.Ldexp(float64(maxAbsInt(c.Ints)), -c.Frac))
	}
	mid := len(taps) / 2
	for k := 2; k <= mid; k += 2 {
		c.Ints[mid-k], c.Ints[mid+k] = 0, 0
	}
	c.Ints[mid] = int64(1) << (c.Frac - 1)
	return c, nil
}

// Amplitude returns the zero-phase amplitude A(f) of a symmetric filter h at
// f Hz for sample rate rate: H(f) = exp(-j pi f (n-1)/rate) A(f), |H| = |A|.
// It is remez.Amplitude, the one evaluation of a symmetric filter's
// amplitude in the module.
func Amplitude(h []float64, f, rate float64) float64 { return remez.Amplitude(h, f, rate) }

// amplitudeDirect is Amplitude by one cosine per tap pair, for tests.
func amplitudeDirect(h []float64, f, rate float64) float64 {
	n := len(h)
	w := 2 * math.Pi * f / rate
	c := float64(n-1) / 2
	var a float64
	for k := 0; k < n/2; k++ {
		a += (h[k] + h[n-1-k]) * math.Cos(w*(float64(k)-c))
	}
	if n%2 == 1 {
		a += h[n/2]
	}
	return a
}

func symmetric(h []float64) bool {
	n := len(h)
	for k := 0; k < n/2; k++ {
		if h[k] != h[n-1-k] {
			return false
		}
	}
	return true
}

// bandErr is the weighted error of band b at f for amplitude a.
func bandErr(b *remez.Band, f, a float64) float64 {
	d, w := bandTarget(b, f)
	return math.Abs(math.Abs(a)-d) * w
}

// bandTarget is band b's desired gain and weight at f.
func bandTarget(b *remez.Band, f float64) (gain, weight float64) {
	gain, weight = b.Gain, 1.0
	if b.GainFunc != nil {
		gain = b.GainFunc(f)
	}
	if b.WeightFunc != nil {
		weight = b.WeightFunc(f)
	}
	return gain, weight
}

// Deviations returns, per band, the largest weighted error
// | |H(f)| - D(f) | * w(f) of the filter h, with w = WeightFunc (1 when nil,
// as for remez.Band.MaxError), measured on a dense grid with every local
// maximum refined by golden-section search. density is the number of grid
// points per expected extremum; zero means 16. A band of constant gain and
// unit weight of a filter of boundMinTaps taps or more skips the peaks that
// rigorous bounds show cannot be the largest (deviationBounded), with the
// same result bit for bit; a long filter's result is remembered
// (devCache). |H| is the zero-phase amplitude's magnitude for a symmetric
// filter (Amplitude), else remez.Magnitude's.
//
// Deviations panics, with checkMeasure's message, on a rate that is not
// positive and finite, a band whose edges do not satisfy
// 0 <= Lo <= Hi <= rate/2, or a negative density: DeviationsContext
// returns the same as an error.
func Deviations(h []float64, rate float64, bands []remez.Band, density int) []float64 {
	if err := checkMeasure(rate, bands, density); err != nil {
		panic(err.Error())
	}
	return deviationsStop(nil, nil, h, rate, bands, density)
}

// checkMeasure is the rule for what Deviations can measure: a positive,
// finite rate, bands within [0, rate/2] with Lo <= Hi (touching,
// overlapping and single-frequency bands are measured as given, and so is
// an upper edge past rate/2 by rounding, as a band computed at rate/2 can
// be), and a density of at least 0.
func checkMeasure(rate float64, bands []remez.Band, density int) error {
	if !(rate > 0) || math.IsInf(rate, 0) {
		return fmt.Errorf("fixed: rate = %v Hz: must be positive and finite", rate)
	}
	if density < 0 {
		return fmt.Errorf("fixed: density = %d: must be at least 1 (0 means 16)", density)
	}
	for i, b := range bands {
		if !(b.Lo >= 0 && b.Lo <= b.Hi && b.Hi <= rate/2*(1+1e-9)) {
			return fmt.Errorf("fixed: band %d edges [%v, %v] Hz: must satisfy 0 <= Lo <= Hi <= %v (rate/2)", i, b.Lo, b.Hi, rate/2)
		}
	}
	return nil
}

// DeviationsContext is Deviations stopped by ctx: the response is
// evaluated a batch of points at a time (a few milliseconds for a filter
// of tens of thousands of taps), and once ctx is done it returns an error
// wrapping ctx.Err() and no deviations (nothing is remembered).
func DeviationsContext(ctx context.Context, h []float64, rate float64, bands []remez.Band, density int) ([]float64, error) {
	if err := checkMeasure(rate, bands, density); err != nil {
		return nil, err
	}
	if ctx == nil || ctx.Done() == nil {
		return Deviations(h, rate, bands, density), nil
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("fixed: measurement stopped: %w", err)
	}
	stop, release := stopFlag(ctx)
	defer release()
	dev := deviationsStop(stop, ctx.Done(), h, rate, bands, density)
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("fixed: measurement stopped: %w", err)
	}
	return dev, nil
}

// stopFlag returns a flag set once ctx is done, for loops that look at it
// every few milliseconds (a context's Err takes a lock), and the function
// that lets go of ctx; a nil flag and a no-op for a context that is
// never done (nil, or Background).
func stopFlag(ctx context.Context) (*atomic.Bool, func() bool) {
	if ctx == nil || ctx.Done() == nil {
		return nil, func() bool { return false }
	}
	stop := new(atomic.Bool)
	return stop, context.AfterFunc(ctx, func() { stop.Store(true) })
}

// deviationsStop is Deviations, abandoned (its figures meaningless, and
// not remembered) once stop, when not nil, is set; done is the channel
// that sets it (nil with a nil stop), on which a wait for another
// caller's measurement of the same filter gives up.
func deviationsStop(stop *atomic.Bool, done <-chan struct{}, h []float64, rate float64, bands []remez.Band, density int) []float64 {
	if density <= 0 {
		density = 16
	}
	if len(h) < boundMinTaps {
		return deviations(h, rate, bands, density, false, stop)
	}
	key, ok := bandsKey([]float64{rate, float64(density)}, bands)
	if !ok {
		return deviations(h, rate, bands, density, true, stop)
	}
	v := devCache.do(done, h, key, func() (any, bool) {
		d := deviations(h, rate, bands, density, true, stop)
		return d, stop == nil || !stop.Load()
	})
	return slices.Clone(v.([]float64))
}

// deviations is Deviations unremembered, density > 0. bounded lets a band
// of constant gain and unit weight of a long filter be measured by
// deviationBounded, which gives the same bits as refining every peak.
// Once stop (when not nil) is set, every evaluation left is skipped.
func deviations(h []float64, rate float64, bands []remez.Band, density int, bounded bool, stop *atomic.Bool) []float64 {
	r := newResponse(h, rate)
	r.stop = stop
	out := make([]float64, len(bands))
	for i := range bands {
		if r.stopped() {
			break // abandoned: the figures are not used
		}
		b := &bands[i]
		fs := bandGrid(b, len(h), rate, density)
		if bounded && r.boundable(b) {
			out[i] = deviationBounded(b, fs, r.bounds(), r.each, math.Inf(1), r.stopped)
			continue
		}
		es := make([]float64, len(fs))
		r.each(fs, es)
		for j, f := range fs {
			es[j] = bandErr(b, f, es[j])
		}
		m := 0.0
		for j := range fs {
			if r.stopped() {
				break
			}
			if (j > 0 && es[j] < es[j-1]) || (j+1 < len(fs) && es[j] < es[j+1]) {
				continue
			}
			m = math.Max(m, es[j])
			lo, hi := fs[max(j-1, 0)], fs[min(j+1, len(fs)-1)]
			if hi > lo {
				m = math.Max(m, goldenMax(func(f float64) float64 { return bandErr(b, f, r.eval(f)) }, lo, hi))
			}
		}
		out[i] = m
	}
	return out
}

// bandGrid returns the evaluation grid of one band, edges included.
func bandGrid(b *remez.Band, n int, rate float64, density int) []float64 {
	ext := float64(n) * ((b.Hi - b.Lo) / rate) // n (Hi-Lo) may overflow near MaxFloat64
	pts := int(math.Ceil(ext*float64(density))) + 9
	fs := make([]float64, pts)
	for j := range fs {
		fs[j] = b.Lo + (b.Hi-b.Lo)*float64(j)/float64(pts-1)
	}
	return fs
}

// goldenMax returns the largest value of g found by golden-section search
// on [lo, hi] (remez.GoldenMax).
func goldenMax(g func(float64) float64, lo, hi float64) float64 {
	_, v := remez.GoldenMax(g, lo, hi, goldenIters, goldenTol(lo, hi))
	return v
}

// goldenIters and goldenTol are the steps and the bracket width at which
// the refinement of a peak stops.
const goldenIters = 40

func goldenTol(lo, hi float64) float64 { return 1e-12 * (hi - lo + 1) }

// Meets reports whether every band's deviation is at most its MaxError.
func Meets(dev []float64, bands []remez.Band) bool {
	for i := range bands {
		if dev[i] > bands[i].MaxError {
			return false
		}
	}
	return true
}

// QuantSettings tunes MinCoefBits. The zero value is the documented default.
type QuantSettings struct {
	// MinBits and MaxBits bound the widths tried. Zero means 2 and MaxBits
	// (40), the widest words.coefficients takes.
	MinBits, MaxBits int
	// Budget is the number of trial moves the local search may make at each
	// width before a bit is added. Zero means 64; negative disables the search.
	Budget int
	// HalfBand keeps the zero taps zero and the centre a power of two
	// (QuantizeHalfBand); the search then moves only the non-zero side taps.
	HalfBand bool
	// Density is the grid density of the measurement; zero means 16.
	Density int

	// ctx, set by PlanChainContext and EvaluateContext, stops the width
	// search between trial moves and widths; nil never stops.
	ctx context.Context
	// from, when above zero, starts MinCoefBits' search at that width
	// instead of MinBits (narrowestWidth): set for a fractional stage's
	// long prototype, whose every width is dear to try.
	from int
	// cos, set by MinCoefBits, keeps the grid cosines of the taps its
	// widths' searches move (nil: each search computes its own).
	cos *cosTable
}

// cosTable holds, for one grid (the same taps' length, rate and bands at
// every width MinCoefBits tries), each tap k's cosines cos(2 pi f (k - c)
// / rate) on the grid, c the centre, as search.move adds them: the same
// values it would compute, once. It holds at most maxCosTable values, and
// all the tables alive at once at most maxCosHeld (many chains' word
// lengths are planned at once); taps beyond that are computed at each
// move, which gives the same values, so what is held changes only the
// time.
type cosTable struct {
	n    int       // taps
	grid []float64 // the grid the rows are for (nil: none yet)
	rows [][]float64
	used int  // values held
	done bool // released: holds no more
}

// shareCosines gives MinCoefBits' width searches a cosTable; tests turn
// it off to compare.
var shareCosines = true

// maxCosTable bounds a cosTable (8 MiB) and maxCosHeld all of them (64 MiB);
// cosHeld counts the values held.
const (
	maxCosTable = 1 << 20
	maxCosHeld  = 1 << 23
)

var cosHeld atomic.Int64

// release gives back the values t holds to maxCosHeld (the table is done).
func (t *cosTable) release() {
	cosHeld.Add(-int64(t.used))
	t.used, t.done = 0, true
}

// fits reports whether the table holds ls's grid, taking it when it holds
// none yet.
func (t *cosTable) fits(ls *search) bool {
	if t.grid == nil {
		t.n, t.grid, t.rows = ls.n, ls.freqs, make([][]float64, (ls.n+1)/2)
		return true
	}
	return t.n == ls.n && slices.Equal(t.grid, ls.freqs)
}

// row is tap k's cosines on the grid, or nil when the table is full.
func (t *cosTable) row(ls *search, k int) []float64 {
	if r := t.rows[k]; r != nil {
		return r
	}
	if t.done || t.used+len(ls.freqs) > maxCosTable {
		return nil
	}
	if cosHeld.Add(int64(len(ls.freqs))) > maxCosHeld {
		cosHeld.Add(-int64(len(ls.freqs)))
		return nil
	}
	r := make([]float64, len(ls.freqs))
	ls.cosines(r, k)
	t.rows[k] = r
	t.used += len(r)
	return r
}

// stopped says whether s's context is done.
func (s QuantSettings) stopped() bool { return s.ctx != nil && s.ctx.Err() != nil }

// ErrNoWidth is wrapped by MinCoefBits when no width up to MaxBits meets the bands.
var ErrNoWidth = errors.New("fixed: no coefficient width meets the bands")

// MinCoefBits returns the narrowest coefficients that meet every band's
// MaxError, measured on the quantised response (Deviations). At each width
// it first tries plain rounding (Quantize or QuantizeHalfBand); if that fails
// it runs a small local search: the taps with the largest rounding error are
// tried, one symmetric pair at a time, at their other rounding (the code on
// the far side of the real value); a move is kept when it lowers the worst
// band's error relative to its MaxError on the grid. The search stops at
// Settings.Budget trial moves, and only then is a bit added. The returned
// deviations are the measured per-band errors of the result. A rate, bands
// or density that Deviations cannot measure is an error.
func MinCoefBits(taps []float64, rate float64, bands []remez.Band, s QuantSettings) (Coefficients, []float64, error) {
	if s.MinBits == 0 {
		s.MinBits = 2
	}
	if s.MaxBits == 0 {
		s.MaxBits = MaxBits
	}
	if s.Budget == 0 {
		s.Budget = 64
	}
	if s.MinBits < 2 || s.MaxBits > MaxBits || s.MinBits > s.MaxBits {
		return Coefficients{}, nil, fmt.Errorf("fixed: coefficient widths [%d, %d] must lie within [2, %d]", s.MinBits, s.MaxBits, MaxBits)
	}
	if err := checkMeasure(rate, bands, s.Density); err != nil {
		return Coefficients{}, nil, err
	}
	if len(taps) == 0 {
		return Coefficients{}, nil, fmt.Errorf("fixed: no taps to quantise")
	}
	for i, b := range bands {
		if !(b.MaxError > 0) {
			return Coefficients{}, nil, fmt.Errorf("fixed: band %d [%g, %g] Hz has MaxError %g; it must be > 0", i, b.Lo, b.Hi, b.MaxError)
		}
	}
	if s.HalfBand && !IsHalfBand(taps, 1e-6) {
		return Coefficients{}, nil, fmt.Errorf("fixed: taps of length %d are not a half-band", len(taps))
	}
	taps, err := symmetrized(taps)
	if err != nil {
		return Coefficients{}, nil, err
	}
	if shareCosines {
		s.cos = &cosTable{} // every width's search has the same grid
		defer s.cos.release()
	}
	if s.from > 0 {
		type tried struct {
			c   Coefficients
			dev []float64
		}
		met := map[int]tried{}
		b, err := narrowestWidth(s.MinBits, s.MaxBits, s.from, s, func(b int) bool {
			c, dev, ok := tryWidth(taps, rate, bands, b, s, false)
			if ok {
				met[b] = tried{c, dev}
			}
			return ok
		})
		if err != nil {
			return Coefficients{}, nil, err
		}
		return met[b].c, met[b].dev, nil
	}
	var best []float64
	for bits := s.MinBits; bits <= s.MaxBits; bits++ {
		if s.stopped() {
			return Coefficients{}, nil, fmt.Errorf("fixed: coefficient width search stopped: %w", s.ctx.Err())
		}
		c, dev, ok := tryWidth(taps, rate, bands, bits, s, bits == s.MaxBits)
		if ok {
			return c, dev, nil
		}
		best = dev
	}
	if s.stopped() {
		// A width's trial stopped part way says "no" without having
		// measured: the stop is the answer, not the width.
		return Coefficients{}, nil, fmt.Errorf("fixed: coefficient width search stopped: %w", s.ctx.Err())
	}
	// The deviations at the widest width are returned, not said: a list
	// of numbers is no message.
	return Coefficients{}, best, fmt.Errorf("%w up to %d bits", ErrNoWidth, s.MaxBits)
}

// TryWidth quantises taps at exactly bits and runs the same local search as
// MinCoefBits at that width. ok reports whether the result meets the bands.
// It panics if bits is outside [2, MaxBits], the taps are not symmetric,
// or the rate, bands or density break Deviations' rule.
func TryWidth(taps []float64, rate float64, bands []remez.Band, bits int, s QuantSettings) (c Coefficients, dev []float64, ok bool) {
	if s.Budget == 0 {
		s.Budget = 64
	}
	if bits < 2 || bits > MaxBits {
		panic(fmt.Sprintf("fixed: TryWidth with %d bits, outside [2, %d]", bits, MaxBits))
	}
	if err := checkMeasure(rate, bands, s.Density); err != nil {
		panic(err.Error())
	}
	taps, err := symmetrized(taps)
	if err != nil {
		panic(err)
	}
	return tryWidth(taps, rate, bands, bits, s, true)
}

// symmetrized returns taps with each mirrored pair set to its mean, so that
// design residue cannot make the two round differently; taps further than
// 1e-9 of the largest from symmetric are not a linear-phase filter.
func symmetrized(taps []float64) ([]float64, error) {
	n := len(taps)
	m := 0.0
	for _, t := range taps {
		m = math.Max(m, math.Abs(t))
	}
	out := append([]float64(nil), taps...)
	for k := 0; k < n/2; k++ {
		a, b := taps[k], taps[n-1-k]
		if math.Abs(a-b) > 1e-9*m {
			return nil, fmt.Errorf("fixed: taps %d and %d differ (%g, %g): the filter is not linear-phase (symmetric)", k, n-1-k, a, b)
		}
		out[k] = (a + b) / 2
		out[n-1-k] = out[k]
	}
	return out, nil
}

// tryWidth is TryWidth; a failed width's deviations are measured only when
// needDev. A long filter's result is remembered (widthCache) unless the
// search was stopped.
func tryWidth(taps []float64, rate float64, bands []remez.Band, bits int, s QuantSettings, needDev bool) (Coefficients, []float64, bool) {
	if len(taps) < boundMinTaps {
		return tryWidthOnce(taps, rate, bands, bits, s, needDev)
	}
	density := s.Density
	if density <= 0 {
		density = 16
	}
	key, keep := bandsKey([]float64{rate, float64(bits), float64(b2i(needDev)), float64(s.Budget), float64(b2i(s.HalfBand)), float64(density)}, bands)
	type tried struct {
		c   Coefficients
		dev []float64
		ok  bool
	}
	clone := func(t tried) tried {
		t.c.Ints = slices.Clone(t.c.Ints)
		t.dev = slices.Clone(t.dev)
		return t
	}
	if !keep {
		return tryWidthOnce(taps, rate, bands, bits, s, needDev)
	}
	var done <-chan struct{}
	if s.ctx != nil {
		done = s.ctx.Done()
	}
	v := widthCache.do(done, taps, key, func() (any, bool) {
		c, dev, ok := tryWidthOnce(taps, rate, bands, bits, s, needDev)
		return tried{c, dev, ok}, !s.stopped()
	})
	t := clone(v.(tried))
	return t.c, t.dev, t.ok
}

// tryWidthOnce is tryWidth unremembered.
func tryWidthOnce(taps []float64, rate float64, bands []remez.Band, bits int, s QuantSettings, needDev bool) (Coefficients, []float64, bool) {
	var c Coefficients
	if s.HalfBand {
		var err error
		if c, err = QuantizeHalfBand(taps, bits); err != nil {
			return Coefficients{}, nil, false // too narrow for the centre
		}
	} else {
		c = Quantize(taps, bits)
	}
	// The grid score is a lower bound of the refined measurement, so the
	// refined (costly) one runs only when the grid is met.
	ls := newSearch(taps, rate, bands, c, s)
	var dev []float64
	check := func() bool {
		if ls.cur > 1 || s.stopped() {
			return false
		}
		h := ls.c.Float()
		// A long filter's failed trial needs only the verdict, which
		// meetsBands often gives for less than the deviations.
		if len(h) >= boundMinTaps && !meetsBands(s.ctx, h, rate, bands, s.Density) {
			return false
		}
		var err error
		if dev, err = DeviationsContext(s.ctx, h, rate, bands, s.Density); err != nil {
			return false // stopped: the width search says so
		}
		return Meets(dev, bands)
	}
	ok := check()
	if !ok && s.Budget > 0 && !ls.hopeless() {
		for ls.run() {
			if ok = check(); ok {
				break
			}
		}
	}
	ls.c.Adjusted = offRounding(ls.c, c)
	if !ok && needDev {
		// Stopped, the caller returns the stop's error, not these.
		dev, _ = DeviationsContext(s.ctx, ls.c.Float(), rate, bands, s.Density)
	}
	return ls.c, dev, ok
}

// search is the local search on the rounding of one width.
type search struct {
	c     Coefficients
	bands []remez.Band
	freqs []float64 // grid, all bands
	band  []int     // band index of each grid point
	a     []float64 // amplitude on the grid
	// gain, weight and maxErr are each grid point's band's desired
	// gain and weight there (GainFunc, WeightFunc or their constants, as
	// bandErr takes them) and its MaxError: fixed for the search.
	gain, weight, maxErr []float64
	// cosK is the tap whose cosines on the grid cosv holds (-1: none), so
	// that undoing a trial move adds back the very terms it added.
	cosK int
	cosv []float64
	cos  *cosTable // shared rows of cosines (QuantSettings.cos), or nil
	// worst is a grid point of the current score's largest error: a trial
	// move is judged there first.
	worst  int
	cand   []int   // indices k < n/2 (or the centre) in trial order
	other  []int64 // the other rounding of each candidate
	budget int
	next   int
	cur    float64 // score of the current codes
	n      int
	rate   float64
	stop   func() bool
}

func newSearch(taps []float64, rate float64, bands []remez.Band, c Coefficients, s QuantSettings) *search {
	n := len(taps)
	ls := &search{c: c, bands: bands, budget: s.Budget, n: n, rate: rate, stop: s.stopped}
	ls.c.Ints = append([]int64(nil), c.Ints...)
	density := s.Density
	if density <= 0 {
		density = 16
	}
	for i := range bands {
		for _, f := range bandGrid(&bands[i], n, rate, density) {
			ls.freqs = append(ls.freqs, f)
			ls.band = append(ls.band, i)
		}
	}
	h := c.Float()
	ls.a = make([]float64, len(ls.freqs))
	// A batch at a time, so that a stop is seen within milliseconds at
	// tens of thousands of taps (each point is computed alone: the same
	// bits); a stopped search's amplitudes are left unfinished, and the
	// search, which looks at the same stop, makes no move.
	for lo := 0; lo < len(ls.freqs); lo += eachBatch {
		if s.stopped() {
			break
		}
		hi := min(lo+eachBatch, len(ls.freqs))
		remez.AmplitudeEach(h, ls.freqs[lo:hi], rate, ls.a[lo:hi])
	}
	ls.gain = make([]float64, len(ls.freqs))
	ls.weight = make([]float64, len(ls.freqs))
	ls.maxErr = make([]float64, len(ls.freqs))
	for j, f := range ls.freqs {
		ls.gain[j], ls.weight[j] = bandTarget(&bands[ls.band[j]], f)
		ls.maxErr[j] = bands[ls.band[j]].MaxError
	}
	ls.cosK = -1
	ls.cosv = make([]float64, len(ls.freqs))
	if s.cos != nil && s.cos.fits(ls) {
		ls.cos = s.cos
	}
	type cand struct {
		k   int
		err float64
	}
	var cs []cand
	mid := n / 2
	for k := 0; k < (n+1)/2; k++ {
		if s.HalfBand && (k == mid || (mid-k)%2 == 0) {
			continue
		}
		x := math.Ldexp(taps[k], c.Frac)
		cs = append(cs, cand{k, math.Abs(x - float64(c.Ints[k]))})
	}
	sort.SliceStable(cs, func(i, j int) bool { return cs[i].err > cs[j].err })
	lim := int64(1)<<(c.Bits-1) - 1
	for _, v := range cs {
		x := math.Ldexp(taps[v.k], c.Frac)
		o := int64(math.Floor(x))
		if o == c.Ints[v.k] {
			o = int64(math.Ceil(x))
		}
		if o == c.Ints[v.k] || o > lim || o < -lim {
			continue
		}
		ls.cand = append(ls.cand, v.k)
		ls.other = append(ls.other, o)
	}
	ls.cur = ls.score()
	return ls
}

// hopeless reports whether the budget cannot close the gap: each move changes
// the amplitude by at most 2 codes' worth (a symmetric pair), so a grid point
// whose error exceeds its limit by more than budget such steps stays failed.
func (ls *search) hopeless() bool {
	reach := float64(ls.budget) * 2 * math.Ldexp(1, -ls.c.Frac)
	for j := range ls.freqs {
		w := ls.weight[j]
		if !(w > 0) {
			continue
		}
		if (ls.err(j)-ls.maxErr[j])/w > reach {
			return true
		}
	}
	return false
}

// err is grid point j's weighted error: bandErr's at the point's
// frequency for the current amplitude.
func (ls *search) err(j int) float64 {
	return math.Abs(math.Abs(ls.a[j])-ls.gain[j]) * ls.weight[j]
}

// score is the worst band error relative to its MaxError on the grid.
func (ls *search) score() float64 {
	m := 0.0
	for j := range ls.a {
		e := ls.err(j) / ls.maxErr[j]
		if e > m {
			ls.worst = j
		}
		m = math.Max(m, e)
	}
	return m
}

// scoreBelow is score when it is below lim (ok), and gives up, !ok, as soon
// as it cannot be (a point at or above lim, or NaN). It notes the point of
// the largest error in worst.
func (ls *search) scoreBelow(lim float64) (m float64, ok bool) {
	if e := ls.err(ls.worst) / ls.maxErr[ls.worst]; !(e < lim) {
		return 0, false
	}
	for j := range ls.a {
		e := ls.err(j) / ls.maxErr[j]
		if e > m {
			ls.worst = j
		}
		m = math.Max(m, e)
		if !(m < lim) {
			return 0, false
		}
	}
	return m, true
}

// move adds d codes to tap k (and its mirror) and updates the grid amplitude.
func (ls *search) move(k int, d int64) {
	n := ls.n
	step := float64(d) * math.Ldexp(1, -ls.c.Frac)
	ls.c.Ints[k] += d
	if k != n-1-k {
		ls.c.Ints[n-1-k] += d
		step *= 2
	}
	var cv []float64
	if ls.cos != nil {
		cv = ls.cos.row(ls, k)
	}
	if cv == nil {
		if ls.cosK != k {
			ls.cosines(ls.cosv, k)
			ls.cosK = k
		}
		cv = ls.cosv
	}
	for j, v := range cv {
		ls.a[j] += step * v
	}
}

// cosines writes tap k's cosines on the grid to dst: the amplitude gained
// by a unit on tap k (and its mirror, the same cosines).
func (ls *search) cosines(dst []float64, k int) {
	c := float64(ls.n-1) / 2
	for j, f := range ls.freqs {
		dst[j] = math.Cos(2 * math.Pi * f / ls.rate * (float64(k) - c))
	}
}

// run makes trial moves until one lowers the score; it reports false when the
// budget or the candidates are exhausted.
func (ls *search) run() bool {
	for ls.budget > 0 && len(ls.cand) > 0 && !ls.stop() {
		if ls.next >= len(ls.cand) {
			ls.next = 0
		}
		i := ls.next
		ls.next++
		ls.budget--
		k := ls.cand[i]
		d := ls.other[i] - ls.c.Ints[k]
		ls.move(k, d)
		if sc, ok := ls.scoreBelow(ls.cur); ok {
			ls.other[i] -= d // its other rounding is now the previous code
			ls.cur = sc
			return true
		}
		ls.move(k, -d)
	}
	return false
}

// offRounding counts the taps (each member of a symmetric pair) where c
// differs from plain.
func offRounding(c, plain Coefficients) int {
	m := 0
	for k := range c.Ints {
		if c.Ints[k] != plain.Ints[k] {
			m++
		}
	}
	return m
}
