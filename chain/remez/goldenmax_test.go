package remez

import (
	"math"
	"math/rand/v2"
	"testing"
)

// GoldenMax against a dense brute-force scan on seeded random unimodal
// functions (a peak anywhere in the interval, ends included, of random
// widths): the result is within the final bracket of the true maximum and
// never below any value the scan finds further than one bracket away.
func TestGoldenMax(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 4))
	for trial := 0; trial < 2000; trial++ {
		a := rng.NormFloat64() * 10
		b := a + math.Exp(rng.NormFloat64()*3)
		p := a + (b-a)*(rng.Float64()*1.4-0.2) // the peak may lie outside: a monotone function
		w := (b - a) * math.Exp(rng.NormFloat64())
		f := func(x float64) float64 { return -math.Abs(x-p) / w }
		x, fx := GoldenMax(f, a, b, 200, 1e-13*(b-a))
		want := math.Min(math.Max(p, a), b)
		if math.Abs(x-want) > 1e-9*(b-a) || fx != f(x) {
			t.Fatalf("trial %d: on [%g, %g] peak %g: got x %g f %g, want x %g", trial, a, b, p, x, fx, want)
		}
	}
	// iters bounds the evaluations; NaN is never chosen.
	n := 0
	GoldenMax(func(x float64) float64 { n++; return -x * x }, -1, 2, 10, 0)
	if n != 14 {
		t.Errorf("10 steps took %d evaluations, want 14 (2 ends, 2 inner points, one a step)", n)
	}
	if x, _ := GoldenMax(func(x float64) float64 {
		if x < 0.5 {
			return math.NaN()
		}
		return x
	}, 0, 1, 50, 0); x != 1 {
		t.Errorf("NaN values: got x %g, want the end 1", x)
	}
}
