package plots

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"slices"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Point is one candidate chain on the cost axes.
type Point struct {
	// Multiplies is the chain's multiplies per final output sample, >= 0.
	Multiplies float64
	// MemoryBits is the chain's memory (delay lines and coefficients) in
	// bits, >= 0.
	MemoryBits float64
	// LatencyS is the chain's latency in seconds, >= 0: the front's third
	// axis, which colours its points (colour key on the right). When every
	// point of Front has zero, the latency is taken as not given: the
	// front is drawn in one colour, without a key. It is ignored for
	// Candidates.
	LatencyS float64
	// RejectionDB is the chain's achieved alias rejection in positive dB,
	// shown in the labels of the recommended and the checked chain. It is
	// ignored for Candidates.
	RejectionDB float64
	// Label is the chain's notation. It is shown in the labels of the
	// recommended and the checked chain and ignored elsewhere; empty shows
	// only the figures.
	Label string
}

// FrontData is the input of Front.
type FrontData struct {
	// Title is the figure title; empty selects "Pareto front".
	Title string
	// Candidates are the feasible candidates, drawn as a faint cloud behind
	// the front. It may be empty. Points closer than a dot's width are
	// drawn once, so tens of thousands of candidates stay cheap.
	Candidates []Point
	// FeasibleTotal is how many candidates were found feasible in all, when
	// Candidates holds only a sample of them (a search thins its cloud);
	// the legend states both. Zero means len(Candidates); otherwise it must
	// be at least len(Candidates).
	FeasibleTotal int
	// Front holds the chains of the Pareto front on multiplies, memory and
	// latency, at least one, in any order. No chain may be dominated by
	// another (no more of all three and less of one); equal chains may
	// repeat.
	Front []Point
	// Recommended is the index into Front of the recommended chain, which is
	// ringed and labelled. The zero value recommends Front[0]; -1 marks none.
	Recommended int
	// Checked, when not nil, is one more chain drawn over the front as a
	// cross and labelled with its notation and figures: the chain a check
	// names, shown against a plan's front. It need not be on the front.
	Checked *Point
	// TargetDB is the alias-rejection target in positive dB, written beside
	// the labelled chains' rejection so that their margin can be read off.
	// Zero writes none.
	TargetDB float64
	// Adders says that every Point's Multiplies holds the chain's hardware
	// adders as built instead (a multiplierless plan, whose cost axis they
	// are): the x axis, the legend and the labels then say adders. The
	// zero value draws multiplies per output.
	Adders bool
	// PerInput says Multiplies are per input sample (an interpolation
	// chain's channel side); the zero value labels them per output.
	PerInput bool
}

// Front draws the projection of a three-axis Pareto front (multiplies per
// output, memory bits, latency) onto multiplies against memory: every
// feasible candidate faint; the chains no other beats on multiplies and
// memory alone joined by their staircase, which bounds from below and left
// the region they dominate; the other chains of the front, which are there
// for their lower latency, with a diamond marker; every chain of the front
// coloured by its latency (colour key on the right); the recommended chain
// ringed and the checked chain crossed, each labelled with its notation and
// figures. The legend and the labels are placed where they cover no chain
// of the front, no marker and no line of the staircase (the faint cloud may
// lie under them), with a leader line when a label sits away from its
// chain; when no such place exists at the figure's size, the memory axis
// is raised to make room above the data.
func Front(d FrontData) (*Figure, error) {
	f, _, err := buildFront(d)
	return f, err
}

// buildFront is Front, returning the front's panel too.
func buildFront(d FrontData) (*Figure, *frontPanel, error) {
	if err := d.check(); err != nil {
		return nil, nil, err
	}

	p := newPlot()
	title := d.Title
	if title == "" {
		title = "Pareto front"
	}
	xs := make([]float64, 0, len(d.Front)+len(d.Candidates)+1)
	ys := make([]float64, 0, cap(xs))
	groups := [][]Point{d.Front, d.Candidates}
	if d.Checked != nil {
		groups = append(groups, []Point{*d.Checked})
	}
	for _, pts := range groups {
		for _, pt := range pts {
			xs = append(xs, pt.Multiplies)
			ys = append(ys, pt.MemoryBits)
		}
	}
	var xlog, ylog bool
	p.X.Min, p.X.Max, xlog = axisRange(xs)
	p.Y.Min, p.Y.Max, ylog = axisRange(ys)
	p.X.Label.Text = "Multiplies per output sample"
	if d.PerInput {
		p.X.Label.Text = "Multiplies per input sample"
	}
	if d.Adders {
		p.X.Label.Text = "Hardware adders (multiplierless, as built)"
	}
	p.X.Tick.Marker = scaledTicks{scale: 1}
	if xlog {
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = logTicks{}
		p.X.Label.Text += " (log scale)"
	}
	if ylog {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = logTicks{}
		p.Y.Label.Text = "Memory (bits, log scale)"
	} else {
		u := bitsUnit(p.Y.Max)
		p.Y.Tick.Marker = scaledTicks{scale: u.scale}
		p.Y.Label.Text = "Memory (" + u.name + ")"
	}
	addGrid(p)
	leg := newLegend()
	fp := &frontPanel{leg: &insetLegend{l: leg}, ylog: ylog}
	legAdd := func(text string, th ...plot.Thumbnailer) {
		leg.Add(text, th...)
		fp.entries = append(fp.entries, text)
	}

	if len(d.Candidates) > 0 {
		fp.cloud = thin(p, d.Candidates)
		s, err := plotter.NewScatter(fp.cloud)
		if err != nil {
			return nil, nil, err
		}
		s.GlyphStyle = draw.GlyphStyle{Color: color.RGBA{0xA8, 0xA8, 0xA8, 0xff}, Radius: vg.Points(1.6), Shape: draw.CircleGlyph{}}
		p.Add(s)
		legAdd(cloudLegend(d.FeasibleTotal, len(d.Candidates)), s)
	}

	// The colour of a chain of the front: its latency on the key, or one
	// colour when no latency is given.
	colorOf := func(Point) color.Color { return blue }
	legendColor := color.Color(blue) // the legend's markers
	var key *plot.Plot
	if lmin, lmax, ok := latencyRange(d.Front); ok {
		cmap := &viridis{min: lmin, max: lmax, alpha: 1}
		colorOf = func(pt Point) color.Color { return cmap.at((pt.LatencyS - lmin) / (lmax - lmin)) }
		legendColor = cmap.at(0.55)
		key = newPlot()
		key.HideX()
		u := timeUnit(lmax)
		key.Y.Label.Text = "Latency (" + u.name + ")"
		key.Y.Padding = 0
		key.Y.Tick.Marker = scaledTicks{scale: u.scale, n: 4}
		key.Add(&plotter.ColorBar{ColorMap: cmap, Vertical: true, Colors: 64})
	}

	stair := onStaircase(d.Front)
	var stairPts, latPts []Point
	for i, pt := range d.Front {
		if stair[i] {
			stairPts = append(stairPts, pt)
		} else {
			latPts = append(latPts, pt)
		}
	}
	sort.SliceStable(stairPts, func(a, b int) bool {
		if stairPts[a].Multiplies != stairPts[b].Multiplies {
			return stairPts[a].Multiplies < stairPts[b].Multiplies
		}
		return stairPts[a].MemoryBits > stairPts[b].MemoryBits
	})
	fp.stair = staircaseLine(stairPts)
	l, err := plotter.NewLine(fp.stair)
	if err != nil {
		return nil, nil, err
	}
	l.LineStyle = draw.LineStyle{Color: color.RGBA{0x40, 0x40, 0x40, 0xff}, Width: vg.Points(stairWidth)}
	p.Add(l)
	legAdd(fmt.Sprintf("Pareto front on %s and memory (%s)", costName(d.Adders), chains(len(stairPts))), l, legendMarker{circleMarker, legendColor})

	if len(latPts) > 0 {
		s, err := markers(latPts, diamondMarker, colorOf)
		if err != nil {
			return nil, nil, err
		}
		p.Add(s)
		legAdd(fmt.Sprintf("on the front by latency (%s)", chains(len(latPts))), legendMarker{diamondMarker, legendColor})
	}
	s, err := markers(stairPts, circleMarker, colorOf)
	if err != nil {
		return nil, nil, err
	}
	p.Add(s)
	for _, pt := range d.Front {
		// The larger marker, the diamond, and half its edge.
		fp.marks = append(fp.marks, mark{plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits}, diamondScale*markerRadius + 0.4})
	}

	if d.Recommended >= 0 {
		r := d.Front[d.Recommended]
		at := plotter.XY{X: r.Multiplies, Y: r.MemoryBits}
		ring, err := plotter.NewScatter(plotter.XYs{at})
		if err != nil {
			return nil, nil, err
		}
		ring.GlyphStyle = draw.GlyphStyle{Color: vermilion, Radius: vg.Points(ringRadius), Shape: thickRing{vg.Points(ringWidth)}}
		p.Add(ring)
		legAdd("recommended chain", legendRing{})
		fp.marks = append(fp.marks, mark{at, ringRadius + ringWidth/2})
		sty := textStyle(10, true)
		sty.Color = color.RGBA{0xA0, 0x40, 0x00, 0xff} // a darker vermilion for text contrast
		fp.labels = append(fp.labels, frontLabel{at: at, r: ringRadius + ringWidth/2, own: []int{d.Recommended, len(fp.marks) - 1},
			text: "Recommended: " + chainText(r, d.TargetDB, d.Adders, d.PerInput), style: sty})
	}
	if c := d.Checked; c != nil {
		at := plotter.XY{X: c.Multiplies, Y: c.MemoryBits}
		x, err := plotter.NewScatter(plotter.XYs{at})
		if err != nil {
			return nil, nil, err
		}
		x.GlyphStyle = draw.GlyphStyle{Color: checkedColor, Radius: vg.Points(crossRadius), Shape: haloCross{}}
		p.Add(x)
		legAdd("checked chain", legendCross{})
		fp.marks = append(fp.marks, mark{at, crossRadius + 3})
		sty := textStyle(10, true)
		sty.Color = checkedColor
		fp.labels = append(fp.labels, frontLabel{at: at, r: crossRadius + 3, own: []int{len(fp.marks) - 1},
			text: "Checked: " + chainText(*c, d.TargetDB, d.Adders, d.PerInput), style: sty})
	}

	return &Figure{title: title, panels: []panel{{p: p, weight: 1, draw: fp.draw}}, colorKey: key}, fp, nil
}

// Sizes of the front's marks, in points.
const (
	markerRadius = 5.0
	ringRadius   = 10.0
	ringWidth    = 2.5
	crossRadius  = 7.0
	stairWidth   = 1.5
	// diamondScale is the diamond's half-diagonal over the circle's
	// radius: about the same area.
	diamondScale = 1.2
)

// checkedColor marks the checked chain: Okabe-Ito blue, darkened a little
// for its label's contrast.
var checkedColor = color.RGBA{0x00, 0x5A, 0x8C, 0xff}

func (d *FrontData) check() error {
	if len(d.Front) == 0 {
		return errors.New("plots: FrontData.Front is empty: need at least one chain")
	}
	for i, pt := range d.Front {
		if err := checkPoint(fmt.Sprintf("FrontData.Front[%d]", i), pt, true); err != nil {
			return err
		}
	}
	for i, pt := range d.Candidates {
		if err := checkPoint(fmt.Sprintf("FrontData.Candidates[%d]", i), pt, false); err != nil {
			return err
		}
	}
	if d.Checked != nil {
		if err := checkPoint("FrontData.Checked", *d.Checked, true); err != nil {
			return err
		}
	}
	if d.FeasibleTotal < 0 || (d.FeasibleTotal > 0 && d.FeasibleTotal < len(d.Candidates)) {
		return fmt.Errorf("plots: FrontData.FeasibleTotal = %d: must be 0 or at least len(Candidates) = %d", d.FeasibleTotal, len(d.Candidates))
	}
	if math.IsNaN(d.TargetDB) || math.IsInf(d.TargetDB, 0) || d.TargetDB < 0 {
		return fmt.Errorf("plots: FrontData.TargetDB = %v: must be finite and >= 0", d.TargetDB)
	}
	if d.Recommended < -1 || d.Recommended >= len(d.Front) {
		return fmt.Errorf("plots: FrontData.Recommended = %d: must be -1 or an index into Front (0..%d)", d.Recommended, len(d.Front)-1)
	}
	_, _, latency := latencyRange(d.Front)
	for i, a := range d.Front {
		for j, b := range d.Front {
			if !dominates(b, a) {
				continue
			}
			if !latency {
				return fmt.Errorf("plots: FrontData.Front[%d] is beaten on multiplies and memory by Front[%d], and no chain of Front has a latency (Point.LatencyS), the front's third axis, that could keep it on the front: give the latencies, or leave the beaten chain out", i, j)
			}
			return fmt.Errorf("plots: FrontData.Front[%d] is dominated by Front[%d]: (%v multiplies, %v bits, %v s) against (%v, %v, %v): Front must hold only chains that no other beats on multiplies, memory and latency",
				i, j, a.Multiplies, a.MemoryBits, a.LatencyS, b.Multiplies, b.MemoryBits, b.LatencyS)
		}
	}
	return nil
}

func checkPoint(field string, pt Point, full bool) error {
	check := func(name string, v float64, nonneg bool) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("plots: %s.%s = %v: must be finite", field, name, v)
		}
		if nonneg && v < 0 {
			return fmt.Errorf("plots: %s.%s = %v: must not be negative", field, name, v)
		}
		return nil
	}
	if err := check("Multiplies", pt.Multiplies, true); err != nil {
		return err
	}
	if err := check("MemoryBits", pt.MemoryBits, true); err != nil {
		return err
	}
	if !full {
		return nil
	}
	if err := check("LatencyS", pt.LatencyS, true); err != nil {
		return err
	}
	return check("RejectionDB", pt.RejectionDB, false)
}

// dominates reports whether a beats b on the front's three axes: no more
// multiplies, memory or latency, and less of one.
func dominates(a, b Point) bool {
	if a.Multiplies > b.Multiplies || a.MemoryBits > b.MemoryBits || a.LatencyS > b.LatencyS {
		return false
	}
	return a.Multiplies < b.Multiplies || a.MemoryBits < b.MemoryBits || a.LatencyS < b.LatencyS
}

// onStaircase reports for each point whether no other has no more
// multiplies and no more memory and less of one: the non-dominated set of
// the front's projection onto multiplies and memory. Equal points are all
// on it.
func onStaircase(pts []Point) []bool {
	idx := make([]int, len(pts))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		pa, pb := pts[idx[a]], pts[idx[b]]
		if pa.Multiplies != pb.Multiplies {
			return pa.Multiplies < pb.Multiplies
		}
		return pa.MemoryBits < pb.MemoryBits
	})
	on := make([]bool, len(pts))
	// least is the least memory among points of fewer multiplies; within
	// a group of equal multiplies the first (least memory) is on the
	// staircase when it beats least, and so are its equals.
	least := math.Inf(1)
	for g := 0; g < len(idx); {
		m := pts[idx[g]].Multiplies
		low := pts[idx[g]].MemoryBits
		e := g
		for ; e < len(idx) && pts[idx[e]].Multiplies == m; e++ {
			if low < least && pts[idx[e]].MemoryBits == low {
				on[idx[e]] = true
			}
		}
		least = math.Min(least, low)
		g = e
	}
	return on
}

// staircaseLine joins points sorted by increasing multiplies (and so
// decreasing memory) by steps: across at the memory of one, then down to
// the next. Every cost pair on or above and right of the line is matched or
// beaten by a point of it.
func staircaseLine(pts []Point) plotter.XYs {
	out := make(plotter.XYs, 0, 2*len(pts))
	for i, pt := range pts {
		if i > 0 {
			out = append(out, plotter.XY{X: pt.Multiplies, Y: pts[i-1].MemoryBits})
		}
		out = append(out, plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits})
	}
	return out
}

// latencyRange is the colour key's range of the front's latencies, widened
// to 4% of the largest when they are (nearly) equal; ok is false when no
// latency is given.
func latencyRange(front []Point) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), 0
	for _, pt := range front {
		lo, hi = math.Min(lo, pt.LatencyS), math.Max(hi, pt.LatencyS)
	}
	if hi == 0 {
		return 0, 0, false
	}
	if minSpan := 0.04 * hi; hi-lo < minSpan {
		c := (hi + lo) / 2
		lo, hi = c-minSpan/2, c+minSpan/2
	}
	return lo, hi, true
}

// cloudLegend is the legend entry of the cloud: how many candidates were
// feasible by the estimates and, when fewer are drawn, how many.
func cloudLegend(total, shown int) string {
	if total <= shown {
		return "feasible by estimate: " + grouped(shown)
	}
	return fmt.Sprintf("feasible by estimate: %s (%s shown)", grouped(total), grouped(shown))
}

// grouped writes n with its digits in groups of three: 103115 -> "103 115".
func grouped(n int) string {
	s := strconv.Itoa(n)
	neg := n < 0
	if neg {
		s = s[1:]
	}
	var out []byte
	for i := range len(s) {
		if i > 0 && (len(s)-i)%3 == 0 {
			out = append(out, ' ')
		}
		out = append(out, s[i])
	}
	if neg {
		return "-" + string(out)
	}
	return string(out)
}

func chains(n int) string {
	if n == 1 {
		return "1 chain"
	}
	return fmt.Sprintf("%d chains", n)
}

// costName is the x axis's quantity in words.
func costName(adders bool) string {
	if adders {
		return "adders"
	}
	return "multiplies"
}

// chainText is a labelled chain's notation and figures, on three lines:
// its notation, its costs, its rejection.
func chainText(pt Point, targetDB float64, adders, perInput bool) string {
	unit := "mult/out"
	if perInput {
		unit = "mult/in"
	}
	if adders {
		unit = "adders"
	}
	costs := fmt.Sprintf("%s %s, %s bits", amount(pt.Multiplies), unit, amount(pt.MemoryBits))
	if pt.LatencyS > 0 {
		u := timeUnit(pt.LatencyS)
		costs += ", " + trimFloat(pt.LatencyS/u.scale) + " " + u.name
	}
	rej := fmt.Sprintf("rejection %.1f dB", pt.RejectionDB)
	if targetDB > 0 {
		rej += fmt.Sprintf(" (target %g)", targetDB)
	}
	return pt.Label + "\n" + costs + "\n" + rej
}

// thin keeps one candidate per cell of a grid whose cells are smaller than
// a dot, in input order, so that a cloud of many thousands of candidates
// looks the same but costs a few thousand glyphs.
func thin(p *plot.Plot, pts []Point) plotter.XYs {
	const nx, ny = 160, 100 // cells of about 2.7 pt, under a dot's 3.2 pt diameter
	seen := make(map[[2]int]bool)
	var out plotter.XYs
	for _, pt := range pts {
		cell := [2]int{int(p.X.Norm(pt.Multiplies) * nx), int(p.Y.Norm(pt.MemoryBits) * ny)}
		if seen[cell] {
			continue
		}
		seen[cell] = true
		out = append(out, plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits})
	}
	return out
}

// markers draws the chains of the front with a marker shape, each filled
// with its colour and edged in black.
func markers(pts []Point, shape markerShape, colorOf func(Point) color.Color) (*plotter.Scatter, error) {
	xy := make(plotter.XYs, len(pts))
	for i, pt := range pts {
		xy[i] = plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits}
	}
	s, err := plotter.NewScatter(xy)
	if err != nil {
		return nil, err
	}
	s.GlyphStyleFunc = func(i int) draw.GlyphStyle {
		return draw.GlyphStyle{Color: colorOf(pts[i]), Radius: vg.Points(markerRadius), Shape: outlined{shape}}
	}
	return s, nil
}

// addGrid draws light major grid lines behind the data.
func addGrid(p *plot.Plot) {
	g := plotter.NewGrid()
	g.Vertical = draw.LineStyle{Color: color.RGBA{0xE0, 0xE0, 0xE0, 0xff}, Width: vg.Points(0.5)}
	g.Horizontal = g.Vertical
	p.Add(g)
}

// markerShape is the outline of a front marker.
type markerShape int

const (
	circleMarker markerShape = iota
	diamondMarker
)

func (m markerShape) path(pt vg.Point, r vg.Length) vg.Path {
	var p vg.Path
	switch m {
	case diamondMarker:
		r *= diamondScale
		p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
		p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
		p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
		p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	default:
		p.Move(vg.Point{X: pt.X + r, Y: pt.Y})
		p.Arc(pt, r, 0, 2*math.Pi)
	}
	p.Close()
	return p
}

// outlined is a glyph of a marker shape filled with the style's colour and
// edged in black.
type outlined struct{ shape markerShape }

func (o outlined) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	p := o.shape.path(pt, sty.Radius)
	c.SetColor(sty.Color)
	c.Fill(p)
	c.SetLineStyle(draw.LineStyle{Color: black, Width: vg.Points(0.8)})
	c.Stroke(p)
}

// legendMarker is a legend thumbnail: a front marker of one colour.
type legendMarker struct {
	shape markerShape
	c     color.Color
}

func (m legendMarker) Thumbnail(c *draw.Canvas) {
	outlined{m.shape}.DrawGlyph(c, draw.GlyphStyle{Color: m.c, Radius: vg.Points(markerRadius)}, c.Center())
}

// thickRing is a ring glyph with a chosen stroke width.
type thickRing struct{ width vg.Length }

func (r thickRing) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: r.width})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}

// legendRing is the legend thumbnail of the recommendation ring.
type legendRing struct{}

func (legendRing) Thumbnail(c *draw.Canvas) {
	thickRing{vg.Points(2)}.DrawGlyph(c, draw.GlyphStyle{Color: vermilion, Radius: vg.Points(6)}, c.Center())
}

// haloCross is a diagonal cross with a white halo, so that it reads over
// a marker or the staircase.
type haloCross struct{}

func (haloCross) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	for i, ls := range []draw.LineStyle{
		{Color: color.White, Width: vg.Points(5)},
		{Color: sty.Color, Width: vg.Points(2.5)},
	} {
		e := vg.Length(1-i) * vg.Points(1) // the halo reaches past the arms' ends
		c.StrokeLine2(ls, pt.X-r-e, pt.Y-r-e, pt.X+r+e, pt.Y+r+e)
		c.StrokeLine2(ls, pt.X-r-e, pt.Y+r+e, pt.X+r+e, pt.Y-r-e)
	}
}

// legendCross is the legend thumbnail of the checked chain.
type legendCross struct{}

func (legendCross) Thumbnail(c *draw.Canvas) {
	haloCross{}.DrawGlyph(c, draw.GlyphStyle{Color: checkedColor, Radius: vg.Points(5)}, c.Center())
}

// frontLabel is a text placed beside a chain of the front.
type frontLabel struct {
	at    plotter.XY // the chain
	r     vg.Length  // the radius of its mark: a leader starts there
	own   []int      // its marks, as indices into frontPanel.marks
	text  string
	style text.Style
}

// frontPanel draws the front's panel: the plot, then its legend and labels
// where they cover none of its marks and lines. It holds where everything
// is drawn, in data coordinates.
type frontPanel struct {
	leg    *insetLegend
	ylog   bool
	cloud  plotter.XYs  // the faint cloud as drawn
	marks  []mark       // the front's markers, the ring, the cross
	stair  plotter.XYs  // the staircase
	labels []frontLabel // in order of placement
	// entries are the legend's texts, in order.
	entries []string
}

// mark is a drawn mark: a square of half-side r points around at.
type mark struct {
	at plotter.XY
	r  float64
}

// frontLayout is where the front's text goes in one cell.
type frontLayout struct {
	// plot is the panel as drawn: a copy, its memory axis raised when the
	// text needed room above the data.
	plot   *plot.Plot
	dc     draw.Canvas // its data area
	legend vg.Rectangle
	labels []placedLabel // as frontPanel.labels
	// clash counts overlaps of text with a mark, the staircase or other
	// text, and leaders crossing them: zero unless no free place existed
	// even with the most headroom.
	clash int
}

// placedLabel is a label's place.
type placedLabel struct {
	box    vg.Rectangle // the white box behind the text
	text   vg.Point     // the text's bottom left
	leader []vg.Point   // from the chain's mark to the box; nil beside it
}

// Layout constants, in points: the clear space kept around marks and
// lines, the gap from a mark beyond which a label gets a leader, and the
// step of the search for a label's place.
const (
	clearance = 1.5
	leaderGap = 8.0
	placeStep = 4.0
	// cloudCost is what covering one dot of the faint cloud costs a
	// label's place, in points of distance from its chain.
	cloudCost = 3.0
)

// headroom are the fractions of the memory axis left free above the data,
// tried in turn until the legend and every label find a free place.
var headroom = []float64{0, 0.2, 0.35, 0.5, 0.6}

// legendCorners are the legend's corners in order of preference (the
// first among those that cover the fewest dots of the cloud wins).
var legendCorners = []corner{{top: false, left: true}, {top: true, left: false}, {top: true, left: true}, {top: false, left: false}}

func (fp *frontPanel) draw(p *plot.Plot, c draw.Canvas) {
	lay := fp.layout(p, c)
	lay.plot.Draw(c)
	dc := lay.dc
	fp.leg.drawIn(dc, lay.legend)
	leader := draw.LineStyle{Color: color.RGBA{0x50, 0x50, 0x50, 0xff}, Width: vg.Points(0.8)}
	for _, pl := range lay.labels {
		if pl.leader != nil {
			dc.StrokeLines(leader, pl.leader)
		}
	}
	for i, pl := range lay.labels {
		dc.SetColor(color.NRGBA{0xff, 0xff, 0xff, 0xE6})
		dc.Fill(pl.box.Path())
		sty := fp.labels[i].style
		sty.XAlign, sty.YAlign = draw.XLeft, draw.YBottom
		dc.FillText(sty, pl.text, fp.labels[i].text)
	}
}

// layout places the legend and the labels in cell c, raising the memory
// axis of a copy of p by the steps of headroom until none clashes.
func (fp *frontPanel) layout(p *plot.Plot, c draw.Canvas) frontLayout {
	var best frontLayout
	for i, h := range headroom {
		q := *p
		if h > 0 {
			f := h / (1 - h)
			if fp.ylog {
				q.Y.Max *= math.Pow(q.Y.Max/q.Y.Min, f)
			} else {
				q.Y.Max += f * (q.Y.Max - q.Y.Min)
			}
		}
		lay := fp.place(&q, q.DataCanvas(c))
		if i == 0 || lay.clash < best.clash {
			best = lay
		}
		if lay.clash == 0 {
			break
		}
	}
	return best
}

// obstacles are the boxes of the marks and of the staircase's segments in
// dc, widened by the clearance.
func (fp *frontPanel) obstacles(q *plot.Plot, dc draw.Canvas) []vg.Rectangle {
	trX, trY := q.Transforms(&dc)
	var obst []vg.Rectangle
	for _, m := range fp.marks {
		obst = append(obst, box(vg.Point{X: trX(m.at.X), Y: trY(m.at.Y)}, m.r+clearance))
	}
	w := vg.Points(stairWidth/2 + clearance)
	for i := 1; i < len(fp.stair); i++ {
		a := vg.Point{X: trX(fp.stair[i-1].X), Y: trY(fp.stair[i-1].Y)}
		b := vg.Point{X: trX(fp.stair[i].X), Y: trY(fp.stair[i].Y)}
		obst = append(obst, vg.Rectangle{
			Min: vg.Point{X: min(a.X, b.X) - w, Y: min(a.Y, b.Y) - w},
			Max: vg.Point{X: max(a.X, b.X) + w, Y: max(a.Y, b.Y) + w},
		})
	}
	return obst
}

// place lays the legend and the labels out in the data area dc of q.
func (fp *frontPanel) place(q *plot.Plot, dc draw.Canvas) frontLayout {
	trX, trY := q.Transforms(&dc)
	obst := fp.obstacles(q, dc)
	cloud := newDensity(dc, fp.cloud, trX, trY)
	lay := frontLayout{plot: q, dc: dc}

	best := math.Inf(1)
	legClash := 0
	for _, k := range legendCorners {
		r := fp.leg.box(dc, k)
		n := overlapsAny(r, obst)
		if s := 1e6*float64(n) + float64(cloud.count(r)); s < best {
			best, lay.legend, legClash = s, r, n
		}
	}
	lay.clash = legClash
	texts := []vg.Rectangle{lay.legend}
	var leaders [][2]vg.Point
	for _, l := range fp.labels {
		anchor := vg.Point{X: trX(l.at.X), Y: trY(l.at.Y)}
		// A leader starts from the edge of its chain's marks: they, and
		// any mark drawn over the chain, do not stop it.
		var others []vg.Rectangle
		for i, m := range fp.marks {
			pt := vg.Point{X: trX(m.at.X), Y: trY(m.at.Y)}
			if !slices.Contains(l.own, i) && !contains(box(pt, m.r), anchor) {
				others = append(others, obst[i])
			}
		}
		others = append(others, obst[len(fp.marks):]...)
		pl, n := placeLabel(l, anchor, dc, obst, others, texts, leaders, cloud)
		lay.labels = append(lay.labels, pl)
		lay.clash += n
		texts = append(texts, pl.box)
		for i := 1; i < len(pl.leader); i++ {
			leaders = append(leaders, [2]vg.Point{pl.leader[i-1], pl.leader[i]})
		}
	}
	return lay
}

// placeLabel searches the data area on a grid for the place of label l,
// whose chain is drawn at anchor: clear of the obstacles, the other texts
// and their leaders, and near its chain, with a leader when not beside it
// (its leader clear of them too, but for the chain's own marks, which it
// starts from), covering few dots of the cloud. A leader is straight when
// it can be, else bent once just outside the chain's marks to leave a
// crowd. It returns the place and how many clashes it has (zero unless
// none is free).
func placeLabel(l frontLabel, anchor vg.Point, dc draw.Canvas, obst, others, texts []vg.Rectangle, leaders [][2]vg.Point, cloud *density) (placedLabel, int) {
	tr := l.style.Rectangle(l.text)
	pad := vg.Points(3)
	bw, bh := tr.Max.X-tr.Min.X+2*pad, tr.Max.Y-tr.Min.Y+2*pad
	inset := vg.Points(2)

	// clear counts what the segment from a to b crosses.
	clear := func(a, b vg.Point) int {
		k := 0
		for _, r := range others {
			if segmentHits(a, b, r) {
				k++
			}
		}
		for _, r := range texts {
			if segmentHits(a, b, r) {
				k++
			}
		}
		for _, ld := range leaders {
			if segmentsCross(a, b, ld[0], ld[1]) {
				k++
			}
		}
		return k
	}
	// The elbows of bent leaders: points a little beyond the chain's marks
	// in 16 directions, reached clear of everything.
	type elbow struct {
		start, at vg.Point
		length    float64
	}
	var elbows []elbow
	for _, e := range []float64{10, 24} {
		for i := range 16 {
			th := 2 * math.Pi * float64(i) / 16
			dx, dy := math.Cos(th), math.Sin(th)
			start := vg.Point{X: anchor.X + vg.Length(dx*(float64(l.r)+1)), Y: anchor.Y + vg.Length(dy*(float64(l.r)+1))}
			at := vg.Point{X: anchor.X + vg.Length(dx*(float64(l.r)+e)), Y: anchor.Y + vg.Length(dy*(float64(l.r)+e))}
			if contains(dc.Rectangle, at) && clear(start, at) == 0 {
				elbows = append(elbows, elbow{start, at, e - 1})
			}
		}
	}

	// The candidate boxes, by whole points of gap to the chain (in grid
	// order within each), so that the search stops once no farther box
	// can beat the best.
	type cand struct {
		box  vg.Rectangle
		near vg.Point
		gap  float64
	}
	var byGap [][]cand
	for _, y := range steps(dc.Min.Y+inset, dc.Max.Y-inset-bh) {
		for _, x := range steps(dc.Min.X+inset, dc.Max.X-inset-bw) {
			box := vg.Rectangle{Min: vg.Point{X: x, Y: y}, Max: vg.Point{X: x + bw, Y: y + bh}}
			near := vg.Point{X: max(box.Min.X, min(anchor.X, box.Max.X)), Y: max(box.Min.Y, min(anchor.Y, box.Max.Y))}
			gap := math.Hypot(float64(near.X-anchor.X), float64(near.Y-anchor.Y)) - float64(l.r)
			b := max(0, int(gap))
			for len(byGap) <= b {
				byGap = append(byGap, nil)
			}
			byGap[b] = append(byGap[b], cand{box, near, gap})
		}
	}
	cands := func(yield func(cand) bool) {
		for _, bucket := range byGap {
			for _, c := range bucket {
				if !yield(c) {
					return
				}
			}
		}
	}

	var out placedLabel
	outClash := 0
	best := math.Inf(1)
	for cd := range cands {
		box, gap := cd.box, cd.gap
		if math.Floor(gap) >= best {
			break
		}
		if gap >= best {
			continue
		}
		n := overlapsAny(box, obst) + overlapsAny(box, texts)
		for _, ld := range leaders {
			if segmentHits(ld[0], ld[1], box) {
				n++
			}
		}
		// A clash of the box weighs more than one of a leader.
		score, k := 1e9*float64(n)+gap, 0 // k: what the leader crosses
		if score >= best {
			continue
		}
		var leader []vg.Point
		if gap > leaderGap {
			c := vg.Point{X: (box.Min.X + box.Max.X) / 2, Y: (box.Min.Y + box.Max.Y) / 2}
			targets := []vg.Point{cd.near, box.Min, box.Max, {X: box.Min.X, Y: box.Max.Y}, {X: box.Max.X, Y: box.Min.Y},
				{X: c.X, Y: box.Min.Y}, {X: c.X, Y: box.Max.Y}, {X: box.Min.X, Y: c.Y}, {X: box.Max.X, Y: c.Y}}
			bestLeader, bestK := math.Inf(1), 0
			// try offers the leader through the given points (a start, an
			// optional elbow, the target on the box).
			try := func(length float64, path ...vg.Point) {
				s := 1e9*float64(n) + length + leaderGap
				if s >= min(best, bestLeader) {
					return
				}
				k := 0
				for i := 1; i < len(path); i++ {
					if segmentHits(path[i-1], path[i], box) {
						return // through its own box
					}
					k += clear(path[i-1], path[i])
				}
				if s += 1e6 * float64(k); s < bestLeader {
					bestLeader, bestK, leader = s, k, append([]vg.Point(nil), path...)
				}
			}
			for i, tg := range targets {
				if i > 0 && leader != nil && bestK == 0 {
					break // the nearest point is clear: no other target is shorter
				}
				dx, dy := float64(tg.X-anchor.X), float64(tg.Y-anchor.Y)
				d := math.Hypot(dx, dy)
				f := (float64(l.r) + 1) / d
				start := vg.Point{X: anchor.X + vg.Length(f*dx), Y: anchor.Y + vg.Length(f*dy)}
				try(d-float64(l.r), start, tg)
			}
			if leader == nil || bestK > 0 {
				// No straight leader is clear: bend one. A bend costs as
				// much as the gap to the box again.
				for _, e := range elbows {
					for _, tg := range targets {
						try(e.length+math.Hypot(float64(tg.X-e.at.X), float64(tg.Y-e.at.Y))+gap, e.start, e.at, tg)
					}
				}
			}
			if leader == nil {
				continue
			}
			score, k = bestLeader, bestK
		}
		score += cloudCost * float64(cloud.count(box))
		if score < best {
			best, outClash = score, n+k
			out = placedLabel{box: box, leader: leader,
				text: vg.Point{X: box.Min.X + pad - tr.Min.X, Y: box.Min.Y + pad - tr.Min.Y}}
		}
	}
	return out, outClash
}

// steps are the grid positions from lo to hi placeStep apart, hi
// included; just lo when hi < lo.
func steps(lo, hi vg.Length) []vg.Length {
	out := []vg.Length{lo}
	for v := lo + vg.Points(placeStep); v < hi; v += vg.Points(placeStep) {
		out = append(out, v)
	}
	if hi > lo {
		out = append(out, hi)
	}
	return out
}

// segmentsCross reports whether the segments ab and cd cross.
func segmentsCross(a, b, c, d vg.Point) bool {
	orient := func(p, q, r vg.Point) float64 {
		return float64((q.X-p.X)*(r.Y-p.Y) - (q.Y-p.Y)*(r.X-p.X))
	}
	d1, d2 := orient(c, d, a), orient(c, d, b)
	d3, d4 := orient(a, b, c), orient(a, b, d)
	return d1*d2 < 0 && d3*d4 < 0
}

func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}

func overlapsAny(a vg.Rectangle, rs []vg.Rectangle) int {
	n := 0
	for _, r := range rs {
		if overlaps(a, r) {
			n++
		}
	}
	return n
}

// box is the square of half-side r points around pt.
func box(pt vg.Point, r float64) vg.Rectangle {
	l := vg.Points(r)
	return vg.Rectangle{Min: vg.Point{X: pt.X - l, Y: pt.Y - l}, Max: vg.Point{X: pt.X + l, Y: pt.Y + l}}
}

func contains(r vg.Rectangle, p vg.Point) bool {
	return p.X >= r.Min.X && p.X <= r.Max.X && p.Y >= r.Min.Y && p.Y <= r.Max.Y
}

// segmentHits reports whether the segment from a to b meets the inside of
// r (Liang-Barsky clipping).
func segmentHits(a, b vg.Point, r vg.Rectangle) bool {
	if max(a.X, b.X) <= r.Min.X || min(a.X, b.X) >= r.Max.X || max(a.Y, b.Y) <= r.Min.Y || min(a.Y, b.Y) >= r.Max.Y {
		return false
	}
	t0, t1 := 0.0, 1.0
	dx, dy := float64(b.X-a.X), float64(b.Y-a.Y)
	for _, e := range [4][2]float64{
		{-dx, float64(a.X - r.Min.X)}, {dx, float64(r.Max.X - a.X)},
		{-dy, float64(a.Y - r.Min.Y)}, {dy, float64(r.Max.Y - a.Y)},
	} {
		p, q := e[0], e[1]
		if p == 0 {
			if q <= 0 {
				return false
			}
			continue
		}
		t := q / p
		if p < 0 {
			t0 = math.Max(t0, t)
		} else {
			t1 = math.Min(t1, t)
		}
		if t0 >= t1 {
			return false
		}
	}
	return true
}

// density counts the dots of the cloud in a box, on a grid of 2-point
// cells (a summed-area table).
type density struct {
	origin vg.Point
	nx, ny int
	sum    []int // (nx+1) x (ny+1)
}

const densityCell = 2.0

func newDensity(dc draw.Canvas, pts plotter.XYs, trX, trY func(float64) vg.Length) *density {
	d := &density{origin: dc.Min}
	// A figure too small for its axes can leave the data area empty.
	d.nx = max(0, int(math.Ceil(float64(dc.Max.X-dc.Min.X)/densityCell))) + 1
	d.ny = max(0, int(math.Ceil(float64(dc.Max.Y-dc.Min.Y)/densityCell))) + 1
	d.sum = make([]int, (d.nx+1)*(d.ny+1))
	for _, p := range pts {
		i, j := d.cell(trX(p.X), trY(p.Y))
		if i >= 0 && i < d.nx && j >= 0 && j < d.ny {
			d.sum[(j+1)*(d.nx+1)+i+1]++
		}
	}
	for j := 1; j <= d.ny; j++ {
		for i := 1; i <= d.nx; i++ {
			k := j*(d.nx+1) + i
			d.sum[k] += d.sum[k-1] + d.sum[k-d.nx-1] - d.sum[k-d.nx-2]
		}
	}
	return d
}

func (d *density) cell(x, y vg.Length) (int, int) {
	return int(math.Floor(float64(x-d.origin.X) / densityCell)), int(math.Floor(float64(y-d.origin.Y) / densityCell))
}

// count is the number of dots in the cells that r touches.
func (d *density) count(r vg.Rectangle) int {
	i0, j0 := d.cell(r.Min.X, r.Min.Y)
	i1, j1 := d.cell(r.Max.X, r.Max.Y)
	i0, j0 = max(0, i0), max(0, j0)
	i1, j1 = min(d.nx-1, i1), min(d.ny-1, j1)
	if i1 < i0 || j1 < j0 {
		return 0
	}
	at := func(i, j int) int { return d.sum[j*(d.nx+1)+i] }
	return at(i1+1, j1+1) - at(i0, j1+1) - at(i1+1, j0) + at(i0, j0)
}
