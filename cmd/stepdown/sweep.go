package main

import (
	"context"
	"fmt"
	"github.com/stepdown-dsp/stepdown/chain"
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
		Usage:     "step one requirement (or two, as a grid) over a range, plan each value and tabulate the best chain's cost",
		ArgsUsage: "[SPEC.toml]",
		UsageText: "stepdown sweep [SPEC.toml] --vary KEY=FROM:TO:STEP [--vary KEY2=FROM:TO:STEP] [--out DIR] [--json] [--quiet] [--html] [--max-stages N] [--jobs N] [--timeout DUR]\n\n" +
			"KEY is one of input_rate, output_rate, decimation, interpolation, passband, protected, stopband, ripple,\n" +
			"rejection, snr (sigma_delta.snr), clock, input_bits, output_bits, coefficient_bits or max_stages; FROM:TO:STEP are\n" +
			"written like the spec's values (\"80 dB:100 dB:5 dB\", \"80:100:5\" in the key's base unit,\n" +
			"\"1.92:3.84:0.64 MHz\"), at most 50 values; FROM above TO runs downwards (\"90:70:10\").\n" +
			"decimation steps D and sets output_rate = input_rate / D; interpolation steps L and sets\n" +
			"output_rate = input_rate L.\n" +
			"Writes sweep.csv, sweep.svg, sweep.png, report.json (the sweep) and values/NN/ (each value's\n" +
			"report.json and coefficient files). Values that make the spec invalid are rows with status\n" +
			"\"invalid\"; the sweep goes on. Without SPEC.toml the built-in example is swept.\n" +
			"A second --vary makes a grid of every pair (at most 150 cells): the table and the heat map\n" +
			"show the recommended chain's multiplies per output, rows the first key, columns the second.",
		Flags: append(outFlags(),
			&cli.StringSliceFlag{Name: "vary", Usage: "the key and range, KEY=FROM:TO:STEP (e.g. rejection=80:100:5); twice for a grid"},
			&cli.BoolFlag{Name: "html", Usage: "also write report.html, one self-contained page for sharing and printing"},
			&cli.IntFlag{Name: "max-stages", Usage: "override search.max_stages (1..12)"},
			&cli.IntFlag{Name: "jobs", Usage: "parallel designs over the whole sweep", DefaultText: "the number of CPUs"},
			&cli.DurationFlag{Name: "timeout", Usage: "stop the whole sweep after this long; unfinished values keep their best front so far, marked partial"},
		),
		Action: runSweep,
	}
}

// parseVaries reads the --vary flags: one range, or two for a grid (g is
// then set).
func parseVaries(c *cli.Context) (sweep.Vary, *sweep.Grid, error) {
	args := c.StringSlice("vary")
	if len(args) == 0 {
		return sweep.Vary{}, nil, usagef("--vary: missing; name the key and range, e.g. --vary rejection=80:100:5")
	}
	if len(args) > 2 {
		return sweep.Vary{}, nil, usagef("--vary %s: a third --vary; a sweep steps one key, or two keys as a grid", clip(args[2]))
	}
	var vs []sweep.Vary
	for _, a := range args {
		v, err := sweep.ParseVary(a)
		if err != nil {
			return sweep.Vary{}, nil, usagef("%s", units.Clip(err.Error(), 4*units.MaxEcho))
		}
		if v.Key.Name == "max_stages" && c.IsSet("max-stages") {
			return sweep.Vary{}, nil, usagef("--max-stages %d: --vary %s steps search.max_stages; give one of them", c.Int("max-stages"), clip(a))
		}
		vs = append(vs, v)
	}
	if len(vs) == 1 {
		return vs[0], nil, nil
	}
	g, err := sweep.NewGrid(vs[0], vs[1])
	if err != nil {
		return sweep.Vary{}, nil, usagef("%s", units.Clip(err.Error(), 4*units.MaxEcho))
	}
	return vs[0], &g, nil
}

func runSweep(c *cli.Context) error {
	v, g, err := parseVaries(c)
	if err != nil {
		return err
	}
	if err := checkSearchFlags(c); err != nil {
		return err
	}
	base, source, text, err := loadSpec(c)
	if err != nil {
		return err
	}
	// A ratio key of the other direction would turn the chain round:
	// refused, naming the key that steps this spec's ratio.
	keys := []sweep.Key{v.Key}
	if g != nil {
		keys = append(keys, g.Columns.Key)
	}
	for _, k := range keys {
		switch interp := base.Chain.Direction() == chain.Interpolate; {
		case k.Interpolation && !interp:
			return usagef("--vary %s: the spec decimates (output_rate below input_rate); its ratio is stepped by decimation", k.Name)
		case k.Decimation && interp:
			return usagef("--vary %s: the spec interpolates (output_rate above input_rate); its ratio is stepped by interpolation", k.Name)
		}
	}
	out, err := prepareOut(c)
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
	prog := newProgress(c.App.ErrWriter, c.Bool("quiet"))
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
	if g != nil {
		st = g.Study(st)
	}
	rs := sweep.Run(ctx, st)
	prog.finish()
	if sigCtx.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(out))
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
	if g != nil {
		return finishGrid(c, out, source, base, *g, rs, nChain, nInvalid)
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
		if r, ok := tooLargeResult(rs); ok {
			// A search too large to score is the spec's fault, as in plan.
			return usagef("--vary %s=%s: %s: %s", v.Key.Name, clip(v.Text), v.Key.Format(r.Value), strings.TrimPrefix(specfile.InFileTerms(r.Detail), "search: "))
		}
		return fmt.Errorf("--vary %s=%s: no value gives a chain (%s: %s); %s", v.Key.Name, v.Text, v.Key.Format(first.Value), specfile.InFileTerms(first.Detail), untouched(out))
	}

	files, doc, err := sweepFiles(source, base, v, rs, c.Bool("html"))
	if err != nil {
		return err
	}
	w, err := commitSweep(c, out, files)
	if err != nil {
		return err
	}
	printSweep(w, source, out.Dir(), v, doc, files)
	return nil
}

// tooLargeResult returns the first result whose search was refused as
// larger than the optimiser scores.
func tooLargeResult(rs []sweep.Result) (sweep.Result, bool) {
	for _, r := range rs {
		if r.Status == sweep.Failed && searchTooLarge(r.Detail) {
			return r, true
		}
	}
	return sweep.Result{}, false
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
	fmt.Fprintf(w, "stepdown sweep: %s, %s\n\n", source, rangeText(v))
	clock := false
	for _, dv := range doc.Values {
		clock = clock || (dv.Best != nil && dv.Best.MultipliersAtClock != nil)
	}
	// A multiplierless spec's cost axis is the hardware adders as built.
	adders := doc.Spec.Hardware.Multiplierless
	clock = clock && !adders // no multipliers to count
	cost := "mult/" + doc.Spec.Side()
	leastCost := "least " + cost
	if adders {
		cost, leastCost = "adders", "least adders"
	}
	head := []string{v.Key.Name, "status", "recommended", cost, "memory bits", "latency", leastCost, "least memory", "least latency"}
	if clock {
		head = append(head[:6], "multipliers", leastCost, "least memory", "least latency", "least multipliers")
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
		first, least := report.TrimFloat(c.MultipliesPerOutput, 1), report.TrimFloat(dv.Best.MultipliesPerOutput, 1)
		if adders {
			first, least = "", ""
			if c.Adders != nil {
				first = fmt.Sprint(*c.Adders)
			}
			if dv.Best.Adders != nil {
				least = fmt.Sprint(*dv.Best.Adders)
			}
		}
		row := []string{dv.ValueText, dv.Status, n, first, fmt.Sprint(c.MemoryBits), report.Seconds(c.LatencyS)}
		if clock {
			m := ""
			if c.MultipliersAtClock != nil {
				m = fmt.Sprint(*c.MultipliersAtClock)
			}
			row = append(row, m)
		}
		row = append(row, least, fmt.Sprint(dv.Best.MemoryBits), report.Seconds(dv.Best.LatencyS))
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
	// runs to the end of the line.
	report.WriteAligned(w, "", rows, func(i int) bool { return i >= 3 })
	// A row with a chain and a detail (a chain taken from a stricter
	// value, a front stopped by the time limit) has it said below.
	var notes []string
	for _, dv := range doc.Values {
		if dv.Recommended >= 0 && dv.Detail != "" {
			notes = append(notes, fmt.Sprintf("  %s: %s", dv.ValueText, dv.Detail))
		}
	}
	if len(notes) > 0 {
		fmt.Fprintln(w)
		fmt.Fprintln(w, strings.Join(notes, "\n"))
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

// finishGrid writes and prints a grid's results (runSweep's second half for
// two --vary flags).
func finishGrid(c *cli.Context, out *report.Folder, source string, base *specfile.Spec, g sweep.Grid, rs []sweep.Result, nChain, nInvalid int) error {
	both := fmt.Sprintf("--vary %s=%s --vary %s=%s", g.Rows.Key.Name, clip(g.Rows.Text), g.Columns.Key.Name, clip(g.Columns.Text))
	if nInvalid == len(rs) {
		return usagef("%s: every cell makes the spec invalid (first, %s: %s)", both, cellName(g, rs[0]), specfile.InFileTerms(rs[0].Detail))
	}
	if nChain == 0 {
		first := rs[0]
		for _, r := range rs {
			if r.Status != sweep.Invalid {
				first = r
				break
			}
		}
		if r, ok := tooLargeResult(rs); ok {
			return usagef("%s: %s: %s", both, cellName(g, r), strings.TrimPrefix(specfile.InFileTerms(r.Detail), "search: "))
		}
		return fmt.Errorf("%s: no cell gives a chain (%s: %s); %s", both, cellName(g, first), specfile.InFileTerms(first.Detail), untouched(out))
	}
	files, doc, err := sweep.GridFiles(source, base, g, rs)
	if err == nil && c.Bool("html") {
		files, err = htmlreport.AddSweepPage(source, doc, files)
	}
	if err != nil {
		return err
	}
	w, err := commitSweep(c, out, files)
	if err != nil {
		return err
	}
	printGrid(w, source, out.Dir(), g, rs, files)
	return nil
}

// commitSweep writes a sweep's files into the output folder and puts it in
// place (unless interrupted), prints report.json with --json, and returns
// where the table goes: nowhere with --quiet, stderr with --json.
func commitSweep(c *cli.Context, out *report.Folder, files []report.File) (io.Writer, error) {
	if c.Context.Err() != nil {
		return nil, fmt.Errorf("interrupted; %s", untouched(out))
	}
	if err := out.Write(files); err != nil {
		return nil, err
	}
	if err := out.Commit(); err != nil {
		return nil, err
	}
	if c.Bool("json") {
		if _, err := c.App.Writer.Write(files[0].Data); err != nil {
			return nil, err
		}
	}
	switch {
	case c.Bool("quiet"):
		return io.Discard, nil
	case c.Bool("json"):
		return c.App.ErrWriter, nil
	}
	return c.App.Writer, nil
}

// cellName is a cell's pair of keys and values, "rejection 80 dB, passband 400 kHz".
func cellName(g sweep.Grid, r sweep.Result) string {
	return g.Rows.Key.Name + " " + g.Rows.Key.Format(r.Value) + ", " + g.Columns.Key.Name + " " + g.Columns.Key.Format(r.Column)
}

// maxGridNotes is the most cells without a chain listed under the grid.
const maxGridNotes = 10

// gridKeyWidth is the widest line of the grid's key of structures.
const gridKeyWidth = 100

func rangeText(v sweep.Vary) string {
	n := "values"
	if len(v.Values) == 1 {
		n = "value"
	}
	return fmt.Sprintf("%s from %s to %s in steps of %s (%d %s)", v.Key.Name, v.Key.Format(v.From), v.Key.Format(v.To), v.Key.Format(v.Step), len(v.Values), n)
}

// printGrid prints a grid: rows the first key, columns the second, each
// cell the recommended chain's multiplies per output and its structure's
// tag, or the mark of a cell without a chain; then the key of the tags and
// the cells without a chain with their reasons.
func printGrid(w io.Writer, source, dir string, g sweep.Grid, rs []sweep.Result, files []report.File) {
	fmt.Fprintf(w, "stepdown sweep: %s, a grid of %d cells\n", source, len(rs))
	fmt.Fprintf(w, "  rows     %s\n", rangeText(g.Rows))
	fmt.Fprintf(w, "  columns  %s\n\n", rangeText(g.Columns))
	tags, notations := sweep.Structures(rs)
	partial := false
	n := len(g.Columns.Values)
	rows := [][]string{{g.Rows.Key.Name + " \\ " + g.Columns.Key.Name}}
	for _, x := range g.Columns.Values {
		rows[0] = append(rows[0], g.Columns.Key.Format(x))
	}
	what := "Multiplies per output"
	if sweep.Interpolates(rs) {
		what = "Multiplies per input"
	}
	for i, r := range rs {
		if i%n == 0 {
			rows = append(rows, []string{g.Rows.Key.Format(r.Value)})
		}
		cell := r.Status.Mark()
		if r.Status.HasChain() {
			c := r.Report.Front[r.Report.Recommended]
			cell = report.TrimFloat(c.MultipliesPerOutput, 1)
			if c.Adders != nil {
				// A multiplierless spec's cost: adders as built.
				cell, what = fmt.Sprint(*c.Adders), "Hardware adders (as built)"
			}
			if r.Status == sweep.Partial {
				cell += "*"
				partial = true
			}
			cell += " " + tags[i]
		}
		rows[len(rows)-1] = append(rows[len(rows)-1], cell)
	}
	fmt.Fprintln(w, what+" of each cell's recommended chain; the letter names its structure.")
	fmt.Fprintln(w)
	report.WriteAligned(w, "", rows, func(i int) bool { return i > 0 })
	if len(notations) > 0 {
		// The key of the tags, in as many columns as fit in gridKeyWidth.
		tw, nw := len(sweep.TagName(len(notations)-1)), 0
		for _, nt := range notations {
			nw = max(nw, len(nt))
		}
		per := max(1, (gridKeyWidth+4)/(tw+2+nw+4))
		fmt.Fprintln(w)
		for i := 0; i < len(notations); i += per {
			var b strings.Builder
			for j := i; j < min(i+per, len(notations)); j++ {
				fmt.Fprintf(&b, "  %-*s  %-*s  ", tw, sweep.TagName(j), nw, notations[j])
			}
			fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
		}
	}
	if partial {
		fmt.Fprintln(w, "  *  stopped by the time limit: the best chain found so far")
	}
	var notes []string
	for _, r := range rs {
		if !r.Status.HasChain() {
			notes = append(notes, fmt.Sprintf("  %s: %s: %s", cellName(g, r), r.Status, specfile.InFileTerms(r.Detail)))
		}
	}
	if len(notes) > 0 {
		fmt.Fprintln(w, "\nCells without a chain:")
		for i, s := range notes {
			if i == maxGridNotes {
				fmt.Fprintf(w, "  ... and %d more (see sweep.csv)\n", len(notes)-maxGridNotes)
				break
			}
			fmt.Fprintln(w, s)
		}
	}
	fmt.Fprintf(w, "\nwrote %s/ (%d files): report.json, sweep.csv, sweep.svg, sweep.png", dir, len(files))
	for _, f := range files {
		if f.Name == "report.html" {
			fmt.Fprint(w, ", report.html")
		}
	}
	fmt.Fprintln(w, ", values/rNN-cNN/")
	fmt.Fprintf(w, "\nCaution: %s.\n", report.Caution)
}
