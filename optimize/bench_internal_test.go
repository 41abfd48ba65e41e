package optimize

import (
	"testing"

	"stepdown/chain"
)

// BenchmarkEstimateD4096 scores every candidate of the invented 122.88 MHz
// to 30 kHz receiver (D = 4096 = 2^12, all kinds, up to 6 stages) from
// estimates, with a fresh estimator (so its cache fills inside the loop).
func BenchmarkEstimateD4096(b *testing.B) {
	spec, err := rxSpec().Normalize()
	if err != nil {
		b.Fatal(err)
	}
	p := newParams(spec, false)
	sp := newSpace(&p, &Settings{})
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		est := newEstimator(p, 0)
		n, ok := 0, 0
		sp.walk(func(plan []chain.StagePlan) bool {
			n++
			if _, d := est.score(plan); d == dropNone {
				ok++
			}
			return true
		})
		if i == 0 {
			b.ReportMetric(float64(n), "candidates")
			b.ReportMetric(float64(ok), "feasible")
		}
	}
}
