package sweep

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"strconv"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// FigurePoint is one value of the sweep figure.
type FigurePoint struct {
	Value float64
	// OK is false for a value without a chain: it leaves a gap.
	OK bool
	// The recommended chain's figures and its notation.
	Multiplies, MemoryBits, LatencyS float64
	Notation                         string
	// The least of each figure over the value's front.
	BestMultiplies, BestMemoryBits, BestLatencyS float64
	// Hardware multipliers at the clock (recommended, least), when
	// FigureData.Clock.
	Multipliers, BestMultipliers float64
}

// FigureData is the input of Figure.
type FigureData struct {
	Title string
	Key   Key
	Pts   []FigurePoint // in increasing Value
	// Clock adds a fourth panel, the hardware multipliers at the clock.
	Clock bool
}

// NewFigureData collects the figure's points from a sweep's results.
func NewFigureData(title string, v Vary, rs []Result) FigureData {
	d := FigureData{Title: title, Key: v.Key}
	for _, r := range rs {
		p := FigurePoint{Value: r.Value}
		if r.Status.HasChain() {
			c := r.Report.Front[r.Report.Recommended]
			b := BestOf(r.Report)
			p.OK = true
			p.Multiplies, p.MemoryBits, p.LatencyS, p.Notation = c.MultipliesPerOutput, float64(c.MemoryBits), c.LatencyS, c.Notation
			p.BestMultiplies, p.BestMemoryBits, p.BestLatencyS = b.Multiplies, float64(b.MemoryBits), b.LatencyS
			if c.MultipliersAtClock != nil && b.Multipliers >= 0 {
				d.Clock = true
				p.Multipliers, p.BestMultipliers = float64(*c.MultipliersAtClock), float64(b.Multipliers)
			}
		}
		d.Pts = append(d.Pts, p)
	}
	return d
}

// Figure size.
const (
	FigureWidth  = 8 * vg.Inch
	FigureHeight = 7 * vg.Inch
)

// Okabe-Ito colours (Okabe and Ito, "Color Universal Design", 2008; hex
// values common practice), as in the plots package.
var (
	blue      = color.RGBA{0x00, 0x72, 0xB2, 0xff}
	vermilion = color.RGBA{0xD5, 0x5E, 0x00, 0xff}
	grey      = color.RGBA{0x77, 0x77, 0x77, 0xff}
)

var (
	sans     = font.Font{Typeface: "Liberation", Variant: "Sans"}
	sansBold = font.Font{Typeface: "Liberation", Variant: "Sans", Weight: xfont.WeightBold}
)

// Render draws the sweep figure in "svg" or "png" (150 dots per inch): three
// stacked panels (multiplies per output, memory, latency) against the swept
// value, the recommended chain solid, the front's best dashed, and a
// vertical line, labelled with the new notation above the panels, wherever
// the recommended chain's structure changes.
func Render(w io.Writer, d FigureData, format string) error {
	var have int
	for _, p := range d.Pts {
		if p.OK {
			have++
		}
		for _, v := range []float64{p.Value, p.Multiplies, p.MemoryBits, p.LatencyS, p.BestMultiplies, p.BestMemoryBits, p.BestLatencyS, p.Multipliers, p.BestMultipliers} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("sweep: figure: value %v has a non-finite figure", p.Value)
			}
		}
	}
	if have == 0 {
		return errors.New("sweep: figure: no value has a chain")
	}
	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = vgsvg.New(FigureWidth, FigureHeight)
	case "png":
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(FigureWidth, FigureHeight), vgimg.UseDPI(150))}
	default:
		return fmt.Errorf("sweep: figure: format %q: want svg or png", format)
	}
	draw1(draw.New(c), d)
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return err
	}
	b := buf.Bytes()
	if format == "svg" {
		// Same fallback as the plots package: Liberation Sans has Arial's metrics.
		b = bytes.ReplaceAll(b, []byte("font-family:Liberation Sans;"),
			[]byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"))
	}
	_, err := w.Write(b)
	return err
}

type unit struct {
	scale float64
	name  string
}

func xUnit(k Key, maxV float64) unit {
	switch k.Dim {
	case Level:
		return unit{1, "dB"}
	case Bits:
		return unit{1, "bits"}
	}
	switch {
	case maxV >= 1e9:
		return unit{1e9, "GHz"}
	case maxV >= 1e6:
		return unit{1e6, "MHz"}
	case maxV >= 1e3:
		return unit{1e3, "kHz"}
	}
	return unit{1, "Hz"}
}

func bitsUnit(maxBits float64) unit {
	switch {
	case maxBits >= 1e6:
		return unit{1e6, "Mbit"}
	case maxBits >= 1e4:
		return unit{1e3, "kbit"}
	}
	return unit{1, "bits"}
}

func timeUnit(maxS float64) unit {
	switch {
	case maxS >= 1:
		return unit{1, "s"}
	case maxS >= 1e-3:
		return unit{1e-3, "ms"}
	case maxS >= 1e-6:
		return unit{1e-6, "µs"}
	}
	return unit{1e-9, "ns"}
}

func textStyle(size vg.Length, bold bool) text.Style {
	f := sans
	if bold {
		f = sansBold
	}
	return text.Style{Color: color.Black, Font: font.From(f, size), Handler: plot.DefaultTextHandler}
}

func draw1(c draw.Canvas, d FigureData) {
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	pad := vg.Points(8)
	area := draw.Crop(c, pad, -pad, pad, -pad)

	title := d.Title
	if title == "" {
		title = "Sweep of " + d.Key.Name
	}
	ts := textStyle(13, true)
	ts.XAlign, ts.YAlign = draw.XCenter, draw.YTop
	c.FillText(ts, vg.Point{X: (area.Min.X + area.Max.X) / 2, Y: area.Max.Y}, title)
	area.Max.Y -= ts.Height(title) + vg.Points(6)

	// Structure labels: the first chain's notation and each change.
	type mark struct {
		x     float64
		label string
		first bool
	}
	var marks []mark
	prev := ""
	for _, p := range d.Pts {
		if !p.OK {
			continue
		}
		if p.Notation != prev {
			marks = append(marks, mark{p.Value, p.Notation, prev == ""})
		}
		prev = p.Notation
	}
	ls := textStyle(9, false)
	rowH := ls.Height("Xg") + vg.Points(3)

	var maxV, maxM, maxT float64
	for _, p := range d.Pts {
		maxV = math.Max(maxV, math.Abs(p.Value))
		if p.OK {
			maxM = math.Max(maxM, math.Max(p.MemoryBits, p.BestMemoryBits))
			maxT = math.Max(maxT, math.Max(p.LatencyS, p.BestLatencyS))
		}
	}
	xu := xUnit(d.Key, maxV)
	mu, tu := bitsUnit(maxM), timeUnit(maxT)
	get := []struct {
		label     string
		u         unit
		rec, best func(FigurePoint) float64
	}{
		{"multiplies / output", unit{1, ""}, func(p FigurePoint) float64 { return p.Multiplies }, func(p FigurePoint) float64 { return p.BestMultiplies }},
		{"memory (" + mu.name + ")", mu, func(p FigurePoint) float64 { return p.MemoryBits }, func(p FigurePoint) float64 { return p.BestMemoryBits }},
		{"latency (" + tu.name + ")", tu, func(p FigurePoint) float64 { return p.LatencyS }, func(p FigurePoint) float64 { return p.BestLatencyS }},
	}
	if d.Clock {
		get = append(get, struct {
			label     string
			u         unit
			rec, best func(FigurePoint) float64
		}{"multipliers at clock", unit{1, ""}, func(p FigurePoint) float64 { return p.Multipliers }, func(p FigurePoint) float64 { return p.BestMultipliers }})
	}
	lo, hi := d.Pts[0].Value/xu.scale, d.Pts[len(d.Pts)-1].Value/xu.scale
	if hi <= lo {
		lo, hi = lo-1, hi+1
	} else {
		m := 0.03 * (hi - lo)
		lo, hi = lo-m, hi+m
	}

	// The legend is a strip below the panels.
	legH := rowH + vg.Points(4)
	gapsAny := false
	for _, p := range d.Pts {
		gapsAny = gapsAny || !p.OK
	}
	drawLegend(c, area.Min.X, area.Min.Y, ls, gapsAny)
	area.Min.Y += legH

	var ps [][]*plot.Plot
	for i, g := range get {
		p := plot.New()
		p.X.Min, p.X.Max = lo, hi
		for _, a := range []*plot.Axis{&p.X, &p.Y} {
			a.Label.TextStyle.Font = font.From(sans, 11)
			a.Tick.Label.Font = font.From(sans, 10)
			a.Padding = vg.Points(2)
		}
		p.Y.Label.Text = g.label
		if i == len(get)-1 {
			p.X.Label.Text = d.Key.Name + " (" + xu.name + ")"
		} else {
			p.X.Tick.Label.Color = color.Transparent
		}
		p.Add(plotter.NewGrid())
		var ymax float64
		for _, s := range []struct {
			f     func(FigurePoint) float64
			col   color.Color
			dash  []vg.Length
			name  string
			glyph draw.GlyphDrawer
		}{
			{g.best, grey, []vg.Length{vg.Points(4), vg.Points(3)}, "least on the front", draw.BoxGlyph{}},
			{g.rec, blue, nil, "recommended chain", draw.CircleGlyph{}},
		} {
			for _, seg := range segments(d.Pts, xu.scale, g.u.scale, s.f) {
				for _, xy := range seg {
					ymax = math.Max(ymax, xy.Y)
				}
				l, pts, err := plotter.NewLinePoints(seg)
				if err != nil {
					continue
				}
				l.Color, l.Dashes, l.Width = s.col, s.dash, vg.Points(1.5)
				pts.Shape, pts.Color, pts.Radius = s.glyph, s.col, vg.Points(2.5)
				p.Add(l, pts)
			}
		}
		var gaps plotter.XYs
		for _, pt := range d.Pts {
			if !pt.OK {
				gaps = append(gaps, plotter.XY{X: pt.Value / xu.scale, Y: 0})
			}
		}
		if len(gaps) > 0 {
			sc, err := plotter.NewScatter(gaps)
			if err == nil {
				sc.Shape, sc.Color, sc.Radius = draw.CrossGlyph{}, vermilion, vg.Points(4)
				p.Add(sc)
			}
		}
		p.Y.Min = 0
		p.Y.Max = ymax * 1.12
		if ymax == 0 {
			p.Y.Max = 1
		}
		for _, m := range marks {
			if m.first {
				continue
			}
			p.Add(vline{x: m.x / xu.scale, col: vermilion})
		}
		p.Y.Tick.Marker = gTicks{}
		p.X.Tick.Marker = valueTicks{vals: values(d.Pts, xu.scale)}
		ps = append(ps, []*plot.Plot{p})
	}

	// Rows of labels above the panels, as many as needed to keep them apart.
	xOf := func(v float64, dc draw.Canvas) vg.Length {
		return dc.Min.X + vg.Length((v/xu.scale-lo)/(hi-lo))*(dc.Max.X-dc.Min.X)
	}
	// Lay out with a guess of the strip's height to find the data area's
	// horizontal extent (it does not depend on the height), then draw.
	probe := plot.Align(ps, draw.Tiles{Rows: len(ps), Cols: 1, PadY: vg.Points(6)}, draw.Crop(area, 0, 0, 0, -2*rowH))
	dc0 := ps[0][0].DataCanvas(probe[0][0])
	type placed struct {
		x   vg.Length
		row int
		m   mark
	}
	var place []placed
	var ends []vg.Length
	for _, m := range marks {
		x := xOf(m.x, dc0)
		txt := m.label
		wdt := ls.Width(txt)
		// Keep the label inside the figure: right-align near the right edge.
		start := x + vg.Points(2)
		if start+wdt > area.Max.X {
			start = x - vg.Points(2) - wdt
		}
		r := 0
		for r < len(ends) && ends[r] > start {
			r++
		}
		if r == len(ends) {
			ends = append(ends, 0)
		}
		ends[r] = start + wdt + vg.Points(6)
		place = append(place, placed{start, r, m})
	}
	rows := max(1, len(ends))
	strip := vg.Length(rows)*rowH + vg.Points(2)
	cells := plot.Align(ps, draw.Tiles{Rows: len(ps), Cols: 1, PadY: vg.Points(6)}, draw.Crop(area, 0, 0, 0, -strip))
	for i := range ps {
		ps[i][0].Draw(cells[i][0])
	}
	dc0 = ps[0][0].DataCanvas(cells[0][0])
	top := area.Max.Y
	for _, pl := range place {
		x := xOf(pl.m.x, dc0)
		start := x + vg.Points(2)
		if start+ls.Width(pl.m.label) > area.Max.X {
			start = x - vg.Points(2) - ls.Width(pl.m.label)
		}
		y := top - vg.Length(pl.row)*rowH
		sty := ls
		sty.YAlign = draw.YTop
		if pl.m.first {
			sty.Color = blue
		} else {
			sty.Color = vermilion
			c.StrokeLine2(draw.LineStyle{Color: vermilion, Width: vg.Points(0.75), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}},
				x, y-rowH+vg.Points(2), x, dc0.Max.Y)
		}
		c.FillText(sty, vg.Point{X: start, Y: y}, pl.m.label)
	}
}

// segments returns runs of consecutive values that have a chain, scaled.
func segments(pts []FigurePoint, xs, ys float64, f func(FigurePoint) float64) []plotter.XYs {
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

// vline marks a structure change across a panel's data area.
type vline struct {
	x   float64
	col color.Color
}

func (v vline) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(v.x)
	c.StrokeLine2(draw.LineStyle{Color: v.col, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}, x, c.Min.Y, x, c.Max.Y)
}

// drawLegend writes the key of the figure's lines on one row at (x, y).
func drawLegend(c draw.Canvas, x, y vg.Length, ls text.Style, gaps bool) {
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

func values(pts []FigurePoint, scale float64) []float64 {
	var v []float64
	for _, p := range pts {
		v = append(v, p.Value/scale)
	}
	return v
}

// valueTicks labels the swept values themselves when there are few enough to
// read, and otherwise every second, fifth or tenth.
type valueTicks struct{ vals []float64 }

func (t valueTicks) Ticks(lo, hi float64) []plot.Tick {
	every := 1
	for len(t.vals)/every > 11 {
		switch every {
		case 1:
			every = 2
		case 2:
			every = 5
		default:
			every *= 2
		}
	}
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
