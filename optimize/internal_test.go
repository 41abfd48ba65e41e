package optimize

import (
	"context"
	"fmt"
	"hash/fnv"
	"math"
	"math/rand"
	"os"
	"reflect"
	"runtime"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cost"
)

// rxSpec is an invented receiver: 122.88 MHz to 30 kHz (D = 4096), a 10 kHz
// channel, 90 dB rejection, 0.1 dB ripple.
func rxSpec() chain.Spec {
	return chain.Spec{
		InputRate: 122.88e6, OutputRate: 30e3, Passband: 10e3,
		RippleDB: 0.1, RejectionDB: 90, InputBits: 16, OutputBits: 24,
	}
}

func TestDivisors(t *testing.T) {
	for _, c := range []struct {
		n    int
		want []int
	}{
		{1, nil}, {2, []int{2}}, {7, []int{7}}, {12, []int{2, 3, 4, 6, 12}},
		{36, []int{2, 3, 4, 6, 9, 12, 18, 36}}, {100, []int{2, 4, 5, 10, 20, 25, 50, 100}},
	} {
		if got := divisors(c.n); !reflect.DeepEqual(got, c.want) {
			t.Errorf("divisors(%d) = %v, want %v", c.n, got, c.want)
		}
	}
}

// TestOrderedFactorisations counts plain ordered factorisations (one kind,
// one layout). Expected counts: the number of ordered factorisations H(n)
// (Kalmar's function; H(12) = 8, H(36) = 26, H(p) = 1 for prime p, from
// memory), and for n = 2^k the compositions of k, of which those with at
// most s parts number sum_{j<s} C(k-1, j) (common practice: stars and bars).
func TestOrderedFactorisations(t *testing.T) {
	binomSum := func(k, s int) int64 {
		var t, c int64 = 0, 1
		for j := 0; j < s && j <= k-1; j++ {
			t += c
			c = c * int64(k-1-j) / int64(j+1)
		}
		return t
	}
	for _, c := range []struct {
		d, stages int
		want      int64
	}{
		{12, 6, 8}, {36, 8, 26}, {7, 6, 1}, {1021, 6, 1}, {1, 6, 1},
		{4096, 6, binomSum(12, 6)}, {4096, 12, 2048}, {1 << 20, 6, binomSum(20, 6)},
	} {
		sp := &space{d: c.d, maxStages: c.stages, fir: true, sameLayout: func(int, int) bool { return true }}
		if got := sp.count(); got != c.want {
			t.Errorf("D = %d, %d stages: count %d, want %d", c.d, c.stages, got, c.want)
		}
		if c.want > 1e5 {
			continue
		}
		var walked int64
		seen := map[string]bool{}
		sp.walk(func(plan []chain.StagePlan) bool {
			walked++
			prod := 1
			for _, s := range plan {
				prod *= s.Factor
			}
			if prod != c.d || len(plan) > c.stages {
				t.Fatalf("D = %d: bad plan %v", c.d, plan)
			}
			key := fmt.Sprint(plan)
			if seen[key] {
				t.Fatalf("D = %d: plan %v twice", c.d, plan)
			}
			seen[key] = true
			return true
		})
		if walked != c.want {
			t.Errorf("D = %d: walked %d, want %d", c.d, walked, c.want)
		}
	}
}

func TestWalkKinds(t *testing.T) {
	p := newParams(rxSpec(), false)
	p.d = 24
	sp := newSpace(&p, &Settings{MaxStages: 4})
	var walked int64
	orders := map[string]bool{}
	sp.walk(func(plan []chain.StagePlan) bool {
		walked++
		var fs []int
		for i, s := range plan {
			fs = append(fs, s.Factor)
			if s.Kind == chain.CIC && i != 0 {
				t.Fatalf("CIC at stage %d: %v", i, plan)
			}
			if s.Kind == chain.HalfBand && s.Factor != 2 {
				t.Fatalf("half-band of factor %d: %v", s.Factor, plan)
			}
			if s.Kind == chain.FIR && s.Variant == chain.Lowpass && s.Factor == 2 {
				t.Fatalf("lowpass layout tried for factor 2: %v", plan)
			}
		}
		orders[fmt.Sprint(fs)] = true
		return true
	})
	if walked != sp.count() {
		t.Errorf("walked %d, count %d", walked, sp.count())
	}
	for _, want := range []string{"[2 3 4]", "[4 3 2]", "[3 2 4]", "[2 2 2 3]", "[3 2 2 2]", "[24]"} {
		if !orders[want] {
			t.Errorf("factor order %s never enumerated", want)
		}
	}
}

// TestHerrmann checks the estimate against the values computed from the
// published formula (Herrmann, Rabiner and Chan 1973; docs/design.md §11):
// D(0.01, 0.001) = 2.54119, f = 11.52461, so N = D/df - f df + 1.
func TestHerrmann(t *testing.T) {
	for _, c := range []struct{ dp, ds, d float64 }{
		{0.01, 0.001, 2.54119}, {0.005, 0.001, 2.76021}, {0.01, 1e-4, 3.13834},
		{0.01, 0.01, 1.94405}, {1e-4, 1e-4, 4.60890},
	} {
		// At df = 1 minus at df = 1/2 isolates D: n(1)-... solve the two.
		n1, n2 := herrmann(c.dp, c.ds, 0.1), herrmann(c.dp, c.ds, 0.05)
		// n = D/df - f df + 1 at two df gives D = (n2 - n1 - 0.05 f) / 10 ... use f from the paper form.
		f := 11.01217 + 0.51244*(math.Log10(math.Max(c.dp, c.ds))-math.Log10(math.Min(c.dp, c.ds)))
		d := (n2 - n1 - f*0.05) / 10
		if math.Abs(d-c.d) > 5e-5 {
			t.Errorf("D(%g, %g) = %.5f, want %.5f", c.dp, c.ds, d, c.d)
		}
	}
}

// TestCICRejection checks the estimator's CIC rejection against Hogenauer's
// large-R alias attenuation per order, 20 log10((1-b)/b) with b = fa over
// the CIC output rate (computed values, docs/design.md §11: b = 1/16: 23.52 dB,
// 1/8: 16.90 dB per order).
func TestCICRejection(t *testing.T) {
	for _, c := range []struct {
		b, perOrder float64
	}{{1.0 / 16, 23.52}, {1.0 / 8, 16.90}, {1.0 / 32, 29.83}} {
		p := params{f0: 1e6 * 64, fk: 1e6 / 2, fa: c.b * 1e6, fp: c.b * 1e6}
		p.fs = p.fk - p.fa
		p.d = 128
		for n := 1; n <= 5; n++ {
			got := cicRejection(&p, p.f0, 64, n, 1, false)
			want := float64(n) * c.perOrder
			// large-R form versus R = 64, relative to the passband edge gain
			// in Hogenauer's table but to DC here: within 0.1 dB per order.
			edge := -20 * math.Log10(cicGain(p.fa, p.f0, 64, n, 1))
			if math.Abs(got-edge-want) > 0.05*float64(n) {
				t.Errorf("b = %g, N = %d: rejection %.2f dB (%.2f from the edge), want %.2f", c.b, n, got, got-edge, want)
			}
		}
	}
}

// A stopped context ends a CIC's walk over its alias bands (up to R/2 of
// them: seconds for an order-1 CIC decimating by 2^20) with no figure, and
// the estimator keeps none; the plan itself then returns at once, partial.
func TestCICRejectionStops(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	p := params{f0: 1 << 30, fk: 1, fa: 0.3, fp: 0.3, fs: 0.7, d: 1 << 30, rejDB: 80, ctx: ctx}
	if v := cicRejection(&p, p.f0, 1<<20, 1, 1, false); !math.IsNaN(v) {
		t.Errorf("stopped: rejection %v, want no figure (NaN)", v)
	}
	e := newEstimator(p, 0)
	e.cicMargin(1<<20, 1, 1)
	if len(e.margins) != 0 {
		t.Errorf("a stopped walk's margin was cached: %v", e.margins)
	}
	spec := chain.Spec{InputRate: 1 << 30, OutputRate: 1, Passband: 0.3, RippleDB: 0.1, RejectionDB: 80}
	res, err := Plan(ctx, spec, Settings{MaxStages: 3})
	if err != nil || !res.Partial {
		t.Errorf("a stopped plan: err %v, partial %v", err, res != nil && res.Partial)
	}
}

func TestFrontSet(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	fs := make([]figs, 600)
	for i := range fs {
		fs[i] = figs{mpo: float64(rng.Intn(40)), bits: float64(rng.Intn(40)), lat: float64(rng.Intn(40)), margin: float64(rng.Intn(3))}
	}
	got := front(fs)
	sort.Ints(got)
	var want []int
	for i := range fs {
		dom := false
		for j := range fs {
			if dominates(&fs[j], &fs[i]) {
				dom = true
				break
			}
		}
		if !dom {
			want = append(want, i)
		}
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("front %v, brute force %v", got, want)
	}
	var s frontSet
	for _, i := range want {
		s.add(fs[i], i)
	}
	for _, i := range want {
		if sl := s.slack(&fs[i]); sl > 1 {
			t.Errorf("front point %d has slack %g > 1", i, sl)
		}
	}
	// A point 20% worse than a front point on every axis has slack >= 1.2.
	q := fs[want[0]]
	q.mpo, q.bits, q.lat = 1.2*(q.mpo+axisFloor[0])-axisFloor[0], 1.2*(q.bits+axisFloor[1])-axisFloor[1], 1.2*(q.lat+axisFloor[2])-axisFloor[2]
	if sl := s.slack(&q); sl < 1.2-1e-12 {
		t.Errorf("slack of a point 20%% behind = %g", sl)
	}
}

func TestRecommend(t *testing.T) {
	fs := []figs{
		{mpo: 100, bits: 10000, lat: 1e-3},
		{mpo: 112, bits: 6000, lat: 1e-3},
		{mpo: 300, bits: 5000, lat: 0.9e-3},
	}
	i, why := recommend(fs, &Settings{}, false)
	if i != 1 {
		t.Errorf("knee = %d, want 1 (%s)", i, why)
	}
	t.Log(why)
	if want := "12% more multiplies than the cheapest chain, for 40% less memory and the same latency."; !contains(why, want) {
		t.Errorf("reason %q lacks %q", why, want)
	}
	i, why = recommend(fs, &Settings{Rule: WeightedCost, WeightMultiplies: 0.01, WeightLatency: 10}, false)
	if i != 2 {
		t.Errorf("weighted = %d, want 2 (%s)", i, why)
	}
	if i, _ := recommend(nil, &Settings{}, false); i != -1 {
		t.Errorf("empty front: %d", i)
	}
	// A CIC-only chain with no multiplies must not give NaN.
	i, why = recommend([]figs{{mpo: 0, bits: 100, lat: 1}, {mpo: 3, bits: 50, lat: 1}}, &Settings{}, false)
	if i < 0 || contains(why, "NaN") || contains(why, "Inf") {
		t.Errorf("zero multiplies: %d %q", i, why)
	}
}

func contains(s, sub string) bool {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return true
		}
	}
	return false
}

func TestRunAll(t *testing.T) {
	out := make([]int, 1000)
	calls := 0
	done := runAll(context.Background(), 4, len(out), func(i int) { out[i] = i * i }, func(d, n int) {
		calls++
		if d != calls || n != 1000 {
			t.Errorf("progress(%d, %d) at call %d", d, n, calls)
		}
	})
	for i := range out {
		if !done[i] || out[i] != i*i {
			t.Fatalf("slot %d: %v %d", i, done[i], out[i])
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	done = runAll(ctx, 2, 100, func(i int) {
		if i == 10 {
			cancel()
		}
		if i > 10 {
			// No later call ends before the cancel: the other worker
			// cannot run through them all while the cancelling call
			// waits to be scheduled.
			<-ctx.Done()
		}
	}, nil)
	n := 0
	for _, d := range done {
		if d {
			n++
		}
	}
	// Calls 0 to 9 started before the one that cancels; that one, and the
	// one running beside it on the other worker, may be abandoned (see
	// runUnit), so at least 9 finished.
	if n == 100 || n < 9 {
		t.Errorf("after cancel at 10, %d of 100 ran", n)
	}
}

// TestRunApart: every call runs once whatever the keys and the number of
// workers, and a call that shares a stage with a running one waits while
// another is free to run.
func TestRunApart(t *testing.T) {
	rng := rand.New(rand.NewSource(7))
	for _, jobs := range []int{1, 2, 3, 8} {
		const n = 300
		keys := make([][]realKey, n)
		for i := range keys {
			for range rng.Intn(4) {
				keys[i] = append(keys[i], realKey{stageKey: stageKey{factor: int32(rng.Intn(20))}})
			}
		}
		var mu sync.Mutex
		runs := make([]int, n)
		done := runApart(context.Background(), jobs, n, keys, func(i int) {
			mu.Lock()
			runs[i]++
			mu.Unlock()
		}, nil)
		for i := range runs {
			if !done[i] || runs[i] != 1 {
				t.Fatalf("jobs %d: call %d done %v, ran %d times", jobs, i, done[i], runs[i])
			}
		}
	}
	// Calls 0 and 1 share stage a, call 2 has b: with two workers, 2 runs
	// beside 0 (which holds until 2 has started), not 1. Once nothing else
	// is left, 1 runs (its stage then comes from 0's design).
	a := realKey{stageKey: stageKey{factor: 1}}
	b := realKey{stageKey: stageKey{factor: 2}}
	started2 := make(chan struct{})
	done := runApart(context.Background(), 2, 3, [][]realKey{{a}, {a}, {b}}, func(i int) {
		switch i {
		case 0:
			<-started2
		case 1:
			select {
			case <-started2:
			default:
				t.Error("call 1 ran before call 2, beside call 0, which designs the same stage")
			}
		case 2:
			close(started2)
		}
	}, nil)
	if !done[0] || !done[1] || !done[2] {
		t.Errorf("done %v", done)
	}
}

// fakeDesigner stands in for chain.Design and cost.Evaluate: each stage's
// real figures are its estimate moved by a deterministic +-8% that depends
// only on the stage's estimate key, and a compensator's grow slightly with
// the droop it corrects; a stage in 41 fails to design, and a chain in 37
// misses the spec as a whole. CIC figures are exact.
type fakeDesigner struct {
	p params
}

// fakeSalt varies the fake's pseudo-random draws (zero: unsalted).
var fakeSalt uint32

func hashOf(v any) uint32 {
	h := fnv.New32a()
	if fakeSalt != 0 {
		fmt.Fprintf(h, "%d ", fakeSalt)
	}
	fmt.Fprintf(h, "%#v", v)
	return h.Sum32()
}

func (f fakeDesigner) design(plan []chain.StagePlan) (Candidate, Reason) {
	est := newEstimator(f.p, 0) // its own: the estimator is not shared across goroutines
	est.keepBeaten = true
	if _, drop := est.score(plan); drop != dropNone {
		panic("fake design of an infeasible plan")
	}
	var total cost.Figures
	for _, k := range est.keys {
		if hashOf(k.stageKey)%41 == 0 {
			return Candidate{}, ReasonDesignFailed
		}
		// A real stage's length does not depend on the width of the data
		// it filters (its memory does, through the estimate), so the draw
		// leaves that width out; otherwise two chains differing only in the
		// CIC before a stage would draw unrelated lengths for it, against
		// the search's assumption that a compensator correcting less droop
		// is no longer.
		bare := k.stageKey
		bare.inBits = 0
		h := hashOf(bare)
		v := est.cache[k.stageKey]
		// A compensator grows with the droop it corrects (about 1% a dB).
		c := 1.0
		if k.comp {
			st := plan[0]
			c -= 0.01 * 20 * math.Log10(cicGain(f.p.fp, f.p.f0, st.Factor, st.CICOrder, st.CICDelay))
		}
		w := func(s uint32) float64 { return c * (1 + 0.08*(float64((h>>s)%201)/100-1)) }
		if k.kind == int8(chain.CIC) {
			w = func(uint32) float64 { return 1 } // exact, as a real CIC's
		}
		st := cost.StageFigures{MultipliesPerOutput: v.f.mpo * w(0), MemoryBits: int(v.f.bits * w(8)), LatencyS: v.f.lat * w(16)}
		total.Stages = append(total.Stages, st)
		total.MultipliesPerOutput += st.MultipliesPerOutput
		total.MemoryBits += st.MemoryBits
		total.LatencyS += st.LatencyS
	}
	total.Designed = true
	return Candidate{Plan: clonePlan(plan), Figures: total}, ""
}

func (f fakeDesigner) analyze(c Candidate) (Candidate, Reason) {
	// Whether the cascade misses does not hang on the CIC's order and delay
	// (the search assumes a CIC with less droop is no harder to follow).
	bare := clonePlan(c.Plan)
	bare[0].CICOrder, bare[0].CICDelay = 0, 0
	h := hashOf(bare)
	if h%37 == 0 {
		return Candidate{}, ReasonMissRejection
	}
	c.MarginDB = float64(h%7) / 10
	return c, ""
}

func fakeSearch(t testing.TB, p params, s Settings) *Result {
	est := newEstimator(p, 0)
	r, err := search(context.Background(), p, &s, est, fakeDesigner{p})
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func rxParams(d int) params {
	spec := rxSpec()
	spec.InputRate = spec.OutputRate * float64(d)
	return newParams(spec, false)
}

func TestSearchFake(t *testing.T) {
	p := rxParams(4096)
	r := fakeSearch(t, p, Settings{})
	est := 0
	for _, n := range r.Dropped {
		est += n
	}
	designDrops := r.Dropped[ReasonDesignFailed] + r.Dropped[ReasonMissRejection]
	if r.Candidates != est-designDrops+r.FeasibleAll {
		t.Errorf("candidates %d != estimate drops %d + feasible %d", r.Candidates, est-designDrops, r.FeasibleAll)
	}
	if len(r.Front) == 0 || r.Recommended < 0 || r.Designed == 0 {
		t.Fatalf("empty result: %+v", r.Dropped)
	}
	if len(r.Feasible) > CloudSize {
		t.Errorf("cloud of %d", len(r.Feasible))
	}
	for _, c := range r.Front {
		if !c.Figures.Designed {
			t.Errorf("estimate on the front: %v", c.Plan)
		}
	}
	t.Logf("candidates %d, feasible %d, designed %d, front %d, dropped %v", r.Candidates, r.FeasibleAll, r.Designed, len(r.Front), r.Dropped)
	t.Log(r.Reason)
}

// TestTwoTierExactFake: with design figures within +-8% of the estimates,
// the 15% band must give the exhaustive front exactly.
func TestTwoTierExactFake(t *testing.T) {
	p := rxParams(120)
	two := fakeSearch(t, p, Settings{MaxDesigns: 2000, MaxWork: 1e15})
	all := fakeSearch(t, p, Settings{Exhaustive: true})
	if two.Unsettled != 0 {
		t.Errorf("%d unsettled", two.Unsettled)
	}
	if !reflect.DeepEqual(two.Front, all.Front) {
		for _, c := range two.Front {
			t.Logf("two %v %.1f %d %.3g", c.Plan, c.Figures.MultipliesPerOutput, c.Figures.MemoryBits, c.Figures.LatencyS)
		}
		for _, c := range all.Front {
			t.Logf("all %v %.1f %d %.3g", c.Plan, c.Figures.MultipliesPerOutput, c.Figures.MemoryBits, c.Figures.LatencyS)
		}
		t.Errorf("two-tier front (%d, from %d designs) differs from exhaustive (%d, from %d)", len(two.Front), two.Designed, len(all.Front), all.Designed)
	}
	t.Logf("front %d chains; designs %d two-tier vs %d exhaustive", len(two.Front), two.Designed, all.Designed)
}

// TestTwoTierExactFakeSalted repeats TestTwoTierExactFake with other
// draws of the fake, each failing other designs: exactness must not hang
// on one draw.
func TestTwoTierExactFakeSalted(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("2 s: STEPDOWN_LONG (CI's long step)")
	}
	defer func() { fakeSalt = 0 }()
	for _, c := range []struct {
		salt uint32
		d    int
	}{{1, 120}, {2, 96}, {7, 180}, {11, 96}} {
		fakeSalt = c.salt
		p := rxParams(c.d)
		two := fakeSearch(t, p, Settings{MaxDesigns: 4000, MaxWork: 1e15})
		all := fakeSearch(t, p, Settings{Exhaustive: true})
		if two.Unsettled != 0 || !reflect.DeepEqual(two.Front, all.Front) {
			t.Errorf("salt %d, D = %d: two-tier front (%d, from %d designs, %d unsettled) differs from exhaustive (%d, from %d)",
				c.salt, c.d, len(two.Front), two.Designed, two.Unsettled, len(all.Front), all.Designed)
		}
	}
}

func TestSearchDeterministicJobs(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	p := rxParams(960)
	a := fakeSearch(t, p, Settings{Jobs: 1})
	b := fakeSearch(t, p, Settings{Jobs: 3})
	if fmt.Sprintf("%#v", a) != fmt.Sprintf("%#v", b) {
		t.Error("results differ between 1 and 3 jobs")
	}
}

func TestSearchRefuses(t *testing.T) {
	p := rxParams(1 << 20)
	est := newEstimator(p, 0)
	_, err := search(context.Background(), p, &Settings{MaxStages: 20}, est, fakeDesigner{p})
	if err == nil {
		t.Fatal("2^20 in 20 stages accepted")
	}
	t.Log(err)
}

func TestSearchCancelled(t *testing.T) {
	p := rxParams(4096)
	est := newEstimator(p, 0)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	r, err := search(ctx, p, &Settings{}, est, fakeDesigner{p})
	if err != nil || !r.Partial {
		t.Fatalf("cancelled search: %v, partial %v", err, r != nil && r.Partial)
	}
}

func TestPrimeOneStage(t *testing.T) {
	p := rxParams(7)
	r := fakeSearch(t, p, Settings{})
	for _, c := range r.Front {
		if len(c.Plan) != 1 || c.Plan[0].Factor != 7 {
			t.Errorf("prime D gave %v", c.Plan)
		}
	}
	if len(r.Front) == 0 {
		t.Error("no front for D = 7")
	}
}

func init() {
	if os.Getenv("OPT_DEBUG") != "" {
		debugf = func(f string, a ...any) { fmt.Fprintf(os.Stderr, f+"\n", a...) }
	}
}

// Every drop reason has a stable snake_case name (report.json's key),
// unique, and a text in words that differs from it.
func TestReasons(t *testing.T) {
	seen := map[Reason]bool{}
	for _, r := range Reasons() {
		if seen[r] {
			t.Errorf("%q listed twice", r)
		}
		seen[r] = true
		for _, c := range string(r) {
			if !(c >= 'a' && c <= 'z' || c >= '0' && c <= '9' || c == '_') {
				t.Errorf("%q: name not lower snake_case", r)
				break
			}
		}
		if txt := r.Text(); txt == string(r) || txt == "" {
			t.Errorf("%q has no text", r)
		}
	}
	if len(seen) != len(reasonText) {
		t.Errorf("Reasons lists %d, reasonText has %d", len(seen), len(reasonText))
	}
	for _, r := range dropNames {
		if r != "" && !seen[r] {
			t.Errorf("estimate-tier reason %q not in Reasons()", r)
		}
	}
	if got := DroppedText(map[Reason]int{ReasonLongFIR: 3, ReasonCICRejection: 2}, ", "); got != "cic rejection below target: 2, fir stage over the tap limit: 3" {
		t.Errorf("DroppedText = %q", got)
	}
}

// The estimate tier walks its first stages on Settings.Jobs goroutines
// and merges them in walk order: the result (front, cloud, counts and
// drops) is the same as one goroutine's, on ratios with few and many
// first stages, with and without cancelled designs (fakeDesigner fails
// some chains, so later passes run with taken-back chains).
func TestEstimateTierJobs(t *testing.T) {
	for _, d := range []int{2, 12, 96, 180, 1024} {
		p := rxParams(d)
		want := fakeSearch(t, p, Settings{Jobs: 1})
		for _, jobs := range []int{3} {
			got := fakeSearch(t, p, Settings{Jobs: jobs})
			if got.Candidates != want.Candidates || got.FeasibleAll != want.FeasibleAll || got.Designed != want.Designed ||
				!reflect.DeepEqual(got.Dropped, want.Dropped) || len(got.Feasible) != len(want.Feasible) || len(got.Front) != len(want.Front) {
				t.Fatalf("D = %d, jobs %d: candidates %d/%d, feasible %d/%d, designed %d/%d, cloud %d/%d, front %d/%d, dropped %v / %v",
					d, jobs, got.Candidates, want.Candidates, got.FeasibleAll, want.FeasibleAll, got.Designed, want.Designed,
					len(got.Feasible), len(want.Feasible), len(got.Front), len(want.Front), got.Dropped, want.Dropped)
			}
			for i := range got.Feasible {
				if comparePlans(got.Feasible[i].Plan, want.Feasible[i].Plan) != 0 || got.Feasible[i].Figures.MultipliesPerOutput != want.Feasible[i].Figures.MultipliesPerOutput {
					t.Fatalf("D = %d, jobs %d: cloud member %d is %v, want %v", d, jobs, i, got.Feasible[i].Plan, want.Feasible[i].Plan)
				}
			}
			for i := range got.Front {
				if comparePlans(got.Front[i].Plan, want.Front[i].Plan) != 0 {
					t.Fatalf("D = %d, jobs %d: front member %d is %v, want %v", d, jobs, i, got.Front[i].Plan, want.Front[i].Plan)
				}
			}
		}
	}
}

// A search too large to score is refused naming the most stages that fit:
// that many fit (counted as the search counts) and one more does not, for
// invented ratios and settings; it is found at once.
func TestTooLargeNamesTheStagesThatFit(t *testing.T) {
	cases := []struct {
		d, stages int
		s         Settings
		fit       int
	}{
		{d: 1 << 30, stages: 6, fit: 5},
		{d: 1 << 20, stages: 12, s: Settings{CICOrders: []int{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, CICDelays: []int{1, 2, 3, 4}}, fit: 5},
		{d: 1 << 24, stages: 12, s: Settings{Kinds: []chain.Kind{chain.HalfBand, chain.FIR}}}, // no CIC: the fit by brute force alone
	}
	for _, c := range cases {
		s := c.s
		s.MaxStages = c.stages
		p := params{f0: float64(c.d), fk: 1, fa: 0.3, fp: 0.3, fs: 0.7, d: c.d, rejDB: 80}
		sp := newSpace(&p, &s)
		n := sp.count()
		if n <= MaxCandidates {
			t.Fatalf("D = %d within %d stages: %d candidates, not too many", c.d, c.stages, n)
		}
		count := func(m int) int64 {
			t := *sp
			t.maxStages, t.memo = m, nil
			return t.count()
		}
		want := 0
		for m := 1; m < c.stages; m++ {
			if count(m) <= MaxCandidates {
				want = m
			}
		}
		if c.fit != 0 && want != c.fit {
			t.Errorf("D = %d: %d stages fit by brute force, want %d", c.d, want, c.fit)
		}
		msg := tooLarge(sp, n).Error()
		if frag := fmt.Sprintf("MaxStages = %d is the most that fits (%d candidates)", want, count(want)); !strings.Contains(msg, frag) {
			t.Errorf("D = %d: %q lacks %q", c.d, msg, frag)
		}
		if count(want+1) <= MaxCandidates {
			t.Errorf("D = %d: %d stages fit too", c.d, want+1)
		}
	}
}

// A stage's factor stays within chain.MaxStageFactor (2^20), which Design
// refuses above: D = 2^30 over at most s stages has as many candidates
// (one kind a stage) as there are compositions of 30 into at most s parts
// of at most 20, counted here by brute force over the exponents, and the
// walk gives each once with no factor above 2^20. A larger factor used to
// be enumerated, spend the design budget and fail every design.
func TestStageFactorLimit(t *testing.T) {
	for _, stages := range []int{1, 2, 3, 4} {
		var want int64
		var rec func(left, parts int)
		rec = func(left, parts int) {
			if left == 0 {
				want++
				return
			}
			if parts == stages {
				return
			}
			for a := 1; a <= 20 && a <= left; a++ {
				rec(left-a, parts+1)
			}
		}
		rec(30, 0)
		sp := &space{d: 1 << 30, maxStages: stages, fir: true, sameLayout: func(int, int) bool { return true }}
		if got := sp.count(); got != want {
			t.Errorf("D = 2^30, %d stages: count %d, want %d", stages, got, want)
		}
		var walked int64
		sp.walk(func(plan []chain.StagePlan) bool {
			walked++
			for _, s := range plan {
				if s.Factor > chain.MaxStageFactor {
					t.Fatalf("D = 2^30: stage factor %d in %v", s.Factor, plan)
				}
			}
			return true
		})
		if walked != want {
			t.Errorf("D = 2^30, %d stages: walked %d, want %d", stages, walked, want)
		}
	}
}

// runJobs: Settings.Jobs, or the CPUs for 0, and never more than
// maxJobsPerCPU per CPU (designs beyond only wait, holding memory).
func TestRunJobs(t *testing.T) {
	cpus := runtime.GOMAXPROCS(0)
	for _, tc := range []struct{ in, want int }{{0, cpus}, {1, 1}, {cpus, cpus}, {1024, min(1024, maxJobsPerCPU*cpus)}} {
		if got := runJobs(tc.in); got != tc.want {
			t.Errorf("runJobs(%d) = %d, want %d", tc.in, got, tc.want)
		}
	}
}

// withMeasureReserve: a search under a deadline designs until
// min(measureReserve, measureReserveShare of the time left) before it, and
// keeps the caller's context for salvage; without a deadline it is the
// caller's context, and a search inside a search reserves nothing again.
func TestWithMeasureReserve(t *testing.T) {
	bg := context.Background()
	if c, cancel := withMeasureReserve(bg); c != bg || measureOuter(c) != nil {
		t.Errorf("no deadline: a new context")
	} else {
		cancel()
	}
	for _, left := range []time.Duration{2 * time.Second, 60 * time.Second} {
		outer, cancelOuter := context.WithTimeout(bg, left)
		d, _ := outer.Deadline()
		inner, cancel := withMeasureReserve(outer)
		di, ok := inner.Deadline()
		// The share is of the time left when it is called, a moment after
		// the deadline was set: bounds a second apart.
		want := min(measureReserve, time.Duration(measureReserveShare*float64(left)))
		least := min(measureReserve, time.Duration(measureReserveShare*float64(left-time.Second)))
		if got := d.Sub(di); !ok || got < least || got > want || measureOuter(inner) != outer {
			t.Errorf("%v left: the search ends %v before the deadline, want %v; outer kept %v", left, got, want, measureOuter(inner) == outer)
		}
		if again, c2 := withMeasureReserve(inner); again != inner {
			t.Errorf("%v left: a nested search reserved again", left)
		} else {
			c2()
		}
		cancel()
		cancelOuter()
	}
}
