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
	// TotalName is TotalDB's legend entry; empty selects "cascade".
	TotalName string
	// AliasDB, when not empty, is a second curve on the same grid, in dB
	// relative to the DC gain, drawn in the alias bands' colour: for a
	// chain that ends in a fractional stage, whose tones take several
	// paths, the largest gain of any path that lands in the protected
	// band. -Inf (no such path) is drawn at the floor.
	AliasDB []float64
	// AliasName is AliasDB's legend entry; empty selects "largest alias".
	AliasName string
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
	// Mask, when not empty, is a rejection mask's points, [frequency Hz,
	// rejection dB] in increasing frequency (linear in dB between points,
	// flat beyond the ends, a repeated frequency a step), drawn at
	// -rejection instead of the TargetDB line.
	Mask [][2]float64
	// PassbandHz is the passband edge in Hz, drawn as a vertical line. Zero
	// draws none.
	PassbandHz float64
	// Images says the chain interpolates: FreqHz is then the output
	// frequency, AliasBands are the images of the protected band and
	// OutputRateHz is the channel (input) rate, and the labels say so.
	// The zero value draws a decimation chain's.
	Images bool
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
	for _, s := range append([][]float64{d.TotalDB, d.AliasDB}, seriesDB(d.Stages)...) {
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
		if d.Images {
			near.Title.Text = "Near the channel band"
		}
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
	if len(d.AliasDB) > 0 {
		if err := checkDB("AliasDB", d.AliasDB); err != nil {
			return err
		}
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
	for i, p := range d.Mask {
		if math.IsNaN(p[0]) || math.IsInf(p[0], 0) || p[0] < 0 || math.IsNaN(p[1]) || math.IsInf(p[1], 0) || (i > 0 && p[0] < d.Mask[i-1][0]) {
			return fmt.Errorf("plots: ResponseData.Mask[%d] = %v: need finite points, frequencies >= 0 and non-decreasing", i, p)
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
	axis, bandsName := "Input frequency", "alias bands"
	if d.Images {
		axis, bandsName = "Output frequency", "image bands"
	}
	p.X.Label.Text = axis + " (" + u.name + ")"
	tol, rel := (hi-lo)/1500, 0.0
	if logx {
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = logTicks{}
		p.X.Label.Text = axis + " (Hz, log scale)"
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
			add(bandsName, poly, poly)
		} else {
			// Keep the legend the same whether or not a band falls in view.
			poly, _ := plotter.NewPolygon(plotter.XYs{})
			poly.Color = color.RGBA{0xF6, 0xDC, 0xC4, 0xff}
			poly.LineStyle.Width = 0
			legAdd(bandsName, poly)
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
	if len(d.Mask) > 0 {
		// The mask at -rejection across the span: flat beyond its ends,
		// linear between its points (a repeated frequency is a step).
		xy := plotter.XYs{{X: lo, Y: -maskAt(d.Mask, lo)}}
		for _, pt := range d.Mask {
			if pt[0] > lo && pt[0] < hi {
				xy = append(xy, plotter.XY{X: pt[0], Y: -pt[1]})
			}
		}
		xy = append(xy, plotter.XY{X: hi, Y: -maskAt(d.Mask, hi)})
		if logx && xy[0].X <= 0 {
			xy = xy[1:]
		}
		l, _ := plotter.NewLine(xy)
		l.LineStyle = draw.LineStyle{Color: vermilion, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(6), vg.Points(3)}}
		add("rejection mask", l, l)
	} else if d.TargetDB > 0 {
		l, _ := plotter.NewLine(plotter.XYs{{X: lo, Y: -d.TargetDB}, {X: hi, Y: -d.TargetDB}})
		l.LineStyle = draw.LineStyle{Color: vermilion, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(6), vg.Points(3)}}
		add(fmt.Sprintf("rejection target -%g dB", d.TargetDB), l, l)
	}
	// A 50th of the gain axis: the least swing that counts towards a dense
	// stretch.
	swing := (top - floor) / 50
	dense := false
	for i, s := range d.Stages {
		name := s.Name
		if name == "" {
			name = fmt.Sprintf("stage %d", i+1)
		}
		sty := draw.LineStyle{Color: stageColors[i%len(stageColors)], Width: vg.Points(1)}
		if i >= len(stageColors) {
			sty.Dashes = []vg.Length{vg.Points(4), vg.Points(2)}
		}
		l := newEnvelope(d.FreqHz, s.DB, lo, hi, floor, swing, logx, sty)
		add(fmt.Sprintf("stage %d: %s", i+1, name), l, l)
		dense = dense || l.hasDense()
	}
	totalName := d.TotalName
	if totalName == "" {
		totalName = "cascade"
	}
	aliasName := ""
	if len(d.AliasDB) > 0 {
		aliasName = d.AliasName
		if aliasName == "" {
			aliasName = "largest alias"
		}
		// Under the cascade, which it meets where a tone's kept path is
		// its own alias.
		a := newEnvelope(d.FreqHz, d.AliasDB, lo, hi, floor, swing, logx, draw.LineStyle{Color: vermilion, Width: vg.Points(1.4)})
		add(aliasName, a, a)
		dense = dense || a.hasDense()
	}
	l := newEnvelope(d.FreqHz, d.TotalDB, lo, hi, floor, swing, logx, draw.LineStyle{Color: black, Width: vg.Points(1.8)})
	add(totalName, l, l)
	if dense = dense || l.hasDense(); dense {
		legAdd(denseNote, denseKey{})
	}
	if leg != nil {
		// Reading order: the cascade (and the largest alias), the stages
		// in cascade order, then the reference marks.
		rank := func(name string) int {
			switch {
			case name == totalName:
				return 0
			case aliasName != "" && name == aliasName:
				return 1
			case strings.HasPrefix(name, "stage "), name == denseNote:
				return 2
			}
			return 3
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

// Envelope geometry: the columns of the axis the curves are reduced to,
// and what makes a stretch of a curve dense: more than denseSwings full
// swings (down and back up by a 50th of the gain axis) within denseWindow
// columns either side (21 columns, about 6 points at the default width),
// nulls 3 points apart or closer, where the polyline, a point or two
// wide, would fill the band between its peaks and nulls solid.
const (
	columns     = 1500
	denseWindow = 10
	denseSwings = 2
	// denseReach is how many points either side the edges of a dense
	// stretch take their maximum (upper) and minimum (lower) over, so that
	// the upper edge runs along the peaks instead of zig-zagging down to
	// the nulls between them.
	denseReach = 2
)

// decimate returns the curve over [lo, hi] (with one neighbour each side,
// so the line meets the axis edges; on a log axis none below lo), clamped
// at floor, as the upper and lower edges of its envelope over the axis's
// columns: where a column holds at most two samples both edges pass
// through them, and where it holds more, up passes through the column's
// maximum and down through its minimum. dense tells for each point (of up
// and down alike) whether its column lies in a dense stretch (see
// denseSwings; swing is a 50th of the gain axis, dB); there up is the
// maximum and down the minimum of the points within denseReach. The
// envelope keeps every peak and null at a bounded size; drawing it as a
// filled band (see envelope) rather than a polyline that zig-zags between
// the extremes keeps the rasteriser's work proportional to the columns.
func decimate(x, y []float64, lo, hi, floor, swing float64, logx bool) (up, down plotter.XYs, dense []bool) {
	i0 := sort.SearchFloat64s(x, lo)
	if i0 > 0 && (!logx || x[i0-1] > 0) {
		i0--
	}
	i1 := sort.SearchFloat64s(x, hi)
	if i1 < len(x) {
		i1++
	}
	if i1 <= i0 {
		return nil, nil, nil
	}
	at := func(i int) plotter.XY { return plotter.XY{X: x[i], Y: math.Max(y[i], floor)} }
	column := func(v float64) int {
		var c float64
		if logx {
			c = math.Floor(math.Log(v/lo) / math.Log(hi/lo) * columns)
		} else {
			c = math.Floor((v - lo) / (hi - lo) * columns)
		}
		return int(math.Max(-1, math.Min(columns, c)))
	}

	// Full swings completed in each column (index column+1), by a zig-zag
	// with hysteresis: a trough counts once the curve has risen swing
	// above it after falling swing below a peak.
	troughs := make([]int, columns+2)
	dir, ext, lowSeen, highSeen := 0, math.Max(y[i0], floor), math.Max(y[i0], floor), math.Max(y[i0], floor)
	for i := i0 + 1; i < i1; i++ {
		v := math.Max(y[i], floor)
		switch dir {
		case 0:
			lowSeen, highSeen = math.Min(lowSeen, v), math.Max(highSeen, v)
			if v >= lowSeen+swing {
				dir, ext = 1, v
			} else if v <= highSeen-swing {
				dir, ext = -1, v
			}
		case 1:
			if v > ext {
				ext = v
			} else if v <= ext-swing {
				dir, ext = -1, v
			}
		case -1:
			if v < ext {
				ext = v
			} else if v >= ext+swing {
				dir, ext = 1, v
				troughs[column(x[i])+1]++
			}
		}
	}
	denseCol := make([]bool, columns+2)
	for c := range denseCol {
		n := 0
		for k := max(0, c-denseWindow); k <= min(columns+1, c+denseWindow); k++ {
			n += troughs[k]
		}
		denseCol[c] = n > denseSwings
	}

	up = make(plotter.XYs, 0, 2*columns+2)
	down = make(plotter.XYs, 0, 2*columns+2)
	dense = make([]bool, 0, 2*columns+2)
	add := func(u, d plotter.XY, col int) {
		up, down = append(up, u), append(down, d)
		dense = append(dense, denseCol[col+1])
	}
	add(at(i0), at(i0), column(x[i0]))
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
				add(at(k), at(k), col)
			}
		} else {
			add(at(imax), at(imin), col)
		}
		i = j
	}
	if i1-1 > i0 {
		add(at(i1-1), at(i1-1), column(x[i1-1]))
	}

	// In dense stretches the edges take the extremes of their neighbours.
	u2 := append(plotter.XYs(nil), up...)
	d2 := append(plotter.XYs(nil), down...)
	for k := range up {
		if !dense[k] {
			continue
		}
		for j := max(0, k-denseReach); j <= min(len(up)-1, k+denseReach); j++ {
			if dense[j] {
				u2[k].Y = math.Max(u2[k].Y, up[j].Y)
				d2[k].Y = math.Min(d2[k].Y, down[j].Y)
			}
		}
	}
	return u2, d2, dense
}

// envelope draws a curve given as the edges of its envelope (see
// decimate). Outside dense stretches the band between the edges is filled
// and both edges stroked in the curve's colour, so that it looks like the
// full-resolution polyline at the figure's resolution. In a dense stretch,
// where that polyline would be a solid block hiding the curves under it,
// the band is filled pale (the colour at denseAlpha) and only the upper
// edge, the curve's peaks, is stroked.
type envelope struct {
	up, down plotter.XYs
	dense    []bool
	draw.LineStyle
}

// denseAlpha is the opacity of a dense stretch's fill.
const denseAlpha = 0.3

// newEnvelope is the envelope of the curve over [lo, hi]; swing is a 50th
// of the gain axis (see decimate).
func newEnvelope(x, y []float64, lo, hi, floor, swing float64, logx bool, sty draw.LineStyle) *envelope {
	up, down, dense := decimate(x, y, lo, hi, floor, swing, logx)
	return &envelope{up: up, down: down, dense: dense, LineStyle: sty}
}

// hasDense reports whether some stretch of the curve is dense.
func (e *envelope) hasDense() bool {
	for _, d := range e.dense {
		if d {
			return true
		}
	}
	return false
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
	down := pts(e.down)
	pale := paleColor(e.Color)
	// Runs of points alike in density, each reaching to the first point of
	// the next so that their fills meet.
	for a := 0; a < len(up); {
		b := a
		for b+1 < len(up) && e.dense[b+1] == e.dense[a] {
			b++
		}
		end := min(b+1, len(up)-1)
		ring := make([]vg.Point, 0, 2*(end-a+1))
		ring = append(ring, up[a:end+1]...)
		for i := end; i >= a; i-- {
			ring = append(ring, down[i])
		}
		if e.dense[a] {
			c.FillPolygon(pale, c.ClipPolygonXY(ring))
		} else {
			c.FillPolygon(e.Color, c.ClipPolygonXY(ring))
			c.StrokeLines(e.LineStyle, c.ClipLinesXY(down[a:end+1])...)
		}
		a = b + 1
	}
	c.StrokeLines(e.LineStyle, c.ClipLinesXY(up)...)
}

// paleColor is c at denseAlpha of its opacity.
func paleColor(c color.Color) color.Color {
	n := color.NRGBAModel.Convert(c).(color.NRGBA)
	n.A = uint8(math.Round(float64(n.A) * denseAlpha))
	return n
}

// Thumbnail implements plot.Thumbnailer: a short line in the curve's style.
func (e *envelope) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(e.LineStyle, c.Min.X, y, c.Max.X, y)
}

// denseNote is the legend entry of dense stretches.
const denseNote = "pale: dense swings, line on peaks"

// denseKey is the legend thumbnail that explains dense stretches: a pale
// band under a line.
type denseKey struct{}

func (denseKey) Thumbnail(c *draw.Canvas) {
	mid := c.Center().Y
	h := vg.Points(5)
	r := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: mid - h}, Max: vg.Point{X: c.Max.X, Y: mid + h}}
	c.SetColor(paleColor(color.RGBA{0x50, 0x50, 0x50, 0xff}))
	c.Fill(r.Path())
	c.StrokeLine2(draw.LineStyle{Color: color.RGBA{0x50, 0x50, 0x50, 0xff}, Width: vg.Points(1)}, c.Min.X, mid+h, c.Max.X, mid+h)
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

// maskAt is the mask's rejection at f: linear between points, flat beyond
// the ends (the drawing's view of chain.Mask).
func maskAt(m [][2]float64, f float64) float64 {
	if f <= m[0][0] {
		return m[0][1]
	}
	for i := 1; i < len(m); i++ {
		if f < m[i][0] {
			a, b := m[i-1], m[i]
			return a[1] + (b[1]-a[1])*(f-a[0])/(b[0]-a[0])
		}
	}
	return m[len(m)-1][1]
}
