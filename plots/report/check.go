package report

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Beater is a chain of a plan's front that beats a checked chain: at least
// as good on every axis (multiplies per output, memory bits, latency; a
// multiplierless plan's hardware adders in place of the multiplies) and
// better on one, and meeting the targets. Savings are in percent of the
// checked chain's figure (0 where the two are equal; a checked figure of
// zero saves nothing).
type Beater struct {
	// Rank is the chain's number in the plan's front table (from 1).
	Rank                int     `json:"rank"`
	Notation            string  `json:"notation"`
	MultipliesSavingPct float64 `json:"multiplies_saving_pct"`
	MemorySavingPct     float64 `json:"memory_saving_pct"`
	LatencySavingPct    float64 `json:"latency_saving_pct"`
	// AddersSavingPct is set when the chains are multiplierless: the
	// comparison is then on adders as built, and MultipliesSavingPct is 0.
	AddersSavingPct *float64 `json:"adders_saving_pct,omitempty"`
}

// BeatenBy returns the chains of front that beat c (see Beater), in the
// front's order. A front chain with the same notation as c is c itself and
// never beats it.
func BeatenBy(c Chain, front []Chain) []Beater {
	var out []Beater
	for i, f := range front {
		if f.Notation == c.Notation || !f.MeetsTargets {
			continue
		}
		fm, fb, fl := f.MultipliesPerOutput, float64(f.MemoryBits), f.LatencyS
		cm, cb, cl := c.MultipliesPerOutput, float64(c.MemoryBits), c.LatencyS
		adders := f.Adders != nil && c.Adders != nil
		if adders {
			// A multiplierless front's cost axis.
			fm, cm = float64(*f.Adders), float64(*c.Adders)
		}
		if fm > cm || fb > cb || fl > cl || (fm == cm && fb == cb && fl == cl) {
			continue
		}
		b := Beater{
			Rank: i + 1, Notation: f.Notation,
			MultipliesSavingPct: saving(fm, cm),
			MemorySavingPct:     saving(fb, cb),
			LatencySavingPct:    saving(fl, cl),
		}
		if adders {
			a := b.MultipliesSavingPct
			b.AddersSavingPct, b.MultipliesSavingPct = &a, 0
		}
		out = append(out, b)
	}
	return out
}

// saving is how much less than was f is, in percent of was.
func saving(f, was float64) float64 {
	if !(was > 0) || f >= was {
		return 0
	}
	return 100 * (was - f) / was
}

// Text says what b saves, as a designer writes it: "#2 cic5m1r16 > fir4
// does it with 41% fewer multiplies and 12% less memory".
func (b Beater) Text() string {
	var parts []string
	add := func(pct float64, what string) {
		if pct <= 0 {
			return
		}
		p := fmt.Sprintf("%.0f%%", pct)
		if pct < 1 {
			p = fmt.Sprintf("%.1f%%", pct)
		}
		parts = append(parts, p+" "+what)
	}
	if b.AddersSavingPct != nil {
		add(*b.AddersSavingPct, "fewer adders")
	} else {
		add(b.MultipliesSavingPct, "fewer multiplies")
	}
	add(b.MemorySavingPct, "less memory")
	add(b.LatencySavingPct, "less latency")
	var s string
	switch len(parts) {
	case 0:
		s = "the same figures"
	case 1:
		s = parts[0]
	default:
		s = strings.Join(parts[:len(parts)-1], ", ") + " and " + parts[len(parts)-1]
	}
	return fmt.Sprintf("#%d %s does it with %s", b.Rank, b.Notation, s)
}

// CheckReason is the check command's verdict on the chain it named, judged
// as the report judges it (Chain.MeetsTargets, on the figures
// BuiltFigures gives).
func CheckReason(c Chain, sp Spec) string {
	rej, rip := c.BuiltFigures()
	on := ""
	if c.VerdictBasis == "rounded taps" {
		on = " with its taps rounded"
	}
	switch {
	case c.MeetsTargets:
		return "The chain named by --chain meets the rejection target and the ripple budget" + on + "."
	case c.Unjudged():
		return "The chain named by --chain cannot be judged with its taps rounded: " + c.WordLengthsError + "."
	case !c.FloatMeetsTargets && c.AliasRejectionDB < sp.RejectionDB:
		return fmt.Sprintf("The chain named by --chain misses the rejection target as designed: %.2f dB against %.4g dB.", c.AliasRejectionDB, sp.RejectionDB)
	case !c.FloatMeetsTargets:
		return fmt.Sprintf("The chain named by --chain misses the ripple budget as designed: %s against %.4g dB.", RippleText(c.PassbandRippleDB), sp.RippleDB)
	case rej < sp.RejectionDB:
		return fmt.Sprintf("The chain named by --chain misses the rejection target%s: %.2f dB against %.4g dB.", on, rej, sp.RejectionDB)
	}
	return fmt.Sprintf("The chain named by --chain misses the ripple budget%s: %s against %.4g dB.", on, RippleText(rip), sp.RippleDB)
}

// Comparison is the front a checked chain was compared with: Source says
// where it came from ("a plan of the same spec", or the report.json named),
// Front holds its chains' figures in the front's order, OnFront says
// whether the checked chain is one of them (same notation).
type Comparison struct {
	Source  string       `json:"source"`
	Front   []FrontChain `json:"front"`
	OnFront bool         `json:"on_front"`
	// Rank is the checked chain's number on the front (from 1), 0 when it
	// is not on it.
	Rank int `json:"rank"`
	// plan is the full front, for BeatenBy (not written).
	plan []Chain
}

// FrontChain is a chain of the compared front, as report.json summarises it.
type FrontChain struct {
	Notation            string  `json:"notation"`
	MultipliesPerOutput float64 `json:"multiplies_per_output"`
	MemoryBits          int     `json:"memory_bits"`
	LatencyS            float64 `json:"latency_s"`
	MeetsTargets        bool    `json:"meets_targets"`
	// Adders: a multiplierless plan's hardware adders as built (its cost
	// axis); absent otherwise.
	Adders *int `json:"adders,omitempty"`
}

// Meeting is how many chains of the front meet the spec as judged there,
// and the index of the first (-1 when none does).
func (cmp *Comparison) Meeting() (n, first int) {
	first = -1
	for i, f := range cmp.Front {
		if f.MeetsTargets {
			n++
			if first < 0 {
				first = i
			}
		}
	}
	return n, first
}

// NewComparison is the comparison with the front of plan's report rep.
func NewComparison(source string, rep *Report) *Comparison {
	cmp := &Comparison{Source: source, Front: []FrontChain{}, plan: rep.Front}
	for _, c := range rep.Front {
		cmp.Front = append(cmp.Front, FrontChain{Notation: c.Notation, MultipliesPerOutput: c.MultipliesPerOutput,
			MemoryBits: c.MemoryBits, LatencyS: c.LatencyS, MeetsTargets: c.MeetsTargets, Adders: c.Adders})
	}
	return cmp
}

// Compare records, on a check's report, the comparison of its chain with
// cmp: ComparedWith, and BeatenBy (empty, not absent, when nothing beats
// it). A nil cmp or a report without exactly one chain changes nothing.
func (r *Report) Compare(cmp *Comparison) {
	if cmp == nil || len(r.Front) != 1 {
		return
	}
	c := r.Front[0]
	cmp.OnFront, cmp.Rank = false, 0
	for i, f := range cmp.Front {
		if f.Notation == c.Notation && !cmp.OnFront {
			cmp.OnFront, cmp.Rank = true, i+1
		}
	}
	plan := cmp.plan
	if plan == nil {
		for _, f := range cmp.Front {
			plan = append(plan, f.chain())
		}
	}
	r.ComparedWith = cmp
	r.BeatenBy = append([]Beater{}, BeatenBy(c, plan)...)
	r.Beats = nil
	if len(r.BeatenBy) == 0 {
		for i, f := range plan {
			if len(BeatenBy(f, []Chain{c})) > 0 {
				r.Beats = append(r.Beats, i+1)
			}
		}
	}
}

// maxComparisonBytes bounds the report.json ReadComparison reads: far
// above any plan's (a few MB with long filters), far below what would
// strain the memory bound.
const maxComparisonBytes = 64 << 20

// maxComparisonContainers and maxComparisonValues bound the objects and
// arrays, and the values in arrays and objects, of a report.json that
// ReadComparison decodes: a plan's has about five objects a front chain
// (70 for 14 chains) and a value a tap, so the bounds are far above any
// plan's (a thousand chains of a dozen 65535-tap stages), while decoding
// at the bounds stays within a few hundred MB.
const (
	maxComparisonContainers = 1 << 18
	maxComparisonValues     = 1 << 24
)

// jsonShape counts the objects and arrays (opening brackets) and the
// values separated by commas outside strings in the JSON text b, valid or
// not, in one pass.
func jsonShape(b []byte) (containers, values int) {
	in, esc := false, false
	for _, c := range b {
		switch {
		case esc:
			esc = false
		case in:
			switch c {
			case '\\':
				esc = true
			case '"':
				in = false
			}
		case c == '"':
			in = true
		case c == '{' || c == '[':
			containers++
		case c == ',':
			values++
		}
	}
	return containers, values
}

// ReadComparison reads the front of a plan's report.json at path, which
// must be a complete plan (not stopped early) of a spec that prices chains
// as spec does: the same rates, band edges, targets, signal, words,
// hardware and cost settings (the search limits may differ). The
// comparison's Source names the file by its base name only.
func ReadComparison(path string, spec *specfile.Spec) (*Comparison, error) {
	shown := units.Clip(path, units.MaxEcho)
	// Checked before opening: a named pipe would block the open, and a
	// device or a huge file would be read whole.
	fi, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("--front %q: %v", shown, unwrapPath(err))
	}
	if !fi.Mode().IsRegular() {
		return nil, fmt.Errorf("--front %q: not a regular file; want the report.json a plan wrote", shown)
	}
	if fi.Size() > maxComparisonBytes {
		return nil, fmt.Errorf("--front %q: %d bytes, over the %d MiB limit of a report.json to compare with", shown, fi.Size(), maxComparisonBytes>>20)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("--front %q: %v", shown, unwrapPath(err))
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, maxComparisonBytes+1))
	if err != nil {
		return nil, fmt.Errorf("--front %q: %v", shown, unwrapPath(err))
	}
	if len(b) > maxComparisonBytes {
		return nil, fmt.Errorf("--front %q: over the %d MiB limit of a report.json to compare with", shown, maxComparisonBytes>>20)
	}
	// Decoding allocates by the document's shape, not its size: three
	// million empty objects in a 9 MB front took 1.7 GB (adversarial
	// review), so the shape is counted first, in one pass over the bytes.
	if containers, values := jsonShape(b); containers > maxComparisonContainers || values > maxComparisonValues {
		return nil, fmt.Errorf("--front %q: %d JSON objects and arrays and %d values, more than a plan's report.json holds (at most %d and %d); want the report.json a plan wrote", shown, containers, values, maxComparisonContainers, maxComparisonValues)
	}
	var rep comparedReport
	if err := json.Unmarshal(b, &rep); err != nil {
		// JSON's own wording names characters and Go types: said plainly.
		return nil, fmt.Errorf("--front %q: not a stepdown report.json (not valid JSON of a report)", shown)
	}
	if rep.Schema != Schema {
		return nil, fmt.Errorf("--front %q: not a stepdown report.json (schema %q, want %q)", shown, units.Clip(rep.Schema, 30), Schema)
	}
	if rep.Command != "plan" {
		what := "an unnamed command"
		if rep.Command != "" {
			what = "a " + units.Clip(rep.Command, 20)
		}
		return nil, fmt.Errorf("--front %q: the report of %s, not of a plan", shown, what)
	}
	if rep.Partial {
		return nil, fmt.Errorf("--front %q: the plan was stopped early (partial), so its front is not the plan's; plan the spec to the end, or leave --front out", shown)
	}
	want := NewSpec(spec)
	got := rep.Spec
	for _, d := range []struct {
		what string
		same bool
	}{
		{"rates, band edges, ripple, rejection or signal", got.InputRateHz == want.InputRateHz && got.OutputRateHz == want.OutputRateHz &&
			got.PassbandHz == want.PassbandHz && got.ProtectedHz == want.ProtectedHz && got.StopbandHz == want.StopbandHz &&
			got.RippleDB == want.RippleDB && got.RejectionDB == want.RejectionDB && got.Signal == want.Signal},
		{"words (input, output, coefficients or unity_gain)", reflect.DeepEqual(got.Words, want.Words)},
		{"hardware (clock or multiplier)", reflect.DeepEqual(got.Hardware, want.Hardware)},
		{"cost.symmetry", got.Cost == want.Cost},
	} {
		if !d.same {
			return nil, fmt.Errorf("--front %q: planned for another spec (its %s differ); plan this spec, or leave --front out to plan it now", shown, d.what)
		}
	}
	// An interpolation plan writes its counts per input sample, under
	// multiplies_per_input (InterpolationKey).
	costKey := "multiplies_per_output"
	front := make([]FrontChain, 0, len(rep.Front))
	for _, c := range rep.Front {
		if c.MultipliesPerInput != nil {
			c.MultipliesPerOutput, costKey = *c.MultipliesPerInput, InterpolationKey(costKey)
		}
		front = append(front, c.FrontChain)
	}
	if err := checkComparedFront(front, costKey); err != nil {
		return nil, fmt.Errorf("--front %q: %v; want the report.json a plan wrote", shown, err)
	}
	return &Comparison{Source: "the plan in " + units.Clip(filepath.Base(path), units.MaxEcho), Front: front}, nil
}

// maxComparedFigure bounds a compared front's multiplies, adders, memory
// bits and latency in seconds, and its inverse bounds them from below
// unless they are 0: far beyond any plan's either way, and far enough
// inside float64's range for the front plot's log axes.
const maxComparedFigure = 1e12

// checkComparedFront refuses a front no plan writes, in report.json's own
// names: a figure negative, not finite or beyond maxComparedFigure (or
// positive below its inverse), a chain named twice, or a
// chain that meets the targets beaten by another that does (BeatenBy:
// on adders where both have them), which the front plot cannot draw.
func checkComparedFront(front []FrontChain, costKey string) error {
	for i, c := range front {
		names := []string{costKey, "memory_bits", "latency_s", "adders"}
		figs := []float64{c.MultipliesPerOutput, float64(c.MemoryBits), c.LatencyS, 0}
		if c.Adders != nil {
			figs[3] = float64(*c.Adders)
		}
		for k, v := range figs {
			if !(v == 0 || v >= 1/maxComparedFigure && v <= maxComparedFigure) {
				return fmt.Errorf("front[%d].%s = %s: out of range (a plan's are 0 or lie between %g and %g)", i, names[k], units.Clip(strconv.FormatFloat(v, 'g', -1, 64), 30), 1/maxComparedFigure, maxComparedFigure)
			}
		}
	}
	seen := make(map[string]int, len(front))
	for i, c := range front {
		if j, ok := seen[c.Notation]; ok {
			return fmt.Errorf("front[%d] (%s) repeats front[%d]: not a plan's front", i, units.Clip(c.Notation, 40), j)
		}
		seen[c.Notation] = i
	}
	chains := make([]Chain, len(front))
	for i, f := range front {
		chains[i] = f.chain()
	}
	for i, c := range chains {
		if !c.MeetsTargets {
			continue
		}
		if by := BeatenBy(c, chains); len(by) > 0 {
			b := chains[by[0].Rank-1]
			axis := "multiplies"
			if c.Adders != nil && b.Adders != nil {
				axis = "adders"
			}
			return fmt.Errorf("front[%d] (%s) is beaten on %s, memory and latency by front[%d] (%s): not a plan's front", i, units.Clip(c.Notation, 40), axis, by[0].Rank-1, units.Clip(b.Notation, 40))
		}
	}
	return nil
}

// chain is f as a Chain of the figures BeatenBy compares.
func (f FrontChain) chain() Chain {
	return Chain{Notation: f.Notation, MultipliesPerOutput: f.MultipliesPerOutput,
		MemoryBits: f.MemoryBits, LatencyS: f.LatencyS, MeetsTargets: f.MeetsTargets, Adders: f.Adders}
}

// comparedReport is what ReadComparison reads of a plan's report.json:
// the front's figures that BeatenBy compares, and what says which plan it
// is. The stages are skipped: decoding their coefficients and rounding
// points took 843 MB for a 48 MB file at the shape bounds (2^24 empty
// strings), measured; skipped, the file itself and the front's summary
// are all that is held.
type comparedReport struct {
	Schema  string `json:"schema"`
	Command string `json:"command"`
	Partial bool   `json:"partial"`
	Spec    Spec   `json:"spec"`
	Front   []struct {
		FrontChain
		MultipliesPerInput *float64 `json:"multiplies_per_input"`
	} `json:"front"`
}
