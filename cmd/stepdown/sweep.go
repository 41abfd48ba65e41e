package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/optimize/sweep"
	"github.com/stepdown-dsp/stepdown/plots/htmlreport"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// sweepPlan runs one value's search; tests substitute a fake.
var sweepPlan = optimize.Plan

func sweepCommand() *cli.Command {
	return &cli.Command{
		Name:      "sweep",
		Usage:     "step one requirement over a range, plan each value and tabulate the best chain's cost",
		ArgsUsage: "[SPEC.toml]",
		UsageText: "stepdown sweep [SPEC.toml] --vary KEY=FROM:TO:STEP [--out DIR] [--json] [--quiet] [--html] [--max-stages N] [--jobs N] [--timeout DUR]\n\n" +
			"KEY is one of input_rate, output_rate, passband, protected, ripple, rejection, clock or\n" +
			"coefficient_bits; FROM:TO:STEP are written like the spec's values (\"80 dB:100 dB:5 dB\",\n" +
			"\"80:100:5\" in the key's base unit, \"1.92:3.84:0.64 MHz\"), at most 50 values.\n" +
			"Writes sweep.csv, sweep.svg, sweep.png, report.json (the sweep) and values/NN/ (each value's\n" +
			"report.json and coefficient files). Values that make the spec invalid are rows with status\n" +
			"\"invalid\"; the sweep goes on. Without SPEC.toml the built-in example is swept.",
		Flags: append(outFlags(),
			&cli.StringFlag{Name: "vary", Usage: "the key and range, KEY=FROM:TO:STEP (e.g. rejection=80:100:5)"},
			&cli.BoolFlag{Name: "html", Usage: "also write report.html, one self-contained page for sharing and printing"},
			&cli.IntFlag{Name: "max-stages", Usage: "override search.max_stages (1..12)"},
			&cli.IntFlag{Name: "jobs", Usage: "parallel designs over the whole sweep (default: the number of CPUs)"},
			&cli.DurationFlag{Name: "timeout", Usage: "stop the whole sweep after this long; unfinished values keep their best front so far, marked partial"},
		),
		Action: runSweep,
	}
}

func runSweep(c *cli.Context) error {
	if !c.IsSet("vary") {
		return usagef("--vary: missing; name the key and range, e.g. --vary rejection=80:100:5")
	}
	v, err := sweep.ParseVary(c.String("vary"))
	if err != nil {
		return usagef("%s", units.Clip(err.Error(), 4*units.MaxEcho))
	}
	if err := checkSearchFlags(c); err != nil {
		return err
	}
	base, source, text, err := loadSpec(c)
	if err != nil {
		return err
	}
	out, err := prepareOut(c.String("out"))
	if err != nil {
		return err
	}
	defer out.Discard()

	sigCtx := c.Context
	ctx := sigCtx
	if c.IsSet("timeout") {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(sigCtx, c.Duration("timeout"))
		defer cancel()
	}
	quiet, asJSON := c.Bool("quiet"), c.Bool("json")
	prog := newProgress(c.App.ErrWriter, quiet)
	st := sweep.Study{
		Name: source, Spec: text, Vary: v, Jobs: c.Int("jobs"),
		Settings: func(s *specfile.Spec) optimize.Settings {
			set := s.SearchSettings()
			if c.IsSet("max-stages") {
				set.MaxStages = c.Int("max-stages")
			}
			return set
		},
		Done: prog.update,
		Plan: sweepPlan,
	}
	if st.Jobs > 0 {
		st.Workers = st.Jobs
	}
	rs := sweep.Run(ctx, st)
	prog.finish()
	if sigCtx.Err() != nil {
		return fmt.Errorf("interrupted; %s left as it was", clip(out.Dir()))
	}
	nChain, nInvalid := 0, 0
	for _, r := range rs {
		if r.Status.HasChain() {
			nChain++
		}
		if r.Status == sweep.Invalid {
			nInvalid++
		}
	}
	if nInvalid == len(rs) {
		return usagef("--vary %s=%s: every value makes the spec invalid (first, %s: %s)", v.Key.Name, v.Text, v.Key.Format(rs[0].Value), specfile.InFileTerms(rs[0].Detail))
	}
	if nChain == 0 {
		first := rs[0]
		for _, r := range rs {
			if r.Status != sweep.Invalid {
				first = r
				break
			}
		}
		return fmt.Errorf("--vary %s=%s: no value gives a chain (%s: %s); %s left as it was", v.Key.Name, v.Text, v.Key.Format(first.Value), specfile.InFileTerms(first.Detail), clip(out.Dir()))
	}

	files, doc, err := sweepFiles(source, base, v, rs, c.Bool("html"))
	if err != nil {
		return err
	}
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s left as it was", clip(out.Dir()))
	}
	if err := out.Write(files); err != nil {
		return err
	}
	if err := out.Commit(); err != nil {
		return err
	}
	if asJSON {
		if _, err := c.App.Writer.Write(files[0].Data); err != nil {
			return err
		}
	}
	w := c.App.Writer
	switch {
	case quiet:
		w = io.Discard
	case asJSON:
		w = c.App.ErrWriter
	}
	printSweep(w, source, out.Dir(), v, doc, files)
	return nil
}

// sweepFiles renders every file of a sweep in memory, report.json first,
// with report.html last when html is set.
func sweepFiles(source string, base *specfile.Spec, v sweep.Vary, rs []sweep.Result, html bool) ([]report.File, *sweep.Doc, error) {
	files, doc, err := sweep.Files(source, base, v, rs)
	if err != nil || !html {
		return files, doc, err
	}
	files, err = htmlreport.AddSweepPage(source, doc, files)
	return files, doc, err
}

func printSweep(w io.Writer, source, dir string, v sweep.Vary, doc *sweep.Doc, files []report.File) {
	fmt.Fprintf(w, "stepdown sweep: %s, %s from %s to %s in steps of %s (%d values)\n\n", source, v.Key.Name,
		v.Key.Format(v.From), v.Key.Format(v.To), v.Key.Format(v.Step), len(v.Values))
	clock := false
	for _, dv := range doc.Values {
		clock = clock || (dv.Best != nil && dv.Best.MultipliersAtClock != nil)
	}
	head := []string{v.Key.Name, "status", "recommended", "mult/out", "memory bits", "latency", "least mult/out", "least memory", "least latency"}
	if clock {
		head = append(head[:6], "multipliers", "least mult/out", "least memory", "least latency", "least multipliers")
	}
	rows := [][]string{head}
	for _, dv := range doc.Values {
		if dv.Recommended < 0 {
			rows = append(rows, []string{dv.ValueText, dv.Status, dv.Detail})
			continue
		}
		c := dv.Front[dv.Recommended]
		n := c.Notation
		if dv.StructureChanged {
			n += "  <- changes"
		}
		row := []string{dv.ValueText, dv.Status, n, trimFloat(c.MultipliesPerOutput, 1), fmt.Sprint(c.MemoryBits), seconds(c.LatencyS)}
		if clock {
			m := ""
			if c.MultipliersAtClock != nil {
				m = fmt.Sprint(*c.MultipliersAtClock)
			}
			row = append(row, m)
		}
		row = append(row, trimFloat(dv.Best.MultipliesPerOutput, 1), fmt.Sprint(dv.Best.MemoryBits), seconds(dv.Best.LatencyS))
		if clock {
			m := ""
			if dv.Best.MultipliersAtClock != nil {
				m = fmt.Sprint(*dv.Best.MultipliersAtClock)
			}
			row = append(row, m)
		}
		rows = append(rows, row)
	}
	// A row without a chain is the value, its status and the detail, which
	// runs to the end of the line: the value and status columns are as
	// wide as every row needs, the detail takes no width.
	widths := make([]int, len(head))
	for _, r := range rows {
		n := len(r)
		if n < len(head) {
			n--
		}
		for i, c := range r[:n] {
			widths[i] = max(widths[i], len(c))
		}
	}
	for _, r := range rows {
		var b strings.Builder
		for i, c := range r {
			if i > 0 {
				b.WriteString("  ")
			}
			if len(r) < len(head) && i == len(r)-1 {
				b.WriteString(c)
			} else if i >= 3 {
				fmt.Fprintf(&b, "%*s", widths[i], c)
			} else {
				fmt.Fprintf(&b, "%-*s", widths[i], c)
			}
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
	fmt.Fprintf(w, "\nwrote %s/ (%d files): report.json, sweep.csv, sweep.svg, sweep.png", dir, len(files))
	for _, f := range files {
		if f.Name == "report.html" {
			fmt.Fprint(w, ", report.html")
		}
	}
	fmt.Fprintln(w, ", values/NN/")
	fmt.Fprintf(w, "\nCaution: %s.\n", report.Caution)
}
