package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"reflect"
	"runtime"
	"strings"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// Map calls fn(ctx, i) for i in [0, n) on at most workers goroutines and
// returns the results in index order. Each call writes only its own slot,
// so the result does not depend on scheduling. workers < 1 means
// runtime.GOMAXPROCS(0). Once ctx is done, calls not yet started are still
// made (with the done ctx), so that every slot says what happened.
func Map[T any](ctx context.Context, n, workers int, fn func(ctx context.Context, i int) T) []T {
	out := make([]T, n)
	if n == 0 {
		return out
	}
	if workers < 1 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, n)
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				out[i] = fn(ctx, i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		next <- i
	}
	close(next)
	wg.Wait()
	return out
}

// Status says what became of one value.
type Status string

const (
	OK         Status = "ok"         // searched; the front and recommendation are in Report
	Partial    Status = "partial"    // stopped by the time limit (or an interrupt) with a front so far
	Invalid    Status = "invalid"    // the value makes the spec inconsistent
	Infeasible Status = "infeasible" // searched; no chain meets the spec
	Failed     Status = "error"      // the search failed
	Stopped    Status = "stopped"    // the time limit or an interrupt came before any chain
)

// HasChain reports whether the status comes with a recommended chain.
func (s Status) HasChain() bool { return s == OK || s == Partial }

// Result is one value of a sweep, or one cell of a grid.
type Result struct {
	// Value is the swept key's value (in a grid, the first key's: the
	// row's); Column is the second key's value in a grid, zero otherwise.
	Value  float64
	Column float64
	Status Status
	// Detail explains a status other than ok, in one line; for ok, it
	// names the chains taken from other values (borrow) and a recommended
	// chain whose word lengths break a [hardware] limit.
	Detail string
	Spec   *specfile.Spec   // nil when Invalid
	Search *optimize.Result // nil unless the search ran
	Report *report.Report   // nil unless HasChain
}

// Study is a sweep to run.
type Study struct {
	Name string // the spec's name in messages: its path or "built-in example"
	Spec []byte // the spec text
	Vary Vary
	// Columns, when not nil, makes the study a grid (see Grid): every
	// value of Vary (the rows) with every value of Columns, row by row.
	Columns *Vary
	// Settings returns the search settings for one value's spec; nil means
	// the spec's own SearchSettings.
	Settings func(*specfile.Spec) optimize.Settings
	// Workers is how many values run at once: at most runtime.GOMAXPROCS(0),
	// which zero means. Jobs is the total of parallel designs, shared among
	// the values running at once; zero means runtime.GOMAXPROCS(0).
	Workers, Jobs int
	// Plan runs one search; nil means optimize.Plan. Tests substitute it.
	Plan func(context.Context, chain.Spec, optimize.Settings) (*optimize.Result, error)
	// Done, when not nil, is called as values finish (done of total), from
	// one goroutine at a time.
	Done func(done, total int)
}

// cells returns the settings of each run, in the order of the results.
func (st Study) cells() [][]Setting {
	var out [][]Setting
	for _, v := range st.Vary.Values {
		if st.Columns == nil {
			out = append(out, []Setting{{st.Vary.Key, v}})
			continue
		}
		for _, w := range st.Columns.Values {
			out = append(out, []Setting{{st.Vary.Key, v}, {st.Columns.Key, w}})
		}
	}
	return out
}

// Run runs the study, values in parallel, and returns one Result per value
// in the order of the values; for a grid, one per cell, row by row (the
// first key's value outer, the second's inner).
func Run(ctx context.Context, st Study) []Result {
	cells := st.cells()
	n := len(cells)
	// Values beyond the CPUs would only wait, each holding a whole search
	// (--jobs 1024 on a 150-cell grid passed 1 GiB): at most one value
	// per CPU runs at once, whatever Workers asks; the results are the
	// same.
	cpus := runtime.GOMAXPROCS(0)
	workers := st.Workers
	if workers < 1 {
		workers = cpus
	}
	workers = max(1, min(workers, n, cpus))
	jobs := st.Jobs
	if jobs < 1 {
		jobs = runtime.GOMAXPROCS(0)
	}
	perPlan := max(1, jobs/workers)
	plan := st.Plan
	if plan == nil {
		plan = optimize.Plan
	}
	var mu sync.Mutex
	done := 0
	settings := make([]optimize.Settings, n)
	rs := Map(ctx, n, workers, func(ctx context.Context, i int) Result {
		r := runOne(ctx, st, plan, perPlan, cells[i], &settings[i])
		if st.Done != nil {
			mu.Lock()
			done++
			st.Done(done, n)
			mu.Unlock()
		}
		return r
	})
	var notes []string
	if st.Columns == nil {
		notes = borrow(st.Vary, rs, settings)
	}
	// The reports, once every front is final: each value's own, for its
	// own spec (word lengths, bit-true runs, verdicts).
	reps := Map(ctx, n, workers, func(ctx context.Context, i int) error {
		r := &rs[i]
		if !r.Status.HasChain() {
			return nil
		}
		rep, err := report.NewContext(ctx, "plan", r.Spec, r.Search)
		if err != nil {
			return err
		}
		r.Report = rep
		// The time limit or an interrupt may have ended its word lengths
		// (and so its bit-true runs and rounded-taps verdicts), as plan
		// marks its report then: partial.
		if ctx.Err() != nil && r.Status == OK {
			rep.Partial = true
			r.Status, r.Detail = Partial, "stopped by the time limit before every front chain's word lengths were planned"
			if errors.Is(ctx.Err(), context.Canceled) {
				r.Detail = "stopped by an interrupt before every front chain's word lengths were planned"
			}
		}
		return nil
	})
	for i, err := range reps {
		r := &rs[i]
		switch {
		case err != nil:
			r.Status, r.Detail, r.Report = Failed, err.Error(), nil
			continue
		case notes != nil && notes[i] != "" && r.Status == Partial:
			r.Detail += "; " + notes[i]
		case notes != nil && notes[i] != "":
			r.Detail = notes[i]
		}
		if rep := r.Report; rep != nil && rep.Recommended >= 0 && rep.Recommended < len(rep.Front) && len(rep.Front[rep.Recommended].OverLimits) > 0 {
			// The search holds the fabric's limits as built only with a
			// fixed coefficient width; the row says when the recommended
			// chain's word lengths break one.
			note := "the recommended chain breaks a limit as built (over_limits): " + report.OverLimitsText(rep.Front[rep.Recommended], rep.Spec.Hardware)
			if r.Detail != "" {
				note = r.Detail + "; " + note
			}
			r.Detail = note
		}
	}
	return rs
}

// stricter reports, for a key along which a chain that meets a value's
// spec meets every looser value's (rejection: a lower target; ripple: a
// larger budget; max_stages: more stages allowed), whether value a is
// stricter than b; ok is false for the other keys.
func stricter(k Key, a, b float64) (is, ok bool) {
	switch k.Name {
	case "rejection":
		return a > b, true
	case "ripple", "max_stages":
		return a < b, true
	}
	return false, false
}

// borrow adds to each value's front, in a one-key sweep along a key for
// which stricter holds, the front chains of the other values' own searches
// that meet this value's spec: every one of a stricter value's (they meet
// a stricter spec), and, for rejection and ripple, a looser value's whose
// figures meet this one (measured float and, with a fixed width, rounded,
// by the verdict's rule, chain.Analysis.Meets). It returns the note each
// value whose front gained such a chain is to carry in its Detail (nil
// when the key has no such order). A value whose search found no chain
// (Infeasible) becomes OK when it gains one. At a coefficient width near
// the target's own, whether a design's rounded taps meet is all but
// chance: an invented 50 to 2 MS/s receiver with 12-bit taps found no
// chain at 82 dB while the 83 dB search found one that meets 82 dB as
// well, and a 72 to 6 MS/s one at 10 bits recommended 21 to 25 multiplies
// per output at 62, 64, 65, 68 and 70 dB where chains of 15 designed at
// neighbouring values meet. The values' reports are made afterwards, for
// their own specs, so each chain is judged again there.
func borrow(v Vary, rs []Result, settings []optimize.Settings) []string {
	if _, ok := stricter(v.Key, 0, 0); !ok {
		return nil
	}
	byFigures := v.Key.Name == "rejection" || v.Key.Name == "ripple"
	// The fronts of the values' own searches, before any is added to.
	own := make([][]optimize.Candidate, len(rs))
	for j, r := range rs {
		if r.Status == OK && r.Search != nil {
			own[j] = r.Search.Front
		}
	}
	notes := make([]string, len(rs))
	for i := range rs {
		r := &rs[i]
		if (r.Status != OK && r.Status != Infeasible) || r.Search == nil || r.Spec == nil {
			continue
		}
		var add []optimize.Candidate
		from := map[*chain.Chain]float64{} // the value each came from
		for j := range rs {
			s, _ := stricter(v.Key, rs[j].Value, r.Value)
			if j == i || own[j] == nil || !(s || byFigures) {
				continue
			}
			for _, c := range own[j] {
				if !s && !meets(&c, r.Spec.Chain) || holds(r.Search.Front, c.Chain) || holds(add, c.Chain) {
					continue
				}
				c.MarginDB += rs[j].Spec.Chain.RejectionDB - r.Spec.Chain.RejectionDB
				add = append(add, c)
				from[c.Chain] = rs[j].Value
			}
		}
		if len(add) == 0 {
			continue
		}
		res := optimize.WithChains(r.Search, add, settings[i])
		var came []string
		for _, c := range res.Front {
			if f, ok := from[c.Chain]; ok {
				came = append(came, fmt.Sprintf("%s (from %s)", r.Spec.Chain.Direction().Notation(c.Plan), v.Key.Format(f)))
			}
		}
		if len(came) == 0 {
			continue
		}
		note := "the front also holds chains designed at other values of the sweep, which meet this value's spec too: " + strings.Join(came, ", ")
		if r.Status == Infeasible {
			note = "the search at this value found no chain; " + note
		}
		// The value's own report.json says it too, after the reason
		// for the recommendation.
		res.Reason += " " + strings.ToUpper(note[:1]) + note[1:] + "."
		r.Search, r.Status, notes[i] = res, OK, note
	}
	return notes
}

// holds reports whether cs holds a chain designed as ch is: the same stages
// with the same taps (a search at another value that designs a chain to
// the same requirements, as max_stages leaves them, gives the very same).
func holds(cs []optimize.Candidate, ch *chain.Chain) bool {
	for i := range cs {
		if c := cs[i].Chain; c == ch || c != nil && ch != nil && reflect.DeepEqual(c.Stages, ch.Stages) {
			return true
		}
	}
	return false
}

// meets reports whether a designed chain's measured figures meet spec by
// the verdict's rule: the float design's, and with a fixed coefficient
// width its rounded taps' too.
func meets(c *optimize.Candidate, spec chain.Spec) bool {
	if !c.Figures.Analysis.Meets(spec) {
		return false
	}
	if spec.CoefBits > 0 && spec.CoefBits <= fixed.MaxBits {
		return c.Quantised.Meets(spec)
	}
	return true
}

// runOne runs one value's search, with its settings left in set; the
// report of a value with a chain is made by Run once every front is final.
func runOne(ctx context.Context, st Study, plan func(context.Context, chain.Spec, optimize.Settings) (*optimize.Result, error), jobs int, sets []Setting, set *optimize.Settings) Result {
	r := Result{Value: sets[0].Value}
	if len(sets) > 1 {
		r.Column = sets[1].Value
	}
	spec, err := SpecWith(st.Name, st.Spec, sets...)
	if err != nil {
		r.Status, r.Detail = Invalid, specRule(err)
		return r
	}
	r.Spec = spec
	if ctx.Err() != nil {
		r.Status, r.Detail = Stopped, "not run: the sweep was stopped by its time limit or an interrupt"
		return r
	}
	if st.Settings != nil {
		*set = st.Settings(spec)
	} else {
		*set = spec.SearchSettings()
	}
	set.Jobs = jobs
	set.Progress = nil
	res, err := plan(ctx, spec.Chain, *set)
	if err != nil {
		r.Status, r.Detail = Failed, "search: "+err.Error()
		return r
	}
	// A sweep keeps every value's result until its reports are made, and
	// draws no value's cloud of feasible candidates: only their count
	// (FeasibleAll) is kept, so that the memory a value holds is its
	// front's (a 150-cell grid held over 3 GB with them).
	res.FeasibleAll = max(res.FeasibleAll, len(res.Feasible))
	res.Feasible = nil
	r.Search = res
	switch {
	case len(res.Front) == 0 && res.Partial:
		r.Status, r.Detail = Stopped, "stopped by the time limit or an interrupt before any chain was designed"
		return r
	case len(res.Front) == 0:
		r.Status, r.Detail = Infeasible, "no chain meets the spec"
		if res.NeededCoefBits > 0 && res.Reason != "" {
			// The coefficient width is what failed: the search's reason
			// names the width that would do, as plan says it.
			r.Detail = strings.ToLower(res.Reason[:1]) + strings.TrimSuffix(res.Reason[1:], ".")
		} else if c := res.Closest; c != nil {
			r.Detail += "; " + optimize.ClosestText(c, spec.Chain)
		}
		r.Detail += " (" + optimize.DroppedText(res.Dropped, ", ") + ")"
		return r
	}
	r.Status = OK
	if res.Partial {
		r.Status, r.Detail = Partial, "stopped by the time limit; the front is the best found so far"
		if errors.Is(ctx.Err(), context.Canceled) {
			r.Detail = "stopped by an interrupt; the front is the best found so far"
		}
	}
	return r
}

// specRule is a spec error's message without the file name.
func specRule(err error) string {
	var se *specfile.Error
	if errors.As(err, &se) {
		c := *se
		c.File = ""
		s := c.Error()
		if len(s) > 2 && s[:2] == ": " {
			s = s[2:]
		}
		return s
	}
	return err.Error()
}

// Best holds the least of each figure over one value's front (each may come
// from a different chain).
type Best struct {
	Multiplies float64
	MemoryBits int
	LatencyS   float64
	// Multipliers is the least number of hardware multipliers at the
	// clock, -1 when the spec gives no clock.
	Multipliers int
	// Adders is the least number of hardware adders as built, -1 unless
	// the spec is multiplierless.
	Adders int
}

// BestOf returns the per-axis minima over a report's front.
func BestOf(rep *report.Report) Best {
	b := Best{Multiplies: math.Inf(1), MemoryBits: math.MaxInt, LatencyS: math.Inf(1), Multipliers: -1, Adders: -1}
	for _, c := range rep.Front {
		if a := c.Adders; a != nil && (b.Adders < 0 || *a < b.Adders) {
			b.Adders = *a
		}
		if m := c.MultipliersAtClock; m != nil && (b.Multipliers < 0 || *m < b.Multipliers) {
			b.Multipliers = *m
		}
		b.Multiplies = math.Min(b.Multiplies, c.MultipliesPerOutput)
		b.MemoryBits = min(b.MemoryBits, c.MemoryBits)
		b.LatencyS = math.Min(b.LatencyS, c.LatencyS)
	}
	return b
}

// Changes marks, for each result, whether its recommended chain's notation
// differs from that of the previous result that has a chain. The first
// result with a chain is not marked.
func Changes(rs []Result) []bool {
	out := make([]bool, len(rs))
	prev := ""
	for i, r := range rs {
		if !r.Status.HasChain() {
			continue
		}
		n := r.Report.Front[r.Report.Recommended].Notation
		out[i] = prev != "" && n != prev
		prev = n
	}
	return out
}
