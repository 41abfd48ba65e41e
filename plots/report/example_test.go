package report_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/plots/report"
)

func ExampleReadmemH() {
	b, err := report.ReadmemH([]int64{3, -1, -131071}, 18)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(string(b))
	// Output:
	// 00003
	// 3ffff
	// 20001
}
