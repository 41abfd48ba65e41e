package report

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// fracSpec is an invented receiver: 1 MHz to 38.4 kHz, the ratio
// 1e6/38.4e3 = 625/24 (gcd(1000000, 38400) = 1600), with a 16-bit
// coefficient width, which a fractional chain must not claim to round to.
const fracSpec = `input_rate = "1 MHz"
output_rate = "38.4 kHz"
passband = "10 kHz"
protected = "12 kHz"
ripple = "0.5 dB"
rejection = "50 dB"
ratio_tolerance_ppm = 20

[words]
coefficients = 16
`

// checked designs notation for text as check does (optimize.Check) and
// returns the spec and a one-chain result around it.
func checked(t *testing.T, text, notation string) (*specfile.Spec, *optimize.Result) {
	t.Helper()
	s, err := specfile.Parse("frac.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := chain.ParseNotation(notation)
	if err != nil {
		t.Fatal(err)
	}
	cand, _, err := optimize.Check(context.Background(), s.Chain, plan, s.SearchSettings())
	if err != nil {
		t.Fatal(err)
	}
	return s, &optimize.Result{Candidates: 1, FeasibleAll: 1, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{cand}, Reason: "only one"}
}

// decoded is report.json read back as plain maps, as an outside script
// reads it.
func decoded(t *testing.T, r *Report) map[string]any {
	t.Helper()
	b, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

func TestFractionalPolyphaseReport(t *testing.T) {
	s, res := checked(t, fracSpec, "cic3m1r5 > fir5L > poly24/25")
	r, err := New("check", s, res)
	if err != nil {
		t.Fatal(err)
	}
	m := decoded(t, r)
	spec := m["spec"].(map[string]any)
	// The key names are fixed by issue 14; the values from the spec's
	// arithmetic (625/24 above) and the contract (decimation 0 for a
	// fractional spec).
	// 1 MHz x 24/625 is the spec's 38.4 kHz exactly: no error.
	for k, want := range map[string]any{"ratio": "625/24", "decimation": 0.0, "interpolation": 1.0, "ratio_tolerance_ppm": 20.0,
		"realised_output_rate_hz": 38400.0, "ratio_error_ppm": 0.0} {
		if got := spec[k]; got != want {
			t.Errorf("spec.%s = %v, want %v", k, got, want)
		}
	}
	ch := m["front"].([]any)[0].(map[string]any)
	if k, ok := ch["worst_alias_path"].(float64); !ok || k != math.Trunc(k) {
		t.Errorf("worst_alias_path = %v", ch["worst_alias_path"])
	}
	if y, ok := ch["worst_alias_output_hz"].(float64); !ok || y < 0 || y > 12e3 {
		t.Errorf("worst_alias_output_hz = %v, want a frequency in the protected band [0, 12 kHz]", ch["worst_alias_output_hz"])
	}
	// Word lengths as for integer stages (package chain/fixed, Fractional
	// stages): the spec sets 16-bit coefficients, so the verdict is on the
	// rounded taps, and the bit-true figures are there.
	if _, ok := ch["word_lengths_error"]; ok {
		t.Errorf("word_lengths_error = %q: a decimation chain's fractional stage has word lengths", ch["word_lengths_error"])
	}
	if ch["verdict_basis"] != "rounded taps" {
		t.Errorf("verdict_basis %v: want the rounded taps", ch["verdict_basis"])
	}
	for _, k := range []string{"bittrue_snr_db", "bittrue_alias_rejection_db", "quantised_alias_rejection_db"} {
		if _, ok := ch[k]; !ok {
			t.Errorf("chain lacks %s", k)
		}
	}
	stages := ch["stages"].([]any)
	if len(stages) != 3 {
		t.Fatalf("%d stages, want 3", len(stages))
	}
	st := stages[2].(map[string]any)
	poly := res.Front[0].Chain.Stages[2].(chain.PolyphaseStage)
	rates := res.Front[0].Chain.Rates()
	// 1 MHz / 25 = 40 kHz into the stage, x 24/25 = 38.4 kHz out.
	for k, want := range map[string]any{"kind": "polyphase", "interpolation": 24.0, "decimation": 25.0,
		"input_rate_hz": 40000.0, "output_rate_hz": 38400.0, "taps": float64(len(poly.Taps)),
		// ceil(N/L) multiplies per output (the contract; cost.Price), one real filter.
		"phase_taps": math.Ceil(float64(len(poly.Taps)) / 24), "multiplies_per_output": math.Ceil(float64(len(poly.Taps)) / 24),
	} {
		if got := st[k]; got != want {
			t.Errorf("stage 3 %s = %v, want %v", k, got, want)
		}
	}
	// Its word lengths: the prototype times L as 16-bit integers, the
	// phases' DC gains around the mean dc_gain_db, the widest phase's
	// accumulator.
	if st["coefficient_bits"] != 16.0 || len(st["coefficients_int"].([]any)) != len(poly.Taps) {
		t.Errorf("stage 3: coefficient_bits %v, %d coefficients_int for %d taps", st["coefficient_bits"], len(st["coefficients_int"].([]any)), len(poly.Taps))
	}
	if lo, hi, dc := st["phase_dc_gain_min_db"].(float64), st["phase_dc_gain_max_db"].(float64), st["dc_gain_db"].(float64); !(lo <= dc && dc <= hi) {
		t.Errorf("stage 3: phase DC gains [%v, %v] dB around a mean of %v dB", lo, hi, dc)
	}
	if rates[2] != 40000 || res.Front[0].Chain.OutputRate() != st["output_rate_hz"] {
		t.Errorf("chain.Rates %v, output %v: report says %v -> %v", rates, res.Front[0].Chain.OutputRate(), st["input_rate_hz"], st["output_rate_hz"])
	}
	coef := st["coefficients"].([]any)
	sum := 0.0
	for i, v := range coef {
		if v.(float64) != poly.Taps[i] {
			t.Fatalf("coefficients[%d] = %v, the chain's tap %v", i, v, poly.Taps[i])
		}
		sum += v.(float64)
	}
	// Unit gain at 0 Hz as the chain holds it (chain.PolyphaseStage): the
	// nominal gain of its equiripple passband, within the stage's
	// passband deviation Dp.
	if math.Abs(sum-1) > poly.Req.Dp*(1+1e-9) {
		t.Errorf("the prototype's taps sum to %v, want 1 within the stage's passband deviation %v", sum, poly.Req.Dp)
	}
	// The integer stages keep their keys: no interpolation key there.
	if _, ok := stages[1].(map[string]any)["interpolation"]; ok {
		t.Errorf("the FIR stage has an interpolation key")
	}

	// Read back (check --front reads report.json): the fractional stage
	// keeps both factors, the integer stages stay decimation stages.
	b, _ := r.Marshal()
	var back Report
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if got := back.Front[0].Stages[2]; got.Interpolation != 24 || got.Decimation != 25 || back.Front[0].Interpolates() {
		t.Errorf("read back: stage 3 L/M %d/%d, interpolates %v; want 24/25, false", got.Interpolation, got.Decimation, back.Front[0].Interpolates())
	}

	var sum1 bytes.Buffer
	WriteWordLengths(&sum1, r)
	if !strings.Contains(sum1.String(), "\n  3 polyphase in ") || !strings.Contains(sum1.String(), "\n  1 cic       in ") {
		t.Errorf("summary: %q", sum1.String())
	}
	var tab bytes.Buffer
	WriteTable(&tab, r)
	if !strings.Contains(tab.String(), "rejection*") || !strings.Contains(tab.String(), "poly24/25") {
		t.Errorf("table lacks the rounded figures or the notation:\n%s", tab.String())
	}
}

// farrowChain is a hand-built chain farrow24/625 on fracSpec's 1 MHz
// input: one Farrow stage of degree 3 and 8 taps whose coefficients are
// seeded random numbers (the report and the paths need no designed
// filter; cost does not price Farrow stages yet, so its figures are
// made here).
func farrowChain(t *testing.T) (*specfile.Spec, *optimize.Result) {
	t.Helper()
	s, err := specfile.Parse("frac.toml", []byte(fracSpec))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := chain.ParseNotation("farrow24/625")
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(14, 625))
	coef := make([][]float64, 4)
	for i := range coef {
		coef[i] = make([]float64, 8)
		for j := range coef[i] {
			coef[i][j] = rng.Float64() - 0.5
		}
	}
	coef[0][3] += 1 // a gain at 0 Hz well away from zero
	st := chain.FarrowStage{Up: 24, Down: 625, Filter: farrow.Filter{Coef: coef}, Degree: 3, Length: 8}
	c := &chain.Chain{InputRate: 1e6, Direction: chain.Decimate, Plan: plan, Stages: []chain.Stage{st}, Designed: true}
	m := float64(st.MultipliesPerOutput())
	f := cost.Figures{MultipliesPerOutput: m, Designed: true, Stages: []cost.StageFigures{{MultipliesPerOutput: m}}}
	return s, &optimize.Result{Candidates: 1, FeasibleAll: 1, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{{Plan: plan, Chain: c, Figures: f}}, Reason: "only one"}
}

func TestFractionalFarrowReport(t *testing.T) {
	s, res := farrowChain(t)
	r, err := New("check", s, res)
	if err != nil {
		t.Fatal(err)
	}
	m := decoded(t, r)
	if got := m["spec"].(map[string]any)["ratio"]; got != "625/24" {
		t.Errorf("spec.ratio = %v, want 625/24", got)
	}
	ch := m["front"].([]any)[0].(map[string]any)
	if ch["notation"] != "farrow24/625" {
		t.Errorf("notation %v", ch["notation"])
	}
	st := ch["stages"].([]any)[0].(map[string]any)
	// 1 MHz x 24/625 = 38.4 kHz.
	if c, _ := st["farrow_convention"].(string); !strings.HasPrefix(c, farrow.Convention) || !strings.Contains(c, "output m of the stage is at time t = m*625/24 input samples") {
		t.Errorf("farrow_convention = %q", c)
	}
	for k, want := range map[string]any{"kind": "farrow", "interpolation": 24.0, "decimation": 625.0,
		"input_rate_hz": 1e6, "output_rate_hz": 38400.0, "taps": 8.0, "farrow_degree": 3.0,
		// (Degree+1) Length + Degree (the contract).
		"multiplies_per_output": 35.0} {
		if got := st[k]; got != want {
			t.Errorf("stage 1 %s = %v, want %v", k, got, want)
		}
	}
	fc, _ := st["farrow_coefficients"].([]any)
	want := res.Front[0].Chain.Stages[0].(chain.FarrowStage).Filter.Coef
	if len(fc) != 3+1 {
		t.Fatalf("farrow_coefficients has %d rows, want Degree+1 = 4", len(fc))
	}
	for i, row := range fc {
		for j, v := range row.([]any) {
			if v.(float64) != want[i][j] {
				t.Fatalf("farrow_coefficients[%d][%d] = %v, want Filter.Coef's %v", i, j, v, want[i][j])
			}
		}
	}
	if _, ok := st["coefficients"]; ok {
		t.Errorf("a Farrow stage has coefficients; its taps are farrow_coefficients")
	}

	// The matrix file: comment lines saying it is planning data with the
	// convention, a header, then row j = Coef[0][j] .. Coef[3][j].
	files, err := CoefficientFiles(r.Front[0], true)
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 2 || files[0].Name != "coefficients/stage1_farrow.csv" || files[1].Name != "coefficients/README.txt" {
		t.Fatalf("files %v", names(files))
	}
	lines := strings.Split(strings.TrimSuffix(string(files[0].Data), "\n"), "\n")
	if len(lines) != 3+8 || !strings.Contains(lines[0], "planning data") || !strings.Contains(lines[1], farrow.Convention) || lines[2] != "index,mu0,mu1,mu2,mu3" {
		t.Fatalf("stage1_farrow.csv starts %q", lines[:min(3, len(lines))])
	}
	for j, line := range lines[3:] {
		cells := strings.Split(line, ",")
		for i := range 4 {
			var v float64
			if err := json.Unmarshal([]byte(cells[i+1]), &v); err != nil || v != want[i][j] {
				t.Fatalf("row %d column mu%d = %q, want %v", j, i, cells[i+1], want[i][j])
			}
		}
	}
	readme := string(files[1].Data)
	for _, w := range []string{"Planning data", "stage1_farrow.csv", farrow.Convention, NoHandoff[len("no hand-off"):]} {
		if !strings.Contains(readme, w) {
			t.Errorf("README.txt lacks %q", w)
		}
	}
	if hf, why := HandoffFiles(r.Front[0]); len(hf) != 0 || why == "" {
		t.Errorf("hand-off of a fractional chain: %d files, %q", len(hf), why)
	}
}

func names(fs []File) []string {
	var out []string
	for _, f := range fs {
		out = append(out, f.Name)
	}
	return out
}

// TestFractionalCurvesMatchPathGains holds the response figure's two
// curves to chain.PathGains, the library's list of a tone's paths, and
// chain.Chain.Gain (the kept path): the same paths, the same alias rule.
func TestFractionalCurvesMatchPathGains(t *testing.T) {
	_, poly := checked(t, fracSpec, "cic3m1r5 > fir5L > poly24/25")
	_, far := farrowChain(t)
	_, mid := checked(t, fracSpec, "cic3m1r5 > poly24/25 > fir5")
	const fa = 12e3
	for _, c := range []*chain.Chain{poly.Front[0].Chain, far.Front[0].Chain, mid.Front[0].Chain} {
		rng := rand.New(rand.NewPCG(2, 24))
		grid := make([]float64, 0, 60)
		for i := 0; i < 60; i++ {
			// Spread over [0, F0/2], with the passband and fa's neighbourhood.
			grid = append(grid, rng.Float64()*c.InputRate/2*math.Pow(rng.Float64(), 3))
		}
		grid = append(grid, 0, fa, 10e3)
		kept, alias, err := fractionalCurves(c, fa, grid)
		if err != nil {
			t.Fatal(err)
		}
		dc := c.Gain(0)
		for i, g := range grid {
			best := 0.0
			for _, p := range chain.PathGains(c, g, 0) {
				if p.OutputHz <= fa && !(p.K == 0 && g <= fa) {
					best = math.Max(best, p.Gain)
				}
			}
			for _, v := range []struct {
				name      string
				got, want float64
			}{{"kept", kept[i], db(c.Gain(g) / dc)}, {"alias", alias[i], db(best / dc)}} {
				if math.IsInf(v.want, -1) && math.IsInf(v.got, -1) {
					continue
				}
				// 1e-6 dB: the curves sum the taps in another order.
				if math.Abs(v.got-v.want) > 1e-6 {
					t.Errorf("%s at %g Hz: %s %.9f dB, PathGains %.9f dB", chain.Notation(c.Plan), g, v.name, v.got, v.want)
				}
			}
		}
	}
}

// TestFractionalFiles writes a fractional check's files: the polyphase
// prototype as a FIR's, the README, its integer files, no hand-off, and a
// response figure whose curves come from fractionalCurves.
func TestFractionalFiles(t *testing.T) {
	s, res := checked(t, `input_rate = "2 MHz"
output_rate = "800 kHz"
passband = "200 kHz"
ripple = "0.2 dB"
rejection = "60 dB"

[words]
coefficients = "auto"
`, "poly2/5")
	r, err := New("check", s, res)
	if err != nil {
		t.Fatal(err)
	}
	if got := r.Spec.Ratio; got != "5/2" {
		t.Errorf("ratio %q, want 5/2", got)
	}
	files, err := Files(context.Background(), r, res, s)
	if err != nil {
		t.Fatal(err)
	}
	got := map[string][]byte{}
	for _, f := range files {
		got[f.Name] = f.Data
	}
	taps := res.Front[0].Chain.Stages[0].(chain.PolyphaseStage).Taps
	if !bytes.Equal(got["coefficients/stage1_polyphase.csv"], FloatCSV(taps)) {
		t.Errorf("stage1_polyphase.csv is not the prototype's taps as FloatCSV writes them")
	}
	if _, ok := got["coefficients/README.txt"]; !ok {
		t.Errorf("no coefficients/README.txt; files %v", names(files))
	}
	for name := range got {
		if strings.HasPrefix(name, "headers/") || strings.HasPrefix(name, "rtl/") || strings.HasPrefix(name, "vectors/") {
			t.Errorf("a fractional chain wrote %s", name)
		}
	}
	// Its integer files, as a FIR's (coefficients "auto").
	for _, n := range []string{"coefficients/stage1_polyphase_int.csv", "coefficients/stage1_polyphase.hex"} {
		if len(got[n]) == 0 {
			t.Errorf("no %s; files %v", n, names(files))
		}
	}
	for _, n := range []string{"report.json", "response.png", "response.svg", "front.png", "stages.png"} {
		if len(got[n]) == 0 {
			t.Errorf("no %s", n)
		}
	}
	if svg := string(got["response.svg"]); !strings.Contains(svg, "largest alias into [0, 200 kHz]") || !strings.Contains(svg, "kept path") {
		t.Errorf("response.svg lacks the kept path's or the largest alias's legend")
	}
}
