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
	// --vary rejection=80:100:-5: STEP -5 dB must be above zero; FROM and TO give the direction: write 80:100:5 upwards or 100:80:5 downwards
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

// A grid steps two keys: every pair of their values is a cell.
func ExampleNewGrid() {
	rows, _ := sweep.ParseVary("rejection=90:70:10") // downwards: 90, 80, 70 dB
	cols, _ := sweep.ParseVary("decimation=32:64:32")
	g, err := sweep.NewGrid(rows, cols)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(g.Cells(), "cells; row 3, column 2 writes to", sweep.GridValueDir(2, 1))
	k, _ := sweep.LookupKey("decimation")
	text, _ := sweep.ApplyAll([]byte(`input_rate = "122.88 MHz"`), sweep.Setting{Key: k, Value: 64})
	fmt.Print(string(text))
	out, _ := sweep.ParseVary("output_rate=1.92:3.84:1.92 MHz")
	_, err = sweep.NewGrid(cols, out)
	fmt.Println(err)
	// Output:
	// 6 cells; row 3, column 2 writes to values/r03-c02
	// input_rate = "122.88 MHz"
	// output_rate = "1.92 MHz"
	// --vary output_rate=1.92:3.84:1.92 MHz: decimation and output_rate both set output_rate (decimation as input_rate / D); step one of them
}
