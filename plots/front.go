package plots

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Point is one candidate chain on the cost plane.
type Point struct {
	// Multiplies is the chain's multiplies per final output sample, >= 0.
	Multiplies float64
	// MemoryBits is the chain's memory (delay lines and coefficients) in
	// bits, >= 0.
	MemoryBits float64
	// RejectionDB is the chain's achieved alias rejection in positive dB.
	// It colours the points of the front; it is ignored for Candidates.
	RejectionDB float64
	// Label is the chain's notation. It is shown beside the recommended
	// point and ignored elsewhere; empty shows only the figures.
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
	// Front holds the non-dominated chains, at least one, in any order: the
	// line joining them is drawn in order of increasing Multiplies.
	Front []Point
	// Recommended is the index into Front of the recommended chain, which is
	// ringed and labelled. The zero value recommends Front[0]; -1 marks none.
	Recommended int
	// TargetDB is the alias-rejection target in positive dB, marked on the
	// colour key so that each chain's margin can be read off. Zero marks
	// none.
	TargetDB float64
}

// Front draws multiplies per output against memory bits: every feasible
// candidate faint, the Pareto front as a line with its points coloured by
// alias rejection (colour key on the right), and the recommended chain
// ringed and labelled with its notation and figures.
func Front(d FrontData) (*Figure, error) {
	if len(d.Front) == 0 {
		return nil, errors.New("plots: FrontData.Front is empty: need at least one chain")
	}
	for i, pt := range d.Front {
		if err := checkPoint("FrontData.Front", i, pt, true); err != nil {
			return nil, err
		}
	}
	for i, pt := range d.Candidates {
		if err := checkPoint("FrontData.Candidates", i, pt, false); err != nil {
			return nil, err
		}
	}
	if math.IsNaN(d.TargetDB) || math.IsInf(d.TargetDB, 0) || d.TargetDB < 0 {
		return nil, fmt.Errorf("plots: FrontData.TargetDB = %v: must be finite and >= 0", d.TargetDB)
	}
	if d.Recommended < -1 || d.Recommended >= len(d.Front) {
		return nil, fmt.Errorf("plots: FrontData.Recommended = %d: must be -1 or an index into Front (0..%d)", d.Recommended, len(d.Front)-1)
	}

	p := newPlot()
	title := d.Title
	if title == "" {
		title = "Pareto front"
	}

	xs := make([]float64, 0, len(d.Front)+len(d.Candidates))
	ys := make([]float64, 0, cap(xs))
	for _, pts := range [][]Point{d.Front, d.Candidates} {
		for _, pt := range pts {
			xs = append(xs, pt.Multiplies)
			ys = append(ys, pt.MemoryBits)
		}
	}
	var xlog, ylog bool
	p.X.Min, p.X.Max, xlog = axisRange(xs)
	p.Y.Min, p.Y.Max, ylog = axisRange(ys)
	p.X.Label.Text = "Multiplies per output sample"
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

	if len(d.Candidates) > 0 {
		cloud := thin(p, d.Candidates)
		s, err := plotter.NewScatter(cloud)
		if err != nil {
			return nil, err
		}
		s.GlyphStyle = draw.GlyphStyle{Color: color.RGBA{0xA8, 0xA8, 0xA8, 0xff}, Radius: vg.Points(1.6), Shape: draw.CircleGlyph{}}
		p.Add(s)
		leg.Add(fmt.Sprintf("feasible candidates, estimated (%d)", len(d.Candidates)), s)
	}

	order := make([]int, len(d.Front))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		pa, pb := d.Front[order[a]], d.Front[order[b]]
		if pa.Multiplies != pb.Multiplies {
			return pa.Multiplies < pb.Multiplies
		}
		return pa.MemoryBits < pb.MemoryBits
	})
	line := make(plotter.XYs, len(order))
	rmin, rmax := math.Inf(1), math.Inf(-1)
	for j, i := range order {
		line[j] = plotter.XY{X: d.Front[i].Multiplies, Y: d.Front[i].MemoryBits}
		rmin = math.Min(rmin, d.Front[i].RejectionDB)
		rmax = math.Max(rmax, d.Front[i].RejectionDB)
	}
	if d.TargetDB > 0 && d.TargetDB-1 < rmin {
		// Show the target inside the key, a little above its bottom.
		rmin = d.TargetDB - math.Max(0.5, 0.04*(rmax-d.TargetDB))
	}
	if rmax-rmin < 1 {
		// A key needs a span; centre the few equal values in it.
		c := (rmax + rmin) / 2
		rmin, rmax = c-1, c+1
	}
	cmap := &viridis{min: rmin, max: rmax, alpha: 1}

	l, err := plotter.NewLine(line)
	if err != nil {
		return nil, err
	}
	l.LineStyle = draw.LineStyle{Color: color.RGBA{0x40, 0x40, 0x40, 0xff}, Width: vg.Points(1.5)}
	p.Add(l)

	dots, err := plotter.NewScatter(line)
	if err != nil {
		return nil, err
	}
	dots.GlyphStyleFunc = func(j int) draw.GlyphStyle {
		c, _ := cmap.At(d.Front[order[j]].RejectionDB)
		return draw.GlyphStyle{Color: c, Radius: vg.Points(5), Shape: draw.CircleGlyph{}}
	}
	rings, err := plotter.NewScatter(line)
	if err != nil {
		return nil, err
	}
	rings.GlyphStyle = draw.GlyphStyle{Color: black, Radius: vg.Points(5), Shape: draw.RingGlyph{}}
	p.Add(dots, rings)
	chains := "chains"
	if len(d.Front) == 1 {
		chains = "chain"
	}
	leg.Add(fmt.Sprintf("Pareto front (%d %s)", len(d.Front), chains), l, legendDot{cmap.at(0.55)})

	var rec *callout
	if d.Recommended >= 0 {
		r := d.Front[d.Recommended]
		ring, err := plotter.NewScatter(plotter.XYs{{X: r.Multiplies, Y: r.MemoryBits}})
		if err != nil {
			return nil, err
		}
		ring.GlyphStyle = draw.GlyphStyle{Color: vermilion, Radius: vg.Points(10), Shape: thickRing{vg.Points(2.5)}}
		p.Add(ring)
		txt := fmt.Sprintf("%s mult/out, %s bits, %.1f dB", amount(r.Multiplies), amount(r.MemoryBits), r.RejectionDB)
		if r.Label != "" {
			txt = r.Label + "\n" + txt
		}
		rec = &callout{x: r.Multiplies, y: r.MemoryBits, text: "Recommended: " + txt, style: textStyle(10, true)}
		rec.style.Color = color.RGBA{0xA0, 0x40, 0x00, 0xff} // a darker vermilion for text contrast
		p.Add(rec)
		// The front's points again, above the label's box, so the label
		// never hides a chain of the front.
		p.Add(dots, rings)
		leg.Add("recommended chain", legendRing{})
	}

	p.Add(placeLegend(p, leg, d, xlog, ylog))

	key := newPlot()
	key.HideX()
	key.Y.Label.Text = "Alias rejection (dB)"
	key.Y.Padding = 0
	key.Y.Tick.Marker = scaledTicks{scale: 1, n: 4}
	key.Add(&plotter.ColorBar{ColorMap: cmap, Vertical: true, Colors: 64})
	if d.TargetDB > 0 {
		key.Y.Label.Text = fmt.Sprintf("Alias rejection (dB), target %g dB marked", d.TargetDB)
		t, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: d.TargetDB}, {X: 1, Y: d.TargetDB}})
		t.LineStyle = draw.LineStyle{Color: vermilion, Width: vg.Points(3)}
		key.Add(t)
	}

	return &Figure{title: title, panels: []panel{{p: p, weight: 1}}, colorKey: key}, nil
}

func checkPoint(field string, i int, pt Point, front bool) error {
	check := func(name string, v float64, nonneg bool) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("plots: %s[%d].%s = %v: must be finite", field, i, name, v)
		}
		if nonneg && v < 0 {
			return fmt.Errorf("plots: %s[%d].%s = %v: must not be negative", field, i, name, v)
		}
		return nil
	}
	if err := check("Multiplies", pt.Multiplies, true); err != nil {
		return err
	}
	if err := check("MemoryBits", pt.MemoryBits, true); err != nil {
		return err
	}
	if front {
		return check("RejectionDB", pt.RejectionDB, false)
	}
	return nil
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

// placeLegend returns an inset legend for the front. The corner is chosen
// at draw time to hide the fewest points; if no corner is free at the
// default size, the memory axis is raised to make room above the data.
func placeLegend(p *plot.Plot, leg *plot.Legend, d FrontData, xlog, ylog bool) *insetLegend {
	il := &insetLegend{l: leg, corners: []corner{{false, true}, {true, false}, {true, true}, {false, false}}}
	for _, pt := range d.Candidates {
		il.pts = append(il.pts, plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits})
		il.weights = append(il.weights, 1)
	}
	for i, pt := range d.Front {
		il.pts = append(il.pts, plotter.XY{X: pt.Multiplies, Y: pt.MemoryBits})
		w := 10.0
		if i == d.Recommended {
			w = 1000
		}
		il.weights = append(il.weights, w)
	}
	// The data area of a default-size figure, roughly.
	const areaW, areaH = 430.0, 265.0
	s := il.size()
	w := (float64(s.X) + 20) / areaW
	h := (float64(s.Y) + 20) / areaH
	free := false
	for _, k := range il.corners {
		hit := false
		for _, pt := range il.pts {
			nx, ny := p.X.Norm(pt.X), p.Y.Norm(pt.Y)
			if !k.left {
				nx = 1 - nx
			}
			if !k.top {
				ny = 1 - ny
			}
			if nx < w && ny < h {
				hit = true
				break
			}
		}
		if !hit {
			free = true
			break
		}
	}
	if !free {
		// Raise the top so that the data fill the lower 1-h of the axis.
		f := h / (1 - h)
		if ylog {
			p.Y.Max *= math.Pow(p.Y.Max/p.Y.Min, f)
		} else {
			p.Y.Max += f * (p.Y.Max - p.Y.Min)
		}
		il.corners = []corner{{true, false}, {true, true}}
	}
	return il
}

// addGrid draws light major grid lines behind the data.
func addGrid(p *plot.Plot) {
	g := plotter.NewGrid()
	g.Vertical = draw.LineStyle{Color: color.RGBA{0xE0, 0xE0, 0xE0, 0xff}, Width: vg.Points(0.5)}
	g.Horizontal = g.Vertical
	p.Add(g)
}

// callout is a text label beside a data point, on a white box, placed
// towards the middle of the plot so that it is never clipped.
type callout struct {
	x, y  float64
	text  string
	style text.Style
}

func (c *callout) Plot(cv draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&cv)
	pt := vg.Point{X: trX(c.x), Y: trY(c.y)}
	r := c.style.Rectangle(c.text)
	w, h := r.Max.X-r.Min.X, r.Max.Y-r.Min.Y
	const gap = 14
	x := pt.X + gap
	if p.X.Norm(c.x) > 0.55 {
		x = pt.X - gap - w
	}
	y := pt.Y + gap
	if p.Y.Norm(c.y) > 0.6 {
		y = pt.Y - gap - h
	}
	pad := vg.Points(3)
	x = max(cv.Min.X+pad, min(x, cv.Max.X-pad-w))
	y = max(cv.Min.Y+pad, min(y, cv.Max.Y-pad-h))
	box := vg.Rectangle{Min: vg.Point{X: x - pad, Y: y - pad}, Max: vg.Point{X: x + w + pad, Y: y + h + pad}}
	cv.SetColor(color.NRGBA{0xff, 0xff, 0xff, 0xE0})
	cv.Fill(box.Path())
	sty := c.style
	sty.XAlign, sty.YAlign = draw.XLeft, draw.YBottom
	cv.FillText(sty, vg.Point{X: x - r.Min.X, Y: y - r.Min.Y}, c.text)
}

// legendDot is a legend thumbnail: a filled circle with a black edge.
type legendDot struct{ c color.Color }

func (d legendDot) Thumbnail(c *draw.Canvas) {
	pt := vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: (c.Min.Y + c.Max.Y) / 2}
	c.DrawGlyph(draw.GlyphStyle{Color: d.c, Radius: vg.Points(5), Shape: draw.CircleGlyph{}}, pt)
	c.DrawGlyph(draw.GlyphStyle{Color: black, Radius: vg.Points(5), Shape: draw.RingGlyph{}}, pt)
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
	pt := vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: (c.Min.Y + c.Max.Y) / 2}
	thickRing{vg.Points(2)}.DrawGlyph(c, draw.GlyphStyle{Color: vermilion, Radius: vg.Points(6)}, pt)
}
