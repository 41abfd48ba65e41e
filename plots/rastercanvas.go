package plots

import (
	"bytes"
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// rasterCanvas is the canvas of a PNG figure: the vgimg canvas, less the
// fills that cannot change a pixel. A figure paints its white background
// over the canvas vgimg made white, and each panel paints its own over
// that; the rasteriser's cost is the pixels it paints, so these fills were
// a good part of a figure's. Opaque white over opaque white is opaque
// white whatever the coverage (freetype's RGBAPainter, the compositing of
// image/draw's Over: (0xffff (m - a) + 0xffff a) / m = 0xffff for any
// coverage a of m), so a fill of opaque white is left out when every pixel
// its path can touch is opaque white already: the pixels are those the
// fill would have made, and the canvas's state (the path is cleared after
// a fill) is the same.
type rasterCanvas struct {
	*vgimg.Canvas
	img *image.RGBA
	// colors mirrors the canvas's colour stack (vgimg keeps it private):
	// Push repeats the top, Pop drops it.
	colors []color.Color
	// plain mirrors whether the transform is still vgimg's own (points
	// to pixels: x dots, height - y dots), per Push level.
	plain   []bool
	white   []byte // a row of opaque white pixels, for comparison
	skipped int    // fills left out
}

// newRasterCanvas wraps c, whose image must be an *image.RGBA (vgimg's
// own); it returns nil otherwise.
func newRasterCanvas(c *vgimg.Canvas) *rasterCanvas {
	img, ok := c.Image().(*image.RGBA)
	if !ok {
		return nil
	}
	// vgimg.NewWith starts the colour stack at black (vg.Initialize).
	return &rasterCanvas{Canvas: c, img: img, colors: []color.Color{color.Black}, plain: []bool{true}}
}

func (c *rasterCanvas) SetColor(clr color.Color) {
	if clr == nil {
		clr = color.Black
	}
	c.Canvas.SetColor(clr)
	c.colors[len(c.colors)-1] = clr
}

func (c *rasterCanvas) Push() {
	c.Canvas.Push()
	c.colors = append(c.colors, c.colors[len(c.colors)-1])
	c.plain = append(c.plain, c.plain[len(c.plain)-1])
}

func (c *rasterCanvas) Pop() {
	c.Canvas.Pop()
	c.colors = c.colors[:len(c.colors)-1]
	c.plain = c.plain[:len(c.plain)-1]
}

func (c *rasterCanvas) Rotate(t float64) {
	c.Canvas.Rotate(t)
	c.plain[len(c.plain)-1] = false
}

func (c *rasterCanvas) Translate(pt vg.Point) {
	c.Canvas.Translate(pt)
	c.plain[len(c.plain)-1] = false
}

func (c *rasterCanvas) Scale(x, y float64) {
	c.Canvas.Scale(x, y)
	c.plain[len(c.plain)-1] = false
}

func (c *rasterCanvas) Fill(p vg.Path) {
	if c.unchanged(p) {
		c.skipped++
		return
	}
	c.Canvas.Fill(p)
}

// unchanged reports whether filling p in the current colour leaves every
// pixel as it is: the colour is opaque white, p is made of straight lines
// under vgimg's own transform, and every pixel of its bounding box (one
// pixel wider each side) is opaque white.
func (c *rasterCanvas) unchanged(p vg.Path) bool {
	if !c.plain[len(c.plain)-1] || len(p) == 0 {
		return false
	}
	if r, g, b, a := c.colors[len(c.colors)-1].RGBA(); r != 0xffff || g != 0xffff || b != 0xffff || a != 0xffff {
		return false
	}
	dpi := c.DPI()
	x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, comp := range p {
		switch comp.Type {
		case vg.MoveComp, vg.LineComp:
			x, y := comp.Pos.X.Dots(dpi), comp.Pos.Y.Dots(dpi)
			x0, x1 = math.Min(x0, x), math.Max(x1, x)
			y0, y1 = math.Min(y0, y), math.Max(y1, y)
		case vg.CloseComp:
		default:
			return false
		}
	}
	b := c.img.Rect
	lim := float64(2 * (b.Dx() + b.Dy()))
	if !(x0 <= x1 && y0 <= y1) || math.Abs(x0) > lim || math.Abs(x1) > lim || math.Abs(y0) > lim || math.Abs(y1) > lim {
		return false // nothing that far out is one of these fills
	}
	// Pixel rows run down from the top: row = height - y.
	h := float64(b.Dy())
	box := image.Rect(int(math.Floor(x0))-1, int(math.Floor(h-y1))-1, int(math.Ceil(x1))+1, int(math.Ceil(h-y0))+1).Intersect(b)
	if box.Empty() {
		return false
	}
	n := 4 * box.Dx()
	if len(c.white) < n {
		c.white = bytes.Repeat([]byte{0xff}, n)
	}
	for y := box.Min.Y; y < box.Max.Y; y++ {
		i := c.img.PixOffset(box.Min.X, y)
		if !bytes.Equal(c.img.Pix[i:i+n], c.white[:n]) {
			return false
		}
	}
	return true
}
