package farrow

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestBoundsProperty: on 200 seeded random filters and random intervals
// (near, far and straddling 0), lo <= |H(nu)| <= up at 101 points spread
// over the interval, ends included. |H| is computed by the closed form,
// itself held to quadrature by TestResponseQuadrature; the slack allowed is
// 1e-13 of the coefficients' absolute sum, the closed form's own accuracy.
func TestBoundsProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for trial := 0; trial < 200; trial++ {
		f := randFilter(rng, 6, 12)
		slack := 1e-13 * absSum(f)
		for q := 0; q < 5; q++ {
			var c float64
			switch q {
			case 0:
				c = 0.1 * (2*rng.Float64() - 1)
			case 1, 2:
				c = 20 * (2*rng.Float64() - 1)
			case 3:
				c = math.Pow(10, 2+4*rng.Float64())
			default:
				c = -math.Pow(10, 1+3*rng.Float64())
			}
			w := math.Pow(10, -5+5*rng.Float64())
			a, b := c-w/2, c+w/2
			lo, up := f.Bounds(a, b)
			if !(lo <= up) || lo < 0 {
				t.Fatalf("trial %d: Bounds(%v, %v) = %v, %v", trial, a, b, lo, up)
			}
			for m := 0; m <= 100; m++ {
				nu := a + (b-a)*float64(m)/100
				g := f.Gain(nu)
				if g > up+slack || g < lo-slack {
					t.Errorf("trial %d: |H(%v)| = %v outside Bounds(%v, %v) = [%v, %v]", trial, nu, g, a, b, lo, up)
				}
			}
		}
	}
}

// TestBoundsConverge: as the interval shrinks around nu, lo and up close
// on |H(nu)|; at a width of 1e-7 they are within 1e-5 of the coefficient
// sum of each other.
func TestBoundsConverge(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for trial := 0; trial < 50; trial++ {
		f := randFilter(rng, 5, 10)
		nu := 30 * (2*rng.Float64() - 1)
		g := f.Gain(nu)
		prev := math.Inf(1)
		for _, w := range []float64{1, 1e-1, 1e-2, 1e-3, 1e-5, 1e-7} {
			lo, up := f.Bounds(nu-w/2, nu+w/2)
			if lo > g || up < g {
				t.Errorf("trial %d: |H(%v)| = %v outside [%v, %v] at width %v", trial, nu, g, lo, up, w)
			}
			if up-lo > prev*1.000001 {
				t.Errorf("trial %d: width %v: gap %v grew from %v", trial, w, up-lo, prev)
			}
			prev = up - lo
		}
		if prev > 1e-5*absSum(f) {
			t.Errorf("trial %d: at width 1e-7 the bounds are %v apart", trial, prev)
		}
	}
}

// TestTailBound: far out the tail bound TV/(2 pi |nu|) holds and is what
// makes Bounds useful over wide intervals there.
func TestTailBound(t *testing.T) {
	f := lagrangeCubic()
	bd := newBounder(f)
	for _, nu := range []float64{3.5, 40.25, 1e3 + 0.5, 1e5 + 0.3} {
		if g := f.Gain(nu); g > bd.tail(nu) {
			t.Errorf("|H(%v)| = %v above the tail bound %v", nu, g, bd.tail(nu))
		}
		_, up := f.Bounds(nu, nu+10)
		if up > bd.tv/(2*math.Pi*nu)*(1+1e-9) {
			t.Errorf("Bounds(%v, %v) = %v, looser than TV/(2 pi nu) = %v", nu, nu+10, up, bd.tv/(2*math.Pi*nu))
		}
	}
}

// TestBoundsConstants: the constants behind Bounds are not below the
// quantities they bound, measured by midpoint sums on a fine grid (the
// sampled total variation is a lower bound of the true one).
func TestBoundsConstants(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	for trial := 0; trial < 50; trial++ {
		f := randFilter(rng, 6, 10)
		n := f.Len()
		const per = 4000
		l1, m1, m2, tv, prev := 0.0, 0.0, 0.0, 0.0, 0.0
		for q := 0; q < n*per; q++ {
			tau := -float64(n)/2 + (float64(q)+0.5)/per
			h := f.Impulse(tau)
			l1 += math.Abs(h) / per
			m1 += math.Abs(tau) * math.Abs(h) / per
			m2 += tau * tau * math.Abs(h) / per
			tv += math.Abs(h - prev)
			prev = h
		}
		tv += math.Abs(prev)
		bd := newBounder(f)
		// Midpoint sums err by O(1/per^2) of the curvature; 1e-6 covers it.
		if bd.l1 < l1*(1-1e-6) || bd.lip < 2*math.Pi*m1*(1-1e-6) || bd.m2 < 4*math.Pi*math.Pi*m2*(1-1e-6) || bd.tv < tv*(1-1e-9) {
			t.Errorf("trial %d: constants l1 %v lip %v m2 %v tv %v below the measured %v %v %v %v", trial, bd.l1, bd.lip, bd.m2, bd.tv, l1, 2*math.Pi*m1, 4*math.Pi*math.Pi*m2, tv)
		}
	}
}

// TestBoundsHuge: the widest intervals give finite, sound bounds.
func TestBoundsHuge(t *testing.T) {
	f := lagrangeCubic()
	lo, up := f.Bounds(-1e308, 1e308)
	if lo != 0 || !(up >= 1) || math.IsInf(up, 0) {
		t.Errorf("Bounds(-1e308, 1e308) = %v, %v", lo, up)
	}
	lo, up = f.Bounds(1e300, 1e300)
	if math.IsNaN(lo) || math.IsNaN(up) || lo > up {
		t.Errorf("Bounds(1e300, 1e300) = %v, %v", lo, up)
	}
}
