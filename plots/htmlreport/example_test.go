package htmlreport_test

import (
	"fmt"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/plots/htmlreport"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

func ExamplePlan() {
	s, _ := specfile.Example()
	rep := &report.Report{
		Command: "plan", Caution: report.Caution, Spec: report.NewSpec(s), Recommended: 0,
		Reason: "The only chain.",
		Front: []report.Chain{{Notation: "cic5m1r16 > fir4", Designed: true, MeetsTargets: true,
			Stages: []report.Stage{{Kind: "cic", Decimation: 16}, {Kind: "fir", Decimation: 4, Taps: 34}}}},
	}
	page, err := htmlreport.Plan(htmlreport.PlanPage{
		Source: "built-in example", Report: rep,
		Files: []string{"report.json", "coefficients/stage2_fir.csv", "report.html"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	html := string(page)
	fmt.Println(strings.HasPrefix(html, "<!DOCTYPE html>"))
	fmt.Println(strings.Contains(html, `<a class="file" href="coefficients/stage2_fir.csv">stage2_fir.csv</a>`))
	fmt.Println(strings.Contains(html, "http://") || strings.Contains(html, "https://"))
	// Output:
	// true
	// true
	// false
}
