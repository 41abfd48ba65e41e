package optimize_test

import (
	"context"
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// A 3.072 MHz stream taken down to 48 kHz (D = 64) keeping 20 kHz.
func ExamplePlan() {
	spec := chain.Spec{InputRate: 3.072e6, OutputRate: 48e3, Passband: 20e3, RippleDB: 0.1, RejectionDB: 80}
	r, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 3})
	if err != nil {
		fmt.Println(err)
		return
	}
	if r.Recommended < 0 {
		fmt.Println(r.Reason)
		return
	}
	best := r.Front[r.Recommended]
	fmt.Printf("%d candidates, %d designed, %d on the front\n", r.Candidates, r.Designed, len(r.Front))
	fmt.Printf("recommended %s: %.1f multiplies per output\n", chain.Notation(best.Plan), best.Figures.MultipliesPerOutput)
	fmt.Println(r.Reason)
	// Output:
	// 816 candidates, 88 designed, 11 on the front
	// recommended cic7m1r32 > fir2: 21.0 multiplies per output
	// Chosen as the knee of the front, the chain nearest the ideal of the fewest multiplies, least memory and least latency at once: 11% more multiplies than the cheapest chain, for 6% less memory and 8% less latency.
}
