package chain

import (
	"fmt"
	"math"
	"math/bits"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// This file holds rigorous bounds of a stage's magnitude over an interval of
// input frequencies, which the cascade analysis (analyze.go) uses to prune
// and to certify its figures. "Rigorous" means: up to floating-point rounding,
// for which every bound carries an explicit allowance, the upper bound is
// never below the largest |H| in the interval and the lower bound never above
// the smallest.
//
// FIR stages. Let H~(f) = sum_n h_n exp(-j 2 pi f (n - c) / F), c = (N-1)/2,
// so that |H~| = |H|. Its k-th derivative in f has magnitude
// D_k(f) = (2 pi/F)^k |sum_n h_n (n-c)^k exp(-j 2 pi f n / F)| and is bounded
// everywhere by M_k = (2 pi/F)^k sum_n |h_n| |n-c|^k. Taylor's theorem with
// the remainder in Lagrange form gives, for |f - g| <= t,
//
//	|H(f)| <= sum_{k<K} D_k(g) t^k/k! + M_K t^K/K!
//	|H(f)| >= D_0(g) - sum_{1<=k<K} D_k(g) t^k/k! - M_K t^K/K!.
//
// On a grid of step s every frequency lies within t = s/2 of a grid point, so
// the bound of an interval at least one step wide is the largest (smallest)
// per-point bound over the grid points covering it; an interval narrower
// than a step is bounded from the derivatives at its midpoint, evaluated
// directly, with t its half width, which makes the bound converge to |H| as
// the interval shrinks. The D_k are even and periodic in f with period F,
// so every frequency folds onto [0, F/2].
//
// CIC stages. |H| = |sin(pi x R M) / (R M sin(pi x))|^N, x = f/F folded onto
// [0, 1/2]. Over [x1, x2] the numerator's largest and smallest |sin| are
// exact (the extrema of sine are known) and sin(pi x) is increasing, so
// (max |sin| / (R M sin(pi x1)))^N and (min |sin| / (R M sin(pi x2)))^N,
// each capped at 1, bound the stage. Within the main lobe, x2 <= 1/(R M),
// the magnitude falls monotonically and its values at the ends are the
// bounds.

// taylorOrder is K above: derivatives 0..K-1 enter the bound, M_K the
// remainder. With s = F/(2n), n >= 16 N, the remainder at t = s/2 is at most
// (pi/64)^6/720 sum|h| < 2e-11 sum|h|, far below any stopband in use.
const taylorOrder = 6

// boundSlack is the relative allowance added to every upper bound (and
// taken from every lower bound) for the rounding of the sums and FFTs that
// make them.
const boundSlack = 1e-12

// stageBounder bounds one stage's |H| over an interval of input frequencies.
type stageBounder interface {
	// bounds returns lo <= |H(f)| <= up for every f in [a, b] (Hz, any
	// position on the frequency axis, a <= b).
	bounds(a, b float64) (lo, up float64)
	// coarse returns bounds as valid as bounds' but cheaper to get and
	// looser: the search orders intervals by them and refines only those
	// that could matter.
	coarse(a, b float64) (lo, up float64)
	// upper is bounds' up alone, the same number, without the work of
	// the lower bound.
	upper(a, b float64) float64
}

// newStageBounder returns the bounder of a stage at input rate rate, or an
// error for a FIR without taps or a stage that is not a CICStage or FIRStage
// (nil). Its cases cover every kind (FIR and half-band are FIRStages); see
// Kinds.
func newStageBounder(s Stage, rate float64) (stageBounder, error) {
	switch st := s.(type) {
	case CICStage:
		return cicBounder{n: st.N, rm: float64(st.R * st.M), rate: rate}, nil
	case *CICStage:
		return cicBounder{n: st.N, rm: float64(st.R * st.M), rate: rate}, nil
	case FIRStage:
		return newFIRBounder(st.Taps, rate)
	case *FIRStage:
		return newFIRBounder(st.Taps, rate)
	}
	return nil, fmt.Errorf("a %T cannot be analysed: Analyze takes CICStage and FIRStage values", s)
}

// foldPieces maps the interval [a, b] of frequencies at rate F onto at most
// three intervals of [0, F/2] whose union is its image under folding.
func foldPieces(a, b, rate float64, out *[3][2]float64) int {
	h := rate / 2
	if b-a >= h {
		out[0] = [2]float64{0, h}
		return 1
	}
	x := modPos(math.Abs(a), rate)
	if a < 0 {
		// Fold a negative start by symmetry: |H(-f)| = |H(f)|.
		if b <= 0 {
			return foldPieces(-b, -a, rate, out)
		}
		n := foldPieces(0, math.Max(-a, b), rate, out)
		return n
	}
	y := x + (b - a) // < x + F/2 < 1.5 F
	n := 0
	for k := 0; k < 3; k++ {
		// The builtins are math.Max and math.Min here: they differ
		// only for a NaN against +Inf, and k h is finite.
		s, e := max(x, float64(k)*h), min(y, float64(k+1)*h)
		if s > e {
			continue
		}
		switch k {
		case 0:
			out[n] = [2]float64{s, e}
		case 1:
			out[n] = [2]float64{rate - e, rate - s}
		case 2:
			out[n] = [2]float64{s - rate, e - rate}
		}
		n++
	}
	return n
}

// modPos is math.Mod(x, y) for x >= 0 and y > 0, bit for bit, without
// its loop over the exponents between x and y: the remainder x - q y,
// q = floor(x/y), is representable (math.Mod is exact), so the fused
// multiply-add, which rounds the exact x - q y once, gives it exactly when
// q is right. Rounding x/y up to an integer makes q one too large, which
// leaves the result below 0, and q is stepped back (a q too small would
// leave it at least y: rounding cannot do that, but it is stepped all the
// same). Quotients beyond 2^52, NaN and infinities go to math.Mod.
func modPos(x, y float64) float64 {
	if x < y {
		return x
	}
	q := math.Floor(x / y)
	if !(q < 0x1p52) || !(y > 0) {
		return math.Mod(x, y)
	}
	r := math.FMA(-q, y, x)
	for r < 0 {
		q--
		r = math.FMA(-q, y, x)
	}
	for r >= y {
		q++
		r = math.FMA(-q, y, x)
	}
	return r
}

// cicBounder bounds a CIC's unit-DC-gain magnitude (see the file comment).
type cicBounder struct {
	n    int
	rm   float64
	rate float64
}

func (c cicBounder) bounds(a, b float64) (lo, up float64) {
	var pcs [3][2]float64
	np := foldPieces(a, b, c.rate, &pcs)
	lo, up = math.Inf(1), 0
	for _, p := range pcs[:np] {
		l, u := c.piece(p[0]/c.rate, p[1]/c.rate)
		lo, up = math.Min(lo, l), math.Max(up, u)
	}
	return lo, up
}

// coarse is bounds: a CIC's bounds cost a few sines.
func (c cicBounder) coarse(a, b float64) (lo, up float64) { return c.bounds(a, b) }

func (c cicBounder) upper(a, b float64) float64 {
	var pcs [3][2]float64
	np := foldPieces(a, b, c.rate, &pcs)
	up := 0.0
	for _, p := range pcs[:np] {
		up = math.Max(up, c.pieceUp(p[0]/c.rate, p[1]/c.rate))
	}
	return up
}

// cicPieceEps is the relative allowance of a CIC piece's bounds.
const cicPieceEps = 1e-12

// piece bounds |H| over normalised frequencies [x1, x2] within [0, 1/2].
func (c cicBounder) piece(x1, x2 float64) (lo, up float64) {
	return c.pieceLo(x1, x2), c.pieceUp(x1, x2)
}

// pieceUp is piece's upper bound. In the main lobe, x2 <= 1/(RM),
// sin(pi x RM)/(RM sin(pi x)) falls monotonically from 1 at DC to 0 at the
// first null (from memory; TestCICBoundsDense checks it), so the ends are
// the extremes.
func (c cicBounder) pieceUp(x1, x2 float64) float64 {
	const eps = cicPieceEps
	if x2*c.rm <= 1 {
		return math.Min(1, cicGain(c.n, int(c.rm), x1, 1)*(1+eps))
	}
	if x1 <= 0 {
		return 1
	}
	u1, u2 := c.rm*x1*(1-eps)-eps, c.rm*x2*(1+eps)+eps
	return math.Pow(math.Min(1, maxAbsSinPi(u1, u2)/(c.rm*math.Sin(math.Pi*x1))*(1+eps)), float64(c.n))
}

// pieceLo is piece's lower bound (see pieceUp).
func (c cicBounder) pieceLo(x1, x2 float64) float64 {
	const eps = cicPieceEps
	if x2*c.rm <= 1 {
		return cicGain(c.n, int(c.rm), x2, 1) * (1 - eps)
	}
	if x2 <= 0 {
		return 1
	}
	u1, u2 := c.rm*x1*(1-eps)-eps, c.rm*x2*(1+eps)+eps
	return math.Pow(math.Min(1, minAbsSinPi(u1, u2)/(c.rm*math.Sin(math.Pi*x2))*(1-eps)), float64(c.n))
}

// maxAbsSinPi returns the largest |sin(pi u)| over [u1, u2].
func maxAbsSinPi(u1, u2 float64) float64 {
	if u2-u1 >= 1 {
		return 1
	}
	fl := math.Floor(u1)
	v1, v2 := u1-fl, u2-fl // v1 in [0, 1), v2 < 2
	if (v1 <= 0.5 && v2 >= 0.5) || v2 >= 1.5 {
		return 1
	}
	return math.Max(math.Abs(math.Sin(math.Pi*v1)), math.Abs(math.Sin(math.Pi*v2)))
}

// minAbsSinPi returns the smallest |sin(pi u)| over [u1, u2].
func minAbsSinPi(u1, u2 float64) float64 {
	if math.Ceil(u1) <= u2 {
		return 0
	}
	fl := math.Floor(u1)
	return math.Min(math.Abs(math.Sin(math.Pi*(u1-fl))), math.Abs(math.Sin(math.Pi*(u2-fl))))
}

// firBounder bounds a FIR's magnitude (see the file comment).
type firBounder struct {
	taps []float64
	rate float64
	n    int     // grid intervals over [0, rate/2]
	step float64 // Hz
	up   rangeMax
	// lo is the range table of -(per-point lower bound); empty for a
	// bounder built for upper bounds alone (newFIRUpper), whose lower
	// bounds on the grid are 0, true of every |H|.
	lo rangeMax
	// upAll and loAll are the per-point bounds' extremes over the whole
	// grid: bounds of |H| at every frequency.
	upAll, loAll float64
	mom          [taylorOrder + 1]float64
	fact         [taylorOrder + 1]float64
}

func newFIRBounder(h []float64, rate float64) (*firBounder, error) {
	return buildFIRBounder(h, rate, true)
}

// newFIRUpper is newFIRBounder without the per-point lower bounds, for a
// user of upper and coarse's up alone (the cascade rule's credit): the
// same upper bounds bit for bit, at half the memory and without the lower
// bounds' table; its lower bounds on the grid are 0.
func newFIRUpper(h []float64, rate float64) (*firBounder, error) {
	return buildFIRBounder(h, rate, false)
}

// spectra holds the FFT plans newFIRBounder has used, by grid size, for
// the next bounder of the same size: a plan gives the same magnitudes
// whichever bounder made it. The pool empties itself under the garbage
// collector, so what it keeps stays bounded.
var spectra sync.Map // grid points -> *sync.Pool of *remez.Spectrum

func getSpectrum(points int) *remez.Spectrum {
	if p, ok := spectra.Load(points); ok {
		if sp, ok := p.(*sync.Pool).Get().(*remez.Spectrum); ok {
			return sp
		}
	}
	return remez.NewSpectrum(points)
}

func putSpectrum(sp *remez.Spectrum) {
	p, _ := spectra.LoadOrStore(sp.Points(), &sync.Pool{})
	p.(*sync.Pool).Put(sp)
}

// buildFIRBounder is newFIRBounder, without the lower bounds when lower is
// false.
func buildFIRBounder(h []float64, rate float64, lower bool) (*firBounder, error) {
	if len(h) == 0 {
		return nil, fmt.Errorf("chain: a FIR stage without taps cannot be analysed")
	}
	b := &firBounder{taps: h, rate: rate}
	b.n = nextPow2(max(minGridPoints, gridPointsPerTap*len(h)))
	b.step = rate / 2 / float64(b.n)
	c := float64(len(h)-1) / 2
	w := 2 * math.Pi / rate
	b.fact[0] = 1
	for k := 1; k <= taylorOrder; k++ {
		b.fact[k] = b.fact[k-1] * float64(k)
	}
	// Moments sum |h_n| |n-c|^k, k = 0..K, in one pass (powers by
	// repeated products: exact enough, and no math.Pow per tap).
	for i, v := range h {
		p, d := math.Abs(v), math.Abs(float64(i)-c)
		for k := 0; k <= taylorOrder; k++ {
			b.mom[k] += p
			p *= d
		}
	}
	for k, wk := 0, 1.0; k <= taylorOrder; k, wk = k+1, wk*w {
		b.mom[k] *= wk
	}
	// Per-point bounds on the grid, t = step/2. The FFT's rounding is at
	// most a few ulps times log2 of its length times sum |h| |n-c|^k (the
	// moment), which the allowance below covers with room to spare.
	t := b.step / 2
	fftErr := 16 * 0x1p-52 * float64(bits.Len(uint(2*b.n)))
	up := make([]float64, b.n+1)
	var lo []float64
	if lower {
		lo = make([]float64, b.n+1)
	}
	sp := getSpectrum(b.n + 1)
	seq := append([]float64(nil), h...) // h_n (n-c)^k, one factor more each k
	mag := make([]float64, b.n+1)
	for k := 0; k < taylorOrder; k++ {
		if k > 0 {
			for i := range seq {
				seq[i] *= float64(i) - c
			}
		}
		sp.Magnitude(mag, seq)
		coef := math.Pow(w, float64(k)) * math.Pow(t, float64(k)) / b.fact[k]
		slack := fftErr * b.mom[k] * math.Pow(t, float64(k)) / b.fact[k]
		for i, m := range mag {
			up[i] += m*coef + slack
		}
		if !lower {
			continue
		}
		for i, m := range mag {
			d := m * coef
			if k == 0 {
				lo[i] += d - slack
			} else {
				lo[i] -= d + slack
			}
		}
	}
	putSpectrum(sp)
	rem := b.mom[taylorOrder] * math.Pow(t, taylorOrder) / b.fact[taylorOrder]
	for i := range up {
		up[i] = (up[i] + rem) * (1 + boundSlack)
	}
	b.up = newRangeMax(up)
	b.upAll = b.up.query(0, b.n)
	if lower {
		for i := range lo {
			lo[i] = -math.Max(0, (lo[i]-rem)*(1-boundSlack))
		}
		b.lo = newRangeMax(lo)
		b.loAll = -b.lo.query(0, b.n)
	}
	return b, nil
}

// floats is the number of values b's grid tables hold.
func (b *firBounder) floats() int { return b.up.floats() + b.lo.floats() }

// coarse returns the bounds of |H| over all frequencies.
func (b *firBounder) coarse(a, e float64) (lo, up float64) { return b.loAll, b.upAll }

func (b *firBounder) upper(a, e float64) float64 {
	if e-a < b.step {
		_, up := b.direct((a+e)/2, (e-a)/2)
		return up
	}
	var pcs [3][2]float64
	np := foldPieces(a, e, b.rate, &pcs)
	up := 0.0
	for _, p := range pcs[:np] {
		i0 := max(0, int(math.Floor(p[0]/b.step)))
		i1 := min(b.n, int(math.Ceil(p[1]/b.step)))
		up = math.Max(up, b.up.query(i0, i1))
	}
	return up
}

func (b *firBounder) bounds(a, e float64) (lo, up float64) {
	if e-a < b.step {
		return b.direct((a+e)/2, (e-a)/2)
	}
	var pcs [3][2]float64
	np := foldPieces(a, e, b.rate, &pcs)
	lo, up = math.Inf(1), 0
	for _, p := range pcs[:np] {
		i0 := max(0, int(math.Floor(p[0]/b.step)))
		i1 := min(b.n, int(math.Ceil(p[1]/b.step)))
		up = math.Max(up, b.up.query(i0, i1))
		if len(b.lo.v) > 0 {
			lo = math.Min(lo, -b.lo.query(i0, i1))
		} else {
			lo = 0
		}
	}
	return lo, up
}

// direct bounds |H| over [m - t, m + t] from the derivatives at m.
func (b *firBounder) direct(m, t float64) (lo, up float64) {
	d := b.derivs(foldFreq(m, b.rate))
	up, lo = d[0], d[0]
	tk := 1.0
	for k := 1; k < taylorOrder; k++ {
		tk *= t
		up += d[k] * tk / b.fact[k]
		lo -= d[k] * tk / b.fact[k]
	}
	tk *= t
	rem := b.mom[taylorOrder] * tk / b.fact[taylorOrder]
	// Rounding of the direct sums: a few ulps per tap times the moment.
	var slack float64
	tj := 1.0
	for k := 0; k < taylorOrder; k++ {
		slack += 4 * 0x1p-52 * float64(len(b.taps)) * b.mom[k] * tj / b.fact[k]
		tj *= t
	}
	up = (up + rem + slack) * (1 + boundSlack)
	lo = math.Max(0, (lo-rem-slack)*(1-boundSlack))
	return lo, up
}

// derivs returns D_k(f), k < taylorOrder, by direct summation with a phase
// rotation resynchronised every 32 taps.
func (b *firBounder) derivs(f float64) [taylorOrder]float64 {
	h := b.taps
	c := float64(len(h)-1) / 2
	w := 2 * math.Pi * f / b.rate
	sw, cw := math.Sincos(w)
	var re, im [taylorOrder]float64
	for k0 := 0; k0 < len(h); k0 += 32 {
		s, co := math.Sincos(w * float64(k0))
		end := min(k0+32, len(h))
		for i := k0; i < end; i++ {
			x := float64(i) - c
			pr, pi := h[i]*co, -h[i]*s
			for k := 0; k < taylorOrder; k++ {
				re[k] += pr
				im[k] += pi
				pr *= x
				pi *= x
			}
			co, s = co*cw-s*sw, s*cw+co*sw
		}
	}
	var d [taylorOrder]float64
	wk := 1.0
	for k := range d {
		d[k] = math.Hypot(re[k], im[k]) * wk
		wk *= 2 * math.Pi / b.rate
	}
	return d
}

// rangeMax answers range-maximum queries in constant time per block: a
// sparse table over blocks of 16 values plus a scan of the partial blocks
// at the ends.
type rangeMax struct {
	v   []float64
	tab [][]float64 // tab[l][j] = max of blocks j .. j + 2^l - 1
}

const rmBlock = 16

// floats is the number of values r holds.
func (r rangeMax) floats() int {
	n := len(r.v)
	for _, t := range r.tab {
		n += len(t)
	}
	return n
}

func newRangeMax(v []float64) rangeMax {
	nb := (len(v) + rmBlock - 1) / rmBlock
	base := make([]float64, nb)
	for j := range base {
		m := math.Inf(-1)
		for _, x := range v[j*rmBlock : min(len(v), (j+1)*rmBlock)] {
			m = math.Max(m, x)
		}
		base[j] = m
	}
	r := rangeMax{v: v, tab: [][]float64{base}}
	for l := 1; 1<<l <= nb; l++ {
		prev := r.tab[l-1]
		cur := make([]float64, nb-(1<<l)+1)
		for j := range cur {
			cur[j] = math.Max(prev[j], prev[j+1<<(l-1)])
		}
		r.tab = append(r.tab, cur)
	}
	return r
}

// query returns the largest of v[i0..i1], 0 <= i0 <= i1 < len(v).
func (r rangeMax) query(i0, i1 int) float64 {
	b0, b1 := i0/rmBlock, i1/rmBlock
	m := math.Inf(-1)
	if b1-b0 <= 1 {
		for _, x := range r.v[i0 : i1+1] {
			if x > m {
				m = x
			}
		}
		return m
	}
	for _, x := range r.v[i0 : (b0+1)*rmBlock] {
		if x > m {
			m = x
		}
	}
	for _, x := range r.v[b1*rmBlock : i1+1] {
		if x > m {
			m = x
		}
	}
	lo, hi := b0+1, b1-1
	l := bits.Len(uint(hi-lo+1)) - 1
	if x := r.tab[l][lo]; x > m {
		m = x
	}
	if x := r.tab[l][hi-(1<<l)+1]; x > m {
		m = x
	}
	return m
}
