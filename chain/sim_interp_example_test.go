package chain_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain"
)

func ExampleRun_interpolation() {
	// A 7-tap half-band interpolating by 2 (by hand): its phase 0 is the
	// taps -1/32, 9/32, 9/32, -1/32 times 2, its phase 1 the centre tap
	// times 2, a delay of one input. A DC input comes out at gain 1 once
	// the delay line is full.
	c := &chain.Chain{InputRate: 8, Direction: chain.Interpolate, Stages: []chain.Stage{
		chain.FIRStage{R: 2, Taps: []float64{-1.0 / 32, 0, 9.0 / 32, 0.5, 9.0 / 32, 0, -1.0 / 32}, Length: 7, HalfBand: true},
	}, Designed: true}
	fmt.Println(chain.Run(c, []float64{1, 1, 1, 1}))
	// Output: [-0.0625 0 0.5 1 1.0625 1 1 1]
}
