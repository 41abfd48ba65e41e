package cost

import (
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// A chain's latency is its stages' group delays summed: each stage's
// delay in samples at its input rate (a CIC's N (RM-1)/2, a FIR's
// (n-1)/2) times the input samples per sample there, over the input rate.
// On 2000 seeded random integer chains it is the correctly rounded value
// of that sum in exact rational arithmetic (math/big), so two chains of
// the same delay get the same figure to the bit: the front compares
// latencies exactly, and a sum of the stages' seconds in float64 differed
// in its last bit with the order of the stages (an invented 245.76 MHz to
// 1.024 MHz receiver's front held cic4m1r40 > fir6 beside cic4m1r48 >
// fir5, of the same delay, fewer multiplies and less memory).
func TestLatencyExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 12))
	rates := []float64{122.88e6, 245.76e6, 100e6, 1e9, 3.2e9, 61.44e6, 96e6}
	for trial := 0; trial < 2000; trial++ {
		f0 := rates[rng.IntN(len(rates))]
		var stages []chain.Stage
		exact := new(big.Rat)
		prefix := int64(1)
		n := 1 + rng.IntN(4)
		for i := 0; i < n; i++ {
			var st chain.Stage
			var delay *big.Rat // in samples at the stage's input rate
			if i == 0 && rng.IntN(2) == 0 {
				r, m, o := 2+rng.IntN(200), 1+rng.IntN(2), 1+rng.IntN(6)
				st = chain.NewCICStage(o, m, r, 16, 24)
				delay = big.NewRat(int64(o*(r*m-1)), 2)
			} else {
				r, taps := 2+rng.IntN(8), 3+rng.IntN(400)
				st = chain.FIRStage{R: r, Length: taps}
				delay = big.NewRat(int64(taps-1), 2)
			}
			stages = append(stages, st)
			exact.Add(exact, new(big.Rat).Mul(delay, big.NewRat(prefix, 1)))
			prefix *= int64(st.Factor())
		}
		c := &chain.Chain{InputRate: f0, Stages: stages}
		sp := chain.Spec{InputRate: f0, OutputRate: f0 / float64(prefix), Passband: f0 / float64(prefix) / 4, RippleDB: 1, RejectionDB: 60, InputBits: 16, OutputBits: 24}
		f, err := Price(sp, c, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		exact.Quo(exact, new(big.Rat).SetFloat64(f0))
		want, _ := exact.Float64()
		if f.LatencyS != want {
			t.Fatalf("trial %d, %d stages at %g Hz: latency %.17g s, exact %.17g s", trial, n, f0, f.LatencyS, want)
		}
	}
}
