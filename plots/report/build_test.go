package report

import (
	"bytes"
	"context"
	"errors"
	"os"
	"runtime"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// A hand-made two-stage chain: CIC N=3, M=1, R=8 then a 7-tap half-band-like
// FIR decimating by 2, from 16 MHz to 1 MHz.
func handChain(t *testing.T) (*specfile.Spec, *optimize.Result) {
	t.Helper()
	s, err := specfile.Parse("hand.toml", []byte(`input_rate = "16 MHz"
output_rate = "1 MHz"
passband = "100 kHz"
ripple = "0.5 dB"
rejection = "60 dB"
[words]
coefficients = 16
[hardware]
clock = "100 MHz"
`))
	if err != nil {
		t.Fatal(err)
	}
	plan := []chain.StagePlan{
		{Kind: chain.CIC, Factor: 8, CICOrder: 3, CICDelay: 1},
		{Kind: chain.HalfBand, Factor: 2},
	}
	taps := []float64{-0.03125, 0, 0.28125, 0.5, 0.28125, 0, -0.03125}
	c := &chain.Chain{
		InputRate: 16e6, Plan: plan, Designed: true,
		Stages: []chain.Stage{
			chain.CICStage{N: 3, M: 1, R: 8, RegisterBits: []int{25, 25, 25, 25, 25, 25}, InputBits: 16, OutputBits: 24},
			chain.FIRStage{R: 2, Taps: taps, Length: 7, HalfBand: true},
		},
	}
	f := cost.Figures{
		MultipliesPerOutput: 2, AddsPerOutput: 54, MemoryWords: 30, MemoryBits: 600,
		LatencyS: 1e-6, LatencySamples: 1, MultipliersAtClock: 1, Designed: true,
		Stages:   []cost.StageFigures{{AddsPerOutput: 50, MemoryBits: 300}, {MultipliesPerOutput: 2, AddsPerOutput: 4, MemoryBits: 300, Multipliers: 1}},
		Analysis: chain.Analysis{AliasRejectionDB: 61, PassbandRippleDB: 0.4, WorstAliasHz: 900e3},
	}
	res := &optimize.Result{
		Candidates: 10, FeasibleAll: 4, Designed: 2, Dropped: map[optimize.Reason]int{"b": 1, "a": 5},
		Front:  []optimize.Candidate{{Plan: plan, Chain: c, Figures: f, MarginDB: 1}},
		Reason: "only one",
	}
	return s, res
}

func TestNew(t *testing.T) {
	s, res := handChain(t)
	r, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	if r.Schema != Schema || r.Caution != Caution || r.Partial || r.Search.Feasible != 4 || r.Search.Dropped["a"] != 5 {
		t.Errorf("report = %+v", r)
	}
	ch := r.Front[0]
	// The spec fixes 16-bit coefficients, so the verdict is on the rounded
	// taps; the hand-made half-band carries no requirement to plan them by,
	// so nothing says they meet: the float design does, the chain does not.
	if ch.Notation != "cic3m1r8 > hb" || ch.MeetsTargets || !ch.FloatMeetsTargets || ch.VerdictBasis != "rounded taps" || ch.RejectionMarginDB != 1 || ch.MultipliersAtClock == nil || *ch.MultipliersAtClock != 1 {
		t.Errorf("chain = %+v", ch)
	}
	cic, hb := ch.Stages[0], ch.Stages[1]
	// Rates: 16 MHz / 8 = 2 MHz, / 2 = 1 MHz.
	if cic.Kind != "cic" || cic.CICOrder != 3 || cic.CICDelay != 1 || len(cic.RegisterBits) != 6 || cic.OutputRateHz != 2e6 {
		t.Errorf("cic stage = %+v", cic)
	}
	if hb.Kind != "halfband" || hb.Taps != 7 || len(hb.Coefficients) != 7 || hb.CompensatesCIC == nil || hb.InputRateHz != 2e6 || hb.OutputRateHz != 1e6 {
		t.Errorf("half-band stage = %+v", hb)
	}
	// The hand-made stage carries no band requirement, so the word-length
	// planner cannot take it: the report says so and writes only the float file.
	if ch.ChainReport != nil || hb.StageReport != nil || !strings.Contains(ch.WordLengthsError, "requirement") {
		t.Errorf("word lengths of a hand-made chain: %+v, %q", ch.ChainReport, ch.WordLengthsError)
	}
	files, err := CoefficientFiles(ch, true)
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 1 || files[0].Name != "coefficients/stage2_halfband.csv" {
		t.Errorf("coefficient files %v, want the float file only", files)
	}
	// Same input, same bytes.
	a, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	r2, _ := New("plan", s, res)
	b, _ := r2.Marshal()
	if !bytes.Equal(a, b) {
		t.Error("two builds of the same report differ")
	}
}

func TestNewRejectsBadIndex(t *testing.T) {
	s, res := handChain(t)
	res.Recommended = 3
	if _, err := New("plan", s, res); err == nil {
		t.Error("no error for a recommended index outside the front")
	}
}

// NewForFiles starts the recommended chain's files beside the other
// chains' word-length plans; Files must then give the very bytes it gives
// for NewContext's report, whatever GOMAXPROCS, for a decimation and an
// interpolation spec (the built-in example and an invented transmit
// chain), and a recommended chain other than the search's.
func TestNewForFilesSameBytes(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	ex, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	tx, err := specfile.Parse("tx.toml", []byte("input_rate = \"96 kHz\"\noutput_rate = \"1.536 MHz\"\npassband = \"20 kHz\"\nripple = \"0.1 dB\"\nrejection = \"60 dB\"\n"))
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	for k, s := range []*specfile.Spec{ex, tx} {
		res, err := optimize.Plan(ctx, s.Chain, s.SearchSettings())
		if err != nil {
			t.Fatal(err)
		}
		recs := []int{res.Recommended}
		if k == 0 && len(res.Front) > 1 {
			recs = append(recs, (res.Recommended+1)%len(res.Front))
		}
		for j, rec := range recs {
			r := *res
			r.Recommended = rec
			want := filesOf(t, ctx, &r, s, NewContext)
			procs := []int{1, 3}[(k+j)%2]
			old := runtime.GOMAXPROCS(procs)
			got := filesOf(t, ctx, &r, s, NewForFiles)
			runtime.GOMAXPROCS(old)
			if len(got) != len(want) {
				t.Fatalf("%s #%d, GOMAXPROCS %d: %d files, NewContext's report %d", s.Chain.RatioString(), rec, procs, len(got), len(want))
			}
			for i := range want {
				if got[i].Name != want[i].Name || !bytes.Equal(got[i].Data, want[i].Data) {
					t.Errorf("%s #%d, GOMAXPROCS %d: file %d is %s (%d bytes), NewContext's report gives %s (%d bytes)", s.Chain.RatioString(), rec, procs, i, got[i].Name, len(got[i].Data), want[i].Name, len(want[i].Data))
				}
			}
		}
	}
}

func filesOf(t *testing.T, ctx context.Context, res *optimize.Result, s *specfile.Spec, build func(context.Context, string, *specfile.Spec, *optimize.Result) (*Report, error)) []File {
	t.Helper()
	rep, err := build(ctx, "plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	files, err := Files(ctx, rep, res, s)
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// Files returns ctx.Err() once ctx is done, also while it waits for the
// recommended chain's files that NewForFiles started.
func TestFilesStopped(t *testing.T) {
	s, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	res, err := optimize.Plan(context.Background(), s.Chain, s.SearchSettings())
	if err != nil {
		t.Fatal(err)
	}
	rep, err := NewForFiles(context.Background(), "plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Files(ctx, rep, res, s); !errors.Is(err, context.Canceled) {
		t.Errorf("Files after cancel: %v, want context.Canceled", err)
	}
}

// A run stopped before the word lengths recommends a chain whose rounded
// taps were never judged: the reason says so, where a script reading the
// reason alone would look (a new-user review found it silent).
func TestStoppedRecommendationSaysNotJudged(t *testing.T) {
	s, res := handChain(t)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	res.Partial = true
	rep, err := NewContext(ctx, "plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	if c := rep.Front[rep.Recommended]; c.WordLengthsError != StoppedBeforeWordLengths {
		t.Fatalf("word_lengths_error %q, want the stopped one", c.WordLengthsError)
	}
	if !strings.Contains(rep.Reason, "Not judged") {
		t.Errorf("reason %q does not say the recommended chain was not judged", rep.Reason)
	}
	// Run to its end, the same chain's reason does not.
	full, err := NewContext(context.Background(), "plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(full.Reason, "Not judged") {
		t.Errorf("a judged chain's reason %q says it was not judged", full.Reason)
	}
}
