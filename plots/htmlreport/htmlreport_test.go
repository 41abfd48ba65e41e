package htmlreport

import (
	"bytes"
	"context"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/optimize/sweep"
	"github.com/stepdown-dsp/stepdown/plots"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// -sample DIR writes a sample report.html (and the files it links) into DIR,
// for looking at it in a browser; .ci/browser uses it when the planner cannot
// produce a report.
var sampleDir = flag.String("sample", "", "write a sample plan report.html into this folder")

func ip(v int) *int   { return &v }
func bp(v bool) *bool { return &v }

// sampleReport is an invented plan of the built-in example's spec with
// invented figures: it exercises the page, not the planner.
func sampleReport(t testing.TB) *report.Report {
	s, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	taps := func(n int) []float64 {
		c := make([]float64, n)
		for i := range c {
			x := float64(i) - float64(n-1)/2
			c[i] = 0.25 * sinc(x/4) * (0.54 + 0.46*math.Cos(math.Pi*x/float64(n)))
		}
		return c
	}
	mk := func(not string, mult, mem float64, lat float64, rej float64, designed bool) report.Chain {
		return report.Chain{
			Notation: not, Designed: designed, MeetsTargets: rej >= 80,
			MultipliesPerOutput: mult, AddsPerOutput: 2*mult + 10, MemoryWords: int(mem / 18), MemoryBits: int(mem),
			LatencyS: lat, LatencySamples: lat * 1.92e6, MultipliersAtClock: ip(int(math.Ceil(mult * 1.92e6 / 245.76e6))),
			AliasRejectionDB: rej, RejectionMarginDB: rej - 80, WorstAliasHz: 1.3e6, PassbandRippleDB: 0.15,
		}
	}
	rec := mk("cic5m1r8 > hb > fir4", 46, 5200, 21e-6, 81.2, true)
	rec.Stages = []report.Stage{
		{Kind: "cic", Decimation: 8, InputRateHz: 122.88e6, OutputRateHz: 15.36e6, AddsPerOutput: 360, MemoryWords: 10, MemoryBits: 310,
			LatencyS: 0.3e-6, Multipliers: ip(0), CICOrder: 5, CICDelay: 1, RegisterBits: []int{31, 30, 29, 28, 27, 26, 25, 25, 24, 24}},
		{Kind: "halfband", Decimation: 2, InputRateHz: 15.36e6, OutputRateHz: 7.68e6, MultipliesPerOutput: 16, AddsPerOutput: 30,
			MemoryWords: 30, MemoryBits: 720, LatencyS: 1.9e-6, Multipliers: ip(1), Taps: 15, Coefficients: taps(15),
			CompensatesCIC: bp(false), StageReport: &fixed.StageReport{CoefficientBits: 18, CoefficientFrac: ip(17)}},
		{Kind: "fir", Decimation: 4, InputRateHz: 7.68e6, OutputRateHz: 1.92e6, MultipliesPerOutput: 30, AddsPerOutput: 60,
			MemoryWords: 120, MemoryBits: 4170, LatencyS: 18.8e-6, Multipliers: ip(1), Variant: "multiband", Taps: 61,
			Coefficients: taps(61), CompensatesCIC: bp(true), StageReport: &fixed.StageReport{CoefficientBits: 18, CoefficientFrac: ip(18)}},
	}
	// Word-length figures as report.New would flatten them from chain/fixed
	// (invented values, for the page's wording only).
	rec.ChainReport = &fixed.ChainReport{QuantisedRejectionDB: 81.05, BitTrueSNRValid: true,
		BitTrueReport: &fixed.BitTrueReport{BitTrueSNRDB: fp(112.34), BitTrueENOB: fp(18.37),
			TestSignal: "192187.5 Hz at -1 dBFS; white Gaussian noise -90.3 dBFS RMS; 2048 output samples"}}
	rec.Stages[2].StageReport.InputBits, rec.Stages[2].StageReport.AccumulatorBits, rec.Stages[2].StageReport.OutputBits = 24, 46, 24
	rec.Stages[2].StageReport.MultiplierSize, rec.Stages[2].StageReport.HardwareMultipliers = "25 x 18", ip(2)
	for i := range rec.Stages {
		st := &rec.Stages[i]
		if st.Coefficients != nil {
			q := make([]int64, len(st.Coefficients))
			for j, c := range st.Coefficients {
				q[j] = int64(math.Round(c * math.Ldexp(1, *st.StageReport.CoefficientFrac)))
			}
			st.StageReport.CoefficientsInt = q
		}
	}
	r := &report.Report{
		Schema: report.Schema, Command: "plan", Caution: report.Caution, Spec: report.NewSpec(s),
		Search: report.Search{Candidates: 1234, Feasible: 321, Designed: 40, Dropped: map[string]int{"cic_rejection_below_target": 9}},
		Front: []report.Chain{
			mk("cic6m1r16 > fir4", 38, 7900, 30e-6, 80.4, true),
			rec,
			mk("cic4m1r4 > hb > hb > fir4 <script>", 61, 4100, 17e-6, 80.9, true),
		},
		Recommended: 1,
		Reason:      "It sits at the knee of the front: cheaper chains need over 50% more memory for 17% fewer multiplies.",
	}
	return r
}

func sinc(x float64) float64 {
	if x == 0 {
		return 1
	}
	return math.Sin(math.Pi*x) / (math.Pi * x)
}

func svgOf(t testing.TB) func(*plots.Figure, error) []byte {
	return func(f *plots.Figure, err error) []byte {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := f.Render(&b, "svg", 0, 0); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
}

func samplePage(t testing.TB) (PlanPage, []report.File) { return samplePageOf(t, sampleReport(t)) }

// samplePageOf is samplePage's page of r.
func samplePageOf(t testing.TB, r *report.Report) (PlanPage, []report.File) {
	rec := r.Front[r.Recommended]
	var fd plots.FrontData
	for _, c := range r.Front {
		fd.Front = append(fd.Front, plots.Point{Multiplies: c.MultipliesPerOutput, MemoryBits: float64(c.MemoryBits), RejectionDB: c.AliasRejectionDB, Label: c.Notation})
	}
	fd.Recommended, fd.TargetDB = 1, 80
	front := svgOf(t)(plots.Front(fd))
	// A fifth-order CIC's gain (docs/design.md §4) stands in for the cascade.
	rd := plots.ResponseData{TargetDB: 80, PassbandHz: 480e3, OutputRateHz: 1.92e6}
	for k := 0; k <= 2000; k++ {
		g := 61.44e6 * float64(k) / 2000
		rd.FreqHz = append(rd.FreqHz, g)
		h := 1.0
		if k > 0 {
			h = math.Pow(math.Abs(math.Sin(math.Pi*g*8/122.88e6)/(8*math.Sin(math.Pi*g/122.88e6))), 5)
		}
		rd.TotalDB = append(rd.TotalDB, 20*math.Log10(math.Max(h, 1e-12)))
	}
	for k := 1; float64(k)*1.92e6-640e3 < 61.44e6; k++ {
		rd.AliasBands = append(rd.AliasBands, [2]float64{float64(k)*1.92e6 - 640e3, math.Min(float64(k)*1.92e6+640e3, 61.44e6)})
	}
	resp := svgOf(t)(plots.Response(rd))
	sd := plots.StagesData{}
	for i, st := range rec.Stages {
		sd.Names = append(sd.Names, st.Kind+string(rune('1'+i)))
		sd.Multiplies = append(sd.Multiplies, st.MultipliesPerOutput)
		sd.MemoryBits = append(sd.MemoryBits, float64(st.MemoryBits))
	}
	stages := svgOf(t)(plots.Stages(sd))
	js, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	cf, err := report.CoefficientFiles(rec, true)
	if err != nil {
		t.Fatal(err)
	}
	files := append([]report.File{{Name: "report.json", Data: js}, {Name: "front.svg", Data: front},
		{Name: "response.svg", Data: resp}, {Name: "stages.svg", Data: stages}}, cf...)
	var names []string
	for _, f := range files {
		names = append(names, f.Name)
	}
	return PlanPage{Source: "built-in example", Report: r, Front: front, Response: resp, Stages: stages, Files: append(names, "report.html")}, files
}

var (
	externalRef = regexp.MustCompile(`(?i)(src|href|action|poster|data)\s*=\s*["']?\s*(https?:|//|ftp:|file:|ws:|wss:)`)
	cssURL      = regexp.MustCompile(`(?i)url\(|@import`)
)

// checkSelfContained fails on anything a browser would fetch.
func checkSelfContained(t *testing.T, page string) {
	t.Helper()
	if m := externalRef.FindString(page); m != "" {
		t.Errorf("page refers outside itself: %q", m)
	}
	if m := cssURL.FindString(page); m != "" {
		t.Errorf("page's styles fetch: %q", m)
	}
	for _, tag := range []string{"<script", "<link", "<iframe", "<img", "<object", "<embed", "<?xml", "<!-- Generated"} {
		if strings.Contains(strings.ToLower(page), strings.ToLower(tag)) {
			t.Errorf("page holds %s", tag)
		}
	}
}

func TestPlanPage(t *testing.T) {
	p, files := samplePage(t)
	b, err := Plan(p)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	checkSelfContained(t, page)
	for _, want := range []string{
		"<!DOCTYPE html>", `<meta charset="utf-8">`, "@media print",
		`id="spec"`, `id="recommendation"`, `id="front"`, `id="stages"`, `id="response"`, `id="cautions"`, `id="files"`,
		"122.88 MHz", "cic5m1r8 &gt; hb &gt; fir4", p.Report.Reason[:20],
		"Stage 1: CIC, decimate by 8", "Stage 2: half-band, decimate by 2", "Stage 3: FIR, decimate by 4",
		`href="coefficients/stage3_fir.csv"`, `href="coefficients/stage3_fir.hex"`, `href="coefficients/stage2_halfband_int.csv"`,
		"bit-true simulation", "Complex (I/Q) signal",
		"bit-true SNR 112.3 dB, ENOB 18.37 bits (the ADC word alone: 0.0 dB) on 192187.5 Hz at -1 dBFS", "alias rejection is 81.05 dB",
		"in 24 bits, accumulator 46 bits, out 24 bits", "25 x 18 bits, 2 native blocks at the clock",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	// Three inline figures.
	if n := strings.Count(page, "<svg"); n != 3 {
		t.Errorf("%d inline SVGs, want 3", n)
	}
	// Text from the report is escaped.
	if strings.Contains(page, "fir4 <script>") {
		t.Error("notation not escaped")
	}
	// Every relative link names a file of the folder or an anchor of the page.
	have := map[string]bool{}
	for _, f := range files {
		have[f.Name] = true
	}
	have["report.html"] = true
	for _, m := range regexp.MustCompile(`href="([^"]*)"`).FindAllStringSubmatch(page, -1) {
		h := m[1]
		if strings.HasPrefix(h, "data:image/") {
			continue // an image embedded in a figure (the front's colour key): inline, not a fetch
		}
		if strings.HasPrefix(h, "#") {
			if !strings.Contains(page, `id="`+h[1:]+`"`) {
				t.Errorf("link %s has no target", h)
			}
			continue
		}
		if !have[h] {
			t.Errorf("link %s names no file of the folder", h)
		}
	}
	b2, _ := Plan(p)
	if !bytes.Equal(b, b2) {
		t.Error("two runs differ")
	}
	if *sampleDir != "" {
		files = append(files, report.File{Name: "report.html", Data: b})
		for _, f := range files {
			path := filepath.Join(*sampleDir, filepath.FromSlash(f.Name))
			if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(path, f.Data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

func TestPlanPageErrors(t *testing.T) {
	p, _ := samplePage(t)
	p.Front = []byte(`<svg><image href="http://example.invalid/x.png"/></svg>`)
	if _, err := Plan(p); err == nil {
		t.Error("no error for a figure with an external reference")
	}
	p, _ = samplePage(t)
	p.Report.Recommended = 7
	if _, err := Plan(p); err == nil {
		t.Error("no error for a recommendation outside the front")
	}
	if _, err := Plan(PlanPage{}); err == nil {
		t.Error("no error without a report")
	}
}

func TestSweepPage(t *testing.T) {
	r := sampleReport(t)
	s, _ := specfile.Example()
	v, err := sweep.ParseVary("rejection=75:85:5")
	if err != nil {
		t.Fatal(err)
	}
	rs := []sweep.Result{
		{Value: 75, Status: sweep.OK, Report: r},
		{Value: 80, Status: sweep.Invalid, Detail: "passband = \"700 kHz\": must not exceed protected"},
		{Value: 85, Status: sweep.OK, Report: r},
	}
	doc := sweep.NewDoc(s, v, rs)
	var fig bytes.Buffer
	if err := sweep.Render(&fig, sweep.NewFigureData("", v, rs), "svg"); err != nil {
		t.Fatal(err)
	}
	files := []string{"report.json", "sweep.csv", "sweep.svg", "sweep.png", "values/01/report.json",
		"values/01/coefficients/stage3_fir.csv", "values/03/report.json", "report.html"}
	b, err := Sweep(SweepPage{Source: "built-in example", Doc: doc, Figure: fig.Bytes(), Files: files})
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	checkSelfContained(t, page)
	for _, want := range []string{"Trade study: rejection", "@media print", `id="summary"`, `id="value-01"`, `id="value-03"`,
		"must not exceed protected", `href="values/01/coefficients/stage3_fir.csv"`, `href="values/03/report.json"`,
		`href="sweep.csv"`, "bit-true simulation", "Stage 3: FIR"} {
		if !strings.Contains(page, want) {
			t.Errorf("sweep page lacks %q", want)
		}
	}
	if strings.Contains(page, `id="value-02"`) {
		t.Error("the invalid value has a section")
	}
	if strings.Count(page, "<svg") != 1 {
		t.Error("want one inline figure")
	}
	if *sampleDir != "" {
		_ = os.WriteFile(filepath.Join(*sampleDir, "sweep-report.html"), b, 0o644)
	}
}

func fp(v float64) *float64 { return &v }

// A check's page says what beats the named chain, as the terminal does.
func TestCheckPageComparison(t *testing.T) {
	p, _ := samplePage(t)
	rep := *p.Report
	rep.Command = "check"
	rep.Front = rep.Front[:1]
	rep.Recommended = 0
	better := rep.Front[0]
	better.Notation = "cic6m1r8 > fir8"
	better.MeetsTargets = true
	better.MemoryBits--
	rep.Compare(report.NewComparison("a plan of the same spec", &report.Report{Front: []report.Chain{better, rep.Front[0]}}))
	p.Report = &rep
	b, err := Plan(p)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, want := range []string{"Compared with the front of a plan of the same spec (2 chains): it is beaten.", "#1 cic6m1r8 &gt; fir8 does it with"} {
		if !strings.Contains(page, want) {
			t.Errorf("check page lacks %q", want)
		}
	}
}

// A check of a chain that misses the spec says how many chains of the
// front compared with meet it, as the terminal does: none for an empty
// front or one where none meets, not "its chains meet the spec".
func TestCheckPageComparisonMisses(t *testing.T) {
	p, _ := samplePage(t)
	base := *p.Report
	base.Command = "check"
	base.Front = base.Front[:1]
	base.Recommended = 0
	base.Front[0].MeetsTargets = false
	dearer := func(meets bool) report.Chain {
		c := base.Front[0]
		c.Notation, c.MeetsTargets = "cic6m1r8 > fir8", meets
		c.MultipliesPerOutput++
		c.MemoryBits++
		return c
	}
	for _, tc := range []struct {
		front []report.Chain
		want  string
	}{
		{nil, "(0 chains): none of its chains meets the spec as judged there either."},
		{[]report.Chain{dearer(false)}, "(1 chain): its one chain does not meet the spec as judged there either."},
		{[]report.Chain{dearer(true)}, "(1 chain): its one chain meets the spec; this one does not."},
		{[]report.Chain{dearer(true), dearer(false)}, "(2 chains): 1 of its chains meets the spec; this one does not."},
		{[]report.Chain{dearer(true), dearer(true)}, "(2 chains): 2 of its chains meet the spec; this one does not."},
	} {
		rep := base
		rep.Front = []report.Chain{base.Front[0]}
		rep.Compare(report.NewComparison("a plan of the same spec", &report.Report{Front: tc.front}))
		p.Report = &rep
		b, err := Plan(p)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), tc.want) {
			t.Errorf("front of %d chains: page lacks %q", len(tc.front), tc.want)
		}
	}
}

// A grid's page: the heat map, the grid of figures linking to each cell's
// section, every cell in the table, no section for a cell without a chain.
func TestGridPage(t *testing.T) {
	r := sampleReport(t)
	s, _ := specfile.Example()
	rows, err := sweep.ParseVary("rejection=75:85:10")
	if err != nil {
		t.Fatal(err)
	}
	cols, err := sweep.ParseVary("passband=480:720:240 kHz")
	if err != nil {
		t.Fatal(err)
	}
	g, err := sweep.NewGrid(rows, cols)
	if err != nil {
		t.Fatal(err)
	}
	bad := "protected = \"640 kHz\": must lie in [passband = 720000 Hz, output_rate/2 = 960000 Hz]"
	rs := []sweep.Result{
		{Value: 75, Column: 480e3, Status: sweep.OK, Report: r},
		{Value: 75, Column: 720e3, Status: sweep.Invalid, Detail: bad},
		{Value: 85, Column: 480e3, Status: sweep.Partial, Detail: "stopped by the time limit", Report: r},
		{Value: 85, Column: 720e3, Status: sweep.Invalid, Detail: bad},
	}
	doc := sweep.NewGridDoc(s, g, rs)
	var fig bytes.Buffer
	if err := sweep.RenderHeatmap(&fig, sweep.NewHeatmapData("", g, rs), "svg"); err != nil {
		t.Fatal(err)
	}
	files := []string{"report.json", "sweep.csv", "sweep.svg", "sweep.png", "values/r01-c01/report.json",
		"values/r01-c01/coefficients/stage3_fir.csv", "values/r02-c01/report.json", "report.html"}
	b, err := Sweep(SweepPage{Source: "built-in example", Doc: doc, Figure: fig.Bytes(), Files: files})
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	checkSelfContained(t, page)
	for _, want := range []string{"Trade study: rejection by passband",
		"--vary rejection=75:85:10 --vary passband=480:720:240 kHz · 4 cells",
		`<th>rejection \ passband</th><th class="n">480 kHz</th><th class="n">720 kHz</th>`,
		`<a href="#cell-r01-c01">46</a>`, `<a href="#cell-r02-c01">46*</a>`, `<span class="tag">invalid</span>`,
		`id="cell-r01-c01"`, `id="cell-r02-c01"`, "rejection = 85 dB, passband = 480 kHz",
		`href="values/r01-c01/coefficients/stage3_fir.csv"`, "Cells whose status is not ok"} {
		if !strings.Contains(page, want) {
			t.Errorf("grid page lacks %q", want)
		}
	}
	if strings.Contains(page, `id="cell-r01-c02"`) {
		t.Error("an invalid cell has a section")
	}
	if strings.Count(page, "<svg") != 1 {
		t.Error("want one inline figure")
	}
	doc.Values[3].Column = 7
	if _, err := Sweep(SweepPage{Source: "x", Doc: doc}); err == nil {
		t.Error("no error for a cell outside the grid")
	}
	if *sampleDir != "" {
		_ = os.WriteFile(filepath.Join(*sampleDir, "grid-report.html"), b, 0o644)
	}
}

// A multiplierless plan's page is priced in adders: the front table's cost
// column (the recommended chain's adders as report.json states them), the
// front figure's caption, the spec table and the resource table's graph
// and tap adder columns. An invented 2.4 GS/s spec with a 400 MHz clock.
func TestPlanPageMultiplierless(t *testing.T) {
	s, err := specfile.Parse("ml.toml", []byte(`input_rate = "2.4 GHz"
output_rate = "37.5 MHz"
passband = "12 MHz"
ripple = "0.2 dB"
rejection = "60 dB"
[words]
input = 12
output = 16
coefficients = 16
[hardware]
clock = "400 MHz"
multiplierless = true
`))
	if err != nil {
		t.Fatal(err)
	}
	res, err := optimize.Plan(context.Background(), s.Chain, s.SearchSettings())
	if err != nil {
		t.Fatal(err)
	}
	page, rep := pageOf(t, "plan", "ml.toml", s, res)
	rec := rep.Front[rep.Recommended]
	for _, want := range []string{
		`<th class="n">adders</th>`, "Hardware adders (as built)", "Multiplierless</th>",
		`<th class="n">graph adders</th>`, `<th class="n">tap adders</th>`,
		fmt.Sprintf(`<td class="n">%d</td>`, *rec.Adders),
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	if strings.Contains(page, `<th class="n">mult/out</th>`) {
		t.Error("the front table still heads its cost column mult/out")
	}
	// An adder graph has no multiplier, and stores no coefficient.
	if strings.Contains(page, `<th scope="row">Multiplier</th>`) {
		t.Error("a stage card gives an adder graph a multiplier")
	}
	for i, st := range rec.Stages {
		if st.StageReport != nil && st.CoefMemoryBits != 0 {
			t.Errorf("stage %d stores %d coefficient bits", i+1, st.CoefMemoryBits)
		}
	}
}

// A front row whose rounded taps could not be judged says its figures are
// the float design's (report.Chain.Unjudged), as the text table does.
func TestFrontRowUnjudged(t *testing.T) {
	c := report.Chain{Notation: "cic7m1r32 > fir2", VerdictBasis: "rounded taps", Designed: true,
		AliasRejectionDB: 98.6, PassbandRippleDB: 0.0673, WordLengthsError: "stage 2: accumulator needs 64 bits"}
	rows := frontRows([]report.Chain{c}, 0, false, report.Hardware{})
	if len(rows) != 1 || !strings.Contains(rows[0].Tag, "float figures: rounded taps not judged") || rows[0].Rejection != "98.60" {
		t.Errorf("row %+v: want the float figures, said so", rows)
	}
}

// A chain over the fabric's limits as built is tagged in the front table
// and named with its figures under it; the recommendation gives the native
// blocks and the memory as built beside the priced figures; the spec lists
// the multiplier size and the limits.
func TestOverLimitsShown(t *testing.T) {
	r := sampleReport(t)
	r.Spec.Hardware.Multiplier, r.Spec.Hardware.MaxRegisterBits, r.Spec.Hardware.MaxMemoryBits = "18x25", 40, 5000
	c := &r.Front[r.Recommended]
	c.ChainReport = &fixed.ChainReport{FixedMemoryBits: 5100, HardwareMultipliers: ip(5)}
	c.OverLimits = []string{"max_memory_bits"}
	p, _ := samplePageOf(t, r)
	b, err := Plan(p)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, want := range []string{
		`<span class="tag">over limits</span>`,
		"limits as built, by its word lengths: 5100 bits of memory as built over hardware.max_memory_bits = 5000.",
		"5 native multiplier blocks by the word lengths",
		"5200 bits of memory (288 words, as priced; 5100 bits as built by the word lengths)",
		"18x25 bits", "max_register_bits = 40, max_memory_bits = 5000",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
}

// A stage's rounding points (report.json's rounding_points) close its card,
// escaped and in order; its headroom points are rows of their own under
// its word lengths, as the terminal prints them; a stage without points
// gets neither, and nor does a page whose chain has none.
func TestStageRoundingPoints(t *testing.T) {
	plain, err := Plan(func() PlanPage { p, _ := samplePage(t); return p }())
	if err != nil {
		t.Fatal(err)
	}
	for _, no := range []string{`class="warn"`, `class="points"`, "Rounding points", "Headroom"} {
		if strings.Contains(string(plain), no) {
			t.Errorf("a page without rounding points holds %q", no)
		}
	}

	r := sampleReport(t)
	st := r.Front[r.Recommended].Stages[2].StageReport
	st.RoundingPoints = []string{
		"products and sum: exact (24 x 18 bits into 46-bit accumulator)",
		"output: round half up, dropping 17 LSBs, then saturate to 24 bits <b>",
		"headroom: an input tone at 412.5 kHz in the passband can peak at +0.412 dB of this output's full scale (the stages' gain there, images included), so above -0.412 dBFS it may saturate the 24-bit output & <script>",
	}
	p, _ := samplePageOf(t, r)
	b, err := Plan(p)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	checkSelfContained(t, page)
	for _, bad := range []string{"<b>", "& <script>", "headroom: an input tone"} {
		if strings.Contains(page, bad) {
			t.Errorf("the page holds %q: unescaped, or the headroom point listed twice", bad)
		}
	}
	// Stage 3's card, in order: its word lengths, its multiplier, the
	// headroom row, the rest of its rows, its files, then its points.
	i := strings.Index(page, "Stage 3: FIR, decimate by 4")
	if i < 0 {
		t.Fatal("no stage 3 card")
	}
	card := page[i:]
	card = card[:strings.Index(card, "</table>")]
	at := 0
	for _, want := range []string{
		"<th scope=\"row\">Word lengths</th><td>in 24 bits, accumulator 46 bits, out 24 bits</td>",
		"<th scope=\"row\">Multiplier</th>",
		`<tr class="warn"><td colspan="2"><strong>Headroom:</strong> an input tone at 412.5 kHz in the passband can peak at &#43;0.412 dB of this output&#39;s full scale (the stages&#39; gain there, images included), so above -0.412 dBFS it may saturate the 24-bit output &amp; &lt;script&gt;</td></tr>`,
		"<th scope=\"row\">Multiplies / output</th>",
		"<th scope=\"row\">Coefficient files</th>",
		`<td class="points" colspan="2"><strong>Rounding points</strong>, in signal order:<ol>`,
		"<li>products and sum: exact (24 x 18 bits into 46-bit accumulator)</li>",
		"<li>output: round half up, dropping 17 LSBs, then saturate to 24 bits &lt;b&gt;</li>",
		"</ol></td></tr>",
	} {
		j := strings.Index(card[at:], want)
		if j < 0 {
			t.Fatalf("stage 3's card lacks %q after byte %d:\n%s", want, at, card)
		}
		at += j + len(want)
	}
	// Stages 1 and 2 have none: one headroom row and one list in the page.
	if n := strings.Count(page, `class="warn"`); n != 1 {
		t.Errorf("%d headroom rows, want 1", n)
	}
	if n := strings.Count(page, `class="points"`); n != 1 {
		t.Errorf("%d lists of rounding points, want 1", n)
	}
	b2, _ := Plan(p)
	if !bytes.Equal(b, b2) {
		t.Error("two runs differ")
	}

	// A sweep's value sections draw the stage cards alike.
	s, _ := specfile.Example()
	v, err := sweep.ParseVary("rejection=80:85:5")
	if err != nil {
		t.Fatal(err)
	}
	rs := []sweep.Result{{Value: 80, Status: sweep.OK, Report: r}, {Value: 85, Status: sweep.OK, Report: sampleReport(t)}}
	sb, err := Sweep(SweepPage{Source: "built-in example", Doc: sweep.NewDoc(s, v, rs)})
	if err != nil {
		t.Fatal(err)
	}
	if n := strings.Count(string(sb), `class="warn"`); n != 1 {
		t.Errorf("sweep page: %d headroom rows, want 1", n)
	}
	if n := strings.Count(string(sb), `class="points"`); n != 1 {
		t.Errorf("sweep page: %d lists of rounding points, want 1", n)
	}
}

// An interpolation chain's counts are per input sample (README, "counts"):
// its stage cards say so, and never "/ output". An invented 4 MS/s to
// 64 MS/s transmit chain, checked as `stepdown check` would.
func TestInterpolationStageCardsPerInput(t *testing.T) {
	s, err := specfile.Parse("tx.toml", []byte(`input_rate = "4 MHz"
output_rate = "64 MHz"
passband = "1.2 MHz"
ripple = "0.2 dB"
rejection = "60 dB"
`))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := chain.ParseNotation("cic4m1r8 > fir2")
	if err != nil {
		t.Fatal(err)
	}
	cand, _, err := optimize.Check(context.Background(), s.Chain, plan, s.SearchSettings())
	if err != nil {
		t.Fatal(err)
	}
	res := &optimize.Result{Candidates: 1, FeasibleAll: 1, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{cand}, Reason: "only one"}
	page, _ := pageOf(t, "check", "tx.toml", s, res)
	i := strings.Index(page, "Stage 1: FIR, interpolate by 2")
	if i < 0 {
		t.Fatal("no stage 1 card")
	}
	cards := page[i:]
	for _, want := range []string{"<th scope=\"row\">Multiplies / input</th>", "<th scope=\"row\">Adds / input</th>"} {
		if n := strings.Count(cards, want); n != 2 {
			t.Errorf("%d cards hold %q, want 2", n, want)
		}
	}
	if strings.Contains(cards, "/ output</th>") {
		t.Error("an interpolation chain's stage card counts per output")
	}
}

// pageOf builds the report of res (a plan's or check's result for s) as
// the command does, with its files, and returns report.html's text and
// the report.
func pageOf(t *testing.T, command, name string, s *specfile.Spec, res *optimize.Result) (string, *report.Report) {
	t.Helper()
	ctx := context.Background()
	rep, err := report.NewContext(ctx, command, s, res)
	if err != nil {
		t.Fatal(err)
	}
	files, err := report.Files(ctx, rep, res, s)
	if err != nil {
		t.Fatal(err)
	}
	files, err = AddPlanPage(name, rep, files)
	if err != nil {
		t.Fatal(err)
	}
	return string(files[len(files)-1].Data), rep
}
