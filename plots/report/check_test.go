package report

import (
	"encoding/json"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
)

// BeatenBy against a brute-force reading of the definition on seeded random
// fronts: a beater is at least as good on all three axes, better on one, and
// meets the targets; the savings are (was - now) / was in percent.
func TestBeatenBy(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	pick := func(n int) float64 { return float64(1 + rng.IntN(n)) }
	for trial := 0; trial < 500; trial++ {
		c := Chain{Notation: "checked", MultipliesPerOutput: pick(8), MemoryBits: int(pick(8)), LatencyS: pick(8) * 1e-6, MeetsTargets: true}
		var front []Chain
		for i := 0; i < 1+rng.IntN(8); i++ {
			front = append(front, Chain{Notation: string(rune('a' + i)), MultipliesPerOutput: pick(8), MemoryBits: int(pick(8)), LatencyS: pick(8) * 1e-6, MeetsTargets: rng.IntN(5) > 0})
		}
		if rng.IntN(4) == 0 {
			same := c
			front = append(front, same) // the checked chain itself never beats it
		}
		got := BeatenBy(c, front)
		k := 0
		for i, f := range front {
			le := f.MultipliesPerOutput <= c.MultipliesPerOutput && f.MemoryBits <= c.MemoryBits && f.LatencyS <= c.LatencyS
			lt := f.MultipliesPerOutput < c.MultipliesPerOutput || f.MemoryBits < c.MemoryBits || f.LatencyS < c.LatencyS
			if !(le && lt && f.MeetsTargets && f.Notation != c.Notation) {
				continue
			}
			if k >= len(got) || got[k].Rank != i+1 || got[k].Notation != f.Notation {
				t.Fatalf("trial %d: beater %d missing or out of order: %+v", trial, i+1, got)
			}
			want := 100 * (c.MultipliesPerOutput - f.MultipliesPerOutput) / c.MultipliesPerOutput
			if d := got[k].MultipliesSavingPct - want; d > 1e-9 || d < -1e-9 {
				t.Fatalf("trial %d: multiplies saving %v, want %v", trial, got[k].MultipliesSavingPct, want)
			}
			k++
		}
		if k != len(got) {
			t.Fatalf("trial %d: %d beaters, want %d: %+v", trial, len(got), k, got)
		}
	}
}

func TestBeaterText(t *testing.T) {
	for _, tc := range []struct {
		b    Beater
		want string
	}{
		{Beater{Rank: 2, Notation: "cic5m1r16 > fir4", MultipliesSavingPct: 41.2, MemorySavingPct: 12}, "#2 cic5m1r16 > fir4 does it with 41% fewer multiplies and 12% less memory"},
		{Beater{Rank: 1, Notation: "x", LatencySavingPct: 0.4}, "#1 x does it with 0.4% less latency"},
		{Beater{Rank: 3, Notation: "y", MultipliesSavingPct: 10, MemorySavingPct: 20, LatencySavingPct: 30}, "#3 y does it with 10% fewer multiplies, 20% less memory and 30% less latency"},
	} {
		if got := tc.b.Text(); got != tc.want {
			t.Errorf("Text() = %q, want %q", got, tc.want)
		}
	}
}

// ReadComparison refuses a front that would compare unlike with like: a
// plan stopped early, or priced with other words, hardware or cost
// settings; it accepts the same spec and names the file by its base name.
func TestReadComparison(t *testing.T) {
	spec, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	write := func(name string, rep Report) string { return writeReport(t, filepath.Join(dir, name), rep) }
	good := Report{Schema: Schema, Command: "plan", Spec: NewSpec(spec)}
	cmp, err := ReadComparison(write("good.json", good), spec)
	if err != nil || cmp.Source != "the plan in good.json" {
		t.Fatalf("same spec: %v, source %q", err, cmp.Source)
	}
	for _, tc := range []struct {
		name string
		edit func(*Report)
		frag string
	}{
		{"partial", func(r *Report) { r.Partial = true }, "stopped early"},
		{"words", func(r *Report) { r.Spec.Words.Input++ }, "words"},
		{"hardware", func(r *Report) { r.Spec.Hardware.Multiplier = "9x9" }, "hardware"},
		{"cost", func(r *Report) { r.Spec.Cost.Symmetry = !r.Spec.Cost.Symmetry }, "cost.symmetry"},
		{"rates", func(r *Report) { r.Spec.PassbandHz++ }, "band edges"},
		{"check", func(r *Report) { r.Command = "check" }, "a check, not of a plan"},
		{"no command", func(r *Report) { r.Command = "" }, "an unnamed command"},
		{"schema", func(r *Report) { r.Schema = "other/1" }, `schema "other/1"`},
	} {
		r := good
		r.Spec.Words = good.Spec.Words
		tc.edit(&r)
		if _, err := ReadComparison(write(tc.name+".json", r), spec); err == nil || !strings.Contains(err.Error(), tc.frag) {
			t.Errorf("%s: err = %v, want it to say %q", tc.name, err, tc.frag)
		}
	}
	if _, err := ReadComparison(write("bad.json", good)[:0]+filepath.Join(dir, "missing.json"), spec); err == nil {
		t.Error("a missing file was accepted")
	}
}

// On a multiplierless front the cost axis is adders as built: a chain with
// fewer multiplies per output but more adders does not beat the checked
// chain, one with fewer adders and no more of anything else does, and
// says so in adders (worked by hand: 85 against 100 adders is 15% fewer).
func TestBeatenByAdders(t *testing.T) {
	a := func(n int) *int { return &n }
	checked := Chain{Notation: "cic4m1r8 > hb > fir2", MultipliesPerOutput: 40, MemoryBits: 1000, LatencyS: 1e-6, Adders: a(100), MeetsTargets: true}
	front := []Chain{
		{Notation: "cic6m1r16nr > fir2", MultipliesPerOutput: 20, MemoryBits: 900, LatencyS: 1e-6, Adders: a(103), MeetsTargets: true},
		{Notation: "cic3m1r8 > fir4", MultipliesPerOutput: 60, MemoryBits: 1000, LatencyS: 1e-6, Adders: a(85), MeetsTargets: true},
	}
	got := BeatenBy(checked, front)
	if len(got) != 1 || got[0].Rank != 2 || got[0].AddersSavingPct == nil || *got[0].AddersSavingPct != 15 || got[0].MultipliesSavingPct != 0 {
		t.Fatalf("BeatenBy = %+v", got)
	}
	if want := "#2 cic3m1r8 > fir4 does it with 15% fewer adders"; got[0].Text() != want {
		t.Errorf("Text() = %q, want %q", got[0].Text(), want)
	}
}

// TestCompareBeats: a checked chain that meets and beats front chains on
// every axis names them (Report.Beats), and the summary says that the plan
// did not find it; one that none beats is said to belong on the front.
func TestCompareBeats(t *testing.T) {
	checked := Chain{Notation: "cic6m2r40 > fir2", MultipliesPerOutput: 8, MemoryBits: 962, LatencyS: 5.37e-6, MeetsTargets: true}
	front := []FrontChain{
		{Notation: "cic5m2r20 > fir4L", MultipliesPerOutput: 19, MemoryBits: 1407, LatencyS: 4.67e-6, MeetsTargets: true},
		{Notation: "cic4m2r20 > fir4", MultipliesPerOutput: 20, MemoryBits: 1357, LatencyS: 5.9e-6, MeetsTargets: true},
	}
	r, text := compared(checked, front)
	if len(r.Beats) != 1 || r.Beats[0] != 2 {
		t.Fatalf("Beats = %v, want [2]: the second is worse on every axis, the first has less latency", r.Beats)
	}
	for _, want := range []string{"beats it on every axis: it belongs on that front, which lacks it", "It beats #2 cic4m2r20 > fir4 there on every axis."} {
		if !strings.Contains(text, want) {
			t.Errorf("summary %q lacks %q", text, want)
		}
	}
}

// compared is the report of a check of checked against a plan's front and
// the summary WriteComparison writes of it.
func compared(checked Chain, front []FrontChain) (*Report, string) {
	r := &Report{Front: []Chain{checked}}
	r.Compare(&Comparison{Source: "the plan in report.json", Front: front})
	var b strings.Builder
	WriteComparison(&b, r)
	return r, b.String()
}

// TestCompareTies: a checked chain that ties a front chain on every axis
// (a near twin, say its FIR in the other layout) is said to tie it, not to
// be missing from the front.
func TestCompareTies(t *testing.T) {
	checked := Chain{Notation: "cic7m2r8 > fir4", MultipliesPerOutput: 22, MemoryBits: 1800, LatencyS: 2e-6, MeetsTargets: true}
	front := []FrontChain{
		{Notation: "cic5m2r8 > fir4", MultipliesPerOutput: 20, MemoryBits: 1900, LatencyS: 2.1e-6, MeetsTargets: true},
		{Notation: "cic7m2r8 > fir4L", MultipliesPerOutput: 22, MemoryBits: 1800, LatencyS: 2e-6, MeetsTargets: true},
	}
	_, text := compared(checked, front)
	if want := "and #2 cic7m2r8 > fir4L ties it on every axis there."; !strings.Contains(text, want) || strings.Contains(text, "lacks it") {
		t.Errorf("summary %q: want %q and no claim that the front lacks it", text, want)
	}
}

// ReadComparison reads only the front's summary of a plan's report.json,
// not its stages: on 200 seeded random fronts (figures no chain beats on
// every axis, verdicts, adders on some, stages with taps, half of them an
// interpolation plan's, whose counts are per input) it gives the comparison NewComparison gives
// on the whole decoded report, and a random checked chain is beaten by,
// and beats, the same front chains either way.
func TestReadComparisonSameAsWhole(t *testing.T) {
	spec, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 9))
	// Chain i of a front has more multiplies (adders) and less memory
	// than chain i-1, as on a plan's front; a checked chain, any figures.
	chainOf := func(i int, adders bool) Chain {
		c := Chain{Notation: "c" + strings.Repeat("x", i), MultipliesPerOutput: float64(3*i + rng.IntN(3)),
			MemoryBits: 100 - 3*i - rng.IntN(3), LatencyS: float64(1+rng.IntN(40)) * 1e-6, MeetsTargets: rng.IntN(4) > 0}
		if i >= 20 {
			c.MultipliesPerOutput, c.MemoryBits = float64(rng.IntN(40)), rng.IntN(100)
		}
		if adders {
			a := int(c.MultipliesPerOutput) + rng.IntN(2)
			if i < 20 {
				a = 3 * i
			}
			c.Adders = &a
		}
		c.Stages = []Stage{{Kind: "fir", Coefficients: []float64{rng.Float64(), 1, rng.Float64()}}}
		return c
	}
	for k := range 200 {
		adders := k%3 == 0
		rep := Report{Schema: Schema, Command: "plan", Spec: NewSpec(spec)}
		for i := range rng.IntN(12) {
			c := chainOf(i, adders)
			// An interpolation plan's chains write multiplies_per_input.
			c.interp = k%2 == 1
			rep.Front = append(rep.Front, c)
		}
		p := writeReport(t, filepath.Join(dir, "r.json"), rep)
		got, err := ReadComparison(p, spec)
		if err != nil {
			t.Fatalf("case %d: %v", k, err)
		}
		want := NewComparison(got.Source, &rep)
		gj, _ := json.Marshal(got)
		wj, _ := json.Marshal(want)
		if string(gj) != string(wj) {
			t.Fatalf("case %d: read %s, whole %s", k, gj, wj)
		}
		checked := chainOf(20+k%3, adders)
		r1 := Report{Front: []Chain{checked}}
		r2 := Report{Front: []Chain{checked}}
		r1.Compare(got)
		r2.Compare(want)
		o1, _ := json.Marshal([]any{r1.BeatenBy, r1.Beats, got.OnFront, got.Rank})
		o2, _ := json.Marshal([]any{r2.BeatenBy, r2.Beats, want.OnFront, want.Rank})
		if string(o1) != string(o2) {
			t.Fatalf("case %d: compared with the file read %s, with the whole report %s", k, o1, o2)
		}
	}
}

// ReadComparison refuses, in report.json's own names and with no Go
// words, a front no plan writes: figures out of range (which the front
// plot's log axes cannot draw, 1e290 made it panic), a chain named twice,
// and a chain meeting the targets beaten on every axis by another that
// does.
func TestReadComparisonRefusesOddFronts(t *testing.T) {
	spec, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	a := func(n int) *int { return &n }
	base := func() []Chain {
		return []Chain{
			{Notation: "one", MultipliesPerOutput: 10, MemoryBits: 900, LatencyS: 3e-6, MeetsTargets: true},
			{Notation: "two", MultipliesPerOutput: 20, MemoryBits: 500, LatencyS: 2e-6, MeetsTargets: true},
			{Notation: "three", MultipliesPerOutput: 30, MemoryBits: 800, LatencyS: 1e-6, MeetsTargets: true},
		}
	}
	for _, tc := range []struct {
		name string
		edit func([]Chain)
		frag string // "" accepted
	}{
		{"plan's", func([]Chain) {}, ""},
		{"huge", func(f []Chain) { f[1].MultipliesPerOutput = 1e290 }, "front[1].multiplies_per_output = 1e+290: out of range"},
		{"negative memory", func(f []Chain) { f[1].MemoryBits = -1 }, "front[1].memory_bits = -1: out of range"},
		{"huge, interpolation", func(f []Chain) {
			for i := range f {
				f[i].interp = true
			}
			f[1].MultipliesPerOutput = 1e290
		}, "front[1].multiplies_per_input = 1e+290: out of range"},
		{"tiny", func(f []Chain) { f[2].LatencyS = 1e-300 }, "front[2].latency_s = 1e-300: out of range"},
		{"zero multiplies", func(f []Chain) { f[0].MultipliesPerOutput = 0 }, ""},
		{"repeated", func(f []Chain) { f[2].Notation = "one" }, "front[2] (one) repeats front[0]"},
		{"adders", func(f []Chain) { f[0].Adders, f[1].Adders, f[2].Adders = a(5), a(-2), a(9) }, "front[1].adders = -2"},
		{"dominated", func(f []Chain) { f[0].LatencyS, f[0].MemoryBits = 1e-6, 700 }, "front[2] (three) is beaten on multiplies, memory and latency by front[0] (one)"},
		{"dominated but missing", func(f []Chain) { f[0].LatencyS, f[0].MemoryBits, f[2].MeetsTargets = 1e-6, 700, false }, ""},
		// On adders one is beaten, though it has the fewest multiplies.
		{"dominated on adders", func(f []Chain) { f[0].Adders, f[1].Adders, f[2].Adders = a(50), a(20), a(40); f[0].MemoryBits = 850 }, "front[0] (one) is beaten on adders, memory and latency by front["},
		{"not dominated on adders", func(f []Chain) { f[0].Adders, f[1].Adders, f[2].Adders = a(5), a(20), a(40); f[0].MemoryBits = 850 }, ""},
	} {
		rep := Report{Schema: Schema, Command: "plan", Spec: NewSpec(spec), Front: base()}
		tc.edit(rep.Front)
		p := writeReport(t, filepath.Join(dir, "f.json"), rep)
		_, err = ReadComparison(p, spec)
		switch {
		case tc.frag == "" && err != nil:
			t.Errorf("%s: %v", tc.name, err)
		case tc.frag != "" && (err == nil || !strings.Contains(err.Error(), tc.frag)):
			t.Errorf("%s: %v, want it to say %q", tc.name, err, tc.frag)
		}
	}
}

// writeReport writes rep as report.json to path and returns path.
func writeReport(t *testing.T, path string, rep Report) string {
	t.Helper()
	b, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}
