package sweep

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/internal/densecheck"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

func TestParseVary(t *testing.T) {
	// Expected values are the arithmetic of the ranges themselves.
	tests := []struct {
		arg  string
		key  string
		want []float64
	}{
		{"rejection=80:100:5", "rejection", []float64{80, 85, 90, 95, 100}},
		{"rejection=80 dB:100 dB:5 dB", "rejection", []float64{80, 85, 90, 95, 100}},
		{"rejection=80:100:5 dB", "rejection", []float64{80, 85, 90, 95, 100}},
		{"rejection=80:92:5", "rejection", []float64{80, 85, 90}},
		{"rejection=80:80:5", "rejection", []float64{80}},
		{"ripple=0.1:0.5:0.1", "ripple", []float64{0.1, 0.2, 0.3, 0.4, 0.5}},
		{"output_rate=1.92 MHz:3.84 MHz:640 kHz", "output_rate", []float64{1.92e6, 2.56e6, 3.2e6, 3.84e6}},
		{"output_rate=1.92:3.84:0.64 MHz", "output_rate", []float64{1.92e6, 2.56e6, 3.2e6, 3.84e6}},
		{"passband=400000:500000:50000", "passband", []float64{4e5, 4.5e5, 5e5}},
		{"clock=200 MHz:250 MHz:25 MHz", "clock", []float64{200e6, 225e6, 250e6}},
		{"hardware.clock=200 MHz:250 MHz:25 MHz", "clock", []float64{200e6, 225e6, 250e6}},
		{"coefficient_bits=14:20:2", "coefficient_bits", []float64{14, 16, 18, 20}},
		{"coefficients=14 bits:16 bits:1 bit", "coefficient_bits", []float64{14, 15, 16}},
		{"input_rate=100 MHz:120 MHz:10 MHz", "input_rate", []float64{100e6, 110e6, 120e6}},
		{"protected=500 kHz:700 kHz:100 kHz", "protected", []float64{5e5, 6e5, 7e5}},
		{"rejection=1:50:1", "rejection", nil}, // 50 values: at the limit
		{"output_rate=1.92:3.84:0.64 MS/s", "output_rate", []float64{1.92e6, 2.56e6, 3.2e6, 3.84e6}},
		{"input_rate=100 Msps:120 Msps:10 Msps", "input_rate", []float64{100e6, 110e6, 120e6}},
		{"decimation=16:64:16", "decimation", []float64{16, 32, 48, 64}},
		{"decimation=2:3:1", "decimation", []float64{2, 3}},
		{"stopband=1 MHz:1.2 MHz:100 kHz", "stopband", []float64{1e6, 1.1e6, 1.2e6}},
		{"input_bits=8:16:4", "input_bits", []float64{8, 12, 16}},
		{"words.output=16 bits:24 bits:8 bits", "output_bits", []float64{16, 24}},
		{"max_stages=1:3:1", "max_stages", []float64{1, 2, 3}},
		{"search.max_stages=2 stages:4 stages:1 stage", "max_stages", []float64{2, 3, 4}},
		// Downwards: FROM above TO, STEP positive; TO inclusive when landed on.
		{"rejection=90:70:10", "rejection", []float64{90, 80, 70}},
		{"rejection=90:71:10", "rejection", []float64{90, 80}},
		{"ripple=0.5:0.1:0.2", "ripple", []float64{0.5, 0.3, 0.1}},
		{"output_rate=3.84:1.92:0.64 MHz", "output_rate", []float64{3.84e6, 3.2e6, 2.56e6, 1.92e6}},
		{"decimation=64:16:24", "decimation", []float64{64, 40, 16}},
		{"coefficient_bits=20:14:3", "coefficient_bits", []float64{20, 17, 14}},
		{"rejection=50:1:1", "rejection", nil}, // 50 values downwards: at the limit
	}
	for _, tc := range tests {
		v, err := ParseVary(tc.arg)
		if err != nil {
			t.Errorf("%s: %v", tc.arg, err)
			continue
		}
		if v.Key.Name != tc.key {
			t.Errorf("%s: key %s, want %s", tc.arg, v.Key.Name, tc.key)
		}
		if tc.want == nil {
			if len(v.Values) != MaxValues {
				t.Errorf("%s: %d values, want %d", tc.arg, len(v.Values), MaxValues)
			}
			continue
		}
		if len(v.Values) != len(tc.want) {
			t.Errorf("%s: values %v, want %v", tc.arg, v.Values, tc.want)
			continue
		}
		for i := range tc.want {
			if v.Values[i] != tc.want[i] { // exact: values are rounded to 12 digits
				t.Errorf("%s: value %d = %v, want %v", tc.arg, i, v.Values[i], tc.want[i])
			}
		}
	}
}

func TestParseVaryErrors(t *testing.T) {
	tests := []struct{ arg, want string }{
		{"rejection", "want KEY=FROM:TO:STEP"},
		{"bogus=1:2:1", `unknown key "bogus"`},
		{"rejection=80:100", "three values"},
		{"rejection=80:100:0", "STEP 0 dB must be above zero"},
		{"rejection=80:100:-5", "must be above zero"},
		{"rejection=100:80:-5", "STEP -5 dB must be above zero; FROM and TO give the direction: write 80:100:5 upwards or 100:80:5 downwards"},
		{"passband=0.6:0.4:-0.1 MHz", "write 0.4 MHz:0.6 MHz:0.1 MHz upwards or 0.6 MHz:0.4 MHz:0.1 MHz downwards"},
		{"rejection=" + strings.Repeat("8", 200) + "x:90:1", "--vary rejection=" + strings.Repeat("8", 60) + "...: FROM"},
		{"rejection=" + strings.Repeat("8", 200) + ":90:1", "FROM 8.888888888888889e199 dB must be at most 150 dB"},
		{"rejection=51:1:1", "51 values, over the limit of 50"},
		{"rejection=100:-10:10", "TO -10 dB must be above 0 dB"},
		{"decimation=1:8:1", "FROM 1 must be at least 2"},
		{"decimation=8:16:2.5", "want a whole number, such as 8"},
		{"decimation=8 MHz:16:2", "FROM"},
		{"decimation=2147483640:2147483650:5", "TO 2147483650 must be at most 2147483647"},
		{"stopband=0:1 MHz:100 kHz", "FROM 0 Hz must be above 0 Hz"},
		{"input_bits=16:40:8", "TO 40 bits must be at most 32 bits"},
		{"output_bits=1:8:1", "must be at least 2 bits"},
		{"max_stages=0:3:1", "FROM 0 stages must be at least 1 stage"},
		{"max_stages=10:14:1", "TO 14 stages must be at most 12 stages"},
		{"max_stages=2:6:1 dB", "want a whole number of stages"},
		{"output_rate=1 MS/s:2 MS/s:1 mHz", "millihertz"},
		{"rejection=80:100:5 MHz", "STEP"},
		{"rejection=0:100:5", "FROM 0 dB must be above 0 dB"},
		{"rejection=100:200:10", "TO 200 dB must be at most 150 dB"},
		{"ripple=-0.1:0.5:0.1", "must be at least 1e-9 dB"},
		{"ripple=1:12:1", "TO 12 dB must be at most 10 dB"},
		{"rejection=1:51:1", "51 values, over the limit of 50"},
		{"rejection=1:1e9:1e-9", "TO 1e9 dB must be at most 150 dB"},
		{"rejection=1:100:1e-9", "over the limit of 50"},
		// The end outside the key's range is named before the count.
		{"rejection=80:10000:1", "TO 10000 dB must be at most 150 dB"},
		{"passband=1 mHz:2 MHz:1 MHz", "millihertz"},
		{"coefficient_bits=14:20:1.5", "whole number of bits"},
		{"coefficient_bits=1:4:1", "FROM 1 bit must be at least 2 bits"},
		{"coefficient_bits=38:44:2", "must be at most 40 bits"},
		{"output_rate=0:1 MHz:100 kHz", "must be above 0 Hz"},
	}
	for _, tc := range tests {
		_, err := ParseVary(tc.arg)
		var ve *Error
		if !errors.As(err, &ve) {
			t.Errorf("%s: err %v, want *Error", tc.arg, err)
			continue
		}
		msg := err.Error()
		if !strings.Contains(msg, tc.want) || strings.Contains(msg, "\n") || !strings.HasPrefix(msg, "--vary ") {
			t.Errorf("%s: %q, want one line containing %q", tc.arg, msg, tc.want)
		}
	}
}

func TestSpecAt(t *testing.T) {
	base := []byte(specfile.ExampleText)
	k, _ := LookupKey("passband")
	// protected is set in the example; moving the passband beyond it breaks fp <= fa.
	if _, err := SpecAt("ex", base, k, 700e3); err == nil || !strings.Contains(err.Error(), "passband") {
		t.Errorf("passband 700 kHz: err %v, want a passband rule", err)
	}
	s, err := SpecAt("ex", base, k, 400e3)
	if err != nil || s.Chain.Passband != 400e3 {
		t.Fatalf("passband 400 kHz: %v, %+v", err, s)
	}
	// A key the spec leaves out is added with its table.
	noclock := strings.Replace(specfile.ExampleText, "clock = \"245.76 MHz\"", "", 1)
	k, _ = LookupKey("clock")
	s, err = SpecAt("ex", []byte(noclock), k, 100e6)
	if err != nil || s.Clock != 100e6 {
		t.Fatalf("clock: %v, %+v", err, s)
	}
	k, _ = LookupKey("coefficient_bits")
	s, err = SpecAt("ex", base, k, 14)
	if err != nil || s.Chain.CoefBits != 14 {
		t.Fatalf("coefficient_bits: %v", err)
	}
	// 122.88 MHz / 1.8 MHz = 1024/15 is a fractional ratio; an output
	// rate equal to the input rate is refused.
	k, _ = LookupKey("output_rate")
	if s, err := SpecAt("ex", base, k, 1.8e6); err != nil || s.Chain.RatioString() != "1024/15" {
		t.Errorf("output_rate 1.8 MHz: %v", err)
	}
	if _, err := SpecAt("ex", base, k, 122.88e6); err == nil {
		t.Error("output_rate 122.88 MHz: no error for a ratio of 1")
	}
}

func TestMapOrder(t *testing.T) {
	for _, w := range []int{1, 2, 7, 100} {
		got := Map(context.Background(), 40, w, func(_ context.Context, i int) int { return i * i })
		for i, v := range got {
			if v != i*i {
				t.Fatalf("workers %d: slot %d = %d", w, i, v)
			}
		}
	}
}

// fakePlan stands in for optimize.Plan: a front of two chains whose figures
// grow with the rejection target, and whose recommended structure changes
// above 90 dB.
func fakePlan(_ context.Context, s chain.Spec, set optimize.Settings) (*optimize.Result, error) {
	if s.RejectionDB > 140 || s.Fractional() {
		// Too hard, and no fake chain for a fractional ratio.
		return &optimize.Result{Candidates: 10, Dropped: map[optimize.Reason]int{"too hard": 10}, Recommended: -1}, nil
	}
	n := 4
	if s.RejectionDB > 90 {
		n = 5
	}
	mk := func(r1 int, mpo float64) optimize.Candidate {
		r2 := s.Decimation() / r1
		plan := []chain.StagePlan{{Kind: chain.CIC, Factor: r1, CICOrder: n, CICDelay: 1}, {Kind: chain.FIR, Factor: r2}}
		taps := make([]float64, 21)
		for i := range taps {
			taps[i] = 1.0 / 21
		}
		ch := &chain.Chain{InputRate: s.InputRate, Plan: plan, Designed: true, Stages: []chain.Stage{
			chain.CICStage{N: n, M: 1, R: r1, RegisterBits: []int{30, 30, 30, 30}},
			chain.FIRStage{R: r2, Taps: taps, Length: len(taps)},
		}}
		f := cost.Figures{MultipliesPerOutput: mpo, AddsPerOutput: 2 * mpo, MemoryWords: 100, MemoryBits: int(s.RejectionDB) * 100,
			LatencyS: s.RejectionDB * 1e-8, LatencySamples: 3, Designed: true,
			Stages: []cost.StageFigures{{}, {MultipliesPerOutput: mpo}}}
		f.Analysis.AliasRejectionDB = s.RejectionDB + 1
		f.Analysis.PassbandRippleDB = s.RippleDB / 2
		return optimize.Candidate{Plan: plan, Chain: ch, Figures: f, MarginDB: 1}
	}
	return &optimize.Result{
		Candidates: 10, Designed: 2, Dropped: map[optimize.Reason]int{},
		Front:       []optimize.Candidate{mk(8, s.RejectionDB/10), mk(16, s.RejectionDB/8)},
		Recommended: 0, Reason: "fake",
	}, nil
}

func study(t *testing.T, arg string, workers int) ([]Result, Vary) {
	t.Helper()
	v, err := ParseVary(arg)
	if err != nil {
		t.Fatal(err)
	}
	st := Study{Name: "ex", Spec: []byte(specfile.ExampleText), Vary: v, Workers: workers, Plan: fakePlan}
	return Run(context.Background(), st), v
}

func TestRunAndCSV(t *testing.T) {
	rs, v := study(t, "rejection=80:100:5", 3)
	changed := Changes(rs)
	wantChanged := []bool{false, false, false, true, false} // 95 dB is the first above 90 dB
	for i := range rs {
		if rs[i].Status != OK || changed[i] != wantChanged[i] {
			t.Errorf("value %v: status %s changed %v", rs[i].Value, rs[i].Status, changed[i])
		}
	}
	csv := string(CSV(v, rs))
	lines := strings.Split(strings.TrimSpace(csv), "\n")
	if len(lines) != 6 || lines[0] != strings.Join(CSVHeader, ",") {
		t.Fatalf("sweep.csv:\n%s", csv)
	}
	// 95 dB: cic5m1r8 > fir8, MPO 9.5, best MPO min(9.5, 11.875) = 9.5, memory 9500.
	// The example fixes 18-bit coefficients, so the verdict is on the
	// rounded taps, and the fake chain has none to round: it does not meet.
	// The spec is not multiplierless: adders and best_adders are empty.
	want := "4,rejection,95,95 dB,ok,cic5m1r8 > fir8,true,true,false,9.5,19,9500,9.5e-07,3,0,96,0.1,2,9.5,9500,9.5e-07,0,,,,,,,,rounded taps,,,"
	if lines[4] != want {
		t.Errorf("row 4:\n got %s\nwant %s", lines[4], want)
	}
}

func TestInvalidAndInfeasibleRows(t *testing.T) {
	// 0.96 MHz puts the passband at half the output rate; the rows
	// report, the sweep goes on.
	rs, _ := study(t, "output_rate=0.96 MHz:1.92 MHz:0.96 MHz", 2)
	if rs[0].Status != Invalid || rs[0].Detail == "" || rs[1].Status != OK {
		t.Fatalf("statuses %s (%s), %s", rs[0].Status, rs[0].Detail, rs[1].Status)
	}
	if strings.Contains(rs[0].Detail, "ex:") {
		t.Errorf("detail names the rewritten file: %s", rs[0].Detail)
	}
	rs, v := study(t, "rejection=140:145:5", 2)
	if rs[1].Status != Infeasible {
		t.Errorf("145 dB: status %s", rs[1].Status)
	}
	csv := string(CSV(v, rs))
	if !strings.Contains(csv, "infeasible") || !strings.Contains(csv, "too hard: 10") {
		t.Errorf("csv:\n%s", csv)
	}
}

// TestDeterministic checks the same bytes whatever GOMAXPROCS and the pool size.
func TestDeterministic(t *testing.T) {
	var ref []byte
	old := runtime.GOMAXPROCS(0)
	defer runtime.GOMAXPROCS(old)
	for _, procs := range []int{1, 2, 4} {
		runtime.GOMAXPROCS(procs)
		for _, w := range []int{0, 1, 3} {
			rs, v := study(t, "rejection=60:140:5", w)
			base, _ := specfile.Example()
			js, err := NewDoc(base, v, rs).Marshal()
			if err != nil {
				t.Fatal(err)
			}
			var svg bytes.Buffer
			if err := Render(&svg, NewFigureData("", v, rs), "svg"); err != nil {
				t.Fatal(err)
			}
			all := append(append(CSV(v, rs), js...), svg.Bytes()...)
			if ref == nil {
				ref = all
			} else if !bytes.Equal(ref, all) {
				t.Fatalf("GOMAXPROCS %d, workers %d: output differs", procs, w)
			}
		}
	}
}

func TestFigure(t *testing.T) {
	rs, v := study(t, "rejection=80:100:5", 0)
	for _, f := range []string{"svg", "png"} {
		var b bytes.Buffer
		if err := Render(&b, NewFigureData("", v, rs), f); err != nil || b.Len() < 1000 {
			t.Errorf("%s: %v, %d bytes", f, err, b.Len())
		}
	}
	if !strings.Contains(func() string {
		var b bytes.Buffer
		_ = Render(&b, NewFigureData("", v, rs), "svg")
		return b.String()
	}(), "cic5m1r8 &gt; fir8") {
		t.Error("svg lacks the label of the structure change")
	}
	if err := Render(&bytes.Buffer{}, FigureData{Name: v.Key.Name, Points: []FigurePoint{{Value: 1}}}, "svg"); err == nil {
		t.Error("no error for a figure without chains")
	}
	if err := Render(&bytes.Buffer{}, FigureData{Name: v.Key.Name, Points: []FigurePoint{{Value: 1, OK: true, Multiplies: math.NaN()}}}, "svg"); err == nil {
		t.Error("no error for NaN")
	}
}

func TestWordCells(t *testing.T) {
	// Invented figures: the cells are written as report.json holds them.
	c := report.Chain{
		ChainReport: &fixed.ChainReport{QuantisedRejectionDB: 92.25, BitTrueSNRValid: true,
			BitTrueReport: &fixed.BitTrueReport{BitTrueSNRDB: fp(116.5), BitTrueENOB: fp(19.06)}},
		Stages: []report.Stage{
			{Kind: "cic", StageReport: &fixed.StageReport{AccumulatorBits: 36}},
			{Kind: "halfband", StageReport: &fixed.StageReport{CoefficientBits: 16}},
			{Kind: "fir", StageReport: &fixed.StageReport{CoefficientBits: 20}},
		},
	}
	if got, want := strings.Join(wordCells(c), ","), "116.5,19.06,92.25,16 20,0,0,true,"; got != want {
		t.Errorf("cells %q, want %q", got, want)
	}
	if got := strings.Join(wordCells(report.Chain{WordLengthsError: "no taps"}), ","); got != ",,,,,,," {
		t.Errorf("cells without a plan %q, want empty", got)
	}
}

func fp(v float64) *float64 { return &v }

// infeasibleRow sweeps the example's rejection over 140 and 145 dB with
// fakePlan, whose empty fronts edit fills in, and returns the 145 dB row.
func infeasibleRow(t *testing.T, edit func(res *optimize.Result, s chain.Spec)) Result {
	t.Helper()
	v, err := ParseVary("rejection=140:145:5")
	if err != nil {
		t.Fatal(err)
	}
	plan := func(ctx context.Context, s chain.Spec, set optimize.Settings) (*optimize.Result, error) {
		res, err := fakePlan(ctx, s, set)
		if err == nil && len(res.Front) == 0 {
			edit(res, s)
		}
		return res, err
	}
	return Run(context.Background(), Study{Name: "ex", Spec: []byte(specfile.ExampleText), Vary: v, Workers: 1, Plan: plan})[1]
}

// An infeasible row names the chain that came closest and by how much it
// missed (optimize.Result.Closest), as plan's empty front does.
func TestInfeasibleNamesClosest(t *testing.T) {
	r := infeasibleRow(t, func(res *optimize.Result, s chain.Spec) {
		c := &optimize.Candidate{Plan: []chain.StagePlan{{Kind: chain.FIR, Factor: s.Decimation()}}}
		c.Figures.Analysis.AliasRejectionDB = s.RejectionDB - 3
		res.Closest = c
	})
	if r.Status != Infeasible || !strings.Contains(r.Detail, "the closest, fir") || !strings.Contains(r.Detail, "misses the 145 dB rejection by 3 dB (142 dB)") {
		t.Errorf("145 dB: %s: %s", r.Status, r.Detail)
	}
}

// An infeasible row whose chains all missed with their taps rounded names
// the width that would do (optimize.Result.NeededCoefBits and Reason), as
// plan's empty front does.
func TestInfeasibleNamesWidth(t *testing.T) {
	r := infeasibleRow(t, func(res *optimize.Result, _ chain.Spec) {
		res.NeededCoefBits = 20
		res.Reason = "No chain meets the spec with 18-bit coefficients: the cheapest of them, fir64, meets from 20 bits."
	})
	if r.Status != Infeasible || !strings.HasPrefix(r.Detail, "no chain meets the spec with 18-bit coefficients: the cheapest of them, fir64, meets from 20 bits (") {
		t.Errorf("145 dB: %s: %s", r.Status, r.Detail)
	}
}

// Each value's front also holds the front chains of every stricter
// value's own search, which meet its spec too, and those of a looser
// value whose figures meet it (borrow): on an invented 50 to 2 MS/s
// receiver with 12-bit taps swept over 80 to 83 dB, with the 82 dB search
// a stand-in that finds no chain (as the real one did), the 82 dB row gets
// the 83 dB row's chains, their rounded taps unchanged and judged for
// 82 dB; every row's least multiplies per output is then at most every
// stricter row's, and every front chain meets its own row's spec, as the
// row's report judges it and by brute force on the report's integers.
func TestBorrowFromStricterValue(t *testing.T) {
	text := "input_rate = \"50 MHz\"\noutput_rate = \"2 MHz\"\npassband = \"750 kHz\"\nripple = \"0.1 dB\"\nrejection = \"80 dB\"\n[words]\ninput = 14\noutput = 22\ncoefficients = 12\n"
	v, err := ParseVary("rejection=80:83:1")
	if err != nil {
		t.Fatal(err)
	}
	plan := func(ctx context.Context, s chain.Spec, set optimize.Settings) (*optimize.Result, error) {
		if s.RejectionDB != 82 {
			return optimize.Plan(ctx, s, set)
		}
		return &optimize.Result{Recommended: -1, Dropped: map[optimize.Reason]int{optimize.ReasonMissQuantised: 1}, Reason: "No chain meets the spec with 12-bit coefficients."}, nil
	}
	rs := Run(context.Background(), Study{Name: "rx", Spec: []byte(text), Vary: v, Workers: 2, Plan: plan})
	if rs[3].Status != OK {
		t.Fatalf("83 dB: %s: %q", rs[3].Status, rs[3].Detail)
	}
	r := rs[2]
	if r.Status != OK || !strings.HasPrefix(r.Detail, "the search at this value found no chain; the front also holds chains designed at other values of the sweep") || !strings.Contains(r.Detail, "(from 83 dB)") {
		t.Fatalf("82 dB: %s: %q", r.Status, r.Detail)
	}
	if !strings.Contains(r.Report.Reason, "The search at this value found no chain;") {
		t.Errorf("82 dB: the report's reason %q does not say where its chains came from", r.Report.Reason)
	}
	src := map[string]report.Chain{}
	for _, c := range rs[3].Report.Front {
		src[c.Notation] = c
	}
	for _, c := range r.Report.Front {
		w, ok := src[c.Notation]
		if !ok {
			continue // from a looser value, its figures meeting 82 dB (checked below)
		}
		if d := c.RejectionMarginDB - w.RejectionMarginDB; math.Abs(d-1) > 1e-9 {
			t.Errorf("82 dB: %s margin %g, 83 dB's %g: want a dB more", c.Notation, c.RejectionMarginDB, w.RejectionMarginDB)
		}
		for i := range c.Stages {
			if g, w := c.Stages[i].StageReport, w.Stages[i].StageReport; (g == nil) != (w == nil) || g != nil && !slices.Equal(g.CoefficientsInt, w.CoefficientsInt) {
				t.Errorf("82 dB: %s stage %d: rounded taps differ from the 83 dB row's", c.Notation, i+1)
			}
		}
	}
	for i, r := range rs {
		if !r.Status.HasChain() {
			t.Errorf("%g dB: %s: %s", r.Value, r.Status, r.Detail)
			continue
		}
		for _, c := range r.Report.Front {
			if !c.MeetsTargets || c.ChainReport == nil || c.QuantisedRejectionDB < r.Value {
				t.Errorf("%g dB: %s meets %v", r.Value, c.Notation, c.MeetsTargets)
				continue
			}
			// By brute force from the report's integers (densecheck): a
			// grid can only miss a peak, so the tool's figure may lie
			// below it but not above by more than rounding.
			rej, rip := reportFigures(t, r.Spec.Chain, c)
			if rej < r.Value || rip > r.Spec.Chain.RippleDB || c.QuantisedRejectionDB > rej+0.01 {
				t.Errorf("%g dB: %s rounded, by brute force: rejection %.3f dB (tool %.3f), ripple %.5f dB", r.Value, c.Notation, rej, c.QuantisedRejectionDB, rip)
			}
		}
		for _, s := range rs[i+1:] {
			if s.Status.HasChain() && BestOf(r.Report).Multiplies > BestOf(s.Report).Multiplies {
				t.Errorf("%g dB: least %g multiplies per output, more than %g dB's %g", r.Value, BestOf(r.Report).Multiplies, s.Value, BestOf(s.Report).Multiplies)
			}
		}
	}
}

// A chain that another value's search designed just as this value's did
// (the same stages, the same taps) is not added again: a max_stages sweep
// whose searches all give the same two chains (fakePlan) keeps two on
// every front, with no note. An independent reviewer found a front of 9
// holding each chain three times.
func TestBorrowNoDuplicates(t *testing.T) {
	rs, _ := study(t, "max_stages=2:4:1", 1)
	for _, r := range rs {
		if r.Status != OK || len(r.Search.Front) != 2 || r.Detail != "" {
			t.Errorf("max_stages %g: %s, front of %d, detail %q", r.Value, r.Status, len(r.Search.Front), r.Detail)
		}
	}
}

// reportFigures is the rounded-tap rejection and ripple of a report's
// decimation chain, from its CIC parameters and its FIR and half-band
// stages' coefficients_int at 2^-coefficient_frac, by brute force.
func reportFigures(t *testing.T, spec chain.Spec, c report.Chain) (rejDB, rippleDB float64) {
	t.Helper()
	var st []densecheck.Stage
	for i, s := range c.Stages {
		switch {
		case s.Kind == "cic":
			st = append(st, densecheck.Stage{CIC: true, N: s.CICOrder, M: s.CICDelay, R: s.Decimation})
		case s.StageReport != nil && s.CoefficientFrac != nil && len(s.CoefficientsInt) > 0:
			taps := make([]float64, len(s.CoefficientsInt))
			for k, v := range s.CoefficientsInt {
				taps[k] = math.Ldexp(float64(v), -*s.CoefficientFrac)
			}
			st = append(st, densecheck.Stage{R: s.Decimation, Taps: taps})
		default:
			t.Fatalf("%s: stage %d (%s) has no rounded taps", c.Notation, i+1, s.Kind)
		}
	}
	rejDB, rippleDB, err := densecheck.Figures(spec, st)
	if err != nil {
		t.Fatal(err)
	}
	return rejDB, rippleDB
}

// TestAccumulatorOverLimitRow checks that a row says when its recommended
// chain's word lengths pass hardware.max_register_bits, exactly when that
// value's report flags it (accumulator_over_limit), on an invented 16 MHz
// to 500 kHz receiver with coefficients auto (the search does not hold
// accumulators then) at a limit every FIR passes and one none does.
func TestAccumulatorOverLimitRow(t *testing.T) {
	v, err := ParseVary("rejection=60:70:10")
	if err != nil {
		t.Fatal(err)
	}
	seen := map[bool]bool{}
	for _, lim := range []int{12, 120} {
		text := fmt.Sprintf(`input_rate = "16 MHz"
output_rate = "500 kHz"
passband = "100 kHz"
ripple = "0.5 dB"
rejection = "70 dB"
[hardware]
max_register_bits = %d
[search]
max_stages = 2
`, lim)
		rs := Run(context.Background(), Study{Name: "rx", Spec: []byte(text), Vary: v, Workers: 1})
		for _, r := range rs {
			if r.Report == nil {
				t.Fatalf("limit %d, %v: no report (%s: %s)", lim, r.Value, r.Status, r.Detail)
			}
			// A sweep keeps no value's cloud of feasible candidates, only
			// its count (a 150-cell grid held over 3 GB with them).
			if r.Search.Feasible != nil || r.Report.Search.Feasible == 0 {
				t.Errorf("limit %d, %v: %d feasible candidates kept, report counts %d", lim, r.Value, len(r.Search.Feasible), r.Report.Search.Feasible)
			}
			over := len(r.Report.Front[r.Report.Recommended].OverLimits) > 0
			seen[over] = true
			if says := strings.Contains(r.Detail, "over_limits"); says != over {
				t.Errorf("limit %d, %v: detail %q, recommended chain over the limit %v", lim, r.Value, r.Detail, over)
			}
		}
	}
	if !seen[true] || !seen[false] {
		t.Errorf("the limits met only over = %v", seen)
	}
}

// At most one value per CPU runs at once, whatever Workers asks (a value
// beyond the CPUs only waits, holding a whole search: --jobs 1024 on a
// 150-cell grid passed 1 GiB); the rows are those of one worker.
func TestWorkersHeldToCPUs(t *testing.T) {
	v, err := ParseVary("rejection=70:100:2")
	if err != nil {
		t.Fatal(err)
	}
	var running, most atomic.Int32
	plan := func(ctx context.Context, s chain.Spec, set optimize.Settings) (*optimize.Result, error) {
		n := running.Add(1)
		defer running.Add(-1)
		for m := most.Load(); n > m && !most.CompareAndSwap(m, n); m = most.Load() {
		}
		time.Sleep(2 * time.Millisecond)
		return fakePlan(ctx, s, set)
	}
	many := Run(context.Background(), Study{Name: "ex", Spec: []byte(specfile.ExampleText), Vary: v, Workers: 1024, Jobs: 1024, Plan: plan})
	if m := int(most.Load()); m > runtime.GOMAXPROCS(0) {
		t.Errorf("%d values ran at once on %d CPUs", m, runtime.GOMAXPROCS(0))
	}
	one := Run(context.Background(), Study{Name: "ex", Spec: []byte(specfile.ExampleText), Vary: v, Workers: 1, Plan: fakePlan})
	if !bytes.Equal(CSV(v, many), CSV(v, one)) {
		t.Errorf("sweep.csv differs with 1024 workers:\n%s\nwith one:\n%s", CSV(v, many), CSV(v, one))
	}
}

// A value whose search finished but whose word lengths the time limit cut
// short is partial, and so is its report, as plan marks its own: here the
// limit comes as the last search returns (a stand-in that cancels the run),
// on an invented 40 to 2.5 MS/s receiver swept over two rejections.
func TestWordLengthsCutIsPartial(t *testing.T) {
	text := "input_rate = \"40 MHz\"\noutput_rate = \"2.5 MHz\"\npassband = \"900 kHz\"\nripple = \"0.2 dB\"\nrejection = \"70 dB\"\n"
	v, err := ParseVary("rejection=70:71:1")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var mu sync.Mutex
	searched := 0
	plan := func(ctx context.Context, s chain.Spec, set optimize.Settings) (*optimize.Result, error) {
		res, err := optimize.Plan(ctx, s, set)
		mu.Lock()
		if searched++; searched == 2 {
			cancel()
		}
		mu.Unlock()
		return res, err
	}
	rs := Run(ctx, Study{Name: "rx", Spec: []byte(text), Vary: v, Workers: 1, Plan: plan})
	for _, r := range rs {
		if r.Status != Partial || r.Report == nil || !r.Report.Partial || !strings.Contains(r.Detail, "word lengths were planned") {
			partial := r.Report != nil && r.Report.Partial
			t.Errorf("%g dB: status %s, report partial %v, detail %q: want partial", r.Value, r.Status, partial, r.Detail)
		}
	}
}
