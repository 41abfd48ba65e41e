package chain

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestPolyphasePathsDirect holds PolyphasePaths to the prototype's
// transform summed term by term at each path's frequency,
// |sum_j p_j exp(-i 2 pi (g + k Fm) j / (L Fm))|, on seeded random
// prototypes, phase counts (powers of two and not) and frequencies: within
// 1e-12 of the taps' 1-norm.
func TestPolyphasePathsDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 50))
	for trial := range 60 {
		l := 1 + rng.IntN(40)
		taps := make([]float64, 1+rng.IntN(400))
		norm := 0.0
		for i := range taps {
			taps[i] = rng.NormFloat64()
			norm += math.Abs(taps[i])
		}
		fm := 0.5 + rng.Float64()
		pp := NewPolyphasePaths(taps, l, fm)
		for range 5 {
			g := rng.Float64() * fm * float64(l) * 2
			got := pp.Gains(g, nil)
			for k := range l {
				h := g + float64(k)*fm
				var re, im float64
				for j, v := range taps {
					s, c := math.Sincos(-2 * math.Pi * h * float64(j) / (float64(l) * fm))
					re += v * c
					im += v * s
				}
				if want := math.Hypot(re, im); math.Abs(got[k]-want) > 1e-12*norm {
					t.Fatalf("trial %d (L %d, %d taps): path %d at %g: %.15g, direct %.15g", trial, l, len(taps), k, g, got[k], want)
				}
			}
		}
	}
}
