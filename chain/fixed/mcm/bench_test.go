package mcm_test

import (
	"math/rand"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

// BenchmarkBuild300x18 builds a symmetric 300-tap stage of random 18-bit
// coefficients (150 distinct values), the size the package is held to.
func BenchmarkBuild300x18(b *testing.B) {
	rng := rand.New(rand.NewSource(1))
	sets := make([][]int64, 8)
	for k := range sets {
		c := make([]int64, 300)
		for i := range 150 {
			c[i] = rng.Int63n(1<<18) - 1<<17
			c[299-i] = c[i]
		}
		sets[k] = c
	}
	adders := 0
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		g, err := mcm.Build(sets[i%len(sets)])
		if err != nil {
			b.Fatal(err)
		}
		adders += g.Adders()
	}
	b.ReportMetric(float64(adders)/float64(b.N), "adders/op")
}
