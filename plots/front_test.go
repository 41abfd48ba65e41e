package plots

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// bruteStaircase is the non-dominated set on multiplies and memory by
// its definition: no other point has no more of both and less of one.
func bruteStaircase(pts []Point) []bool {
	on := make([]bool, len(pts))
	for i, p := range pts {
		on[i] = true
		for j, q := range pts {
			if j != i && q.Multiplies <= p.Multiplies && q.MemoryBits <= p.MemoryBits &&
				(q.Multiplies < p.Multiplies || q.MemoryBits < p.MemoryBits) {
				on[i] = false
				break
			}
		}
	}
	return on
}

// bruteFront keeps the points no other dominates on all three axes.
func bruteFront(pts []Point) []Point {
	var out []Point
	for i, p := range pts {
		beaten := false
		for j, q := range pts {
			if j != i && q.Multiplies <= p.Multiplies && q.MemoryBits <= p.MemoryBits && q.LatencyS <= p.LatencyS &&
				(q.Multiplies < p.Multiplies || q.MemoryBits < p.MemoryBits || q.LatencyS < p.LatencyS) {
				beaten = true
				break
			}
		}
		if !beaten {
			out = append(out, p)
		}
	}
	return out
}

func TestStaircaseIsTheNonDominatedSet(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	for trial := range 3000 {
		n := 1 + r.IntN(30)
		// Few distinct values, so that ties and repeats are common.
		levels := 2 + r.IntN(12)
		pts := make([]Point, n)
		for i := range pts {
			pts[i] = Point{Multiplies: float64(r.IntN(levels)), MemoryBits: float64(r.IntN(levels))}
		}
		got, want := onStaircase(pts), bruteStaircase(pts)
		for i := range pts {
			if got[i] != want[i] {
				t.Fatalf("trial %d: point %d %v: onStaircase %v, brute force %v (points %v)", trial, i, pts[i], got[i], want[i], pts)
			}
		}
	}
}

// The staircase joins its points in order by steps that never rise and
// never go left, passing through every point.
func TestStaircaseLine(t *testing.T) {
	pts := []Point{{Multiplies: 1, MemoryBits: 9}, {Multiplies: 3, MemoryBits: 5}, {Multiplies: 7, MemoryBits: 2}}
	got := staircaseLine(pts)
	want := []struct{ x, y float64 }{{1, 9}, {3, 9}, {3, 5}, {7, 5}, {7, 2}}
	if len(got) != len(want) {
		t.Fatalf("staircase %v, want %v", got, want)
	}
	for i, w := range want {
		if got[i].X != w.x || got[i].Y != w.y {
			t.Errorf("staircase[%d] = %v, want %v", i, got[i], w)
		}
	}
}

func TestCloudLegend(t *testing.T) {
	for _, c := range []struct {
		total, shown int
		want         string
	}{
		{103115, 4000, "feasible by estimate: 103 115 (4 000 shown)"},
		{0, 627, "feasible by estimate: 627"},
		{627, 627, "feasible by estimate: 627"},
		{1000000, 4000, "feasible by estimate: 1 000 000 (4 000 shown)"},
		{12, 1, "feasible by estimate: 12 (1 shown)"},
	} {
		if got := cloudLegend(c.total, c.shown); got != c.want {
			t.Errorf("cloudLegend(%d, %d) = %q, want %q", c.total, c.shown, got, c.want)
		}
	}
}

// randomFront is a seeded random front of three axes with a cloud of
// candidates, on linear or log scales, sometimes with a checked chain.
func randomFront(r *rand.Rand) FrontData {
	n := 1 + r.IntN(24)
	mScale := math.Pow(10, 1+3*r.Float64())
	bScale := math.Pow(10, 3+2*r.Float64())
	spread := 0.3 + 30*r.Float64()*r.Float64() // a factor of 1.3 to 30: linear and log axes
	var pts []Point
	for range 3 * n {
		pts = append(pts, Point{
			Multiplies: math.Round(mScale * (1 + spread*r.Float64())),
			MemoryBits: math.Round(bScale * (1 + spread*r.Float64())),
			LatencyS:   1e-6 * (1 + 5*r.Float64()),
		})
	}
	front := bruteFront(pts)
	for i := range front {
		front[i].RejectionDB = 80 + 20*r.Float64()
		front[i].Label = fmt.Sprintf("cic%dm1r%d > fir%d", 3+r.IntN(4), 1<<(1+r.IntN(10)), 1<<r.IntN(5))
	}
	d := FrontData{Front: front, Recommended: r.IntN(len(front)+1) - 1, TargetDB: 80}
	for range r.IntN(3000) {
		f := front[r.IntN(len(front))]
		d.Candidates = append(d.Candidates, Point{
			Multiplies: f.Multiplies * (1 + 2*r.Float64()*r.Float64()),
			MemoryBits: f.MemoryBits * (1 + 2*r.Float64()*r.Float64()),
		})
	}
	if r.IntN(2) == 0 {
		d.FeasibleTotal = len(d.Candidates) + r.IntN(200000)
	}
	if r.IntN(2) == 0 {
		c := pts[r.IntN(len(pts))]
		c.RejectionDB, c.Label = 85, "cic4m1r8 > hb > fir4"
		d.Checked = &c
	}
	return d
}

// TestFrontLegendCounts checks that the legend's counts are those of the
// data: the staircase's chains, the others of the front, the cloud's total
// and how many are shown.
func TestFrontLegendCounts(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for trial := range 300 {
		d := randomFront(r)
		_, fp, err := buildFront(d)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		stair := 0
		for _, on := range bruteStaircase(d.Front) {
			if on {
				stair++
			}
		}
		want := []string{fmt.Sprintf("Pareto front on multiplies and memory (%s)", chains(stair))}
		if len(d.Candidates) > 0 {
			total := max(d.FeasibleTotal, len(d.Candidates))
			w := fmt.Sprintf("feasible by estimate: %s", grouped(total))
			if total > len(d.Candidates) {
				w += fmt.Sprintf(" (%s shown)", grouped(len(d.Candidates)))
			}
			want = append([]string{w}, want...)
		}
		if k := len(d.Front) - stair; k > 0 {
			want = append(want, fmt.Sprintf("on the front by latency (%s)", chains(k)))
		}
		if d.Recommended >= 0 {
			want = append(want, "recommended chain")
		}
		if d.Checked != nil {
			want = append(want, "checked chain")
		}
		if strings.Join(fp.entries, "|") != strings.Join(want, "|") {
			t.Fatalf("trial %d: legend\n%q\nwant\n%q", trial, fp.entries, want)
		}
	}
}

// cellOf returns the canvas Figure.Draw gives the front's panel at the
// given size.
func cellOf(t *testing.T, f *Figure, w, h vg.Length) draw.Canvas {
	t.Helper()
	var cell draw.Canvas
	g := *f
	g.panels = append([]panel(nil), f.panels...)
	g.panels[0].draw = func(_ *plot.Plot, c draw.Canvas) { cell = c }
	g.Draw(draw.New(vgsvg.New(w, h)))
	return cell
}

// TestFrontTextClear checks on many seeded random fronts, at three
// figure sizes, that the legend and every label are placed where they
// overlap no glyph of the front (its markers, the recommendation's ring,
// the checked chain's cross) and no segment of the staircase, nor each
// other, that labels stay inside the data area, and that a leader crosses
// no glyph but its own chain's. The glyphs' boxes are worked out here from
// the data, not taken from the layout.
func TestFrontTextClear(t *testing.T) {
	r := rand.New(rand.NewPCG(31, 32))
	sizes := [][2]vg.Length{{DefaultWidth, DefaultHeight}, {10 * vg.Inch, 6 * vg.Inch}, {12 * vg.Inch, 8 * vg.Inch}}
	raised := 0
	// 150 seeded fronts in go test, 400 with STEPDOWN_LONG=1 (CI's long
	// step), to keep go test under a minute.
	trials := 150
	if os.Getenv("STEPDOWN_LONG") != "" {
		trials = 400
	}
	for trial := range trials {
		d := randomFront(r)
		size := sizes[trial%len(sizes)]
		bad := false
		fail := func(format string, args ...any) {
			t.Helper()
			bad = true
			t.Errorf(format, args...)
		}
		f, fp, err := buildFront(d)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		lay := fp.layout(f.panels[0].p, cellOf(t, f, size[0], size[1]))
		if lay.plot.Y.Max != f.panels[0].p.Y.Max {
			raised++
		}
		trX, trY := lay.plot.Transforms(&lay.dc)
		at := func(p Point) vg.Point { return vg.Point{X: trX(p.Multiplies), Y: trY(p.MemoryBits)} }

		type glyph struct {
			name string
			r    vg.Rectangle
		}
		var glyphs []glyph
		for i, p := range d.Front {
			glyphs = append(glyphs, glyph{fmt.Sprintf("Front[%d]", i), box(at(p), diamondScale*markerRadius+0.4)})
		}
		if d.Recommended >= 0 {
			glyphs = append(glyphs, glyph{"ring", box(at(d.Front[d.Recommended]), ringRadius+ringWidth/2)})
		}
		if d.Checked != nil {
			glyphs = append(glyphs, glyph{"cross", box(at(*d.Checked), crossRadius+2.8)})
		}
		var stair []Point
		for i, on := range bruteStaircase(d.Front) {
			if on {
				stair = append(stair, d.Front[i])
			}
		}
		// In order of multiplies; memory falls along it.
		sort.Slice(stair, func(i, j int) bool { return stair[i].Multiplies < stair[j].Multiplies })
		for i := 1; i < len(stair); i++ {
			a, b := at(stair[i-1]), at(stair[i])
			corner := vg.Point{X: b.X, Y: a.Y}
			for _, s := range [][2]vg.Point{{a, corner}, {corner, b}} {
				w := vg.Points(stairWidth / 2)
				glyphs = append(glyphs, glyph{fmt.Sprintf("staircase %d", i), vg.Rectangle{
					Min: vg.Point{X: min(s[0].X, s[1].X) - w, Y: min(s[0].Y, s[1].Y) - w},
					Max: vg.Point{X: max(s[0].X, s[1].X) + w, Y: max(s[0].Y, s[1].Y) + w},
				}})
			}
		}

		texts := []glyph{{"legend", lay.legend}}
		for i, pl := range lay.labels {
			texts = append(texts, glyph{fmt.Sprintf("label %d", i), pl.box})
			if !contains(lay.dc.Rectangle, pl.box.Min) || !contains(lay.dc.Rectangle, pl.box.Max) {
				fail("trial %d: label %d box %v leaves the data area %v", trial, i, pl.box, lay.dc.Rectangle)
			}
		}
		for i, tx := range texts {
			for _, g := range glyphs {
				if overlaps(tx.r, g.r) {
					fail("trial %d (%d chains, size %v): %s %v overlaps %s %v", trial, len(d.Front), size, tx.name, tx.r, g.name, g.r)
				}
			}
			for _, o := range texts[i+1:] {
				if overlaps(tx.r, o.r) {
					fail("trial %d: %s overlaps %s", trial, tx.name, o.name)
				}
			}
		}
		for i, pl := range lay.labels {
			if pl.leader == nil {
				continue
			}
			// The label's own chain's glyphs, the recommended marker and
			// the ring or the cross, and any glyph drawn over the chain do
			// not stop its leader.
			own := map[string]bool{"cross": true}
			if i == 0 && d.Recommended >= 0 {
				own = map[string]bool{fmt.Sprintf("Front[%d]", d.Recommended): true, "ring": true}
			}
			anchor := vg.Point{X: trX(fp.labels[i].at.X), Y: trY(fp.labels[i].at.Y)}
			for _, g := range append(glyphs, texts...) {
				if own[g.name] || (!strings.HasPrefix(g.name, "label") && contains(g.r, anchor)) {
					continue
				}
				for k := 1; k < len(pl.leader); k++ {
					if segmentHits(pl.leader[k-1], pl.leader[k], g.r) {
						fail("trial %d: label %d's leader crosses %s", trial, i, g.name)
					}
				}
			}
		}
		if lay.clash != 0 {
			fail("trial %d: layout reports %d clashes", trial, lay.clash)
		}
		if bad {
			t.Logf("trial %d failed (%d chains, recommended %d, checked %v)", trial, len(d.Front), d.Recommended, d.Checked != nil)
		}
	}
	t.Logf("memory axis raised for room in %d of %d trials", raised, trials)
}

// The layout must see the glyphs: with the obstacles taken away, the
// label of a crowded front lands on a chain, which the check above would
// report.
func TestFrontTextClearCanFail(t *testing.T) {
	d := demoFront()
	f, fp, err := buildFront(d)
	if err != nil {
		t.Fatal(err)
	}
	cell := cellOf(t, f, DefaultWidth, DefaultHeight)
	marks := fp.marks
	fp.marks, fp.stair = nil, nil
	lay := fp.layout(f.panels[0].p, cell)
	trX, trY := lay.plot.Transforms(&lay.dc)
	hit := false
	for _, m := range marks {
		if overlaps(lay.labels[0].box, box(vg.Point{X: trX(m.at.X), Y: trY(m.at.Y)}, m.r)) {
			hit = true
		}
	}
	if !hit {
		t.Errorf("without obstacles the label still clears every mark: the clearance test would not notice a broken layout")
	}
}

func TestFrontErrors(t *testing.T) {
	good := func() FrontData {
		return FrontData{Front: []Point{
			{Multiplies: 10, MemoryBits: 900, LatencyS: 2e-6, RejectionDB: 80},
			{Multiplies: 20, MemoryBits: 1200, LatencyS: 1e-6, RejectionDB: 82},
		}}
	}
	for _, c := range []struct {
		name string
		edit func(*FrontData)
		want string
	}{
		{"dominated", func(d *FrontData) { d.Front[1].LatencyS = 3e-6 }, "FrontData.Front[1] is dominated by Front[0]"},
		{"beaten-no-latency", func(d *FrontData) {
			d.Front[0].LatencyS, d.Front[1].LatencyS = 0, 0
			d.Front[1].MemoryBits = 950
		}, "FrontData.Front[1] is beaten on multiplies and memory by Front[0], and no chain of Front has a latency"},
		{"latency-negative", func(d *FrontData) { d.Front[0].LatencyS = -1 }, "Front[0].LatencyS"},
		{"latency-nan", func(d *FrontData) { d.Front[1].LatencyS = math.NaN() }, "Front[1].LatencyS"},
		{"total-below-cloud", func(d *FrontData) {
			d.Candidates = []Point{{Multiplies: 30, MemoryBits: 2000}, {Multiplies: 40, MemoryBits: 3000}}
			d.FeasibleTotal = 1
		}, "FrontData.FeasibleTotal = 1"},
		{"total-negative", func(d *FrontData) { d.FeasibleTotal = -5 }, "FrontData.FeasibleTotal = -5"},
		{"checked-nan", func(d *FrontData) { d.Checked = &Point{Multiplies: math.NaN()} }, "FrontData.Checked.Multiplies"},
		{"checked-negative", func(d *FrontData) { d.Checked = &Point{Multiplies: 1, MemoryBits: -2} }, "FrontData.Checked.MemoryBits"},
	} {
		t.Run(c.name, func(t *testing.T) {
			d := good()
			if _, err := Front(d); err != nil {
				t.Fatalf("the unedited data fail: %v", err)
			}
			c.edit(&d)
			_, err := Front(d)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want one naming %q", err, c.want)
			}
		})
	}
	// Equal chains may repeat; no latency at all is allowed.
	if _, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: 2}, {Multiplies: 1, MemoryBits: 2}}}); err != nil {
		t.Errorf("repeated chain: %v", err)
	}
}

// Every front figure renders at the smallest size Render accepts, where
// text may have to overlap, and at a large one.
func TestFrontSmallAndLarge(t *testing.T) {
	r := rand.New(rand.NewPCG(41, 42))
	for trial := range 20 {
		d := randomFront(r)
		f, err := Front(d)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range [][2]vg.Length{{MinWidth, MinHeight}, {16 * vg.Inch, 10 * vg.Inch}} {
			if err := f.Render(io.Discard, "svg", s[0], s[1]); err != nil {
				t.Errorf("trial %d at %v: %v", trial, s, err)
			}
		}
	}
}

// With Adders set the x axis, the legend and the recommended chain's label
// say adders, not multiplies (a multiplierless plan's cost axis).
func TestFrontAdders(t *testing.T) {
	d := FrontData{Adders: true, Front: []Point{
		{Multiplies: 65, MemoryBits: 1245, LatencyS: 4e-7, RejectionDB: 81, Label: "a"},
		{Multiplies: 90, MemoryBits: 900, LatencyS: 3e-7, RejectionDB: 82, Label: "b"},
	}}
	f, err := Front(d)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := f.Render(&b, "svg", 6*vg.Inch, 4*vg.Inch); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Hardware adders", "Pareto front on adders and memory", "65 adders"} {
		if !bytes.Contains(b.Bytes(), []byte(want)) {
			t.Errorf("the figure lacks %q", want)
		}
	}
	if bytes.Contains(b.Bytes(), []byte("mult/out")) || bytes.Contains(b.Bytes(), []byte("Multiplies per output")) {
		t.Error("the figure still says multiplies")
	}
}
