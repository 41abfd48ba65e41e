package sweep_test

import (
	"context"
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
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

// Sweep the rejection target of the built-in example spec and print each
// value's recommended chain.
func ExampleRun() {
	v, err := sweep.ParseVary("rejection=70:90:10")
	if err != nil {
		fmt.Println(err)
		return
	}
	rs := sweep.Run(context.Background(), sweep.Study{Name: "example", Spec: []byte(specfile.ExampleText), Vary: v})
	for _, r := range rs {
		rep := r.Report
		fmt.Printf("%s: %s, %s\n", v.Key.Format(r.Value), r.Status, rep.Front[rep.Recommended].Notation)
	}
	// Output:
	// 70 dB: ok, cic5m1r32 > fir2
	// 80 dB: ok, cic6m1r32 > fir2
	// 90 dB: ok, cic5m1r16 > fir4
}
