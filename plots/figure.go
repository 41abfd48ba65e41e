package plots

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"os"
	"path/filepath"
	"strings"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Default figure size, used when Save or Render is given a zero width or height.
const (
	DefaultWidth  = 8 * vg.Inch
	DefaultHeight = 5 * vg.Inch
)

// Smallest figure size Render accepts: below it the axes, keys and
// legends no longer fit beside each other.
const (
	MinWidth  = 3 * vg.Inch
	MinHeight = 2 * vg.Inch
)

// Formats lists the output formats Render and Save accept.
var Formats = []string{"svg", "png"}

// Figure is a drawable figure made of one or more stacked panels, an
// optional colour key beside the first panel and an optional legend column
// on the right. The figure functions of this package build it; callers
// render it with Render or Save, or draw it onto their own canvas with Draw.
type Figure struct {
	title    string // drawn centred over the whole figure
	panels   []panel
	colorKey *plot.Plot   // drawn right of panels[0], aligned with its data area
	side     *plot.Legend // drawn in a column right of the panels
	// custom, when set, draws the whole figure in place of the stacked
	// layout, for a figure (Sweep) whose labels and key sit outside it.
	custom func(c draw.Canvas)
}

type panel struct {
	p        *plot.Plot
	weight   float64 // relative height
	optional bool    // left out of figures shorter than optionalHeight
	// draw, when set, draws the panel into its cell in place of p.Draw:
	// for a panel (Front) whose text is placed once the cell's size is
	// known. It must not modify p, so that rendering leaves the figure as
	// it was.
	draw func(p *plot.Plot, c draw.Canvas)
}

// optionalHeight is the figure height below which optional panels are left
// out: two stacked panels need about 2.2 inches each to stay legible.
const optionalHeight = 4.4 * vg.Inch

// Plots returns the figure's panels from top to bottom, for callers who
// want to adjust a style before rendering.
func (f *Figure) Plots() []*plot.Plot {
	ps := make([]*plot.Plot, len(f.panels))
	for i, p := range f.panels {
		ps[i] = p.p
	}
	return ps
}

// Draw draws the figure onto c.
func (f *Figure) Draw(c draw.Canvas) {
	if f.custom != nil {
		f.custom(c)
		return
	}
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())

	pad := vg.Points(6)
	area := draw.Crop(c, pad, -pad, pad, -pad)
	if f.title != "" {
		sty := textStyle(13, true)
		sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
		c.FillText(sty, vg.Point{X: (area.Min.X + area.Max.X) / 2, Y: area.Max.Y}, f.title)
		area.Max.Y -= sty.Height(f.title) + vg.Points(8)
	}
	panels := f.panels
	if c.Max.Y-c.Min.Y < optionalHeight {
		panels = panels[:0:0]
		for _, p := range f.panels {
			if !p.optional {
				panels = append(panels, p)
			}
		}
	}

	// Right-hand column: the legend's natural width, or a fixed strip for
	// the colour key.
	var right vg.Length
	if f.side != nil {
		right = f.side.Rectangle(area).Size().X + vg.Points(22)
	}
	if f.colorKey != nil {
		right = vg.Points(72)
	}
	main := draw.Crop(area, 0, -right, 0, 0)

	// Stack the panels by weight.
	var total float64
	for _, p := range panels {
		total += p.weight
	}
	cells := make([]draw.Canvas, len(panels))
	h := main.Max.Y - main.Min.Y
	top := main.Max.Y
	for i, p := range panels {
		ph := vg.Length(p.weight / total * float64(h))
		cells[i] = main
		cells[i].Max.Y = top
		cells[i].Min.Y = top - ph
		top -= ph
	}
	// Line the data areas up horizontally so that stacked panels share a
	// frequency axis position.
	var maxL, maxR vg.Length
	for i, p := range panels {
		dc := p.p.DataCanvas(cells[i])
		maxL = max(maxL, dc.Min.X-cells[i].Min.X)
		maxR = max(maxR, cells[i].Max.X-dc.Max.X)
	}
	for i, p := range panels {
		dc := p.p.DataCanvas(cells[i])
		l := maxL - (dc.Min.X - cells[i].Min.X)
		r := maxR - (cells[i].Max.X - dc.Max.X)
		cells[i] = draw.Crop(cells[i], l, -r, 0, 0)
		if p.draw != nil {
			p.draw(p.p, cells[i])
		} else {
			p.p.Draw(cells[i])
		}
	}
	if len(cells) == 0 {
		return
	}
	dc0 := panels[0].p.DataCanvas(cells[0])

	if f.colorKey != nil {
		kc := area
		kc.Min.X = main.Max.X + vg.Points(4)
		kc.Min.Y, kc.Max.Y = dc0.Min.Y, dc0.Max.Y
		kd := f.colorKey.DataCanvas(kc)
		// Grow the key's canvas so its bar spans the panel's data height.
		kc.Min.Y -= kd.Min.Y - kc.Min.Y
		kc.Max.Y += kc.Max.Y - kd.Max.Y
		f.colorKey.Draw(kc)
	}
	if f.side != nil {
		lc := area
		lc.Min.X = main.Max.X + vg.Points(14)
		lc.Max.Y = dc0.Max.Y
		f.side.Draw(lc)
	}
}

// Render writes the figure to w in the given format ("svg" or "png",
// case-insensitive; PNG at 150 dots per inch) at the given size; a zero width or height
// selects DefaultWidth or DefaultHeight, and a size below MinWidth x
// MinHeight is an error. SVG output names its fonts
// (Liberation Sans, falling back to the metric-compatible Arial) rather than
// embedding them, which keeps files small.
func (f *Figure) Render(w io.Writer, format string, width, height vg.Length) error {
	if width == 0 {
		width = DefaultWidth
	}
	if height == 0 {
		height = DefaultHeight
	}
	if width < MinWidth || height < MinHeight {
		return fmt.Errorf("plots: figure size %.0f x %.0f pt: must be at least %.0f x %.0f pt (3 x 2 inches)", width.Points(), height.Points(), MinWidth.Points(), MinHeight.Points())
	}
	format = strings.ToLower(strings.TrimPrefix(format, "."))
	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = vgsvg.New(width, height)
	case "png":
		img := vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(150))
		if rc := newRasterCanvas(img); rc != nil {
			f.Draw(draw.New(rc))
		} else {
			f.Draw(draw.New(img))
		}
		return encodePNG(w, img.Image())
	default:
		return fmt.Errorf("plots: format %q: unsupported (want one of %s)", format, strings.Join(Formats, ", "))
	}
	f.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return err
	}
	// Liberation Sans has Arial's metrics, so a viewer without it still
	// lays the text out as drawn; without a fallback it would use its
	// default serif face.
	_, err := w.Write(bytes.ReplaceAll(buf.Bytes(),
		[]byte("font-family:Liberation Sans;"),
		[]byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")))
	return err
}

// Save renders the figure to the named file, choosing the format from the
// file's extension (.svg or .png). It writes to a temporary file
// in the same directory and renames it, so a reader never sees a partial
// figure.
func (f *Figure) Save(path string, width, height vg.Length) error {
	format := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	var buf bytes.Buffer
	if err := f.Render(&buf, format, width, height); err != nil {
		return err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*")
	if err != nil {
		return err
	}
	// CreateTemp makes the file private; a figure is for sharing.
	err = tmp.Chmod(0o644)
	if err == nil {
		_, err = tmp.Write(buf.Bytes())
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), path)
	}
	if err != nil {
		os.Remove(tmp.Name())
	}
	return err
}

// Okabe-Ito colours (Okabe and Ito, "Color Universal Design", 2008;
// hex values common practice).
var (
	black     = color.RGBA{0x00, 0x00, 0x00, 0xff}
	orange    = color.RGBA{0xE6, 0x9F, 0x00, 0xff}
	skyBlue   = color.RGBA{0x56, 0xB4, 0xE9, 0xff}
	green     = color.RGBA{0x00, 0x9E, 0x73, 0xff}
	blue      = color.RGBA{0x00, 0x72, 0xB2, 0xff}
	vermilion = color.RGBA{0xD5, 0x5E, 0x00, 0xff}
	purple    = color.RGBA{0xCC, 0x79, 0xA7, 0xff}
)

// stageColors is the cycle for per-stage series (yellow is too pale for a
// thin line on white); black is kept for the cascade total, grey for the
// passband edge and vermilion for targets and the recommendation.
var stageColors = []color.Color{blue, orange, green, purple, skyBlue}

var (
	sans     = font.Font{Typeface: "Liberation", Variant: "Sans"}
	sansBold = font.Font{Typeface: "Liberation", Variant: "Sans", Weight: xfont.WeightBold}
)

func textStyle(size vg.Length, bold bool) text.Style {
	f := sans
	if bold {
		f = sansBold
	}
	return text.Style{
		Color:   color.Black,
		Font:    font.From(f, size),
		Handler: plot.DefaultTextHandler,
	}
}

// newPlot returns a plot with the package's type sizes: large enough to read
// at 8 x 5 inches and in a report scaled to page width.
func newPlot() *plot.Plot {
	p := plot.New()
	p.Title.TextStyle.Font = font.From(sansBold, 13)
	p.Title.Padding = vg.Points(6)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, 11)
		a.Tick.Label.Font = font.From(sans, 10)
		a.Padding = vg.Points(2)
	}
	p.Legend.TextStyle.Font = font.From(sans, 10)
	p.Legend.ThumbnailWidth = vg.Points(22)
	return p
}

func newLegend() *plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font = font.From(sans, 10)
	l.ThumbnailWidth = vg.Points(22)
	l.Padding = vg.Points(3)
	l.Top = true
	l.Left = true
	return &l
}

// insetLegend is a legend drawn inside the data area, on a white box, in
// one of its corners; the front's layout chooses the corner.
type insetLegend struct {
	l *plot.Legend
}

type corner struct{ top, left bool }

func (il *insetLegend) size() vg.Point {
	return il.l.Rectangle(draw.Canvas{}).Size()
}

// box is the legend's white box in corner k of c.
func (il *insetLegend) box(c draw.Canvas, k corner) vg.Rectangle {
	const margin = 6
	pad := vg.Points(4)
	s := il.size()
	s.X += 2 * pad
	s.Y += 2 * pad
	var r vg.Rectangle
	if k.left {
		r.Min.X = c.Min.X + margin
	} else {
		r.Min.X = c.Max.X - margin - s.X
	}
	if k.top {
		r.Min.Y = c.Max.Y - margin - s.Y
	} else {
		r.Min.Y = c.Min.Y + margin
	}
	r.Max = r.Min.Add(s)
	return r
}

// drawIn draws the legend in box r (from box).
func (il *insetLegend) drawIn(c draw.Canvas, r vg.Rectangle) {
	c.SetColor(color.NRGBA{0xff, 0xff, 0xff, 0xE6})
	c.Fill(r.Path())
	pad := vg.Points(4)
	inner := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
		Min: vg.Point{X: r.Min.X + pad, Y: r.Min.Y + pad},
		Max: vg.Point{X: r.Max.X - pad, Y: r.Max.Y - pad},
	}}
	l := *il.l
	l.Top, l.Left = true, true
	l.Draw(inner)
}
