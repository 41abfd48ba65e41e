package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/optimize/sweep"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

func TestSweepUsageErrors(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"sweep"}, "--vary: missing"},
		{[]string{"sweep", "--vary", "bogus=1:2:1"}, `--vary bogus=1:2:1: unknown key "bogus"`},
		{[]string{"sweep", "--vary", "rejection=80:100:0"}, "--vary rejection=80:100:0: STEP 0 dB must be above zero"},
		{[]string{"sweep", "--vary", "rejection=1:100:1"}, "over the limit of 50"},
		{[]string{"sweep", "--vary", "rejection=100:80:-5"}, "write 80:100:5 upwards or 100:80:5 downwards"},
		{[]string{"sweep", "--vary", "rejection=80:90:5", "--vary", "passband=400:500:50 kHz", "--vary", "ripple=0.1:0.2:0.1"},
			"--vary ripple=0.1:0.2:0.1: a third --vary"},
		{[]string{"sweep", "--vary", "rejection=80:90:5", "--vary", "rejection=60:70:5"}, "rejection is already the first --vary"},
		{[]string{"sweep", "--vary", "decimation=32:64:32", "--vary", "output_rate=1.92:3.84:1.92 MHz"}, "both set output_rate"},
		{[]string{"sweep", "--vary", "rejection=60:100:2", "--vary", "ripple=0.1:0.8:0.1"}, "168 cells, over the limit of 150"},
		{[]string{"sweep", "--vary", "max_stages=2:4:1", "--max-stages", "3"}, "--max-stages 3: --vary max_stages=2:4:1 steps search.max_stages"},
		{[]string{"sweep", "--vary", "decimation=8:64:0.5"}, "--vary decimation=8:64:0.5: STEP \"0.5\": want a whole number"},
		{[]string{"sweep", "--vary", "max_stages=0:4:1"}, "FROM 0 stages must be at least 1 stage"},
		// 200 and 300 MHz are no integer interpolation of 122.88 MHz, whatever
		// the rejection (a fractional ratio is planned in decimation
		// chains only).
		{[]string{"sweep", "--vary", "rejection=80:90:10", "--vary", "output_rate=0.5 MHz:1 MHz:0.5 MHz"}, "every cell makes the spec invalid (first, rejection 80 dB, output_rate 500 kHz:"},
		{[]string{"sweep", "--vary", "coefficient_bits=14:20:0.5"}, "whole number"},
		{[]string{"sweep", "--vary", "rejection=80:90:5", "--jobs", "-1"}, "--jobs -1"},
		{[]string{"sweep", "missing.toml", "--vary", "rejection=80:90:5"}, "missing.toml"},
		// 200 or 300 MHz over 122.88 MHz is not an integer: no value can be planned.
		{[]string{"sweep", "--vary", "output_rate=0.5 MHz:1 MHz:0.5 MHz"}, "every value makes the spec invalid"},
	}
	for _, tc := range tests {
		out := filepath.Join(dir, "out")
		r := runBinary(t, dir, nil, append(tc.args, "--out", out)...)
		lines := strings.Split(strings.TrimSpace(r.stderr), "\n")
		if r.code != exitUsage || len(lines) != 1 || !strings.Contains(lines[0], tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 and one line with %q", tc.args, r.code, r.stderr, tc.want)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: wrote %s", tc.args, out)
		}
	}
}

// fakeSweepPlan stands in for optimize.Plan: one chain whose multiplies grow
// with the rejection target and whose CIC order steps up above 90 dB.
func fakeSweepPlan(_ context.Context, s chain.Spec, _ optimize.Settings) (*optimize.Result, error) {
	n := 4
	if s.RejectionDB > 90 {
		n = 5
	}
	r1 := 8
	plan := []chain.StagePlan{{Kind: chain.CIC, Factor: r1, CICOrder: n, CICDelay: 1}, {Kind: chain.FIR, Factor: s.Decimation() / r1}}
	taps := []float64{0.1, 0.2, 0.4, 0.2, 0.1}
	ch := &chain.Chain{InputRate: s.InputRate, Plan: plan, Designed: true, Stages: []chain.Stage{
		chain.CICStage{N: n, M: 1, R: r1, RegisterBits: []int{30, 30}},
		// A loose requirement, so that the word-length planner takes the stage.
		chain.FIRStage{R: s.Decimation() / r1, Taps: taps, Length: len(taps), Req: chain.Requirement{Passband: s.Passband, Dp: 0.5, Ds: 0.5}},
	}}
	f := cost.Figures{MultipliesPerOutput: s.RejectionDB / 4, AddsPerOutput: 40, MemoryWords: 50, MemoryBits: 1000 + int(s.RejectionDB),
		LatencyS: 1e-6, LatencySamples: 2, Designed: true, Stages: []cost.StageFigures{{}, {}}}
	f.Analysis.AliasRejectionDB = s.RejectionDB + 2
	f.Analysis.PassbandRippleDB = s.RippleDB / 2
	return &optimize.Result{Candidates: 3, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{{Plan: plan, Chain: ch, Figures: f, MarginDB: 2}}, Recommended: 0, Reason: "fake"}, nil
}

func TestSweepFiles(t *testing.T) {
	old := sweepPlan
	sweepPlan = fakeSweepPlan
	defer func() { sweepPlan = old }()
	dir := t.TempDir()
	read := func(out, name string) []byte {
		b, err := os.ReadFile(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	var first map[string][]byte
	oldProcs := runtime.GOMAXPROCS(0)
	defer runtime.GOMAXPROCS(oldProcs)
	for _, procs := range []int{1, 3} {
		runtime.GOMAXPROCS(procs)
		out := filepath.Join(dir, "sweep")
		var so, se bytes.Buffer
		code := run(context.Background(), []string{"stepdown", "sweep", "--vary", "rejection=80:100:5", "--html", "--json", "--out", out}, &so, &se)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, se.String())
		}
		var doc struct {
			Schema string `json:"schema"`
			Values []struct {
				Status           string `json:"status"`
				StructureChanged bool   `json:"structure_changed"`
			} `json:"values"`
		}
		if err := json.Unmarshal(so.Bytes(), &doc); err != nil || doc.Schema != "stepdown.sweep/1" || len(doc.Values) != 5 {
			t.Fatalf("--json: %v %+v", err, doc)
		}
		if !doc.Values[3].StructureChanged || doc.Values[2].StructureChanged {
			t.Errorf("structure changes: %+v", doc.Values)
		}
		if !strings.Contains(se.String(), "cic5m1r8 > fir8  <- changes") {
			t.Errorf("summary lacks the change:\n%s", se.String())
		}
		files := map[string][]byte{}
		for _, n := range []string{"report.json", "sweep.csv", "sweep.svg", "sweep.png", "report.html",
			"values/01/report.json", "values/05/report.json", "values/05/coefficients/stage2_fir.csv", "values/05/coefficients/stage2_fir.hex"} {
			files[n] = read(out, n)
		}
		if n := bytes.Count(files["sweep.csv"], []byte("\n")); n != 6 {
			t.Errorf("sweep.csv has %d lines, want 6", n)
		}
		if first == nil {
			first = files
			continue
		}
		for n, b := range files {
			if !bytes.Equal(b, first[n]) {
				t.Errorf("GOMAXPROCS %d: %s differs", procs, n)
			}
		}
	}
}

// smallSpec is an invented scenario that plans in well under a second.
const smallSpec = `input_rate  = "8 MHz"
output_rate = "1 MHz"
passband    = "200 kHz"
protected   = "300 kHz"
ripple      = "0.5 dB"
rejection   = "50 dB"

[words]
input = 12
output = 16
coefficients = 16

[hardware]
clock = "100 MHz"

[search]
max_stages = 3
cic_orders = [2, 3]
cic_delays = [1]
`

// TestSweepDeterministicReal runs the real planner: the same files, byte for
// byte, whatever GOMAXPROCS and --jobs are.
func TestSweepDeterministicReal(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "small.toml")
	if err := os.WriteFile(spec, []byte(smallSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	var ref map[string][]byte
	for _, c := range []struct {
		procs, jobs string
	}{{"1", "1"}, {"2", "0"}, {"2", "3"}} {
		out := filepath.Join(dir, "out-"+c.procs+"-"+c.jobs)
		r := runBinary(t, dir, []string{"GOMAXPROCS=" + c.procs}, "sweep", spec, "--vary", "rejection=40:60:10", "--jobs", c.jobs, "--html", "--quiet", "--out", out)
		if r.code != 0 {
			t.Fatalf("GOMAXPROCS=%s --jobs %s: exit %d: %s", c.procs, c.jobs, r.code, r.stderr)
		}
		files := map[string][]byte{}
		err := filepath.Walk(out, func(p string, fi os.FileInfo, err error) error {
			if err != nil || fi.IsDir() {
				return err
			}
			b, err := os.ReadFile(p)
			rel, _ := filepath.Rel(out, p)
			files[rel] = b
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = files
			if len(files) < 8 {
				t.Fatalf("only %d files", len(files))
			}
			continue
		}
		if len(files) != len(ref) {
			t.Errorf("GOMAXPROCS=%s --jobs %s: %d files, want %d", c.procs, c.jobs, len(files), len(ref))
		}
		for n, b := range ref {
			if !bytes.Equal(files[n], b) {
				t.Errorf("GOMAXPROCS=%s --jobs %s: %s differs", c.procs, c.jobs, n)
			}
		}
	}
}

// A row without a chain (its status and detail) keeps the table's columns:
// the status column is as wide as the longest status, so every chain row's
// recommended column starts at the same place.
func TestSweepTableAligned(t *testing.T) {
	v, err := sweep.ParseVary("rejection=80:90:5")
	if err != nil {
		t.Fatal(err)
	}
	ch := report.Chain{Notation: "cic5m1r16 > fir4", MultipliesPerOutput: 34, MemoryBits: 2570, LatencyS: 2.45e-6}
	best := &sweep.DocBest{MultipliesPerOutput: 34, MemoryBits: 2570, LatencyS: 2.45e-6}
	doc := &sweep.Doc{Values: []sweep.DocValue{
		{ValueText: "80 dB", Status: "ok", Front: []report.Chain{ch}, Best: best},
		{ValueText: "85 dB", Status: "infeasible", Recommended: -1, Detail: "no chain meets the spec"},
		{ValueText: "90 dB", Status: "ok", Front: []report.Chain{ch}, Best: best},
	}}
	var b bytes.Buffer
	printSweep(&b, "ex", "out", v, doc, nil)
	var starts []int
	for _, l := range strings.Split(b.String(), "\n") {
		if i := strings.Index(l, "cic5m1r16"); i >= 0 {
			starts = append(starts, i)
		}
		if strings.HasPrefix(l, "85 dB") && !strings.Contains(l, "infeasible  no chain") {
			t.Errorf("row without a chain: %q", l)
		}
	}
	if len(starts) != 2 || starts[0] != starts[1] || !strings.Contains(b.String(), "status      recommended") {
		t.Errorf("columns not aligned:\n%s", b.String())
	}
}

// sweepWithFake runs the command with fakeSweepPlan and returns stdout,
// stderr and the output folder's files.
func sweepWithFake(t *testing.T, out string, args ...string) (string, string, map[string][]byte) {
	t.Helper()
	old := sweepPlan
	sweepPlan = fakeSweepPlan
	defer func() { sweepPlan = old }()
	var so, se bytes.Buffer
	code := run(context.Background(), append(append([]string{"stepdown", "sweep"}, args...), "--out", out), &so, &se)
	if code != 0 {
		t.Fatalf("%v: exit %d: %s", args, code, se.String())
	}
	files := map[string][]byte{}
	err := filepath.Walk(out, func(p string, fi os.FileInfo, err error) error {
		if err != nil || fi.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		rel, _ := filepath.Rel(out, p)
		files[filepath.ToSlash(rel)] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return so.String(), se.String(), files
}

// A downward range runs its values in the order given.
func TestSweepDownwards(t *testing.T) {
	so, _, files := sweepWithFake(t, filepath.Join(t.TempDir(), "out"), "--vary", "rejection=100:80:10")
	var doc struct {
		Vary struct {
			From, To, Step float64
			Values         []float64
		}
		Values []struct {
			ValueText string `json:"value_text"`
		} `json:"values"`
	}
	if err := json.Unmarshal(files["report.json"], &doc); err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, v := range doc.Values {
		got = append(got, v.ValueText)
	}
	if strings.Join(got, ",") != "100 dB,90 dB,80 dB" || doc.Vary.From != 100 || doc.Vary.To != 80 || doc.Vary.Step != 10 {
		t.Errorf("report.json: %+v", doc)
	}
	i100, i80 := strings.Index(so, "\n100 dB"), strings.Index(so, "\n80 dB")
	if !strings.Contains(so, "rejection from 100 dB to 80 dB in steps of 10 dB (3 values)") || i100 < 0 || i80 < i100 {
		t.Errorf("table:\n%s", so)
	}
}

func TestSweepGrid(t *testing.T) {
	dir := t.TempDir()
	var first map[string][]byte
	oldProcs := runtime.GOMAXPROCS(0)
	defer runtime.GOMAXPROCS(oldProcs)
	for _, procs := range []int{1, 3} {
		runtime.GOMAXPROCS(procs)
		// The example sets protected = 640 kHz: the 700 kHz column is invalid.
		so, se, files := sweepWithFake(t, filepath.Join(dir, "grid"), "--vary", "rejection=80:100:10", "--vary", "passband=500:700:100 kHz", "--html", "--json")
		var doc struct {
			Schema  string `json:"schema"`
			Columns struct {
				Key string `json:"key"`
			} `json:"vary_columns"`
			Values []struct {
				Row    int    `json:"row"`
				Column int    `json:"column"`
				Status string `json:"status"`
			} `json:"values"`
		}
		if err := json.Unmarshal([]byte(so), &doc); err != nil || doc.Schema != "stepdown.sweep-grid/1" || doc.Columns.Key != "passband" || len(doc.Values) != 9 {
			t.Fatalf("--json: %v %+v", err, doc)
		}
		if c := doc.Values[5]; c.Row != 2 || c.Column != 3 || c.Status != "invalid" {
			t.Errorf("cell 6: %+v", c)
		}
		for _, want := range []string{
			"a grid of 9 cells",
			"rejection \\ passband  500 kHz  600 kHz  700 kHz",
			"80 dB                    20 A     20 A  invalid",
			"100 dB                   25 B     25 B  invalid",
			"  A  cic4m1r8 > fir8",
			"rejection 90 dB, passband 700 kHz: invalid: protected = \"640 kHz\": must lie in [passband = 700000 Hz",
			"values/rNN-cNN/",
		} {
			if !strings.Contains(se, want) {
				t.Errorf("table lacks %q:\n%s", want, se)
			}
		}
		for _, n := range []string{"report.json", "sweep.csv", "sweep.svg", "sweep.png", "report.html", "values/r01-c01/report.json", "values/r03-c02/report.json"} {
			if files[n] == nil {
				t.Errorf("no %s", n)
			}
		}
		if n := bytes.Count(files["sweep.csv"], []byte("\n")); n != 10 {
			t.Errorf("sweep.csv has %d lines, want 10", n)
		}
		if !bytes.Contains(files["report.html"], []byte(`href="#cell-r02-c01"`)) {
			t.Error("report.html does not link the grid's cells")
		}
		if first == nil {
			first = files
			continue
		}
		for n, b := range files {
			if !bytes.Equal(b, first[n]) {
				t.Errorf("GOMAXPROCS %d: %s differs", procs, n)
			}
		}
	}
}

// A grid's table keeps its columns whatever the cells hold: every line of
// it is as long as the header, marks and figures right-aligned.
func TestGridTableAligned(t *testing.T) {
	old := sweepPlan
	sweepPlan = fakeSweepPlan
	defer func() { sweepPlan = old }()
	r, _ := sweep.ParseVary("decimation=64:16:16")
	c, _ := sweep.ParseVary("passband=200:800:300 kHz")
	g, err := sweep.NewGrid(r, c)
	if err != nil {
		t.Fatal(err)
	}
	rs := sweep.Run(context.Background(), g.Study(sweep.Study{Name: "ex", Spec: []byte(specfile.ExampleText), Plan: fakeSweepPlan}))
	var b bytes.Buffer
	printGrid(&b, "ex", "out", g, rs, nil)
	lines := strings.Split(b.String(), "\n")
	start := -1
	for i, l := range lines {
		if strings.HasPrefix(l, "decimation \\ passband") {
			start = i
		}
	}
	if start < 0 {
		t.Fatalf("no table:\n%s", b.String())
	}
	table := lines[start : start+4]
	for _, l := range table {
		if len(l) != len(table[0]) {
			t.Errorf("table lines differ in length:\n%s", strings.Join(table, "\n"))
			break
		}
	}
	if !strings.Contains(b.String(), "invalid") {
		t.Errorf("no invalid cell in the table:\n%s", b.String())
	}
}

// Rows without a chain keep the one-key table aligned with the new keys
// too, whose values are short ("8") or carry a word ("1 stage").
func TestSweepTableAlignedNewKeys(t *testing.T) {
	ch := report.Chain{Notation: "cic4m1r8 > fir4", MultipliesPerOutput: 12, MemoryBits: 900, LatencyS: 1e-6}
	best := &sweep.DocBest{MultipliesPerOutput: 12, MemoryBits: 900, LatencyS: 1e-6}
	for _, tc := range []struct {
		vary  string
		texts []string
	}{
		{"decimation=8:128:60", []string{"8", "68", "128"}},
		{"max_stages=1:3:1", []string{"1 stage", "2 stages", "3 stages"}},
		{"stopband=1:1.2:0.1 MHz", []string{"1 MHz", "1.1 MHz", "1.2 MHz"}},
	} {
		v, err := sweep.ParseVary(tc.vary)
		if err != nil {
			t.Fatal(err)
		}
		doc := &sweep.Doc{Values: []sweep.DocValue{
			{ValueText: tc.texts[0], Status: "invalid", Recommended: -1, Detail: "passband = \"300 kHz\": must lie in (0, output_rate/2 = 250000 Hz)"},
			{ValueText: tc.texts[1], Status: "ok", Front: []report.Chain{ch}, Best: best},
			{ValueText: tc.texts[2], Status: "partial", Front: []report.Chain{ch}, Best: best},
		}}
		var b bytes.Buffer
		printSweep(&b, "ex", "out", v, doc, nil)
		var status, rec []int
		for _, l := range strings.Split(b.String(), "\n") {
			for _, s := range []string{"invalid", "ok ", "partial", "status"} {
				if i := strings.Index(l, s); i >= 0 && !strings.HasPrefix(l, "stepdown") && !strings.HasPrefix(l, "wrote") {
					status = append(status, i)
					break
				}
			}
			if i := strings.Index(l, "cic4m1r8"); i >= 0 {
				rec = append(rec, i)
			}
		}
		if len(status) != 4 || len(rec) != 2 || rec[0] != rec[1] || status[0] != status[1] || status[1] != status[2] || status[2] != status[3] {
			t.Errorf("%s: columns not aligned (status at %v, chain at %v):\n%s", tc.vary, status, rec, b.String())
		}
	}
}

// TestSweepGridDeterministicReal runs a small grid with the real planner:
// the same files, byte for byte, whatever GOMAXPROCS and --jobs are.
func TestSweepGridDeterministicReal(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "small.toml")
	if err := os.WriteFile(spec, []byte(smallSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	var ref map[string][]byte
	for _, c := range []struct{ procs, jobs string }{{"1", "1"}, {"3", "2"}} {
		out := filepath.Join(dir, "out-"+c.procs+"-"+c.jobs)
		r := runBinary(t, dir, []string{"GOMAXPROCS=" + c.procs}, "sweep", spec, "--vary", "rejection=60:40:20", "--vary", "decimation=4:8:4",
			"--jobs", c.jobs, "--html", "--quiet", "--out", out)
		if r.code != 0 {
			t.Fatalf("GOMAXPROCS=%s --jobs %s: exit %d: %s", c.procs, c.jobs, r.code, r.stderr)
		}
		files := map[string][]byte{}
		err := filepath.Walk(out, func(p string, fi os.FileInfo, err error) error {
			if err != nil || fi.IsDir() {
				return err
			}
			b, err := os.ReadFile(p)
			rel, _ := filepath.Rel(out, p)
			files[filepath.ToSlash(rel)] = b
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = files
			if files["values/r02-c02/report.json"] == nil || files["sweep.png"] == nil {
				t.Fatalf("files: %d, no values/r02-c02/report.json or sweep.png", len(files))
			}
			continue
		}
		if len(files) != len(ref) {
			t.Errorf("GOMAXPROCS=%s --jobs %s: %d files, want %d", c.procs, c.jobs, len(files), len(ref))
		}
		for n, b := range ref {
			if !bytes.Equal(files[n], b) {
				t.Errorf("GOMAXPROCS=%s --jobs %s: %s differs", c.procs, c.jobs, n)
			}
		}
	}
}

// A multiplierless spec's sweep is priced in adders: the terminal table
// heads its cost columns "adders" and has no multipliers column, and
// sweep.csv's adders and best_adders hold each value's figures, equal to
// the recommended chain's adders in that value's report.json.
func TestSweepMultiplierless(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	dir := t.TempDir()
	spec := `input_rate = "2.4 GHz"
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
`
	if err := os.WriteFile(filepath.Join(dir, "ml.toml"), []byte(spec), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runBinary(t, dir, nil, "sweep", "ml.toml", "--vary", "rejection=55:60:5", "--out", "out")
	if r.code != 0 {
		t.Fatalf("sweep: exit %d: %s", r.code, r.stderr)
	}
	head := strings.Fields(strings.Split(r.stdout, "\n")[2])
	if !slices.Contains(head, "adders") || slices.Contains(head, "mult/out") || slices.Contains(head, "multipliers") {
		t.Errorf("table head %v", head)
	}
	b, err := os.ReadFile(filepath.Join(dir, "out", "sweep.csv"))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for i, row := range rows[1:] {
		rep := readReport(t, filepath.Join(dir, "out", "values", fmt.Sprintf("%02d", i+1), "report.json"))
		front := rep["front"].([]any)
		rec := front[int(rep["recommended"].(float64))].(map[string]any)
		if want := fmt.Sprint(rec["adders"]); row[col["adders"]] != want || row[col["best_adders"]] == "" {
			t.Errorf("value %d: adders %q (report.json %s), best_adders %q", i+1, row[col["adders"]], want, row[col["best_adders"]])
		}
	}
}
