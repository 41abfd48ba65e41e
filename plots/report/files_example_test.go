package report_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// Plan the built-in example spec and write exactly the files the command
// line's plan writes: report.json, the figures and the coefficient files,
// replacing the output folder as a whole.
func ExampleFiles() {
	ctx := context.Background()
	spec, err := specfile.Parse("example.toml", []byte(specfile.ExampleText))
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := optimize.Plan(ctx, spec.Chain, spec.SearchSettings())
	if err != nil {
		fmt.Println(err)
		return
	}
	rep, err := report.NewContext(ctx, "plan", spec, res)
	if err != nil {
		fmt.Println(err)
		return
	}
	files, err := report.Files(ctx, rep, res, spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	dir, err := os.MkdirTemp("", "stepdown-example-")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	out, err := report.OpenFolder(filepath.Join(dir, "out"), "")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer out.Discard()
	if err := out.Write(files); err != nil {
		fmt.Println(err)
		return
	}
	if err := out.Commit(); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("recommended:", rep.Front[rep.Recommended].Notation)
	vectors := 0
	for _, f := range files {
		if strings.HasPrefix(f.Name, "vectors/") && f.Name != "vectors/README.txt" {
			vectors++
			continue
		}
		fmt.Println(f.Name)
	}
	fmt.Println("and", vectors, "vector files: 6 stimuli, each with its input, 2 stages' outputs and the chain's")
	// Output:
	// recommended: cic5m1r16 > fir4
	// report.json
	// front.svg
	// front.png
	// response.svg
	// response.png
	// stages.svg
	// stages.png
	// coefficients/stage2_fir.csv
	// coefficients/stage2_fir_int.csv
	// coefficients/stage2_fir.hex
	// headers/stepdown_chain.h
	// headers/stepdown_chain_pkg.vhd
	// headers/stepdown_chain.svh
	// rtl/stepdown_chain.v
	// rtl/stepdown_tb.v
	// vectors/README.txt
	// and 24 vector files: 6 stimuli, each with its input, 2 stages' outputs and the chain's
}
