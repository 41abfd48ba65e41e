package farrow

import (
	"container/heap"
	"math"
	"math/cmplx"
)

// subDiv is the number of pieces each unit segment is cut into when the
// integrals of |h|, |tau||h| and |h'| are bounded from above.
const subDiv = 16

// inflate is the relative margin added to every computed constant of a
// bounder, far above the rounding of the sums that make it.
const inflate = 1 + 1e-9

// bounder holds a valid filter's constants for rigorous bounds of |H|.
type bounder struct {
	f  Filter
	iw []complex128

	l1   float64   // >= integral |h|, and so >= |H(nu)| for every nu
	lip  float64   // >= 2 pi integral |tau| |h(tau)| dtau >= |dH/dnu|
	m2   float64   // >= 4 pi^2 integral tau^2 |h(tau)| dtau >= |d2H/dnu2|
	derr float64   // >= the error of a computed dH/dnu
	tv   float64   // >= the total variation of h, jumps included
	jump []float64 // jump[r] >= sum of |jumps| of the r-th derivative of h
	err  float64   // >= the error of a computed |H(nu)|
}

// sup bounds |p| over [a, b] from above, p a polynomial with coefficients
// c (lowest first): by Taylor's formula at the midpoint m, which is exact
// for a polynomial, |p(m + x)| <= sum_r |p^(r)(m)| hw^r / r! for |x| <= hw.
func sup(c []float64, a, b float64) float64 {
	m := 0.5 * (a + b)
	hw := 0.5 * (b - a)
	// Repeated synthetic division gives the Taylor coefficients at m,
	// p^(r)(m)/r!, in place.
	t := make([]float64, len(c))
	copy(t, c)
	total := 0.0
	pw := 1.0
	for r := 0; r < len(t); r++ {
		for i := len(t) - 2; i >= r; i-- {
			t[i] += m * t[i+1]
		}
		total += math.Abs(t[r]) * pw
		pw *= hw
	}
	return total
}

func newBounder(f Filter) *bounder {
	p := f.Degree()
	n := f.Len()
	bd := &bounder{f: f, iw: make([]complex128, p+2), jump: make([]float64, p+1)}
	c := make([]float64, p+1)
	dc := make([]float64, p+1) // derivative's coefficients
	for j := 0; j < n; j++ {
		for i := 0; i <= p; i++ {
			c[i] = f.Coef[i][j]
		}
		for i := 0; i < p; i++ {
			dc[i] = float64(i+1) * c[i+1]
		}
		s := segStart(n, j)
		for k := 0; k < subDiv; k++ {
			a, b := float64(k)/subDiv, float64(k+1)/subDiv
			hp := sup(c, a, b)
			bd.l1 += hp * (b - a)
			ta := math.Max(math.Abs(s+a), math.Abs(s+b))
			bd.lip += ta * hp * (b - a)
			bd.m2 += ta * ta * hp * (b - a)
			if p > 0 {
				bd.tv += sup(dc[:p], a, b) * (b - a)
			}
		}
	}
	bd.lip *= 2 * math.Pi
	bd.m2 *= 4 * math.Pi * math.Pi
	// Jumps of the r-th derivative at the N+1 breakpoints tau = -N/2..N/2.
	// Segment j runs from segStart(n, j); in increasing tau the segments
	// are j = N-1, ..., 0.
	deriv := func(j, r int, mu float64) float64 {
		// r-th derivative of sum_i c_i mu^i at mu (0 or 1).
		v := 0.0
		for i := p; i >= r; i-- {
			fac := 1.0
			for k := 0; k < r; k++ {
				fac *= float64(i - k)
			}
			if mu == 0 {
				if i == r {
					v += fac * f.Coef[i][j]
				}
			} else {
				v += fac * f.Coef[i][j]
			}
		}
		return v
	}
	for r := 0; r <= p; r++ {
		sum := 0.0
		for k := 0; k <= n; k++ {
			left, right := 0.0, 0.0
			if jl := n - k; jl < n { // segment ending at this breakpoint
				left = deriv(jl, r, 1)
			}
			if jr := n - 1 - k; jr >= 0 {
				right = deriv(jr, r, 0)
			}
			sum += math.Abs(right - left)
		}
		bd.jump[r] = sum * inflate
	}
	bd.tv += bd.jump[0]
	bd.l1 *= inflate
	bd.lip *= inflate
	bd.m2 *= inflate
	bd.tv *= inflate
	// The closed form's error is a small multiple of the rounding of its
	// largest terms, each bounded by the coefficients' absolute sum.
	abs := 0.0
	for _, row := range f.Coef {
		for _, v := range row {
			abs += math.Abs(v)
		}
	}
	bd.err = 1e-12*abs + math.SmallestNonzeroFloat64
	bd.derr = 2 * math.Pi * float64(n/2+1) * bd.err
	return bd
}

// tail bounds |H(nu)| from above for every |nu| >= v > 0: the smaller of
// TV/(2 pi v) and sum_r J_r / (2 pi v)^(r+1), J_r the sum of the jumps of
// the r-th derivative (integration by parts repeated down to the piecewise
// constant P-th derivative), and of the integral of |h|.
func (bd *bounder) tail(v float64) float64 {
	if v <= 0 || math.IsNaN(v) {
		return bd.l1
	}
	w := 2 * math.Pi * v
	series := 0.0
	wp := w
	for _, j := range bd.jump {
		series += j / wp
		wp *= w
	}
	return math.Min(bd.l1, math.Min(bd.tv/w, series*inflate))
}

// eval returns H(nu) and dH/dnu = -j 2 pi integral tau h(tau)
// exp(-j 2 pi nu tau) dtau, both in closed form: on segment j,
// tau h(tau) = (s_j + mu) p_j(mu), a polynomial of degree P+1 in mu.
func (bd *bounder) eval(nu float64) (h, dh complex128) {
	f := bd.f
	integrals(nu, bd.iw)
	n := f.Len()
	p := f.Degree()
	for j := 0; j < n; j++ {
		s := segStart(n, j)
		var seg, dseg complex128
		prev := 0.0
		for i := 0; i <= p+1; i++ {
			c := 0.0
			if i <= p {
				c = f.Coef[i][j]
				seg += complex(c, 0) * bd.iw[i]
			}
			dseg += complex(s*c+prev, 0) * bd.iw[i]
			prev = c
		}
		ph := phase(nu, s)
		h += ph * seg
		dh += ph * dseg
	}
	return h, complex(0, -2*math.Pi) * dh
}

// bounds returns lower and upper bounds of |H(nu) - target| over [a, b]
// and the computed value at the midpoint m. The upper bound is the smaller
// of the first-order one, |H(m) - target| + L hw, and the second-order one,
// max over the ends of |H(m) - target +- H'(m) hw| + M2 hw^2 / 2 (the
// modulus of a linear function is largest at an end); the lower bound the
// larger of the two counterparts. The tail bounds apply for target 0.
func (bd *bounder) bounds(a, b, target float64) (lo, up, mid float64) {
	// Halves first, so that no width overflows.
	m := 0.5*a + 0.5*b
	hw := 0.5*b - 0.5*a
	hm, dh := bd.eval(m)
	hm -= complex(target, 0)
	g := cmplx.Abs(hm)
	up = g + bd.lip*hw + bd.err
	lo = math.Max(0, g-bd.lip*hw-bd.err)
	step := complex(real(dh)*hw, imag(dh)*hw)
	e2 := bd.derr*hw + 0.5*bd.m2*hw*hw + bd.err
	if s := cmplx.Abs(step); s+e2 < math.Inf(1) {
		up = math.Min(up, math.Max(cmplx.Abs(hm+step), cmplx.Abs(hm-step))+e2)
		lo = math.Max(lo, g-s-e2)
	}
	if target == 0 {
		up = math.Min(up, bd.l1)
		vmin := 0.0
		if a > 0 {
			vmin = a
		} else if b < 0 {
			vmin = -b
		}
		if vmin > 0 {
			up = math.Min(up, bd.tail(vmin))
		}
	}
	if lo > up { // only by the tail bound being tighter than rounding
		lo = up
	}
	return lo, up, g
}

// Bounds returns rigorous bounds lo <= |H(nu)| <= up for every nu in
// [a, b]: up is the smallest of |H(mid)| + L*hw (L >= 2 pi integral
// |tau||h(tau)| dtau, a Lipschitz constant of H, hw the half-width), the
// second-order bound max |H(mid) +- H'(mid) hw| + M2 hw^2/2 (M2 >= 4 pi^2
// integral tau^2 |h(tau)| dtau), the tail bounds TV/(2 pi |nu|) and
// sum_r J_r/(2 pi |nu|)^(r+1) at the interval's smallest |nu|, and
// integral |h|; lo is the larger of |H(mid)| - L*hw and
// |H(mid)| - |H'(mid)| hw - M2 hw^2/2, at least 0. Every constant is bounded from above and widened by a margin for
// rounding, so up is never below the true maximum. As b - a shrinks, lo and
// up close on |H|. An invalid filter, a > b or a non-finite end gives
// (0, +Inf).
func (f Filter) Bounds(a, b float64) (lo, up float64) {
	if !(a <= b) || math.IsInf(a, 0) || math.IsInf(b, 0) || f.Validate() != nil {
		return 0, math.Inf(1)
	}
	lo, up, _ = newBounder(f).bounds(a, b, 0)
	return lo, up
}

// piece is an interval of a branch and bound.
type piece struct {
	a, b float64
	up   float64
	leaf bool // cannot be split (the tail beyond the checked bands)
}

type pieceHeap []piece

func (h pieceHeap) Len() int           { return len(h) }
func (h pieceHeap) Less(i, j int) bool { return h[i].up > h[j].up }
func (h pieceHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *pieceHeap) Push(x any)        { *h = append(*h, x.(piece)) }
func (h *pieceHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

// maxBound returns a rigorous upper bound of the maximum of a function over
// the given pieces, bf(a, b) giving an upper bound over [a, b] and the
// computed value at its midpoint. The bound is within relTol of the largest
// computed value (or of floor, whichever is larger): the piece of largest
// upper bound is split in two until no upper bound exceeds the best value
// by more than the tolerance. At most budget evaluations are made; when
// they run out, or check returns false, the largest remaining upper bound
// is returned, which is still never below the true maximum.
func maxBound(init []piece, bf func(a, b float64) (up, g float64), relTol, floor float64, budget int, check func() bool) float64 {
	h := make(pieceHeap, 0, len(init))
	best := 0.0
	for _, p := range init {
		if !p.leaf {
			up, g := bf(p.a, p.b)
			p.up = up
			best = math.Max(best, g)
			budget--
		}
		h = append(h, p)
	}
	heap.Init(&h)
	for steps := 1; h.Len() > 0; steps++ {
		top := h[0]
		tol := relTol * math.Max(best, floor)
		if top.up <= best+tol || top.leaf || budget <= 0 {
			return top.up
		}
		if steps%2048 == 0 && check != nil && !check() {
			return top.up
		}
		heap.Pop(&h)
		m := top.a + 0.5*(top.b-top.a)
		if !(m > top.a && m < top.b) { // cannot split further
			top.leaf = true
			heap.Push(&h, top)
			continue
		}
		for _, q := range [2]piece{{a: top.a, b: m}, {a: m, b: top.b}} {
			up, g := bf(q.a, q.b)
			best = math.Max(best, g)
			q.up = math.Min(up, top.up)
			heap.Push(&h, q)
			budget--
		}
	}
	return best
}

// periodic holds bounds for |H| on the stopbands far out. For nu = k + d,
// k an integer, the closed form unrolled gives exactly
//
//	H(nu) = sum_r T_r(d) / (j w)^(r+1),  w = 2 pi nu,
//	T_r(d) = r! S_r(d) - exp(-j 2 pi d) sum_{i>=r} i!/(i-r)! S_i(d),
//	S_i(d) = sum_j Coef[i][j] exp(-j 2 pi d s_j),
//
// (T_r is the transform of the jumps of the r-th derivative of h), so
// max |H| over [k - xs, k + xs] is at most sum_r M_r / (2 pi (k - xs))^(r+1)
// with M_r >= max |T_r(d)| over |d| <= xs. Unlike the jump sum J_r, M_r
// sees the cancellation among the jumps that a stopband design makes.
type periodic struct {
	m []float64
}

// t0 returns T_0(d) = S_0(d) - exp(-j 2 pi d) sum_i S_i(d), the transform
// of the jumps of h itself.
func t0(f Filter, d float64) complex128 {
	n := f.Len()
	var s0, sum complex128
	for j := 0; j < n; j++ {
		ph := phase(d, segStart(n, j))
		col := 0.0
		for _, row := range f.Coef {
			col += row[j]
		}
		s0 += complex(f.Coef[0][j], 0) * ph
		sum += complex(col, 0) * ph
	}
	return s0 - phase(d, 1)*sum
}

// newPeriodic bounds max |T_0(d)| over [-xs, xs] by branch and bound on d,
// with a Lipschitz constant of T_0 from the coefficients, to 5%; for
// r >= 1 it takes M_r = J_r, the sum of the jumps, which bounds |T_r|
// everywhere (T_r is their transform).
func newPeriodic(f Filter, bd *bounder, xs float64, check func() bool) *periodic {
	n := f.Len()
	pr := &periodic{m: append([]float64(nil), bd.jump...)}
	lip, scale := 0.0, 0.0
	for j := 0; j < n; j++ {
		s := segStart(n, j)
		col := 0.0
		for _, row := range f.Coef {
			col += row[j]
		}
		c0 := f.Coef[0][j]
		lip += math.Abs(c0)*math.Abs(s) + math.Abs(col)*math.Abs(s+1)
		scale += math.Abs(c0) + math.Abs(col)
	}
	lip *= 2 * math.Pi * inflate
	errAbs := 1e-12*scale + math.SmallestNonzeroFloat64
	bf := func(lo, hi float64) (float64, float64) {
		g := cmplx.Abs(t0(f, lo+0.5*(hi-lo)))
		return g + lip*0.5*(hi-lo) + errAbs, g
	}
	const pieces = 16
	init := make([]piece, pieces)
	for q := range init {
		init[q] = piece{a: -xs + 2*xs*float64(q)/pieces, b: -xs + 2*xs*float64(q+1)/pieces}
	}
	pr.m[0] = math.Min(pr.m[0], maxBound(init, bf, 0.05, 0, 1<<14, check))
	return pr
}

// bound returns an upper bound of |H| over every stopband [k - xs, k + xs]
// with k - xs >= v > 0.
func (pr *periodic) bound(v float64) float64 {
	w := 2 * math.Pi * v
	sum := 0.0
	wp := w
	for _, m := range pr.m {
		sum += m / wp
		wp *= w
	}
	return sum * inflate
}
