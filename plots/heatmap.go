package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Size of the Heatmap figure.
const (
	HeatmapWidth  = 8 * vg.Inch
	HeatmapHeight = 7 * vg.Inch
)

// HeatmapAxis is one swept quantity of a Heatmap.
type HeatmapAxis struct {
	// Name is the quantity's name, written in the axis label; Kind picks
	// the unit, and Unit is the unit of a SweepCount quantity ("stages",
	// or empty for a plain number).
	Name string
	Kind SweepKind
	Unit string
	// Values are the swept values in the order swept. The axis runs from
	// the least to the greatest whatever the order, one column (or row)
	// per value, equally spaced.
	Values []float64
}

// HeatmapCell is one pair of values of a Heatmap.
type HeatmapCell struct {
	// OK is false for a pair without a chain: the cell is grey and
	// carries Mark ("invalid", "no chain", ...) instead of a figure.
	OK   bool
	Mark string
	// Value is the figure coloured and written in the cell: the
	// recommended chain's multiplies per output.
	Value float64
	// Partial marks a figure from a search stopped by its time limit
	// (the best found so far): it is written with a "*".
	Partial bool
	// Tag is a short label of the recommended chain's structure ("A"),
	// written under the figure; neighbouring cells whose tags differ are
	// separated by a heavy line. Tags lists what each tag stands for.
	Tag string
}

// HeatmapTag is one entry of the Heatmap's key of structures.
type HeatmapTag struct {
	Tag, Text string // "A", "cic5m1r16 > fir4"
}

// HeatmapData is the input of Heatmap.
type HeatmapData struct {
	// Title is drawn over the figure; empty means "Sweep of Y.Name by
	// X.Name".
	Title string
	// X runs across (the columns), Y up (the rows).
	X, Y HeatmapAxis
	// Cells[i][j] is the pair (Y.Values[i], X.Values[j]).
	Cells [][]HeatmapCell
	// ValueLabel names Value and its unit for the colour bar; empty
	// means "multiplies / output (recommended chain)".
	ValueLabel string
	// Tags is the key of the cells' structure tags, in the order given.
	Tags []HeatmapTag
}

// Heatmap draws a two-key sweep: a grid of cells, one per pair of values,
// coloured by the recommended chain's multiplies per output (a viridis
// map, its colour bar on the right) and labelled with the figure and the
// structure's tag; grey cells have no chain and say why in a word. Heavy
// lines run between neighbouring cells whose recommended structure
// differs. Below the grid, the key of the tags. Render it at HeatmapWidth
// x HeatmapHeight.
func Heatmap(d HeatmapData) (*Figure, error) {
	for _, a := range []struct {
		name string
		ax   HeatmapAxis
	}{{"X", d.X}, {"Y", d.Y}} {
		if a.ax.Kind < SweepFrequency || a.ax.Kind > SweepCount {
			return nil, fmt.Errorf("plots: heatmap: %s.Kind %d: want SweepFrequency, SweepLevel, SweepBits or SweepCount", a.name, a.ax.Kind)
		}
		if len(a.ax.Values) == 0 {
			return nil, fmt.Errorf("plots: heatmap: %s.Values is empty: want at least one value", a.name)
		}
		seen := map[float64]bool{}
		for i, v := range a.ax.Values {
			if !finite(v) {
				return nil, fmt.Errorf("plots: heatmap: %s.Values[%d] = %v: must be finite", a.name, i, v)
			}
			if seen[v] {
				return nil, fmt.Errorf("plots: heatmap: %s.Values[%d] = %v: repeats an earlier value", a.name, i, v)
			}
			seen[v] = true
		}
	}
	if len(d.Cells) != len(d.Y.Values) {
		return nil, fmt.Errorf("plots: heatmap: Cells has %d rows: want one per Y value (%d)", len(d.Cells), len(d.Y.Values))
	}
	have := 0
	for i, row := range d.Cells {
		if len(row) != len(d.X.Values) {
			return nil, fmt.Errorf("plots: heatmap: Cells[%d] has %d cells: want one per X value (%d)", i, len(row), len(d.X.Values))
		}
		for j, c := range row {
			if !c.OK {
				continue
			}
			have++
			if !finite(c.Value) {
				return nil, fmt.Errorf("plots: heatmap: Cells[%d][%d].Value = %v: must be finite", i, j, c.Value)
			}
		}
	}
	if have == 0 {
		return nil, fmt.Errorf("plots: heatmap: Cells: no cell has a chain (OK); nothing to draw")
	}
	h := newHeatmapFigure(d)
	return &Figure{title: h.title, panels: []panel{{p: h.p, weight: 1}}, colorKey: h.key, custom: h.draw}, nil
}

// heatmapFigure is a Heatmap laid out: the grid plot, its colour key and
// the key of tags below, which the generic Figure layout has no place for.
type heatmapFigure struct {
	title string
	p     *plot.Plot
	cells *heatCells
	key   *plot.Plot
	tags  []HeatmapTag
	notes []string // the key's last line: what the marks and lines mean
}

// maxKeyShare is the largest share of the figure's height the key of tags
// may take; beyond it the tags are left out (the heavy lines still mark
// where the structure changes, and sweep.csv names each cell's chain).
const maxKeyShare = 0.3

// noteGap separates the notes under the key.
const noteGap = "   ·   "

// order returns the indices of vals in increasing value.
func order(vals []float64) []int {
	idx := make([]int, len(vals))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return vals[idx[a]] < vals[idx[b]] })
	return idx
}

func axisUnit(a HeatmapAxis) unit {
	switch a.Kind {
	case SweepLevel:
		return unit{1, "dB"}
	case SweepBits:
		return unit{1, "bits"}
	case SweepCount:
		return unit{1, a.Unit}
	}
	var m float64
	for _, v := range a.Values {
		m = math.Max(m, math.Abs(v))
	}
	return freqUnit(m)
}

func axisLabel(a HeatmapAxis, u unit) string {
	if u.name == "" {
		return a.Name
	}
	return a.Name + " (" + u.name + ")"
}

// cellFigure writes a cell's value: whole below 1000 when it is whole, one
// decimal below 100, three significant digits otherwise.
func cellFigure(v float64) string {
	switch {
	case v == math.Trunc(v) && math.Abs(v) < 1e4:
		return strconv.FormatFloat(v, 'f', 0, 64)
	case math.Abs(v) < 100:
		return strconv.FormatFloat(v, 'f', 1, 64)
	}
	return amount(math.Round(v))
}

func newHeatmapFigure(d HeatmapData) *heatmapFigure {
	h := &heatmapFigure{title: d.Title, tags: d.Tags}
	if h.title == "" {
		h.title = "Sweep of " + d.Y.Name + " by " + d.X.Name
	}
	xo, yo := order(d.X.Values), order(d.Y.Values)
	xu, yu := axisUnit(d.X), axisUnit(d.Y)

	lo, hi := math.Inf(1), math.Inf(-1)
	var partial, missing, changes bool
	for _, row := range d.Cells {
		for _, c := range row {
			if c.OK {
				lo, hi = math.Min(lo, c.Value), math.Max(hi, c.Value)
				partial = partial || c.Partial
			} else {
				missing = true
			}
		}
	}
	if hi-lo < 1e-9*math.Max(1, math.Abs(hi)) {
		// A key needs a span; centre the equal values in it.
		lo, hi = lo-1, hi+1
	}
	cmap := &viridis{min: lo, max: hi, alpha: 1}

	// cells in display order: grid[r][c], r = 0 at the bottom.
	grid := make([][]HeatmapCell, len(yo))
	for r, i := range yo {
		grid[r] = make([]HeatmapCell, len(xo))
		for c, j := range xo {
			grid[r][c] = d.Cells[i][j]
		}
	}
	for r := range grid {
		for c := range grid[r] {
			a := grid[r][c]
			if c+1 < len(grid[r]) && differ(a, grid[r][c+1]) || r+1 < len(grid) && differ(a, grid[r+1][c]) {
				changes = true
			}
		}
	}

	p := newPlot()
	p.X.Min, p.X.Max = -0.5, float64(len(xo))-0.5
	p.Y.Min, p.Y.Max = -0.5, float64(len(yo))-0.5
	p.X.Label.Text = axisLabel(d.X, xu)
	p.Y.Label.Text = axisLabel(d.Y, yu)
	p.X.Padding, p.Y.Padding = 0, 0
	xs := make([]float64, len(xo))
	for c, j := range xo {
		xs[c] = d.X.Values[j] / xu.scale
	}
	ys := make([]float64, len(yo))
	for r, i := range yo {
		ys[r] = d.Y.Values[i] / yu.scale
	}
	p.X.Tick.Marker = cellTicks{vals: xs}
	p.Y.Tick.Marker = cellTicks{vals: ys}
	h.cells = &heatCells{grid: grid, cmap: cmap, tags: len(d.Tags) > 0}
	p.Add(h.cells)

	key := newPlot()
	key.HideX()
	key.Y.Label.Text = d.ValueLabel
	if key.Y.Label.Text == "" {
		key.Y.Label.Text = "multiplies / output (recommended chain)"
	}
	key.Y.Padding = 0
	key.Y.Tick.Marker = scaledTicks{scale: 1, n: 5}
	key.Add(&plotter.ColorBar{ColorMap: cmap, Vertical: true, Colors: 64})
	h.p, h.key = p, key

	if changes {
		h.notes = append(h.notes, "heavy lines: the recommended structure changes")
	}
	if partial {
		h.notes = append(h.notes, "*: stopped by the time limit, best so far")
	}
	if missing {
		h.notes = append(h.notes, "grey: no chain (see sweep.csv)")
	}
	return h
}

// differ reports whether a heavy line runs between two neighbouring cells:
// both have a chain and their structures differ.
func differ(a, b HeatmapCell) bool { return a.OK && b.OK && a.Tag != b.Tag }

// cellTicks labels every cell's value, or every second, fifth or tenth
// when there are many; the ticks sit at the cells' centres.
type cellTicks struct{ vals []float64 }

func (t cellTicks) Ticks(lo, hi float64) []plot.Tick {
	every := labelEvery(len(t.vals), 12)
	var out []plot.Tick
	for i, v := range t.vals {
		tk := plot.Tick{Value: float64(i)}
		if i%every == 0 {
			tk.Label = strconv.FormatFloat(v, 'g', 6, 64)
		}
		out = append(out, tk)
	}
	return out
}

// heatCells draws the cells, their labels and the heavy lines.
type heatCells struct {
	grid [][]HeatmapCell
	cmap *viridis
	tags bool // write each cell's tag under its figure
}

var (
	noChainGrey = color.RGBA{0xD9, 0xD9, 0xD9, 0xff}
	darkGrey    = color.RGBA{0x44, 0x44, 0x44, 0xff}
)

func (hc *heatCells) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	if len(hc.grid) == 0 {
		return
	}
	cols := len(hc.grid[0])
	w := trX(1) - trX(0)
	hgt := trY(1) - trY(0)
	if cols == 1 {
		w = trX(0.5) - trX(-0.5)
	}
	if len(hc.grid) == 1 {
		hgt = trY(0.5) - trY(-0.5)
	}
	// Text sizes that fit the cells: the figure on one line, the tag
	// smaller below it.
	widest := ""
	for _, row := range hc.grid {
		for _, cell := range row {
			if s := cellText(cell); len(s) > len(widest) {
				widest = s
			}
		}
	}
	size := vg.Points(11)
	for size > vg.Points(6) && (textStyle(size, true).Width(widest) > 0.9*w || 2.2*size > 0.9*hgt) {
		size -= vg.Points(0.5)
	}
	fits := textStyle(size, true).Width(widest) <= 0.95*w && 1.1*size <= hgt
	tagSize := max(vg.Points(6), size*0.8)
	showTag := hc.tags && fits && 2.1*size <= 0.95*hgt

	rect := func(r, cc int) vg.Rectangle {
		x, y := trX(float64(cc)), trY(float64(r))
		return vg.Rectangle{Min: vg.Point{X: x - w/2, Y: y - hgt/2}, Max: vg.Point{X: x + w/2, Y: y + hgt/2}}
	}
	for r, row := range hc.grid {
		for cc, cell := range row {
			rc := rect(r, cc)
			fill := color.Color(noChainGrey)
			if cell.OK {
				fill, _ = hc.cmap.At(cell.Value)
			}
			c.SetColor(fill)
			c.Fill(rc.Path())
			c.StrokeLines(draw.LineStyle{Color: color.White, Width: vg.Points(0.75)},
				[]vg.Point{rc.Min, {X: rc.Max.X, Y: rc.Min.Y}, rc.Max, {X: rc.Min.X, Y: rc.Max.Y}, rc.Min})
			if !fits {
				continue
			}
			ink := color.Color(color.Black)
			// Black or white, whichever contrasts more with the fill
			// (contrast ratios (L1 + 0.05) / (L2 + 0.05)).
			if l := lightness(fill); cell.OK && 1.05/(l+0.05) > (l+0.05)/0.05 {
				ink = color.White
			} else if !cell.OK {
				ink = darkGrey
			}
			mid := vg.Point{X: (rc.Min.X + rc.Max.X) / 2, Y: (rc.Min.Y + rc.Max.Y) / 2}
			ts := textStyle(size, cell.OK)
			if !cell.OK {
				ts = textStyle(size*0.85, false)
			}
			ts.Color, ts.XAlign, ts.YAlign = ink, draw.XCenter, draw.YCenter
			tagged := showTag && cell.OK && cell.Tag != ""
			if tagged {
				mid.Y += size * 0.5
			}
			c.FillText(ts, mid, cellText(cell))
			if tagged {
				tg := textStyle(tagSize, false)
				tg.Color, tg.XAlign, tg.YAlign = ink, draw.XCenter, draw.YCenter
				c.FillText(tg, vg.Point{X: mid.X, Y: mid.Y - size*1.05}, cell.Tag)
			}
		}
	}
	// Heavy lines between structures, drawn over every cell.
	heavy := draw.LineStyle{Color: color.Black, Width: vg.Points(2.5)}
	for r, row := range hc.grid {
		for cc, cell := range row {
			rc := rect(r, cc)
			if cc+1 < len(row) && differ(cell, row[cc+1]) {
				c.StrokeLine2(heavy, rc.Max.X, rc.Min.Y, rc.Max.X, rc.Max.Y)
			}
			if r+1 < len(hc.grid) && differ(cell, hc.grid[r+1][cc]) {
				c.StrokeLine2(heavy, rc.Min.X, rc.Max.Y, rc.Max.X, rc.Max.Y)
			}
		}
	}
}

func cellText(c HeatmapCell) string {
	if !c.OK {
		return c.Mark
	}
	s := cellFigure(c.Value)
	if c.Partial {
		s += "*"
	}
	return s
}

// lightness is the relative luminance of an sRGB colour, 0 to 1.
func lightness(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		x := float64(v) / 0xffff
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}

// keyLines lays out the key of tags (and the notes) in rows no wider than
// width: each item is "TAG  text", items separated by a gap.
func (h *heatmapFigure) keyLines(ts text.Style, width vg.Length) [][]HeatmapTag {
	var rows [][]HeatmapTag
	var cur []HeatmapTag
	var used vg.Length
	gap := vg.Points(16)
	for _, t := range h.tags {
		w := itemWidth(ts, t)
		if len(cur) > 0 && used+gap+w > width {
			rows = append(rows, cur)
			cur, used = nil, 0
		}
		if len(cur) > 0 {
			used += gap
		}
		cur = append(cur, t)
		used += w
	}
	if len(cur) > 0 {
		rows = append(rows, cur)
	}
	return rows
}

func itemWidth(ts text.Style, t HeatmapTag) vg.Length {
	b := ts
	b.Font = font.From(sansBold, ts.Font.Size)
	return b.Width(t.Tag) + vg.Points(5) + ts.Width(t.Text)
}

func (h *heatmapFigure) draw(c draw.Canvas) {
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	pad := vg.Points(8)
	area := draw.Crop(c, pad, -pad, pad, -pad)

	ts := textStyle(13, true)
	ts.XAlign, ts.YAlign = draw.XCenter, draw.YTop
	c.FillText(ts, vg.Point{X: (area.Min.X + area.Max.X) / 2, Y: area.Max.Y}, h.title)
	area.Max.Y -= ts.Height(h.title) + vg.Points(8)

	// The key of tags and the notes, bottom up.
	ks := textStyle(9, false)
	rowH := ks.Height("Xg") + vg.Points(3)
	width := area.Max.X - area.Min.X
	rows := h.keyLines(ks, width)
	notes := h.notes
	h.cells.tags = len(rows) > 0
	if vg.Length(len(rows)+1)*rowH > maxKeyShare*(area.Max.Y-area.Min.Y) {
		rows = nil
		h.cells.tags = false
		notes = append([]string{fmt.Sprintf("%d structures, too many to key here: sweep.csv names each cell's chain", len(h.tags))}, notes...)
	}
	if len(notes) > 0 {
		note := ks
		note.Color = darkGrey
		note.YAlign = draw.YBottom
		// As many notes on a line as fit, the last line lowest.
		var lines []string
		for _, n := range notes {
			if k := len(lines) - 1; k >= 0 && note.Width(lines[k]+noteGap+n) <= width {
				lines[k] += noteGap + n
			} else {
				lines = append(lines, n)
			}
		}
		for i := len(lines) - 1; i >= 0; i-- {
			c.FillText(note, vg.Point{X: area.Min.X, Y: area.Min.Y}, lines[i])
			area.Min.Y += rowH
		}
	}
	if len(rows) > 0 {
		bold := ks
		bold.Font = font.From(sansBold, ks.Font.Size)
		bold.YAlign, ks.YAlign = draw.YBottom, draw.YBottom
		for i := len(rows) - 1; i >= 0; i-- {
			x := area.Min.X
			for _, t := range rows[i] {
				c.FillText(bold, vg.Point{X: x, Y: area.Min.Y}, t.Tag)
				x += bold.Width(t.Tag) + vg.Points(5)
				c.FillText(ks, vg.Point{X: x, Y: area.Min.Y}, t.Text)
				x += ks.Width(t.Text) + vg.Points(16)
			}
			area.Min.Y += rowH
		}
		head := ks
		head.Color = darkGrey
		c.FillText(head, vg.Point{X: area.Min.X, Y: area.Min.Y}, "Recommended structure of each cell:")
		area.Min.Y += rowH
	}
	area.Min.Y += vg.Points(6)

	// The grid and, right of it, the colour key spanning its data height.
	right := vg.Points(78)
	main := draw.Crop(area, 0, -right, 0, 0)
	h.p.Draw(main)
	dc := h.p.DataCanvas(main)
	kc := area
	kc.Min.X = main.Max.X + vg.Points(10)
	kc.Min.Y, kc.Max.Y = dc.Min.Y, dc.Max.Y
	kd := h.key.DataCanvas(kc)
	kc.Min.Y -= kd.Min.Y - kc.Min.Y
	kc.Max.Y += kc.Max.Y - kd.Max.Y
	h.key.Draw(kc)
}
