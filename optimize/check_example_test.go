package optimize_test

import (
	"context"
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// Check one named chain against an invented spec: it is designed and
// measured exactly as the search would, and the reason is empty when the
// search would keep it.
func ExampleCheck() {
	spec := chain.Spec{InputRate: 3.072e6, OutputRate: 48e3, Passband: 20e3, RippleDB: 0.1, RejectionDB: 80}
	plan, err := chain.ParseNotation("cic5m1r16 > hb > fir2")
	if err != nil {
		fmt.Println(err)
		return
	}
	c, why, err := optimize.Check(context.Background(), spec, plan, optimize.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	a := c.Figures.Analysis
	fmt.Printf("%s: %.0f multiplies per output, rejection %.1f dB, meets: %v\n",
		chain.Notation(c.Plan), c.Figures.MultipliesPerOutput, a.AliasRejectionDB, why == "")
	// Output:
	// cic5m1r16 > hb > fir2: 29 multiplies per output, rejection 80.9 dB, meets: true
}
