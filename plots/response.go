package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Series is one named gain curve on the frequency grid of a ResponseData.
type Series struct {
	// Name is shown in the legend; empty selects "stage i" (from 1).
	Name string
	// DB holds the gain in dB at each ResponseData.FreqHz; -Inf is an exact
	// null, NaN and +Inf are errors.
	DB []float64
}

// ResponseData is the input of Response.
type ResponseData struct {
	// Title is the figure title; empty selects "Cascade response".
	Title string
	// FreqHz is the input-frequency grid in Hz: at least two points,
	// strictly increasing, finite and >= 0. It usually runs from 0 to half
	// the input rate; the near-region panel resolves only as finely as the
	// grid does, so a grid of 10 000 to 50 000 points suits large ratios.
	FreqHz []float64
	// TotalDB is the cascade's gain in dB at each FreqHz, relative to its DC
	// gain.
	TotalDB []float64
	// Stages are each stage's gain on the same input-frequency grid, in
	// cascade order. It may be empty.
	Stages []Series
	// AliasBands are the input-frequency bands in Hz, [low, high], that fold
	// onto the protected band at the output; they are shaded. Overlapping
	// and touching bands are merged, and bands closer than about a pixel are
	// drawn as one, so tens of thousands of bands stay cheap. It may be
	// empty.
	AliasBands [][2]float64
	// TargetDB is the alias-rejection target in positive dB, drawn as a
	// line at -TargetDB. Zero draws no target.
	TargetDB float64
	// PassbandHz is the passband edge in Hz, drawn as a vertical line. Zero
	// draws none.
	PassbandHz float64
	// OutputRateHz is the final output rate in Hz. It sets the span of the
	// near-region panel. Zero infers it from the centre of the first alias
	// band; with neither, there is no near-region panel.
	OutputRateHz float64
	// ZoomHz is the upper edge of the near-region panel, drawn below the
	// full span. Zero selects 2.5 output rates (the passband and the first
	// two alias bands); a negative value, or a zoom wider than half the
	// full span, leaves the panel out. The panel is also left out of
	// figures rendered less than 4.4 inches tall.
	ZoomHz float64
}

// Response draws the cascade's gain in dB against input frequency, with
// each stage's gain, the alias bands shaded and the rejection target drawn:
// the full span on top and, when it helps, the region near the output band
// underneath.
func Response(d ResponseData) (*Figure, error) {
	if err := d.check(); err != nil {
		return nil, err
	}
	n := len(d.FreqHz)

	// The floor keeps the curves readable: 60 dB below the target shows the
	// margin, deeper nulls would only squash the scale.
	dmin, dmax := math.Inf(1), math.Inf(-1)
	for _, s := range append([][]float64{d.TotalDB}, seriesDB(d.Stages)...) {
		for _, v := range s {
			if !math.IsInf(v, -1) {
				dmin, dmax = math.Min(dmin, v), math.Max(dmax, v)
			}
		}
	}
	floor := -160.0
	if d.TargetDB > 0 {
		floor = -d.TargetDB - 60
	}
	if !math.IsInf(dmin, 0) {
		floor = math.Max(floor, 10*math.Floor((dmin-5)/10))
	} else {
		dmax = 0
	}
	top := math.Max(5, 5*math.Ceil((dmax+3)/5))
	if top-floor < 20 {
		floor = top - 20
	}

	zoom := d.ZoomHz
	fk := d.OutputRateHz
	if fk == 0 && len(d.AliasBands) > 0 {
		b := lowestMerged(d.AliasBands)
		fk = (b[0] + b[1]) / 2
	}
	if zoom == 0 {
		zoom = 2.5 * fk
	}
	fullLo, fullHi := d.FreqHz[0], d.FreqHz[n-1]
	if zoom <= fullLo || zoom > fullLo+0.5*(fullHi-fullLo) || !(fk > 0) {
		zoom = -1
	}

	leg := newLegend()
	title := d.Title
	if title == "" {
		title = "Cascade response"
	}
	// At large ratios the near region is a sliver of the full span; a log
	// frequency axis then shows every stage's work in one view.
	logx := zoom > 0 && fullHi/fk > logSpan
	if logx {
		fullLo = fk / 10
		if i := sort.SearchFloat64s(d.FreqHz, fullLo); i < n && d.FreqHz[i] > fullLo && i > 0 && d.FreqHz[i-1] > 0 {
			fullLo = d.FreqHz[i-1]
		}
	}
	full := responsePanel(d, fullLo, fullHi, floor, top, logx, leg)
	fig := &Figure{title: title, panels: []panel{{p: full, weight: 1}}, side: leg}
	if zoom > 0 {
		near := responsePanel(d, d.FreqHz[0], zoom, floor, top, false, nil)
		near.Title.Text = "Near the output band"
		near.Title.TextStyle.Font.Size = 11
		fig.panels[0].weight = 0.55
		fig.panels = append(fig.panels, panel{p: near, weight: 0.45, optional: true})
	}
	return fig, nil
}

func (d *ResponseData) check() error {
	n := len(d.FreqHz)
	if n < 2 {
		return fmt.Errorf("plots: ResponseData.FreqHz has %d points: need at least 2", n)
	}
	for i, f := range d.FreqHz {
		if math.IsNaN(f) || math.IsInf(f, 0) || f < 0 {
			return fmt.Errorf("plots: ResponseData.FreqHz[%d] = %v: must be finite and >= 0", i, f)
		}
		if i > 0 && f <= d.FreqHz[i-1] {
			return fmt.Errorf("plots: ResponseData.FreqHz[%d] = %v: must exceed FreqHz[%d] = %v (strictly increasing)", i, f, i-1, d.FreqHz[i-1])
		}
	}
	checkDB := func(field string, db []float64) error {
		if len(db) != n {
			return fmt.Errorf("plots: ResponseData.%s has %d values: must match FreqHz (%d)", field, len(db), n)
		}
		for i, v := range db {
			if math.IsNaN(v) || math.IsInf(v, 1) {
				return fmt.Errorf("plots: ResponseData.%s[%d] = %v: must be finite or -Inf", field, i, v)
			}
		}
		return nil
	}
	if err := checkDB("TotalDB", d.TotalDB); err != nil {
		return err
	}
	for i, s := range d.Stages {
		if err := checkDB(fmt.Sprintf("Stages[%d].DB", i), s.DB); err != nil {
			return err
		}
	}
	for i, b := range d.AliasBands {
		if math.IsNaN(b[0]) || math.IsNaN(b[1]) || math.IsInf(b[0], 0) || math.IsInf(b[1], 0) || b[0] < 0 || b[1] < b[0] {
			return fmt.Errorf("plots: ResponseData.AliasBands[%d] = %v: need finite 0 <= low <= high", i, b)
		}
	}
	for _, v := range []struct {
		name string
		v    float64
	}{{"TargetDB", d.TargetDB}, {"PassbandHz", d.PassbandHz}, {"OutputRateHz", d.OutputRateHz}} {
		if math.IsNaN(v.v) || math.IsInf(v.v, 0) || v.v < 0 {
			return fmt.Errorf("plots: ResponseData.%s = %v: must be finite and >= 0", v.name, v.v)
		}
	}
	if math.IsNaN(d.ZoomHz) || math.IsInf(d.ZoomHz, 0) {
		return fmt.Errorf("plots: ResponseData.ZoomHz = %v: must be finite", d.ZoomHz)
	}
	return nil
}

func seriesDB(ss []Series) [][]float64 {
	out := make([][]float64, len(ss))
	for i, s := range ss {
		out[i] = s.DB
	}
	return out
}

// responsePanel draws the curves over [lo, hi]; leg, if not nil, receives
// the legend entries.
func responsePanel(d ResponseData, lo, hi, floor, top float64, logx bool, leg *plot.Legend) *plot.Plot {
	p := newPlot()
	u := freqUnit(hi)
	p.X.Min, p.X.Max = lo, hi
	p.Y.Min, p.Y.Max = floor, top
	p.X.Tick.Marker = scaledTicks{scale: u.scale}
	p.X.Label.Text = "Input frequency (" + u.name + ")"
	tol, rel := (hi-lo)/1500, 0.0
	if logx {
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = logTicks{}
		p.X.Label.Text = "Input frequency (Hz, log scale)"
		tol, rel = 0, math.Pow(hi/lo, 1.0/1500)-1
	}
	p.Y.Label.Text = fmt.Sprintf("Gain (dB, floor %g)", floor)
	p.Y.Tick.Marker = dbTicks{}
	addGrid(p)
	// Legend entries are collected in drawing order (bands at the back,
	// the cascade on top) and listed in reading order (the cascade first).
	type entry struct {
		name string
		th   plot.Thumbnailer
	}
	var entries []entry
	legAdd := func(name string, th plot.Thumbnailer) { entries = append(entries, entry{name, th}) }
	add := func(name string, pl plot.Plotter, th plot.Thumbnailer) {
		p.Add(pl)
		legAdd(name, th)
	}

	if bands := merged(d.AliasBands, tol, rel); len(bands) > 0 {
		var rings []plotter.XYer
		for _, b := range bands {
			b0, b1 := math.Max(b[0], lo), math.Min(b[1], hi)
			if b1 < b0 {
				continue
			}
			rings = append(rings, plotter.XYs{{X: b0, Y: floor}, {X: b1, Y: floor}, {X: b1, Y: top}, {X: b0, Y: top}})
		}
		if len(rings) > 0 {
			poly, _ := plotter.NewPolygon(rings...)
			poly.Color = color.RGBA{0xF6, 0xDC, 0xC4, 0xff} // a light tint of vermilion
			poly.LineStyle.Width = 0
			add("alias bands", poly, poly)
		} else {
			// Keep the legend the same whether or not a band falls in view.
			poly, _ := plotter.NewPolygon(plotter.XYs{})
			poly.Color = color.RGBA{0xF6, 0xDC, 0xC4, 0xff}
			poly.LineStyle.Width = 0
			legAdd("alias bands", poly)
		}
	}
	if d.PassbandHz > 0 {
		l, _ := plotter.NewLine(plotter.XYs{{X: d.PassbandHz, Y: floor}, {X: d.PassbandHz, Y: top}})
		l.LineStyle = draw.LineStyle{Color: color.RGBA{0x50, 0x50, 0x50, 0xff}, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}
		if d.PassbandHz <= hi && d.PassbandHz >= lo {
			add("passband edge "+hz(d.PassbandHz), l, l)
		} else {
			legAdd("passband edge "+hz(d.PassbandHz), l)
		}
	}
	if d.TargetDB > 0 {
		l, _ := plotter.NewLine(plotter.XYs{{X: lo, Y: -d.TargetDB}, {X: hi, Y: -d.TargetDB}})
		l.LineStyle = draw.LineStyle{Color: vermilion, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(6), vg.Points(3)}}
		add(fmt.Sprintf("rejection target -%g dB", d.TargetDB), l, l)
	}
	for i, s := range d.Stages {
		name := s.Name
		if name == "" {
			name = fmt.Sprintf("stage %d", i+1)
		}
		sty := draw.LineStyle{Color: stageColors[i%len(stageColors)], Width: vg.Points(1)}
		if i >= len(stageColors) {
			sty.Dashes = []vg.Length{vg.Points(4), vg.Points(2)}
		}
		l := newEnvelope(d.FreqHz, s.DB, lo, hi, floor, logx, sty)
		add(fmt.Sprintf("stage %d: %s", i+1, name), l, l)
	}
	l := newEnvelope(d.FreqHz, d.TotalDB, lo, hi, floor, logx, draw.LineStyle{Color: black, Width: vg.Points(1.8)})
	add("cascade", l, l)
	if leg != nil {
		// Reading order: the cascade, the stages in cascade order, then
		// the reference marks.
		rank := func(name string) int {
			switch {
			case name == "cascade":
				return 0
			case strings.HasPrefix(name, "stage "):
				return 1
			}
			return 2
		}
		sort.SliceStable(entries, func(i, j int) bool { return rank(entries[i].name) < rank(entries[j].name) })
		for _, e := range entries {
			leg.Add(e.name, e.th)
		}
	}
	return p
}

// bandLess orders bands by their low edge, then their high edge.
func bandLess(a, b [2]float64) bool {
	if a[0] != b[0] {
		return a[0] < b[0]
	}
	return a[1] < b[1]
}

// sortedBands returns bands in order: the caller's slice itself when it is
// already sorted (the usual case: a chain's alias bands come in order, and
// there are D/2 of them, millions at large ratios, so they are not copied),
// otherwise a sorted copy.
func sortedBands(bands [][2]float64) [][2]float64 {
	for i := 1; i < len(bands); i++ {
		if bandLess(bands[i], bands[i-1]) {
			s := make([][2]float64, len(bands))
			copy(s, bands)
			sort.Slice(s, func(i, j int) bool { return bandLess(s[i], s[j]) })
			return s
		}
	}
	return bands
}

// lowestMerged returns the first band of merged(bands, 0, 0) without
// building the others.
func lowestMerged(bands [][2]float64) [2]float64 {
	s := sortedBands(bands)
	out := s[0]
	for _, b := range s[1:] {
		if b[0] > out[1] {
			break
		}
		out[1] = math.Max(out[1], b[1])
	}
	return out
}

// merged returns the bands sorted and merged, joining bands whose gap is at
// most tol plus rel times the frequency where the gap starts (a constant
// width on a log axis). It does not modify bands.
func merged(bands [][2]float64, tol, rel float64) [][2]float64 {
	if len(bands) == 0 {
		return nil
	}
	s := sortedBands(bands)
	out := [][2]float64{s[0]}
	for _, b := range s[1:] {
		last := &out[len(out)-1]
		if b[0] <= last[1]+tol+rel*last[1] {
			last[1] = math.Max(last[1], b[1])
			continue
		}
		out = append(out, b)
	}
	return out
}

// decimate returns the curve over [lo, hi] (with one neighbour each side,
// so the line meets the axis edges; on a log axis none below lo), clamped
// at floor, as the upper and lower edges of its envelope over 1500 columns
// of the axis: where a column holds at most two samples both edges pass
// through them (up and down are the same points when the whole span has at
// most 3000 samples), and where it holds more, up passes through the
// column's maximum and down through its minimum. The envelope keeps every
// peak and null at a bounded size; drawing it as a filled band (see
// envelope) rather than a polyline that zig-zags between the extremes keeps
// the rasteriser's work proportional to the columns.
func decimate(x, y []float64, lo, hi, floor float64, logx bool) (up, down plotter.XYs) {
	const columns = 1500
	i0 := sort.SearchFloat64s(x, lo)
	if i0 > 0 && (!logx || x[i0-1] > 0) {
		i0--
	}
	i1 := sort.SearchFloat64s(x, hi)
	if i1 < len(x) {
		i1++
	}
	at := func(i int) plotter.XY { return plotter.XY{X: x[i], Y: math.Max(y[i], floor)} }
	if i1-i0 <= 2*columns {
		out := make(plotter.XYs, 0, max(0, i1-i0))
		for i := i0; i < i1; i++ {
			out = append(out, at(i))
		}
		return out, out
	}
	column := func(v float64) float64 { return math.Floor((v - lo) / (hi - lo) * columns) }
	if logx {
		column = func(v float64) float64 { return math.Floor(math.Log(v/lo) / math.Log(hi/lo) * columns) }
	}
	up = make(plotter.XYs, 0, 2*columns+2)
	down = make(plotter.XYs, 0, 2*columns+2)
	up = append(up, at(i0))
	down = append(down, at(i0))
	for i := i0 + 1; i < i1-1; {
		col := column(x[i])
		imin, imax := i, i
		j := i
		for ; j < i1-1 && column(x[j]) == col; j++ {
			if y[j] < y[imin] {
				imin = j
			}
			if y[j] > y[imax] {
				imax = j
			}
		}
		if j-i <= 2 {
			for k := i; k < j; k++ {
				up = append(up, at(k))
				down = append(down, at(k))
			}
		} else {
			up = append(up, at(imax))
			down = append(down, at(imin))
		}
		i = j
	}
	last := at(i1 - 1)
	return append(up, last), append(down, last)
}

// envelope draws a curve given as the edges of its envelope (see
// decimate): the band between them filled, and both edges stroked, so
// that it looks like the full-resolution polyline at the figure's
// resolution.
type envelope struct {
	up, down plotter.XYs
	draw.LineStyle
}

// newEnvelope is the envelope of the curve over [lo, hi].
func newEnvelope(x, y []float64, lo, hi, floor float64, logx bool, sty draw.LineStyle) *envelope {
	up, down := decimate(x, y, lo, hi, floor, logx)
	return &envelope{up: up, down: down, LineStyle: sty}
}

// Plot implements plot.Plotter.
func (e *envelope) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	pts := func(xy plotter.XYs) []vg.Point {
		ps := make([]vg.Point, len(xy))
		for i, p := range xy {
			ps[i] = vg.Point{X: trX(p.X), Y: trY(p.Y)}
		}
		return ps
	}
	up := pts(e.up)
	if len(up) == 0 {
		return
	}
	same := &e.up[0] == &e.down[0]
	if !same {
		down := pts(e.down)
		ring := make([]vg.Point, 0, len(up)+len(down))
		ring = append(ring, up...)
		for i := len(down) - 1; i >= 0; i-- {
			ring = append(ring, down[i])
		}
		c.FillPolygon(e.Color, c.ClipPolygonXY(ring))
		c.StrokeLines(e.LineStyle, c.ClipLinesXY(down)...)
	}
	c.StrokeLines(e.LineStyle, c.ClipLinesXY(up)...)
}

// Thumbnail implements plot.Thumbnailer: a short line in the curve's style.
func (e *envelope) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(e.LineStyle, c.Min.X, y, c.Max.X, y)
}

// logSpan is the ratio of the full span to the output rate above which the
// full-span panel uses a log frequency axis.
const logSpan = 200

// hz formats a frequency with an engineering unit: 600000 -> "600 kHz".
func hz(f float64) string {
	u := freqUnit(f)
	return trimFloat(f/u.scale) + " " + u.name
}

// dbTicks labels the gain axis every 20 dB (every 10 dB on short spans),
// the habit of filter plots.
type dbTicks struct{}

func (dbTicks) Ticks(min, max float64) []plot.Tick {
	step := 20.0
	if max-min <= 60 {
		step = 10
	}
	var ts []plot.Tick
	for v := math.Ceil(min/10) * 10; v <= max; v += 10 {
		t := plot.Tick{Value: v}
		if math.Mod(v, step) == 0 {
			t.Label = fmt.Sprintf("%g", v)
		}
		ts = append(ts, t)
	}
	return ts
}
