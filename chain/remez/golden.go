package remez

import "math"

// GoldenMax maximises f on [a, b] by golden-section search, the module's
// one implementation (the design engine's refinement of extrema, the
// measurement of rounded taps, the cascade analysis and the search's
// estimates all call it). It takes at most iters steps and stops once the
// bracket is at most tol wide (tol 0: iters steps). It returns the best
// point it evaluated, the ends a and b included, and f there. f should be
// unimodal on [a, b] for the result to be the maximum; otherwise it is the
// best of the points tried. A NaN value is never the best.
func GoldenMax(f func(float64) float64, a, b float64, iters int, tol float64) (x, fx float64) {
	const r = 0.6180339887498949
	x, fx = a, f(a)
	if v := f(b); v > fx || math.IsNaN(fx) {
		x, fx = b, v
	}
	c, d := b-r*(b-a), a+r*(b-a)
	fc, fd := f(c), f(d)
	keep := func(p, v float64) {
		if v > fx || math.IsNaN(fx) {
			x, fx = p, v
		}
	}
	keep(c, fc)
	keep(d, fd)
	for i := 0; i < iters && b-a > tol; i++ {
		if fc >= fd {
			b, d, fd = d, c, fc
			c = b - r*(b-a)
			fc = f(c)
			keep(c, fc)
		} else {
			a, c, fc = c, d, fd
			d = a + r*(b-a)
			fd = f(d)
			keep(d, fd)
		}
	}
	return x, fx
}
