package sweep_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/optimize/sweep"
)

func ExampleParseVary() {
	v, err := sweep.ParseVary("output_rate=1.92:3.84:0.64 MHz")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, x := range v.Values {
		fmt.Println(v.Key.Format(x))
	}
	_, err = sweep.ParseVary("rejection=80:100:-5")
	fmt.Println(err)
	// Output:
	// 1.92 MHz
	// 2.56 MHz
	// 3.2 MHz
	// 3.84 MHz
	// --vary rejection=80:100:-5: STEP -5 dB must be above zero
}
