package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain"
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
	Partial    Status = "partial"    // stopped by the time limit with a front so far
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
	// Detail explains a status other than ok, in one line.
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
	// Workers is how many values run at once; zero means
	// runtime.GOMAXPROCS(0). Jobs is the total of parallel designs, shared
	// among the values running at once; zero means runtime.GOMAXPROCS(0).
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
	workers := st.Workers
	if workers < 1 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, n))
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
	rs := Map(ctx, n, workers, func(ctx context.Context, i int) Result {
		r := runOne(ctx, st, plan, perPlan, cells[i])
		if st.Done != nil {
			mu.Lock()
			done++
			st.Done(done, n)
			mu.Unlock()
		}
		return r
	})
	if st.Columns == nil {
		borrow(ctx, st.Vary, rs)
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

// borrow fills each value of a one-key sweep whose search found no chain
// (Infeasible) with the chain recommended at the nearest stricter value
// that has one, where the key is one along which that chain meets this
// value's spec too (stricter): at a coefficient width near the target's
// own, whether a design's rounded taps meet is all but chance, and the
// search at 82 dB could find none where the 83 dB one found a chain that
// meets 82 dB as well. The value's report is built anew for its own spec
// (word lengths, bit-true run, verdict), and the chain is kept only if it
// meets there; its Detail says where it came from, and its Search keeps
// what the value's own search did.
func borrow(ctx context.Context, v Vary, rs []Result) {
	if _, ok := stricter(v.Key, 0, 0); !ok {
		return
	}
	for i := range rs {
		r := &rs[i]
		if ctx.Err() != nil {
			return
		}
		if r.Status != Infeasible || r.Search == nil || r.Spec == nil {
			continue
		}
		from := -1
		for j := range rs {
			if s, _ := stricter(v.Key, rs[j].Value, r.Value); !s || rs[j].Status != OK || rs[j].Detail != "" {
				continue
			}
			if from < 0 || math.Abs(rs[j].Value-r.Value) < math.Abs(rs[from].Value-r.Value) {
				from = j
			}
		}
		if from < 0 {
			continue
		}
		src := rs[from]
		c := src.Search.Front[src.Search.Recommended]
		c.MarginDB += src.Spec.Chain.RejectionDB - r.Spec.Chain.RejectionDB
		res := *r.Search
		res.Front, res.Recommended = []optimize.Candidate{c}, 0
		detail := fmt.Sprintf("the search at this value found no chain; %s, recommended at %s, meets this value's spec too", chain.Notation(c.Plan), v.Key.Format(src.Value))
		res.Reason = strings.ToUpper(detail[:1]) + detail[1:] + "."
		rep, err := report.NewContext(ctx, "plan", r.Spec, &res)
		if err != nil || !rep.Front[0].MeetsTargets {
			continue
		}
		r.Search, r.Report, r.Status, r.Detail = &res, rep, OK, detail
	}
}

func runOne(ctx context.Context, st Study, plan func(context.Context, chain.Spec, optimize.Settings) (*optimize.Result, error), jobs int, sets []Setting) Result {
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
	var set optimize.Settings
	if st.Settings != nil {
		set = st.Settings(spec)
	} else {
		set = spec.SearchSettings()
	}
	set.Jobs = jobs
	set.Progress = nil
	res, err := plan(ctx, spec.Chain, set)
	if err != nil {
		r.Status, r.Detail = Failed, "search: "+err.Error()
		return r
	}
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
	rep, err := report.NewContext(ctx, "plan", spec, res)
	if err != nil {
		r.Status, r.Detail = Failed, err.Error()
		return r
	}
	r.Report = rep
	r.Status = OK
	if res.Partial {
		r.Status, r.Detail = Partial, "stopped by the time limit; the front is the best found so far"
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
