package htmlreport

import (
	"bytes"
	"errors"
	"fmt"
	"html/template"
	"math"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/optimize/sweep"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// PlanPage is the input of Plan.
type PlanPage struct {
	// Source names the spec: its path as given or "built-in example".
	Source string
	Report *report.Report
	// The figures' SVG text, as the plots package renders it; nil leaves a
	// figure out.
	Front, Response, Stages []byte
	// Files lists the output folder's files (slash-separated, relative),
	// linked from the page; the coefficient files among them are also
	// linked from their stage's table.
	Files []string
}

// SweepPage is the input of Sweep.
type SweepPage struct {
	Source string
	Doc    *sweep.Doc
	Figure []byte // the sweep figure's SVG text
	Files  []string
}

// traceText says what made the report: stepdown's version and the spec
// text's SHA-256 (its first 16 hexadecimal digits; report.json holds all).
func traceText(r *report.Report) string {
	var parts []string
	if r.ToolVersion != "" {
		parts = append(parts, "stepdown "+r.ToolVersion)
	}
	if h := r.SpecSHA256; h != "" {
		parts = append(parts, "spec SHA-256 "+h[:min(16, len(h))]+"…")
	}
	return strings.Join(parts, " · ")
}

// Plan returns report.html for a plan or check.
func Plan(p PlanPage) ([]byte, error) {
	r := p.Report
	if r == nil {
		return nil, errors.New("htmlreport: no report")
	}
	if len(r.Front) > 0 && (r.Recommended < 0 || r.Recommended >= len(r.Front)) {
		return nil, fmt.Errorf("htmlreport: recommended index %d outside the front of %d chains", r.Recommended, len(r.Front))
	}
	v := planView{
		Title:    "stepdown " + r.Command + ": " + p.Source,
		Source:   p.Source,
		Command:  r.Command,
		Caution:  r.Caution,
		Spec:     specRows(r.Spec),
		Search:   searchText(r),
		Partial:  r.Partial,
		Clock:    r.Spec.Hardware.ClockHz != nil && !r.Spec.Hardware.Multiplierless,
		Axis:     "mult/" + r.Spec.Side(),
		AxisName: "multiplies",
		Side:     map[string]string{"out": "output", "in": "input"}[r.Spec.Side()],
		Short:    r.Spec.Side(),
		Unwanted: r.Spec.Unwanted(),
		Files:    listedFiles(p.Files),
		Cautions: planCautions(r),
		Trace:    traceText(r),
	}
	var err error
	if v.FrontSVG, err = inlineSVG(p.Front); err != nil {
		return nil, fmt.Errorf("htmlreport: front figure: %v", err)
	}
	if v.ResponseSVG, err = inlineSVG(p.Response); err != nil {
		return nil, fmt.Errorf("htmlreport: response figure: %v", err)
	}
	if v.StagesSVG, err = inlineSVG(p.Stages); err != nil {
		return nil, fmt.Errorf("htmlreport: stages figure: %v", err)
	}
	v.Front = frontRows(r.Front, r.Recommended, v.Clock, r.Spec.Hardware)
	if r.Spec.Hardware.Multiplierless {
		v.Axis, v.AxisName = "adders", "adders"
	}
	if len(r.Front) > 0 {
		c := r.Front[r.Recommended]
		v.Fractional = c.Fractional()
		v.Resources = c.Resources
		if c.Resources != nil && c.Adders != nil {
			v.ResAdders = true
			for _, s := range c.Resources.Stages {
				if s.CoefficientAdders != nil && s.StructuralAdders != nil {
					v.ResGraphAdders += *s.CoefficientAdders
					v.ResTapAdders += *s.StructuralAdders
				}
			}
		}
		v.Rec = &recView{Index: r.Recommended + 1, Notation: c.Notation, Reason: r.Reason,
			Figures: v.Front[r.Recommended], Stages: stageViews(c, p.Files, "", v.Clock)}
	}
	if cw := r.ComparedWith; cw != nil && len(r.Front) == 1 {
		v.Compared = fmt.Sprintf("%s (%s)", cw.Source, units.Count(len(cw.Front), "chain", "chains"))
		for _, b := range r.BeatenBy {
			v.Beaten = append(v.Beaten, b.Text())
		}
		switch {
		case cw.OnFront:
			v.CompareText = fmt.Sprintf("it is #%d on it.", cw.Rank)
		case !r.Front[0].MeetsTargets:
			switch meet, _ := cw.Meeting(); meet {
			case 0:
				v.CompareText = "none of its chains meets the spec as judged there either."
				if len(cw.Front) == 1 {
					v.CompareText = "its one chain does not meet the spec as judged there either."
				}
			case 1:
				v.CompareText = "1 of its chains meets the spec; this one does not."
				if len(cw.Front) == 1 {
					v.CompareText = "its one chain meets the spec; this one does not."
				}
			default:
				v.CompareText = fmt.Sprintf("%d of its chains meet the spec; this one does not.", meet)
			}
		default:
			v.CompareText = "no chain on it beats this one on every axis."
		}
	}
	return execute("plan", v)
}

// Sweep returns report.html for a sweep.
func Sweep(p SweepPage) ([]byte, error) {
	d := p.Doc
	if d == nil {
		return nil, errors.New("htmlreport: no sweep document")
	}
	if d.Columns != nil {
		return gridPage(p)
	}
	v := sweepView{
		Axis:    costAxis(d.Spec),
		Title:   "stepdown sweep of " + d.Vary.Key + ": " + p.Source,
		Source:  p.Source,
		Caution: d.Caution,
		Spec:    specRows(d.Spec),
		Key:     d.Vary.Key,
		SpecKey: d.Vary.SpecKey,
		Range:   d.Vary.Range,
		Count:   len(d.Values),
		// Sweeping the clock gives every value one, even when the spec has none.
		Clock: (d.Spec.Hardware.ClockHz != nil || d.Vary.SpecKey == "hardware.clock") && !d.Spec.Hardware.Multiplierless,
		Files: topFiles(p.Files),
	}
	var err error
	if v.FigureSVG, err = inlineSVG(p.Figure); err != nil {
		return nil, fmt.Errorf("htmlreport: sweep figure: %v", err)
	}
	var partial, estimated, misses bool
	for i, dv := range d.Values {
		sv := valueView(dv, i, fmt.Sprintf("value-%02d", i+1), p.Files, v.Clock, d.Spec.Hardware)
		if sv.HasChain {
			c := dv.Front[dv.Recommended]
			partial = partial || dv.Status == string(sweep.Partial)
			estimated = estimated || !c.Designed
			misses = misses || !c.MeetsTargets
		}
		v.Values = append(v.Values, sv)
	}
	v.Cautions = sweepCautions(d, partial, estimated, misses)
	return execute("sweep", v)
}

// valueView is one value (or grid cell) of a sweep page.
func valueView(dv sweep.DocValue, i int, anchor string, files []string, clock bool, hw report.Hardware) sweepValueView {
	sv := sweepValueView{Index: i + 1, Anchor: anchor, Text: dv.ValueText,
		Status: dv.Status, Detail: dv.Detail, Changed: dv.StructureChanged, Folder: dv.Folder}
	if dv.Recommended >= 0 && dv.Recommended < len(dv.Front) {
		c := dv.Front[dv.Recommended]
		sv.HasChain = true
		sv.Notation = c.Notation
		sv.Reason = dv.Reason
		sv.Front = frontRows(dv.Front, dv.Recommended, clock, hw)
		sv.Rec = sv.Front[dv.Recommended]
		sv.Stages = stageViews(c, files, dv.Folder+"/", clock)
		if dv.Best != nil {
			sv.BestMult = trimFloat(dv.Best.MultipliesPerOutput, 2)
			if dv.Best.Adders != nil {
				sv.BestMult = strconv.Itoa(*dv.Best.Adders)
			}
			sv.BestMem = strconv.Itoa(dv.Best.MemoryBits)
			sv.BestLat = seconds(dv.Best.LatencyS)
		}
		sv.Report = dv.Folder + "/report.json"
	}
	return sv
}

func sweepCautions(d *sweep.Doc, partial, estimated, misses bool) []string {
	cs := []string{capitalise(d.Caution) + "."}
	if partial {
		cs = append(cs, "Some values were stopped by the time limit: their fronts are the best found so far, not the whole search.")
	}
	if estimated {
		cs = append(cs, "Some recommended chains carry estimated figures (order estimates, not a real design).")
	}
	if misses {
		cs = append(cs, "Some recommended chains miss the rejection target or the ripple budget; see their rows.")
	}
	what := "Values"
	if d.Columns != nil {
		what = "Cells"
	}
	return append(cs,
		"The least figures on a front are taken one axis at a time: they may come from different chains, and no single chain need reach all three.",
		what+" whose status is not ok were not planned; the detail column says why.")
}

// gridPage is report.html for a two-key sweep: the heat map, the grid of
// the recommended chains' multiplies per output (each cell linking to its
// section), the table of every cell, and a section per cell with a chain.
func gridPage(p SweepPage) ([]byte, error) {
	d := p.Doc
	cols := d.Columns
	v := gridView{
		Axis:       costAxis(d.Spec),
		Title:      "stepdown sweep of " + d.Vary.Key + " by " + cols.Key + ": " + p.Source,
		Source:     p.Source,
		Caution:    d.Caution,
		Spec:       specRows(d.Spec),
		Key:        d.Vary.Key,
		SpecKey:    d.Vary.SpecKey,
		Range:      d.Vary.Range,
		ColKey:     cols.Key,
		ColSpecKey: cols.SpecKey,
		ColRange:   cols.Range,
		Count:      len(d.Values),
		Clock:      (d.Spec.Hardware.ClockHz != nil || d.Vary.SpecKey == "hardware.clock" || cols.SpecKey == "hardware.clock") && !d.Spec.Hardware.Multiplierless,
		Files:      topFiles(p.Files),
	}
	var err error
	if v.FigureSVG, err = inlineSVG(p.Figure); err != nil {
		return nil, fmt.Errorf("htmlreport: sweep figure: %v", err)
	}
	var partial, estimated, misses bool
	for i, dv := range d.Values {
		if dv.Row < 1 || dv.Column < 1 || dv.Column > len(cols.Values) {
			return nil, fmt.Errorf("htmlreport: grid cell %d: row %d, column %d outside the grid", i+1, dv.Row, dv.Column)
		}
		sv := valueView(dv, i, fmt.Sprintf("cell-r%02d-c%02d", dv.Row, dv.Column), p.Files, v.Clock, d.Spec.Hardware)
		sv.ColText = dv.ColumnValueText
		if sv.HasChain {
			c := dv.Front[dv.Recommended]
			partial = partial || dv.Status == string(sweep.Partial)
			estimated = estimated || !c.Designed
			misses = misses || !c.MeetsTargets
		}
		v.Values = append(v.Values, sv)
		for len(v.Rows) < dv.Row {
			v.Rows = append(v.Rows, gridRowView{})
		}
		row := &v.Rows[dv.Row-1]
		row.Text = dv.ValueText
		cell := gridCellView{Anchor: sv.Anchor, HasChain: sv.HasChain, Text: sweep.Status(dv.Status).Mark(), Title: dv.Detail}
		if sv.HasChain {
			cell.Text = trimFloat(dv.Front[dv.Recommended].MultipliesPerOutput, 1)
			if a := dv.Front[dv.Recommended].Adders; a != nil {
				cell.Text = strconv.Itoa(*a)
			}
			if dv.Status == string(sweep.Partial) {
				cell.Text += "*"
			}
			cell.Title = sv.Notation
		}
		row.Cells = append(row.Cells, cell)
		if dv.Row == 1 {
			v.Head = append(v.Head, dv.ColumnValueText)
		}
	}
	v.Cautions = sweepCautions(d, partial, estimated, misses)
	return execute("grid", v)
}

// inlineSVG returns SVG text ready to sit inside HTML: the XML prolog and
// comments before the root element are dropped (they are not allowed there).
func inlineSVG(b []byte) (template.HTML, error) {
	if b == nil {
		return "", nil
	}
	i := bytes.Index(b, []byte("<svg"))
	if i < 0 {
		return "", errors.New("no <svg> element")
	}
	s := string(b[i:])
	low := strings.ToLower(s)
	// The page must fetch nothing: refuse any external reference a figure
	// might carry. Namespace declarations are names, not fetches.
	for _, bad := range []string{"href=\"http", "href='http", "src=", "url(http", "@import", "<script"} {
		if strings.Contains(low, bad) {
			return "", fmt.Errorf("figure holds an external reference or script (%s)", bad)
		}
	}
	return template.HTML(strings.TrimSpace(s)), nil
}

type kv struct{ K, V string }

// stageRow is a row of a stage card. Warn marks one the designer must act
// on (a headroom point): it spans the card, marked as the cautions are.
type stageRow struct {
	K, V string
	Warn bool
}

type frontRow struct {
	Index                                                       int
	Rec                                                         bool
	Notation                                                    string
	Mult, Adds, MemBits, MemWords, Multipliers, Latency, LatOut string
	Rejection, Margin, Ripple, Kind, Tag                        string
	Misses                                                      bool
	// Native: the native multiplier blocks at the clock, where the word
	// lengths give them ("" otherwise); BuiltMem: the memory as built
	// (fixed_memory_bits) where it differs from MemBits, the priced
	// figure (coefficients auto); Over: the [hardware] limits the chain
	// breaks as built, in words (report.OverLimitsText).
	Native, BuiltMem, Over string
}

type stageView struct {
	Title string
	Rows  []stageRow
	Links []string
	// Points are the stage's rounding points (report.json's
	// rounding_points) in signal order, but its headroom points, which
	// are rows of their own under the word lengths.
	Points []string
}

type recView struct {
	Index    int
	Notation string
	Reason   string
	Figures  frontRow
	Stages   []stageView
}

type planView struct {
	Title, Source, Command, Caution string
	// Trace is report.json's tool_version and spec_sha256 in words, so a
	// printed page can be traced to what made it.
	Trace          string
	Spec           []kv
	Search         string
	Partial, Clock bool
	// Axis heads the front table's cost column and AxisName says it in
	// words: "adders" for a multiplierless plan, whose column holds each
	// chain's adders as built.
	Axis, AxisName string
	// Side is the channel side the counts are per ("output" for a
	// decimation chain, "input" for an interpolation chain), Short its
	// column form ("out", "in"), Unwanted what the rejection is of
	// ("alias", "image").
	Side, Short, Unwanted string
	Front                 []frontRow
	Rec                   *recView
	FrontSVG, ResponseSVG template.HTML
	StagesSVG             template.HTML
	// Fractional: the recommended (or checked) chain ends in a fractional
	// stage, whose response figure draws paths instead of shaded bands.
	Fractional bool
	Files      []string
	Cautions   []string
	// Check only: the front compared with, what beats the chain (as
	// Beater.Text says it), or else CompareText.
	Compared    string
	Beaten      []string
	CompareText string
	// Resources is the recommended (or checked) chain's bill of
	// resources at the clock, nil without a clock. ResAdders adds its
	// graph and tap adder columns (a multiplierless chain), whose totals
	// are ResGraphAdders and ResTapAdders.
	Resources                    *report.Resources
	ResAdders                    bool
	ResGraphAdders, ResTapAdders int
}

type sweepValueView struct {
	Index                            int
	Anchor, Text, Status, Detail     string
	ColText                          string // a grid cell's second value
	Changed, HasChain                bool
	Notation, Reason, Folder, Report string
	Rec                              frontRow
	Front                            []frontRow
	Stages                           []stageView
	BestMult, BestMem, BestLat       string
}

type sweepView struct {
	Title, Source, Caution string
	// Axis heads the cost columns: "mult/out", or "adders" for a
	// multiplierless spec.
	Axis                string
	Spec                []kv
	Key, SpecKey, Range string
	Count               int
	Clock               bool
	FigureSVG           template.HTML
	Values              []sweepValueView
	Files               []string
	Cautions            []string
}

type gridCellView struct {
	Anchor, Text, Title string
	HasChain            bool
}

type gridRowView struct {
	Text  string
	Cells []gridCellView
}

type gridView struct {
	Title, Source, Caution       string
	Axis                         string // as sweepView's
	Spec                         []kv
	Key, SpecKey, Range          string
	ColKey, ColSpecKey, ColRange string
	Count                        int
	Clock                        bool
	FigureSVG                    template.HTML
	Head                         []string // the columns' values
	Rows                         []gridRowView
	Values                       []sweepValueView
	Files                        []string
	Cautions                     []string
}

func specRows(s report.Spec) []kv {
	ratio := kv{"Decimation", strconv.Itoa(s.Decimation)}
	if strings.Contains(s.Ratio, "/") {
		// A fractional spec: no integer D (its decimation is 0).
		ratio = kv{"Ratio", s.Ratio + " (fractional: integer stages and one polyphase or Farrow stage)"}
	}
	if s.RatioTolerancePPM > 0 {
		ratio.V += fmt.Sprintf(", within %s ppm", shortest(s.RatioTolerancePPM))
	}
	protected, rejection := "Protected (alias-free) edge", "Alias rejection"
	if s.Interpolates() {
		ratio = kv{"Interpolation", strconv.Itoa(s.Interpolation)}
		protected, rejection = "Protected (image-free) edge", "Image rejection"
	}
	rows := []kv{
		{"Input rate", freq(s.InputRateHz)},
		{"Output rate", freq(s.OutputRateHz)},
		ratio,
		{"Passband edge", freq(s.PassbandHz)},
		{protected, freq(s.ProtectedHz)},
		{"Final stopband edge", freq(s.StopbandHz)},
		{"Passband ripple", shortest(s.RippleDB) + " dB peak-to-peak"},
		{rejection, rejectionText(s)},
		{"Signal", s.Signal},
	}
	if s.SigmaDelta != nil {
		rows = append(rows, sigmaDeltaRow(s))
	}
	coef := "floating point"
	if s.Words.Coefficients != nil {
		coef = fmt.Sprintf("%d bits", *s.Words.Coefficients)
	} else if s.Words.CoefficientsMode == "auto" {
		coef = "auto (narrowest per stage that meets its bands)"
	}
	rows = append(rows, kv{"Words", fmt.Sprintf("input %d bits, output %d bits, coefficients %s", s.Words.Input, s.Words.Output, coef)})
	clk := "not given"
	if s.Hardware.ClockHz != nil {
		clk = freq(*s.Hardware.ClockHz)
	}
	rows = append(rows, kv{"Hardware clock", clk})
	if m := s.Hardware.Multiplier; m != "" {
		rows = append(rows, kv{"Native multiplier", m + " bits"})
	}
	var lims []string
	for _, l := range []struct {
		key string
		v   int
	}{{"max_register_bits", s.Hardware.MaxRegisterBits}, {"max_cic_factor", s.Hardware.MaxCICFactor}, {"max_multipliers", s.Hardware.MaxMultipliers}, {"max_memory_bits", s.Hardware.MaxMemoryBits}} {
		if l.v > 0 {
			lims = append(lims, fmt.Sprintf("%s = %d", l.key, l.v))
		}
	}
	if len(lims) > 0 {
		rows = append(rows, kv{"Fabric limits", strings.Join(lims, ", ")})
	}
	if s.Hardware.Multiplierless {
		rows = append(rows, kv{"Multiplierless", "yes: FIR and half-band stages are shared adder graphs; chains are priced by their adders as built"})
	}
	sym := "counted once (folded)"
	if !s.Cost.Symmetry {
		sym = "not exploited"
	}
	rows = append(rows, kv{"Coefficient symmetry", sym})
	l := s.SearchLimits
	rows = append(rows, kv{"Search", fmt.Sprintf("up to %d stages; kinds %s; CIC orders %s; CIC delays %s",
		l.MaxStages, strings.Join(l.Kinds, ", "), ints(l.CICOrders), ints(l.CICDelays))})
	return rows
}

func searchText(r *report.Report) string {
	if r.Command != "plan" {
		return "One chain named on the command line, designed and evaluated against the spec."
	}
	s := fmt.Sprintf("%s enumerated, %d feasible by estimate, %d designed for real, %d on the Pareto front.",
		units.Count(r.Search.Candidates, "candidate chain", "candidate chains"), r.Search.Feasible, r.Search.Designed, len(r.Front))
	if len(r.Search.Dropped) > 0 {
		d := make(map[optimize.Reason]int, len(r.Search.Dropped))
		for k, v := range r.Search.Dropped {
			d[optimize.Reason(k)] = v
		}
		s += " Dropped: " + optimize.DroppedText(d, "; ") + "."
	}
	if n := r.Search.LeftUndesigned; n > 0 {
		s += fmt.Sprintf(" The design budget was reached: %d candidates near the front were left undesigned, so a cheaper chain may be missing from the front.", n)
	}
	return s
}

func planCautions(r *report.Report) []string {
	out := []string{capitalise(r.Caution) + "."}
	if r.Partial {
		out = append(out, "The search was stopped by its time limit: the front is the best found so far, not the whole search.")
	}
	if len(r.Front) == 0 {
		return out
	}
	c := r.Front[r.Recommended]
	if !c.Designed {
		out = append(out, "The recommended chain's figures are estimates (order formulas), not a real design.")
	}
	rej, rip := c.BuiltFigures()
	if c.Unjudged() {
		out = append(out, fmt.Sprintf("The recommended chain misses the spec: its rounded taps could not be judged; as designed in floating point, its %s rejection is %.2f dB against %s dB and its ripple %s against %s dB.",
			r.Spec.Unwanted(), rej, shortest(r.Spec.RejectionDB), report.RippleText(rip), shortest(r.Spec.RippleDB)))
	} else if !c.MeetsTargets {
		out = append(out, fmt.Sprintf("The recommended chain misses the spec (judged on its %s): %s rejection %.2f dB against %s dB, ripple %s against %s dB.",
			c.VerdictBasis, r.Spec.Unwanted(), rej, shortest(r.Spec.RejectionDB), report.RippleText(rip), shortest(r.Spec.RippleDB)))
	} else if c.RejectionMarginDB < 1 {
		out = append(out, fmt.Sprintf("The recommended chain's rejection margin is thin (%.2f dB): data-path truncation can use it up.", c.RejectionMarginDB))
	}
	// Memory: stored coefficients at the pricing default where no width
	// is fixed; none in a multiplierless chain (wired into its graphs).
	mem := fmt.Sprintf("memory in the table counts %d-bit coefficient words (the pricing default)", cost.FloatCoefBits)
	if r.Spec.Hardware.Multiplierless {
		mem = "memory counts no coefficients (multiplierless: the taps are wired into the adder graphs)"
	}
	switch {
	case r.Spec.Words.CoefficientsMode == "auto":
		out = append(out, fmt.Sprintf("Coefficient widths are automatic: the narrowest widths with which the whole chain meets the spec once its taps are rounded; the verdicts, rejection and ripple in the table are those of the rounded taps (the floating-point design's where the rounded taps could not be judged); %s, the word-length figures in report.json count the chosen widths.", mem))
	case r.Spec.Words.Coefficients == nil:
		out = append(out, fmt.Sprintf("No coefficient width was given: rejection and ripple are those of floating-point coefficients, %s, and no integer or $readmemh files were written.", mem))
	default:
		out = append(out, fmt.Sprintf("The taps are rounded to %d bits: the verdicts, rejection and ripple in the table are those of the rounded taps, as they will be built (the floating-point design's where the rounded taps could not be judged); report.json also holds the floating-point design's figures.", *r.Spec.Words.Coefficients))
	}
	if c.Fractional() {
		// Word lengths and coefficient files as any stage; the hand-off
		// is for integer stages only (report.NoHandoff).
		out = append(out, "The chain has a fractional stage: no hand-off (headers/, vectors/, rtl/) is made for it, only for chains of integer stages.")
	}
	if w := c.ChainReport; w != nil {
		msg := fmt.Sprintf("Word lengths of the recommended chain (planning figures from a model of the data path, to be confirmed by a bit-true simulation of the RTL): %s", c.BitTrueSummary())
		if w.BitTrueReport != nil {
			msg += " on " + w.TestSignal
		}
		msg += fmt.Sprintf("; with the rounded coefficients the cascade's %s rejection is %.2f dB and its passband ripple %s; its gain at 0 Hz from input to output full scale is %s", r.Spec.Unwanted(), w.QuantisedRejectionDB, report.RippleText(w.QuantisedRippleDB), report.GainText(w.DCGainDB))
		if w.GainCorrection != 1 && w.GainCorrection != 0 {
			msg += fmt.Sprintf(" after a correction of x%.6g folded into the last FIR stage's taps", w.GainCorrection)
		}
		out = append(out, msg+".")
	} else if c.WordLengthsError != "" && !c.Fractional() {
		out = append(out, "No word-length figures for the recommended chain: "+c.WordLengthsError+".")
	}
	if r.Spec.Signal == "complex" {
		out = append(out, "Complex (I/Q) signal: multiplies, adders and data memory count both the I and the Q filters.")
	}
	return out
}

func frontRows(front []report.Chain, rec int, clock bool, hw report.Hardware) []frontRow {
	var out []frontRow
	for i, c := range front {
		kind := "estimated"
		if c.Designed {
			kind = "designed"
		}
		switch {
		case !c.MeetsTargets && c.Unjudged():
			kind += ", misses spec (float figures: rounded taps not judged)"
		case !c.MeetsTargets:
			kind += ", misses spec"
		}
		rej, rip := c.BuiltFigures()
		// A multiplierless chain's cost column holds its adders as built.
		mult := trimFloat(c.MultipliesPerOutput, 2)
		if c.Adders != nil {
			mult = strconv.Itoa(*c.Adders)
		}
		row := frontRow{
			Index: i + 1, Rec: i == rec, Notation: c.Notation,
			Mult: mult, Adds: trimFloat(c.AddsPerOutput, 2),
			MemBits: strconv.Itoa(c.MemoryBits), MemWords: strconv.Itoa(c.MemoryWords),
			Latency: seconds(c.LatencyS), LatOut: trimFloat(c.LatencySamples, 1),
			Rejection: fmt.Sprintf("%.2f", rej), Margin: fmt.Sprintf("%+.2f", c.RejectionMarginDB),
			Ripple: fmt.Sprintf("%.4f", rip), Kind: kind, Misses: !c.MeetsTargets,
		}
		var tags []string
		if !c.Designed {
			tags = append(tags, "estimated")
		}
		switch {
		case !c.MeetsTargets && c.Unjudged():
			tags = append(tags, "misses spec (float figures: rounded taps not judged)")
		case !c.MeetsTargets:
			tags = append(tags, "misses spec")
		}
		if len(c.OverLimits) > 0 {
			tags = append(tags, "over limits")
			row.Over = report.OverLimitsText(c, hw)
		}
		row.Tag = strings.Join(tags, ", ")
		if clock && c.MultipliersAtClock != nil {
			row.Multipliers = strconv.Itoa(*c.MultipliersAtClock)
		}
		if cr := c.ChainReport; cr != nil {
			if clock && cr.HardwareMultipliers != nil {
				row.Native = strconv.Itoa(*cr.HardwareMultipliers)
			}
			if cr.FixedMemoryBits != c.MemoryBits {
				row.BuiltMem = strconv.Itoa(cr.FixedMemoryBits)
			}
		}
		out = append(out, row)
	}
	return out
}

// stageViews returns one small table per stage; prefix is the folder of the
// chain's files relative to the page.
func stageViews(c report.Chain, files []string, prefix string, clock bool) []stageView {
	var out []stageView
	for i, s := range c.Stages {
		name := map[string]string{"cic": "CIC", "halfband": "half-band", "fir": "FIR"}[s.Kind]
		if name == "" {
			name = s.Kind
		}
		verb := "decimate"
		if c.Interpolates() {
			verb = "interpolate"
		}
		sv := stageView{Title: fmt.Sprintf("Stage %d: %s, %s by %d", i+1, name, verb, s.Decimation)}
		if s.Interpolation > 0 && (s.Kind == "polyphase" || s.Kind == "farrow") {
			sv.Title = fmt.Sprintf("Stage %d: %s, rate x %d/%d", i+1, map[string]string{"polyphase": "polyphase", "farrow": "Farrow"}[s.Kind], s.Interpolation, s.Decimation)
		}
		add := func(k, v string) { sv.Rows = append(sv.Rows, stageRow{K: k, V: v}) }
		add("Rates", freq(s.InputRateHz)+" → "+freq(s.OutputRateHz))
		switch s.Kind {
		case "polyphase":
			add("Up, down", fmt.Sprintf("L = %d, M = %d", s.Interpolation, s.Decimation))
			add("Prototype", fmt.Sprintf("%d taps at %s, unit gain at 0 Hz", s.Taps, freq(s.InputRateHz*float64(s.Interpolation))))
			if c.Interpolates() {
				add("Taps per input", strconv.Itoa(s.PhaseTaps)) // the transposed form
			} else {
				add("Taps per output", strconv.Itoa(s.PhaseTaps))
			}
			if s.CompensatesCIC != nil && *s.CompensatesCIC {
				add("CIC droop", "compensated here")
			}
		case "farrow":
			add("Up, down", fmt.Sprintf("L = %d, M = %d", s.Interpolation, s.Decimation))
			add("Structure", fmt.Sprintf("%d subfilters of %d taps (degree %d in mu)", len(s.FarrowCoefficients), s.Taps, s.FarrowDegree))
		case "cic":
			add("Order, delay", fmt.Sprintf("N = %d, M = %d", s.CICOrder, s.CICDelay))
			if len(s.RegisterBits) > 0 {
				add("Register bits", ints(s.RegisterBits))
			}
		default:
			taps := strconv.Itoa(s.Taps)
			if s.Variant != "" {
				taps += " (" + s.Variant + ")"
			}
			add("Taps", taps)
			if s.CompensatesCIC != nil && *s.CompensatesCIC {
				add("CIC droop", "compensated here")
			}
			if w := s.StageReport; w != nil && w.CoefficientBits > 0 && w.CoefficientFrac != nil {
				add("Coefficients", fmt.Sprintf("%d bits, %d fractional", w.CoefficientBits, *w.CoefficientFrac))
			}
		}
		if w := s.StageReport; w != nil && (s.Kind == "polyphase" || s.Kind == "farrow") && w.CoefficientBits > 0 && w.CoefficientFrac != nil {
			// A fractional stage's words (package chain/fixed, Fractional
			// stages): its accumulator is the widest phase's or branch's.
			add("Coefficients", fmt.Sprintf("%d bits, %d fractional", w.CoefficientBits, *w.CoefficientFrac))
			if s.Kind == "farrow" {
				add("Fractional delay", fmt.Sprintf("mu %d bits unsigned, Horner register %d bits", w.MuBits, w.HornerBits))
			}
			if w.PhaseDCGainMinDB != nil && w.PhaseDCGainMaxDB != nil {
				add("DC gain per phase", fmt.Sprintf("%.4f to %.4f dB", *w.PhaseDCGainMinDB, *w.PhaseDCGainMaxDB))
			}
		}
		if w := s.StageReport; w != nil {
			acc := fmt.Sprintf("accumulator %d bits", w.AccumulatorBits)
			if s.AccumulatorOverLimit {
				acc += " (wider than hardware.max_register_bits)"
			}
			add("Word lengths", fmt.Sprintf("in %d bits, %s, out %d bits", w.InputBits, acc, w.OutputBits))
			if w.MultiplierSize != "" && s.CoefficientAdders == nil { // an adder graph has no multiplier
				m := w.MultiplierSize + " bits"
				if w.HardwareMultipliers != nil {
					m += fmt.Sprintf(", %d native blocks at the clock", *w.HardwareMultipliers)
				}
				add("Multiplier", m)
			}
			// Under the word lengths, as the terminal prints them: the
			// headroom points, where an input within full scale can drive
			// this output past its largest code (package chain/fixed,
			// Headroom). The other rounding points close the card, one an
			// item, in report.json's order.
			for _, p := range w.RoundingPoints {
				if h, ok := strings.CutPrefix(p, "headroom: "); ok {
					sv.Rows = append(sv.Rows, stageRow{K: "Headroom", V: h, Warn: true})
				} else {
					sv.Points = append(sv.Points, p)
				}
			}
		}
		// Counted per sample on the channel side: per output of a
		// decimation chain, per input of an interpolation chain (report.json
		// keeps the one name for both).
		side := "output"
		if c.Interpolates() {
			side = "input"
		}
		add("Multiplies / "+side, trimFloat(s.MultipliesPerOutput, 2))
		add("Adds / "+side, trimFloat(s.AddsPerOutput, 2))
		add("Memory", fmt.Sprintf("%d words, %d bits", s.MemoryWords, s.MemoryBits))
		add("Latency", seconds(s.LatencyS))
		if clock && s.Multipliers != nil {
			add("Multipliers at the clock", strconv.Itoa(*s.Multipliers))
		}
		want := prefix + fmt.Sprintf("coefficients/stage%d_", i+1)
		for _, f := range files {
			if strings.HasPrefix(f, want) {
				sv.Links = append(sv.Links, f)
			}
		}
		out = append(out, sv)
	}
	return out
}

// topFiles leaves out the per-value folders, which the value sections link.
// costAxis heads a sweep page's cost columns: "adders" for a
// multiplierless spec, whose chains are priced by their adders as built,
// else "mult/out".
func costAxis(s report.Spec) string {
	if s.Hardware.Multiplierless {
		return "adders"
	}
	return "mult/" + s.Side()
}

// listedFiles is the Files section's list of a plan's folder: every file
// but the test vectors, of which only vectors/README.txt is listed (it
// names the others: six stimuli, each with its input and every stage's
// output).
func listedFiles(files []string) []string {
	var out []string
	for _, f := range files {
		if !strings.HasPrefix(f, "vectors/") || f == "vectors/README.txt" {
			out = append(out, f)
		}
	}
	return out
}

func topFiles(files []string) []string {
	var out []string
	for _, f := range files {
		if !strings.HasPrefix(f, "values/") {
			out = append(out, f)
		}
	}
	return out
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func ints(v []int) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = strconv.Itoa(x)
	}
	return strings.Join(s, ", ")
}

func freq(hz float64) string { return units.FormatFrequency(hz) }

func trimFloat(v float64, prec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "–"
	}
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	return strconv.FormatFloat(v, 'f', prec, 64)
}

func shortest(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func seconds(s float64) string {
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return "–"
	case s >= 1:
		return fmt.Sprintf("%.3g s", s)
	case s >= 1e-3:
		return fmt.Sprintf("%.3g ms", s*1e3)
	case s >= 1e-6:
		return fmt.Sprintf("%.3g µs", s*1e6)
	}
	return fmt.Sprintf("%.3g ns", s*1e9)
}

func execute(name string, v any) ([]byte, error) {
	var b bytes.Buffer
	if err := pages.ExecuteTemplate(&b, name, v); err != nil {
		return nil, fmt.Errorf("htmlreport: %v", err)
	}
	return b.Bytes(), nil
}

// AddPlanPage appends report.html for a plan or check to files (those
// report.Files wrote for rep), with the figures inlined from them and the
// file list naming every file and the page itself.
func AddPlanPage(source string, rep *report.Report, files []report.File) ([]report.File, error) {
	get := func(name string) []byte {
		for _, f := range files {
			if f.Name == name {
				return f.Data
			}
		}
		return nil
	}
	page, err := Plan(PlanPage{
		Source: source, Report: rep,
		Front: get("front.svg"), Response: get("response.svg"), Stages: get("stages.svg"),
		Files: append(fileNames(files), "report.html"),
	})
	if err != nil {
		return nil, err
	}
	return append(files, report.File{Name: "report.html", Data: page}), nil
}

// AddSweepPage appends report.html for a sweep to files (those sweep.Files
// wrote, the figure third), with the figure inlined.
func AddSweepPage(source string, doc *sweep.Doc, files []report.File) ([]report.File, error) {
	var fig []byte
	for _, f := range files {
		if f.Name == "sweep.svg" {
			fig = f.Data
		}
	}
	page, err := Sweep(SweepPage{Source: source, Doc: doc, Figure: fig, Files: append(fileNames(files), "report.html")})
	if err != nil {
		return nil, err
	}
	return append(files, report.File{Name: "report.html", Data: page}), nil
}

func fileNames(files []report.File) []string {
	var out []string
	for _, f := range files {
		out = append(out, f.Name)
	}
	return out
}

// rejectionText is the spec's rejection: the flat target, or the mask's
// points and what its figures mean.
func rejectionText(s report.Spec) string {
	if len(s.RejectionMask) == 0 {
		return shortest(s.RejectionDB) + " dB"
	}
	pts := make([]string, len(s.RejectionMask))
	for i, p := range s.RejectionMask {
		pts[i] = freq(p[0]) + ": " + shortest(p[1]) + " dB"
	}
	return "mask " + strings.Join(pts, ", ") + " (linear in dB between points; the rejection figures below are " + shortest(s.RejectionDB) + " dB plus the worst margin over the mask)"
}

// sigmaDeltaRow describes the noise-shaped converter feeding the chain
// (a spec with one).
func sigmaDeltaRow(s report.Spec) kv {
	m := s.SigmaDelta
	zeros := "all at DC"
	if len(m.ZerosHz) > 0 {
		z := make([]string, len(m.ZerosHz))
		for i, v := range m.ZerosHz {
			z[i] = freq(v)
		}
		zeros = strings.Join(z, ", ")
	}
	return kv{"Input converter", fmt.Sprintf("sigma-delta modulator of order %d, %d-bit quantiser, in-band SNR target %s dB, NTF zeros %s, out-of-band gain %s; the rejection mask is derived from it",
		m.Order, m.Bits, shortest(m.SNRDB), zeros, shortest(m.OBG))}
}
