package fixed

import (
	"context"
	"math"
	"math/bits"
	"slices"
	"sort"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/internal/chunks"
	"gonum.org/v1/gonum/dsp/fourier"
)

// boundMinTaps is the length from which Deviations measures a band through
// ampBounds instead of refining every peak: below it the direct way is as
// quick. Both ways return the same bits (see deviationBounded).
const boundMinTaps = 128

// boundMaxTaps is the longest filter measured through ampBounds, whose
// tables take about 1.5 KiB per tap (an FFT of up to 32 n points), 1.7 KiB
// for a filter that is not symmetric (newMagBounds): 110 MiB at this length, well within the module's 1 GiB. A polyphase prototype
// has at most 65535 taps; a longer filter is measured the direct way.
const boundMaxTaps = 1 << 16

// boundOrder is the number of derivatives (0 to boundOrder-1) of the
// amplitude that ampBounds computes; the remainder after them is bounded
// by sum |h_k| |k-c|^boundOrder (hh)^boundOrder / boundOrder!, under
// 1e-8 of sum |h_k| for the cell half-width hh <= pi/(16 n) (Taylor's
// theorem with Lagrange's remainder).
const boundOrder = 6

// ampBounds holds rigorous bounds of a symmetric filter's zero-phase
// amplitude A over the cells of an FFT grid: cell m covers the
// frequencies [m-1/2, m+1/2] rate/size, and lo[m] <= A(f) <= hi[m] for
// every f in it, rounding of the FFT and of a direct evaluation
// (remez.Amplitude) included.
type ampBounds struct {
	size   int // FFT length, a power of two of at least 16 n
	rate   float64
	lo, hi []float64 // per cell m in [0, size/2]
}

// newAmpBounds computes the bounds for the symmetric filter h with finite
// taps. For each cell it expands A about the cell's centre by Taylor's
// theorem: the derivatives A^(p), p < boundOrder, come from one real FFT
// each of h_k (k-c)^p; the quadratic part is maximised and minimised
// exactly over the cell, the cubic and higher terms are bounded by their
// absolute values, and the remainder by the bound above. Each computed
// derivative is held within kappa sum |h_k| |k-c|^p of the true one, kappa
// = 64 u log2(size) sqrt(size), well above the rounding bound of a radix-2
// FFT, log2(size) sqrt(size) times a few u times the 1-norm (Higham,
// Accuracy and Stability of Numerical Algorithms, 2nd ed., section 24.1).
func newAmpBounds(h []float64, rate float64) *ampBounds {
	n := len(h)
	g := newMomentGrid(n)
	size, half, c, kappa, hh := g.size, g.half, g.c, g.kappa, g.hh
	const u = 0x1p-53

	// What no cell's expansion sees: the remainder, the FFT's rounding
	// of every derivative used, and the rounding of a direct evaluation
	// (remez.Amplitude: its rotations resynchronised every 32 taps, its
	// angle w (k-c) rounded, its sum of n/2 terms), taken generously as
	// 8 (n+64) u sum |h_k|.
	slack0 := boundSlack(h, c, kappa, hh, 1, 8)

	// Phase e^{i c w_m}, c w_m = pi m (n-1)/size, reduced exactly.
	rot := make([]complex128, half+1)
	for m := range rot {
		r := (int64(m) * int64(n-1)) % int64(2*size)
		s, co := math.Sincos(math.Pi * float64(r) / float64(size))
		rot[m] = complex(co, s)
	}
	a := make([][]float64, 3)
	extra := make([]float64, half+1) // sum over p >= 3 of |A^(p)| hh^p / p!
	g.moments(h, func(p int, pw, fact float64, coef []complex128) {
		// A^(p) = Re(i^p conj(G_p)), G_p = e^{i c w} X_p.
		var col []float64
		if p < 3 {
			col = make([]float64, half+1)
			a[p] = col
		}
		for m, x := range coef {
			g := rot[m] * x
			var v float64
			switch p % 4 {
			case 0:
				v = real(g)
			case 1:
				v = imag(g)
			case 2:
				v = -real(g)
			default:
				v = -imag(g)
			}
			if p < 3 {
				col[m] = v
			} else {
				extra[m] += math.Abs(v) * pw / fact
			}
		}
	})
	b := &ampBounds{size: size, rate: rate, lo: make([]float64, half+1), hi: make([]float64, half+1)}
	for m := range b.lo {
		a0, a1, a2 := a[0][m], a[1][m], a[2][m]
		q := func(t float64) float64 { return a0 + t*(a1+t*a2/2) }
		ql, qr := q(-hh), q(hh)
		qmax, qmin := math.Max(ql, qr), math.Min(ql, qr)
		if a2 != 0 {
			if t := -a1 / a2; t > -hh && t < hh {
				if a2 < 0 {
					qmax = math.Max(qmax, q(t))
				} else {
					qmin = math.Min(qmin, q(t))
				}
			}
		}
		// The quadratic's own rounding, a few u of its terms' sizes.
		s := slack0 + extra[m] + 8*u*(math.Abs(a0)+math.Abs(a1)*hh+math.Abs(a2)*hh*hh)
		b.hi[m] = qmax + s
		b.lo[m] = qmin - s
	}
	return b
}

// cell returns the index of the cell holding f, clamped to [0, size/2].
func (b *ampBounds) cell(f float64) int {
	m := math.Floor(f/b.rate*float64(b.size) + 0.5)
	return int(math.Max(0, math.Min(m, float64(b.size/2))))
}

// errBound returns an upper bound of | |A(f)| - d | over [f0, f1]
// (0 <= f0 <= f1), over the cells holding it: f0 and f1 moved out by a
// billionth of a cell, well above the rounding of f/rate size (one
// rounding, u relative), so that a frequency on a cell's edge takes
// both cells.
func (b *ampBounds) errBound(f0, f1, d float64) float64 {
	x0, x1 := f0/b.rate*float64(b.size), f1/b.rate*float64(b.size)
	m0 := int(math.Max(0, math.Floor(x0-1e-9*(x0+1)+0.5)))
	m1 := int(math.Min(float64(b.size/2), math.Floor(x1+1e-9*(x1+1)+0.5)))
	lo, hi := math.Inf(1), math.Inf(-1)
	for m := m0; m <= m1; m++ {
		lo, hi = math.Min(lo, b.lo[m]), math.Max(hi, b.hi[m])
	}
	absHi := math.Max(hi, -lo)
	absLo := 0.0
	if lo > 0 {
		absLo = lo
	} else if hi < 0 {
		absLo = -hi
	}
	return math.Max(absHi-d, d-absLo)
}

// deviationBounded is Deviations' measurement of one band of constant gain
// and unit weight (no GainFunc, no WeightFunc), each evaluating the
// response (response.each) and ab bounding it, with the same result bit
// for bit: Deviations takes the largest of the
// direct grid values at the grid's local maxima and of each one's
// golden-section refinement. Here every grid interval's error is first
// bounded (ampBounds, never below the truth nor below a direct
// evaluation), and the intervals are visited from the highest bound down;
// an interval whose bound is below the largest direct value found so far
// cannot hold the answer and is not evaluated, so only the few peaks near
// the top of an equiripple band are refined. A visited point's direct grid
// value is a lower bound of Deviations' result (the grid's largest value is
// at one of its local maxima), so raising the running figure by it is
// safe.
//
// With a finite limit it only tells whether that result is above limit:
// it returns a value above limit (a direct value, so the result is
// too) or at most limit (the largest bound when no interval's bound is
// above limit, else the result).
func deviationBounded(b *remez.Band, fs []float64, ab *ampBounds, each func(xs, out []float64), limit float64, stopped func() bool) float64 {
	pts := len(fs)
	d := b.Gain
	ub := make([]float64, pts)
	for j := range fs {
		ub[j] = ab.errBound(fs[max(j-1, 0)], fs[min(j+1, pts-1)], d)
	}
	es := make([]float64, pts)
	done := make([]bool, pts)
	// errs writes bandErr at each of xs into out, the responses evaluated
	// together (each, with Deviations' bits).
	amp := []float64{}
	errs := func(xs, out []float64) {
		amp = slices.Grow(amp[:0], len(xs))[:len(xs)]
		each(xs, amp)
		for i, f := range xs {
			out[i] = bandErr(b, f, amp[i])
		}
	}
	// fill evaluates the grid points of js not yet evaluated.
	var need []int
	var xs, vs []float64
	fill := func(js []int) {
		need, xs = need[:0], xs[:0]
		for _, j := range js {
			if j >= 0 && j < pts && !done[j] {
				done[j] = true
				need = append(need, j)
				xs = append(xs, fs[j])
			}
		}
		vs = slices.Grow(vs[:0], len(xs))[:len(xs)]
		errs(xs, vs)
		for k, j := range need {
			es[j] = vs[k]
		}
	}
	top := 0
	for j := range ub {
		if ub[j] > ub[top] {
			top = j
		}
	}
	if !math.IsInf(limit, 1) && ub[top] <= limit {
		return ub[top]
	}
	fill([]int{top})
	m := math.Max(0, es[top])
	if m > limit {
		return m
	}
	var cand []int
	for j := range ub {
		if ub[j] >= m {
			cand = append(cand, j)
		}
	}
	sort.Slice(cand, func(x, y int) bool {
		if ub[cand[x]] != ub[cand[y]] {
			return ub[cand[x]] > ub[cand[y]]
		}
		return cand[x] < cand[y]
	})
	// The candidates go in chunks, highest bound first, so that the
	// evaluations of a chunk are interleaved; a chunk may hold intervals
	// that the running maximum would have skipped, whose values are below
	// the result anyway.
	const chunk = 32
	var js []int
	var glo, ghi, gtol []float64
	for k := 0; k < len(cand) && ub[cand[k]] >= m; {
		if stopped() {
			// Abandoned (DeviationsContext): the evaluations read 0, so
			// nothing would be skipped; the figure is not used.
			return m
		}
		end := k
		for end < len(cand) && end-k < chunk && ub[cand[end]] >= m {
			end++
		}
		js = js[:0]
		for _, j := range cand[k:end] {
			js = append(js, j-1, j, j+1)
		}
		fill(js)
		glo, ghi, gtol = glo[:0], ghi[:0], gtol[:0]
		for _, j := range cand[k:end] {
			e := es[j]
			m = math.Max(m, e)
			if (j > 0 && e < es[j-1]) || (j+1 < pts && e < es[j+1]) {
				continue
			}
			lo, hi := fs[max(j-1, 0)], fs[min(j+1, pts-1)]
			if hi > lo {
				glo, ghi, gtol = append(glo, lo), append(ghi, hi), append(gtol, goldenTol(lo, hi))
			}
		}
		_, gv := remez.GoldenMaxEach(errs, glo, ghi, goldenIters, gtol)
		for _, v := range gv {
			m = math.Max(m, v)
		}
		if m > limit {
			return m
		}
		k = end
	}
	return m
}

// finite reports whether every tap is a finite number.
func finite(h []float64) bool {
	for _, v := range h {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// response is how Deviations evaluates a filter: the zero-phase amplitude
// of a symmetric one (Amplitude), the magnitude of any other (remez.Magnitude),
// with the bounds of either built on first use.
type response struct {
	h    []float64
	rate float64
	sym  bool
	ab   *ampBounds
	fin  int // 0 unknown, 1 finite taps, 2 not
	// stop, when set, abandons the evaluations left (DeviationsContext):
	// each and eval then give 0 at once.
	stop *atomic.Bool
}

// stopped reports whether the response's evaluations are abandoned.
func (r *response) stopped() bool { return r.stop != nil && r.stop.Load() }

// eachBatch is how many points each evaluates between looks at stop: a
// few milliseconds at tens of thousands of taps.
const eachBatch = 256

func newResponse(h []float64, rate float64) *response {
	return &response{h: h, rate: rate, sym: symmetric(h)}
}

// eval is the response at f.
func (r *response) eval(f float64) float64 {
	if r.stopped() {
		return 0
	}
	if r.sym {
		return Amplitude(r.h, f, r.rate)
	}
	return remez.Magnitude(r.h, f, r.rate)
}

// each writes eval at each of xs into out, the same bits (a symmetric
// filter's interleaved by remez.AmplitudeEach; any other's point by point,
// on every processor for a long filter, as a fractional stage's prototype
// of thousands of taps is).
func (r *response) each(xs, out []float64) {
	if r.stop != nil && len(xs) > eachBatch {
		// Each point is computed alone, so batches give the same bits.
		for lo := 0; lo < len(xs); lo += eachBatch {
			hi := min(lo+eachBatch, len(xs))
			r.each(xs[lo:hi], out[lo:hi])
		}
		return
	}
	if r.stopped() {
		clear(out)
		return
	}
	if r.sym {
		remez.AmplitudeEach(r.h, xs, r.rate, out)
		return
	}
	chunks.Run(len(xs), len(xs)*len(r.h), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			out[i] = remez.Magnitude(r.h, xs[i], r.rate)
		}
	})
}

// boundable says whether band b of the filter is measured through bounds
// (deviationBounded): a filter of at most boundMaxTaps finite taps, a
// band of constant gain and unit weight.
func (r *response) boundable(b *remez.Band) bool {
	if r.fin == 0 {
		r.fin = 2 - b2i(finite(r.h))
	}
	return len(r.h) <= boundMaxTaps && b.GainFunc == nil && b.WeightFunc == nil && r.fin == 1
}

// bounds returns the response's bounds (newAmpBounds or newMagBounds).
func (r *response) bounds() *ampBounds {
	if r.ab == nil {
		if r.sym {
			r.ab = newAmpBounds(r.h, r.rate)
		} else {
			r.ab = newMagBounds(r.h, r.rate)
		}
	}
	return r.ab
}

// meetsBands reports Meets(Deviations(h, rate, bands, density), bands),
// the same verdict, for less work when only the verdict is wanted (a
// width search's trials): a band Deviations measures through bounds is
// met outright when no interval's bound passes its MaxError, and missed
// as soon as one direct value does; any other band is measured as
// Deviations measures it (each band on its own, so one band alone gets
// its bits). density is Deviations'. ctx, when not nil, stops it: once
// it is done the verdict is false (not measured) and the caller, which
// looks at the same context, says it stopped.
func meetsBands(ctx context.Context, h []float64, rate float64, bands []remez.Band, density int) bool {
	if density <= 0 {
		density = 16
	}
	if len(h) < boundMinTaps {
		dev, err := DeviationsContext(ctx, h, rate, bands, density)
		return err == nil && Meets(dev, bands)
	}
	r := newResponse(h, rate)
	var release func() bool
	r.stop, release = stopFlag(ctx)
	defer release()
	var rest []int
	for i := range bands {
		b := &bands[i]
		if !r.boundable(b) {
			rest = append(rest, i)
			continue
		}
		if deviationBounded(b, bandGrid(b, len(h), rate, density), r.bounds(), r.each, b.MaxError, r.stopped) > b.MaxError {
			return false
		}
	}
	for _, i := range rest {
		if deviations(h, rate, bands[i:i+1], density, true, r.stop)[0] > bands[i].MaxError {
			return false
		}
	}
	return !r.stopped()
}

// boundSlack returns the slack every cell's bound of the filter h carries,
// from its moments sum |h_k| |k-c|^p about c, p <= boundOrder: the
// FFT's rounding of each derivative used (kappa times its moment, times
// parts: 1 for a real amplitude, 2 for a complex value's two parts), the
// Taylor remainder after boundOrder terms over a half cell hh, and the
// rounding of the direct evaluation the bounds must hold, direct (n+64)
// u sum |h_k| (see the callers for each evaluation's count), all widened
// by a billionth.
func boundSlack(h []float64, c, kappa, hh, parts, direct float64) float64 {
	const u = 0x1p-53
	var mom [boundOrder + 1]float64
	for k, v := range h {
		d := math.Abs(float64(k) - c)
		t := math.Abs(v)
		for p := 0; p <= boundOrder; p++ {
			mom[p] += t
			t *= d
		}
	}
	fact, pw, slack := 1.0, 1.0, 0.0
	for p := 0; p < boundOrder; p++ {
		if p > 0 {
			fact *= float64(p)
			pw *= hh
		}
		slack += parts * kappa * mom[p] * pw / fact
	}
	fact *= boundOrder
	pw *= hh
	slack += mom[boundOrder] * pw / fact
	slack += direct * float64(len(h)+64) * u * mom[0]
	return slack * (1 + 1e-9)
}

// momentGrid is the cell grid both bounds (newAmpBounds, newMagBounds) lay
// over [0, rate/2]: size/2 cells from a real FFT of size, the next power of
// two of 16 points per tap, each cell hh radians per sample either side of
// its centre; c is the taps' centre and kappa the FFT's relative rounding
// allowance (see newAmpBounds).
type momentGrid struct {
	size, half   int
	c, kappa, hh float64
}

func newMomentGrid(n int) momentGrid {
	size := 1 << bits.Len(uint(16*n-1))
	const u = 0x1p-53
	return momentGrid{size: size, half: size / 2, c: float64(n-1) / 2,
		kappa: 64 * u * float64(bits.Len(uint(size))) * math.Sqrt(float64(size)),
		hh:    math.Pi / float64(size)}
}

// moments calls fn for p = 0 .. boundOrder-1 with the real FFT coef (half+1
// values, reused from call to call) of h_k (k-c)^p, and hh^p and p!.
func (g momentGrid) moments(h []float64, fn func(p int, pw, fact float64, coef []complex128)) {
	fft := fourier.NewFFT(g.size)
	seq := make([]float64, g.size)
	coef := make([]complex128, g.half+1)
	fact, pw := 1.0, 1.0
	for p := 0; p < boundOrder; p++ {
		if p > 0 {
			fact *= float64(p)
			pw *= g.hh
		}
		for k, v := range h {
			seq[k] = v * math.Pow(float64(k)-g.c, float64(p))
		}
		fft.Coefficients(coef, seq)
		fn(p, pw, fact, coef)
	}
}
