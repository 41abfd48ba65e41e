package cost_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
)

func ExampleEvaluate() {
	// An invented scenario: 61.44 MHz ADC, 240 kHz output, 96 kHz passband,
	// priced from order estimates at a 122.88 MHz clock.
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3,
		RippleDB: 0.2, RejectionDB: 85}
	plan, _ := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	c, err := chain.Estimate(spec, plan, chain.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	f, err := cost.Evaluate(spec, c, cost.Settings{Clock: 122.88e6})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.0f multiplies and %.0f adds per output, %d words (%d bits), %.2f us latency, %d multipliers\n",
		f.MultipliesPerOutput, f.AddsPerOutput, f.MemoryWords, f.MemoryBits, f.LatencyS*1e6, f.MultipliersAtClock)
	fmt.Printf("designed: %v, rejection %.1f dB\n", f.Designed, f.Analysis.AliasRejectionDB)
	// The CIC's registers are chain.PruneCIC's: 32^5 is a power of two, so
	// its pruned registers carry a guard bit (42 42 39 ... 27 bits, not
	// Hogenauer's 41 41 39 ... 27).
	// Output:
	// 38 multiplies and 1395 adds per output, 92 words (2149 bits), 47.62 us latency, 3 multipliers
	// designed: false, rejection 85.0 dB
}
