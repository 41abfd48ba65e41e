package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
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
		{[]string{"sweep", "--vary", "rejection=100:80:5"}, "FROM 100 dB is above TO 80 dB"},
		{[]string{"sweep", "--vary", "coefficient_bits=14:20:0.5"}, "whole number"},
		{[]string{"sweep", "--vary", "rejection=80:90:5", "--jobs", "-1"}, "--jobs -1"},
		{[]string{"sweep", "missing.toml", "--vary", "rejection=80:90:5"}, "missing.toml"},
		// 122.88 MHz over 1.7 or 1.8 MHz is not an integer: no value can be planned.
		{[]string{"sweep", "--vary", "output_rate=1.7 MHz:1.8 MHz:100 kHz"}, "every value makes the spec invalid"},
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
	return &optimize.Result{Candidates: 3, Designed: 1, Dropped: map[string]int{},
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
