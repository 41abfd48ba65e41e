package optimize

import (
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
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
		sp.skipCIC = est.skipCIC
		sp.skipped = func(_ dropCode, k int64) { n += int(k) }
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

// BenchmarkEstimateD2to20 is the estimate tier's share of the largest ratio
// the limits promise (2^20 within 6 stages).
func BenchmarkEstimateD2to20(b *testing.B) {
	spec := rxSpec()
	spec.OutputRate, spec.Passband = 1000, 300
	spec.InputRate = spec.OutputRate * (1 << 20)
	spec, err := spec.Normalize()
	if err != nil {
		b.Fatal(err)
	}
	p := newParams(spec, false)
	sp := newSpace(&p, &Settings{})
	for i := 0; i < b.N; i++ {
		est := newEstimator(p, 0)
		n, ok := 0, 0
		sp.skipCIC = est.skipCIC
		sp.skipped = func(_ dropCode, k int64) { n += int(k) }
		sp.walk(func(plan []chain.StagePlan) bool {
			n++
			if _, d := est.score(plan); d == dropNone {
				ok++
			}
			return true
		})
		b.ReportMetric(float64(n), "candidates")
		b.ReportMetric(float64(ok), "feasible")
	}
}
