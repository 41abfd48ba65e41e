package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Size of the Sweep figure: its three or four stacked panels need more
// height than DefaultHeight gives.
const (
	SweepWidth  = 8 * vg.Inch
	SweepHeight = 7 * vg.Inch
)

// SweepKind is the quantity on a Sweep figure's horizontal axis; it picks
// the axis unit.
type SweepKind int

const (
	SweepFrequency SweepKind = iota // Hz, shown in Hz, kHz, MHz or GHz
	SweepLevel                      // dB
	SweepBits                       // whole bits
	SweepCount                      // a whole number in SweepData.Unit (a ratio, stages)
)

// SweepPoint is one swept value of a Sweep figure.
type SweepPoint struct {
	// Value is the swept quantity in its base unit (Hz, dB or bits).
	Value float64
	// OK is false for a value without a chain: the curves leave a gap and
	// a cross marks the value; the figures below are then ignored.
	OK bool
	// The recommended chain's multiplies per output, memory in bits,
	// latency in seconds, and its notation; a change of notation between
	// consecutive chains is marked as a change of structure.
	Multiplies, MemoryBits, LatencyS float64
	Notation                         string
	// The least of each figure over the value's front.
	BestMultiplies, BestMemoryBits, BestLatencyS float64
	// Hardware multipliers at the clock (recommended, least); drawn only
	// when SweepData.Clock is set.
	Multipliers, BestMultipliers float64
	// Hardware adders as built (recommended, least); drawn instead of the
	// multiplies when SweepData.Adders is set (a multiplierless spec).
	Adders, BestAdders float64
}

// SweepData is the input of Sweep.
type SweepData struct {
	// Title is drawn over the figure; empty means "Sweep of " + Name.
	Title string
	// Name is the swept quantity's name, used in the horizontal axis
	// label; Kind picks the axis unit.
	Name string
	Kind SweepKind
	// Unit is the unit of a SweepCount quantity ("stages"), written in
	// the axis label; empty for a plain number (a decimation ratio).
	Unit string
	// Points are the swept values, in the order swept (upwards or
	// downwards). The axis runs from the least value to the greatest
	// whatever the order, and a structure change is marked where the
	// notation differs from that of the value to its left.
	Points []SweepPoint
	// Clock adds a fourth panel, the hardware multipliers at the clock.
	Clock bool
	// Adders puts the hardware adders as built in the first panel instead
	// of the multiplies per output (a multiplierless spec's cost axis).
	// PerInput says the multiplies are per input sample (an
	// interpolation chain's channel side); the zero value labels them per
	// output.
	PerInput bool
	Adders   bool
}

// Sweep draws how the recommended chain's figures move as one quantity of
// the specification is swept: stacked panels of multiplies per output,
// memory and latency (and multipliers at the clock when d.Clock) against the
// swept value, the recommended chain solid, the least on each value's front
// dashed, and a vertical line, labelled with the new notation above the
// panels, wherever the recommended chain's structure changes. Render it at
// SweepWidth x SweepHeight.
func Sweep(d SweepData) (*Figure, error) {
	if d.Kind < SweepFrequency || d.Kind > SweepCount {
		return nil, fmt.Errorf("plots: sweep: Kind %d: want SweepFrequency, SweepLevel, SweepBits or SweepCount", d.Kind)
	}
	if len(d.Points) == 0 {
		return nil, fmt.Errorf("plots: sweep: Points is empty: want at least one value")
	}
	var have int
	for i, p := range d.Points {
		if !finite(p.Value) {
			return nil, fmt.Errorf("plots: sweep: Points[%d].Value = %v: must be finite", i, p.Value)
		}
		if !p.OK {
			continue
		}
		have++
		for _, f := range []struct {
			name string
			v    float64
		}{
			{"Multiplies", p.Multiplies}, {"MemoryBits", p.MemoryBits}, {"LatencyS", p.LatencyS},
			{"BestMultiplies", p.BestMultiplies}, {"BestMemoryBits", p.BestMemoryBits}, {"BestLatencyS", p.BestLatencyS},
			{"Multipliers", p.Multipliers}, {"BestMultipliers", p.BestMultipliers},
		} {
			if !finite(f.v) {
				return nil, fmt.Errorf("plots: sweep: Points[%d].%s = %v (value %v): must be finite", i, f.name, f.v, p.Value)
			}
		}
	}
	if have == 0 {
		return nil, fmt.Errorf("plots: sweep: Points: no value has a chain (OK); nothing to draw")
	}
	s := newSweepFigure(d)
	f := &Figure{title: s.title, custom: s.draw}
	for _, p := range s.ps {
		f.panels = append(f.panels, panel{p: p, weight: 1})
	}
	return f, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// Grey of the "least on the front" curves.
var grey = color.RGBA{0x77, 0x77, 0x77, 0xff}

// sweepMark is a structure label: the first chain's notation or a change.
type sweepMark struct {
	x     float64
	label string
	first bool
}

// sweepFigure holds the panels built from the data; its draw lays them
// out with the structure labels above and the legend below, which the
// generic Figure layout has no place for.
type sweepFigure struct {
	title  string
	ps     []*plot.Plot
	marks  []sweepMark
	xu     unit
	lo, hi float64
	gaps   bool
}

// byValue returns the points in increasing Value (a stable sort: points
// already in order are returned as they are).
func byValue(pts []SweepPoint) []SweepPoint {
	out := append([]SweepPoint(nil), pts...)
	sort.SliceStable(out, func(i, j int) bool { return out[i].Value < out[j].Value })
	return out
}

func newSweepFigure(d SweepData) *sweepFigure {
	d.Points = byValue(d.Points)
	s := &sweepFigure{title: d.Title}
	if s.title == "" {
		s.title = "Sweep of " + d.Name
	}
	prev := ""
	for _, p := range d.Points {
		s.gaps = s.gaps || !p.OK
		if !p.OK {
			continue
		}
		if p.Notation != prev {
			s.marks = append(s.marks, sweepMark{p.Value, p.Notation, prev == ""})
		}
		prev = p.Notation
	}

	var maxV, maxM, maxT float64
	for _, p := range d.Points {
		maxV = math.Max(maxV, math.Abs(p.Value))
		if p.OK {
			maxM = math.Max(maxM, math.Max(p.MemoryBits, p.BestMemoryBits))
			maxT = math.Max(maxT, math.Max(p.LatencyS, p.BestLatencyS))
		}
	}
	switch d.Kind {
	case SweepLevel:
		s.xu = unit{1, "dB"}
	case SweepBits:
		s.xu = unit{1, "bits"}
	case SweepCount:
		s.xu = unit{1, d.Unit}
	default:
		s.xu = freqUnit(maxV)
	}
	xu := s.xu
	mu, tu := bitsUnit(maxM), timeUnit(maxT)
	side := "output"
	if d.PerInput {
		side = "input"
	}
	type figure struct {
		label     string
		u         unit
		rec, best func(SweepPoint) float64
	}
	get := []figure{
		{"multiplies / " + side, unit{1, ""}, func(p SweepPoint) float64 { return p.Multiplies }, func(p SweepPoint) float64 { return p.BestMultiplies }},
		{"memory (" + mu.name + ")", mu, func(p SweepPoint) float64 { return p.MemoryBits }, func(p SweepPoint) float64 { return p.BestMemoryBits }},
		{"latency (" + tu.name + ")", tu, func(p SweepPoint) float64 { return p.LatencyS }, func(p SweepPoint) float64 { return p.BestLatencyS }},
	}
	if d.Adders {
		get[0] = figure{"adders (as built)", unit{1, ""}, func(p SweepPoint) float64 { return p.Adders }, func(p SweepPoint) float64 { return p.BestAdders }}
	}
	if d.Clock {
		get = append(get, figure{"multipliers at clock", unit{1, ""}, func(p SweepPoint) float64 { return p.Multipliers }, func(p SweepPoint) float64 { return p.BestMultipliers }})
	}
	lo, hi := d.Points[0].Value/xu.scale, d.Points[len(d.Points)-1].Value/xu.scale
	if hi <= lo {
		lo, hi = lo-1, hi+1
	} else {
		m := 0.03 * (hi - lo)
		lo, hi = lo-m, hi+m
	}
	s.lo, s.hi = lo, hi

	for i, g := range get {
		p := newPlot()
		p.X.Min, p.X.Max = lo, hi
		p.Y.Label.Text = g.label
		if i == len(get)-1 {
			p.X.Label.Text = d.Name + " (" + xu.name + ")"
			if xu.name == "" {
				p.X.Label.Text = d.Name
			}
		} else {
			p.X.Tick.Label.Color = color.Transparent
		}
		p.Add(plotter.NewGrid())
		var ymax float64
		for _, c := range []struct {
			f     func(SweepPoint) float64
			col   color.Color
			dash  []vg.Length
			glyph draw.GlyphDrawer
		}{
			{g.best, grey, []vg.Length{vg.Points(4), vg.Points(3)}, draw.BoxGlyph{}},
			{g.rec, blue, nil, draw.CircleGlyph{}},
		} {
			for _, seg := range sweepSegments(d.Points, xu.scale, g.u.scale, c.f) {
				for _, xy := range seg {
					ymax = math.Max(ymax, xy.Y)
				}
				l, pts, err := plotter.NewLinePoints(seg)
				if err != nil {
					continue
				}
				l.Color, l.Dashes, l.Width = c.col, c.dash, vg.Points(1.5)
				pts.Shape, pts.Color, pts.Radius = c.glyph, c.col, vg.Points(2.5)
				p.Add(l, pts)
			}
		}
		var gaps plotter.XYs
		for _, pt := range d.Points {
			if !pt.OK {
				gaps = append(gaps, plotter.XY{X: pt.Value / xu.scale, Y: 0})
			}
		}
		if len(gaps) > 0 {
			if sc, err := plotter.NewScatter(gaps); err == nil {
				sc.Shape, sc.Color, sc.Radius = draw.CrossGlyph{}, vermilion, vg.Points(4)
				p.Add(sc)
			}
		}
		p.Y.Min = 0
		p.Y.Max = ymax * 1.12
		if ymax == 0 {
			p.Y.Max = 1
		}
		for _, m := range s.marks {
			if !m.first {
				p.Add(sweepLine{x: m.x / xu.scale, col: vermilion})
			}
		}
		p.Y.Tick.Marker = gTicks{}
		vals := make([]float64, len(d.Points))
		for i, pt := range d.Points {
			vals[i] = pt.Value / xu.scale
		}
		p.X.Tick.Marker = valueTicks{vals: vals}
		s.ps = append(s.ps, p)
	}
	return s
}

func (s *sweepFigure) draw(c draw.Canvas) {
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	pad := vg.Points(8)
	area := draw.Crop(c, pad, -pad, pad, -pad)

	ts := textStyle(13, true)
	ts.XAlign, ts.YAlign = draw.XCenter, draw.YTop
	c.FillText(ts, vg.Point{X: (area.Min.X + area.Max.X) / 2, Y: area.Max.Y}, s.title)
	area.Max.Y -= ts.Height(s.title) + vg.Points(6)

	ls := textStyle(9, false)
	rowH := ls.Height("Xg") + vg.Points(3)

	// The legend is a strip below the panels.
	sweepLegend(c, area.Min.X, area.Min.Y, ls, s.gaps)
	area.Min.Y += rowH + vg.Points(4)

	ps := make([][]*plot.Plot, len(s.ps))
	for i, p := range s.ps {
		ps[i] = []*plot.Plot{p}
	}
	xOf := func(v float64, dc draw.Canvas) vg.Length {
		return dc.Min.X + vg.Length((v/s.xu.scale-s.lo)/(s.hi-s.lo))*(dc.Max.X-dc.Min.X)
	}
	// Keep a label inside the figure: right-align it near the right edge.
	startOf := func(x vg.Length, label string) vg.Length {
		start := x + vg.Points(2)
		if w := ls.Width(label); start+w > area.Max.X {
			start = x - vg.Points(2) - w
		}
		return start
	}
	// Rows of labels above the panels, as many as needed to keep them
	// apart. Lay out with a guess of the strip's height to find the data
	// area's horizontal extent (it does not depend on the height), then
	// draw.
	tiles := draw.Tiles{Rows: len(ps), Cols: 1, PadY: vg.Points(6)}
	probe := plot.Align(ps, tiles, draw.Crop(area, 0, 0, 0, -2*rowH))
	dc0 := s.ps[0].DataCanvas(probe[0][0])
	rowOf := make([]int, len(s.marks))
	var ends []vg.Length
	for i, m := range s.marks {
		start := startOf(xOf(m.x, dc0), m.label)
		r := 0
		for r < len(ends) && ends[r] > start {
			r++
		}
		if r == len(ends) {
			ends = append(ends, 0)
		}
		ends[r] = start + ls.Width(m.label) + vg.Points(6)
		rowOf[i] = r
	}
	strip := vg.Length(max(1, len(ends)))*rowH + vg.Points(2)
	cells := plot.Align(ps, tiles, draw.Crop(area, 0, 0, 0, -strip))
	for i, p := range s.ps {
		p.Draw(cells[i][0])
	}
	dc0 = s.ps[0].DataCanvas(cells[0][0])
	for i, m := range s.marks {
		x := xOf(m.x, dc0)
		y := area.Max.Y - vg.Length(rowOf[i])*rowH
		sty := ls
		sty.YAlign = draw.YTop
		if m.first {
			sty.Color = blue
		} else {
			sty.Color = vermilion
			c.StrokeLine2(draw.LineStyle{Color: vermilion, Width: vg.Points(0.75), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}},
				x, y-rowH+vg.Points(2), x, dc0.Max.Y)
		}
		c.FillText(sty, vg.Point{X: startOf(x, m.label), Y: y}, m.label)
	}
}

// sweepSegments returns runs of consecutive values that have a chain, scaled.
func sweepSegments(pts []SweepPoint, xs, ys float64, f func(SweepPoint) float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for _, p := range pts {
		if !p.OK {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		cur = append(cur, plotter.XY{X: p.Value / xs, Y: f(p) / ys})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// sweepLine marks a structure change across a panel's data area.
type sweepLine struct {
	x   float64
	col color.Color
}

func (v sweepLine) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(v.x)
	c.StrokeLine2(draw.LineStyle{Color: v.col, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}, x, c.Min.Y, x, c.Max.Y)
}

// sweepLegend writes the key of the figure's lines on one row at (x, y).
func sweepLegend(c draw.Canvas, x, y vg.Length, ls text.Style, gaps bool) {
	items := []struct {
		name  string
		col   color.Color
		dash  []vg.Length
		glyph draw.GlyphDrawer
	}{
		{"recommended chain", blue, nil, draw.CircleGlyph{}},
		{"least on the front (per figure)", grey, []vg.Length{vg.Points(4), vg.Points(3)}, draw.BoxGlyph{}},
		{"structure changes", vermilion, []vg.Length{vg.Points(2), vg.Points(2)}, nil},
		{"no chain (see sweep.csv)", vermilion, nil, draw.CrossGlyph{}},
	}
	if !gaps {
		items = items[:3]
	}
	ls.YAlign = draw.YCenter
	mid := y + ls.Height("Xg")/2 + vg.Points(2)
	for _, it := range items {
		w := vg.Points(22)
		if _, cross := it.glyph.(draw.CrossGlyph); cross {
			c.DrawGlyph(draw.GlyphStyle{Color: it.col, Radius: vg.Points(4), Shape: it.glyph}, vg.Point{X: x + w/2, Y: mid})
		} else if it.glyph == nil {
			c.StrokeLine2(draw.LineStyle{Color: it.col, Width: vg.Points(1), Dashes: it.dash}, x+w/2, mid-vg.Points(6), x+w/2, mid+vg.Points(6))
		} else {
			c.StrokeLine2(draw.LineStyle{Color: it.col, Width: vg.Points(1.5), Dashes: it.dash}, x, mid, x+w, mid)
			c.DrawGlyph(draw.GlyphStyle{Color: it.col, Radius: vg.Points(2.5), Shape: it.glyph}, vg.Point{X: x + w/2, Y: mid})
		}
		x += w + vg.Points(4)
		c.FillText(ls, vg.Point{X: x, Y: mid}, it.name)
		x += ls.Width(it.name) + vg.Points(14)
	}
}

// valueTicks labels the swept values themselves when there are few enough to
// read, and otherwise every second, fifth or tenth.
type valueTicks struct{ vals []float64 }

func (t valueTicks) Ticks(lo, hi float64) []plot.Tick {
	every := labelEvery(len(t.vals), 11)
	var out []plot.Tick
	for i, v := range t.vals {
		tk := plot.Tick{Value: v}
		if i%every == 0 {
			tk.Label = strconv.FormatFloat(v, 'g', 6, 64)
		}
		out = append(out, tk)
	}
	return out
}

// gTicks is gonum's default placement with labels in the shortest form.
type gTicks struct{}

func (gTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'g', 6, 64)
		}
	}
	return ts
}

// labelEvery is the step between labelled ticks that leaves at most most of
// n labelled: 1, 2, 5, then doubling.
func labelEvery(n, most int) int {
	every := 1
	for n/every > most {
		switch every {
		case 1:
			every = 2
		case 2:
			every = 5
		default:
			every *= 2
		}
	}
	return every
}
