package remez

import "math"

// GoldenMax maximises f on [a, b] by golden-section search, the module's
// one implementation (the design engine's refinement of extrema, the
// measurement of rounded taps, the cascade analysis and the search's
// estimates all call it, alone or several at once through GoldenMaxEach).
// It takes at most iters steps and stops once the bracket is at most tol
// wide (tol 0: iters steps). It returns the best point it evaluated, the
// ends a and b included, and f there. f should be unimodal on [a, b] for
// the result to be the maximum; otherwise it is the best of the points
// tried. A NaN value is never the best.
func GoldenMax(f func(float64) float64, a, b float64, iters int, tol float64) (x, fx float64) {
	g := newGolden(a, b, iters, tol)
	for {
		p, ok := g.next()
		if !ok {
			return g.x, g.fx
		}
		g.take(f(p))
	}
}

// GoldenMaxEach runs GoldenMax on each bracket [a[i], b[i]] with tolerance
// tol[i], in step: f is given every search's next point at once (xs) and
// writes f at each into fxs, so that an f that evaluates several points
// together can interleave them. Each search takes exactly GoldenMax's
// points and returns its result bit for bit; fx[i] is the best value of
// search i and x[i] its point.
func GoldenMaxEach(f func(xs, fxs []float64), a, b []float64, iters int, tol []float64) (x, fx []float64) {
	gs := make([]golden, len(a))
	for i := range gs {
		gs[i] = newGolden(a[i], b[i], iters, tol[i])
	}
	live := make([]int, 0, len(gs))
	xs := make([]float64, 0, len(gs))
	fxs := make([]float64, len(gs))
	for {
		live, xs = live[:0], xs[:0]
		for i := range gs {
			if p, ok := gs[i].next(); ok {
				live = append(live, i)
				xs = append(xs, p)
			}
		}
		if len(live) == 0 {
			break
		}
		f(xs, fxs[:len(xs)])
		for k, i := range live {
			gs[i].take(fxs[k])
		}
	}
	x, fx = make([]float64, len(gs)), make([]float64, len(gs))
	for i := range gs {
		x[i], fx[i] = gs[i].x, gs[i].fx
	}
	return x, fx
}

// golden is one golden-section search as a sequence of points: next gives
// the point to evaluate (false once the search is over), take records f
// there.
type golden struct {
	a, b, c, d, fc, fd float64
	x, fx              float64
	i, iters           int
	tol                float64
	stage              int // 0..3: a, b, c, d; 4: between steps; 5, 6: a step's c or d
}

const goldenR = 0.6180339887498949

func newGolden(a, b float64, iters int, tol float64) golden {
	return golden{a: a, b: b, iters: iters, tol: tol}
}

func (g *golden) next() (float64, bool) {
	switch g.stage {
	case 0:
		return g.a, true
	case 1:
		return g.b, true
	case 2:
		return g.c, true
	case 3:
		return g.d, true
	}
	if !(g.i < g.iters && g.b-g.a > g.tol) {
		return 0, false
	}
	if g.fc >= g.fd {
		g.b, g.d, g.fd = g.d, g.c, g.fc
		g.c = g.b - goldenR*(g.b-g.a)
		g.stage = 5
		return g.c, true
	}
	g.a, g.c, g.fc = g.c, g.d, g.fd
	g.d = g.a + goldenR*(g.b-g.a)
	g.stage = 6
	return g.d, true
}

func (g *golden) keep(p, v float64) {
	if v > g.fx || math.IsNaN(g.fx) {
		g.x, g.fx = p, v
	}
}

func (g *golden) take(v float64) {
	switch g.stage {
	case 0:
		g.x, g.fx = g.a, v
		g.stage = 1
	case 1:
		g.keep(g.b, v)
		g.c, g.d = g.b-goldenR*(g.b-g.a), g.a+goldenR*(g.b-g.a)
		g.stage = 2
	case 2:
		g.fc = v
		g.keep(g.c, v)
		g.stage = 3
	case 3:
		g.fd = v
		g.keep(g.d, v)
		g.stage = 4
	case 5:
		g.fc = v
		g.keep(g.c, v)
		g.i++
		g.stage = 4
	case 6:
		g.fd = v
		g.keep(g.d, v)
		g.i++
		g.stage = 4
	}
}
