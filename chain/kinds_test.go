package chain

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// everyKindSpec and everyKindNotation make an invented chain with a stage of
// every kind in Kinds; TestEveryKindDesigned checks that they still do.
func everyKindSpec() Spec {
	return Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3, RippleDB: 0.2, RejectionDB: 85}
}

const everyKindNotation = "cic5m1r32 > hb > hb > fir2"

// sampleStages holds one stage of every kind, built as Design builds them,
// each with unit gain at DC. A kind added to Kinds needs a sample here.
func sampleStages() map[Kind]Stage {
	return map[Kind]Stage{
		CIC:      NewCICStage(3, 1, 8, 12, 24),
		HalfBand: FIRStage{R: 2, Taps: []float64{-1.0 / 32, 0, 9.0 / 32, 0.5, 9.0 / 32, 0, -1.0 / 32}, Length: 7, HalfBand: true},
		FIR:      FIRStage{R: 2, Taps: []float64{0.25, 0.25, 0.25, 0.25}, Length: 4},
	}
}

// kindsOf returns the kinds of c's stages, each once, in the order of Kinds.
func kindsOf(c *Chain) []Kind {
	var ks []Kind
	for _, k := range Kinds() {
		for _, s := range c.Stages {
			if s.Kind() == k {
				ks = append(ks, k)
				break
			}
		}
	}
	return ks
}

func TestKindsList(t *testing.T) {
	ks := Kinds()
	if len(ks) == 0 {
		t.Fatal("Kinds is empty")
	}
	names := map[string]bool{}
	for _, k := range ks {
		n := k.String()
		if n == "unknown" || names[n] {
			t.Errorf("kind %d: name %q (unknown or not unique)", int(k), n)
		}
		names[n] = true
		if Notation([]StagePlan{{Kind: k, Factor: 2, CICOrder: 1, CICDelay: 1}}) == "?" {
			t.Errorf("kind %s: Notation does not know it", k)
		}
	}
	// The fractional kinds follow the integer ones; past them no name.
	all := append(Kinds(), FractionalKinds()...)
	for _, k := range FractionalKinds() {
		if n := k.String(); n == "unknown" || names[n] || !k.Fractional() {
			t.Errorf("fractional kind %d: name %q (unknown or not unique)", int(k), n)
		}
		names[k.String()] = true
	}
	for _, k := range []Kind{0, all[len(all)-1] + 1} {
		if slices.Contains(all, k) || k.String() != "unknown" {
			t.Errorf("Kind(%d) = %q is taken for a kind", int(k), k)
		}
	}
	ks[0] = 0
	if Kinds()[0] == 0 {
		t.Error("Kinds hands out the package's own list")
	}
}

func TestEveryKindRoundTrips(t *testing.T) {
	samples := sampleStages()
	for _, k := range Kinds() {
		s, ok := samples[k]
		if !ok {
			t.Errorf("kind %s has no sample stage in sampleStages", k)
			continue
		}
		if s.Kind() != k {
			t.Errorf("sample of kind %s: Kind() = %s", k, s.Kind())
		}
		// Run: every sample has unit gain at DC.
		c := &Chain{InputRate: 1e6, Stages: []Stage{s}, Designed: true}
		x := make([]float64, 64*s.Factor())
		for i := range x {
			x[i] = 1
		}
		y := Run(c, x)
		if len(y) != 64 || math.Abs(y[len(y)-1]-1) > 1e-9 {
			t.Errorf("kind %s: Run on DC gives %d samples ending in %g, want 64 ending in 1", k, len(y), y[len(y)-1])
		}
		// The bounds the measurement uses.
		b, err := newStageBounder(s, 1e6)
		if err != nil {
			t.Errorf("kind %s: %v", k, err)
			continue
		}
		for _, f := range []float64{0, 1e4, 1.3e5, 2.5e5, 4.9e5} {
			lo, up := b.bounds(f, f+1e3)
			if g := s.Gain(f, 1e6); !(lo <= g*(1+1e-9) && g <= up*(1+1e-9)) {
				t.Errorf("kind %s at %g Hz: |H| = %g outside the bounds [%g, %g]", k, f, g, lo, up)
			}
		}
	}
	for k := range samples {
		if !slices.Contains(Kinds(), k) {
			t.Errorf("sampleStages has kind %s, which Kinds does not list", k)
		}
	}
}

func TestEveryKindDesigned(t *testing.T) {
	spec := everyKindSpec()
	plan, err := ParseNotation(everyKindNotation)
	if err != nil {
		t.Fatal(err)
	}
	if got := Notation(plan); got != everyKindNotation {
		t.Errorf("Notation(ParseNotation(%q)) = %q", everyKindNotation, got)
	}
	est, err := Estimate(spec, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if got := kindsOf(est); !slices.Equal(got, Kinds()) {
		t.Fatalf("%s has the kinds %v, want every kind %v: extend everyKindNotation (and the other packages' tests that use it)", everyKindNotation, got, Kinds())
	}
	for i, s := range est.Stages {
		if s.Kind() != plan[i].Kind {
			t.Errorf("stage %d: Kind() = %s, the plan says %s", i+1, s.Kind(), plan[i].Kind)
		}
	}
	if _, err := Analyze(est, spec); err != nil {
		t.Errorf("estimate: %v", err)
	}
	des, err := Design(spec, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	a, err := Analyze(des, spec)
	if err != nil {
		t.Fatal(err)
	}
	if !a.Meets(spec) {
		t.Errorf("designed %s: %+v does not meet", everyKindNotation, a)
	}
}

// A chain that does not hold what its plan says, or holds a pointer, gets
// an error naming the stage from the estimated analysis, not a panic or a
// figure for the wrong kind.
func TestEstimateChecksStages(t *testing.T) {
	spec := everyKindSpec()
	plan, err := ParseNotation(everyKindNotation)
	if err != nil {
		t.Fatal(err)
	}
	est, err := Estimate(spec, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	want, err := Analyze(est, spec)
	if err != nil {
		t.Fatal(err)
	}

	// Pointers are taken as the measurement takes them.
	ptr := *est
	ptr.Stages = slices.Clone(est.Stages)
	cs, fs := ptr.Stages[0].(CICStage), ptr.Stages[3].(FIRStage)
	ptr.Stages[0], ptr.Stages[3] = &cs, &fs
	if got, err := Analyze(&ptr, spec); err != nil || got != want {
		t.Errorf("with pointer stages: %+v, %v; want %+v", got, err, want)
	}

	swapped := *est
	swapped.Stages = slices.Clone(est.Stages)
	hb := swapped.Stages[1].(FIRStage)
	hb.HalfBand = false
	swapped.Stages[1] = hb
	if _, err := Analyze(&swapped, spec); err == nil || !strings.Contains(err.Error(), "stage 2 is a fir stage") {
		t.Errorf("a FIR where the plan has a half-band: error %v", err)
	}

	short := *est
	short.Plan = []StagePlan{{Kind: CIC, Factor: 32, CICOrder: 5, CICDelay: 1}, {Kind: HalfBand, Factor: 2}, {Kind: FIR, Factor: 4}}
	if _, err := Analyze(&short, spec); err == nil || !strings.Contains(err.Error(), "has 3 stages, its Stages 4") {
		t.Errorf("a plan shorter than the stages: error %v", err)
	}
}

func TestRunNamesTheStage(t *testing.T) {
	for _, tc := range []struct {
		s    Stage
		want string
	}{
		{FIRStage{R: 2, Length: 7, HalfBand: true}, "stage 1 (halfband) has no taps"},
		{&FIRStage{R: 2, Taps: []float64{0.5, 0.5}, Length: 2}, "stage 1 is a *chain.FIRStage"},
	} {
		func() {
			defer func() {
				if msg, _ := recover().(string); !strings.Contains(msg, tc.want) {
					t.Errorf("Run panics with %q, want it to say %q", msg, tc.want)
				}
			}()
			Run(&Chain{InputRate: 1, Stages: []Stage{tc.s}}, make([]float64, 8))
		}()
	}
}
