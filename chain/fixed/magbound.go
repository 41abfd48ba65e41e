package fixed

import (
	"math"
	"math/cmplx"
	"slices"
)

// newMagBounds is newAmpBounds for a filter of any symmetry measured by
// its magnitude |H(f)| (Deviations' magnitude): lo[m] <= |H(f)| <= hi[m]
// for every f in cell m, with lo >= 0, rounding of the FFT and of a
// direct evaluation (remez.Magnitude) included.
//
// About the cell's centre w_m = 2 pi m / size (radians per sample), for
// |t| <= hh = pi / size and c = (n-1)/2,
//
//	H(w_m + t) = e^{-i t c} sum_p (-i t)^p / p! X_p(m),
//	X_p(m) = sum_k h_k (k-c)^p e^{-i w_m k},
//
// X_p being one real FFT of h_k (k-c)^p, and the sum over p >= boundOrder
// at most sum |h_k| |k-c|^boundOrder hh^boundOrder / boundOrder! (Taylor's
// remainder of e^{-ix} for real x). The unit factor e^{-i t c} leaves the
// magnitude alone, so |H| over the cell lies within the magnitude of the
// linear part a + b t (a = X_0, b = -i X_1; convex in t: its largest
// value at an end, its smallest at the projection of 0 on the segment)
// widened by |X_2| hh^2 / 2, sum over 3 <= p < boundOrder of |X_p| hh^p /
// p!, the remainder, each X_p's FFT rounding (kappa sum |h_k| |k-c|^p,
// as newAmpBounds, doubled for the two parts of a complex value) and
// the rounding of a direct evaluation (below). The FFT's sign convention
// does not matter: the other one gives the expansion in -t, and the cell
// is symmetric about its centre.
func newMagBounds(h []float64, rate float64) *ampBounds {
	g := newMomentGrid(len(h))
	size, half, c, kappa, hh := g.size, g.half, g.c, g.kappa, g.hh
	const u = 0x1p-53

	// What no cell's expansion sees: the FFT's rounding of every X_p, the
	// remainder, and the rounding of remez.Magnitude: its angle w k (w =
	// 2 pi f / rate rounded in three operations, then times k up to n, so
	// up to 4 pi n u rad off, at the seed of each run of 32 rotations),
	// Sincos and the rotations (a few u a step, under 32 steps), the
	// products and the sum of n terms in each part (n u of the taps'
	// sum), and the hypot, taken generously as 64 (n+64) u sum |h_k|.
	slack0 := boundSlack(h, c, kappa, hh, 2, 64)

	x := make([][]complex128, 3)
	extra := make([]float64, half+1) // sum over p >= 3 of |X_p| hh^p / p!
	g.moments(h, func(p int, pw, fact float64, coef []complex128) {
		if p < 3 {
			x[p] = slices.Clone(coef)
			return
		}
		for m, v := range coef {
			extra[m] += cmplx.Abs(v) * pw / fact
		}
	})
	bd := &ampBounds{size: size, rate: rate, lo: make([]float64, half+1), hi: make([]float64, half+1)}
	for m := range bd.lo {
		a, x1 := x[0][m], x[1][m]
		b := complex(imag(x1), -real(x1)) // -i X_1
		q2 := cmplx.Abs(x[2][m]) * hh * hh / 2
		top := math.Max(cmplx.Abs(a-b*complex(hh, 0)), cmplx.Abs(a+b*complex(hh, 0)))
		low := cmplx.Abs(a)
		if bb := real(b)*real(b) + imag(b)*imag(b); bb > 0 {
			t := -(real(b)*real(a) + imag(b)*imag(a)) / bb
			t = math.Max(-hh, math.Min(hh, t))
			low = cmplx.Abs(a + b*complex(t, 0))
		}
		// The linear part's own rounding, a few u of its terms' sizes.
		s := slack0 + extra[m] + q2 + 8*u*(cmplx.Abs(a)+cmplx.Abs(b)*hh+q2)
		bd.hi[m] = top + s
		bd.lo[m] = math.Max(0, low-s)
	}
	return bd
}
