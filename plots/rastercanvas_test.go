package plots

import (
	"bytes"
	"image"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Every test figure, at the default size and at sizes whose pixels fall
// off whole points, draws the same pixels through rasterCanvas as through
// the vgimg canvas itself (the reference: every fill painted), and
// rasterCanvas leaves out at least the figure's own background fill.
func TestRasterCanvasSamePixels(t *testing.T) {
	sizes := [][2]vg.Length{{DefaultWidth, DefaultHeight}, {MinWidth + 0.3, MinHeight + 0.7}, {7.37 * vg.Inch, 4.91 * vg.Inch}}
	for name, make := range figures(t) {
		for _, sz := range sizes {
			f, err := make()
			if err != nil {
				t.Fatal(err)
			}
			ref := vgimg.NewWith(vgimg.UseWH(sz[0], sz[1]), vgimg.UseDPI(150))
			f.Draw(draw.New(ref))
			img := vgimg.NewWith(vgimg.UseWH(sz[0], sz[1]), vgimg.UseDPI(150))
			rc := newRasterCanvas(img)
			f.Draw(draw.New(rc))
			a, b := ref.Image().(*image.RGBA), img.Image().(*image.RGBA)
			if a.Rect != b.Rect || !bytes.Equal(a.Pix, b.Pix) {
				t.Errorf("%s at %v x %v pt: the pixels differ from the vgimg canvas's", name, sz[0].Points(), sz[1].Points())
			}
			if rc.skipped == 0 && f.custom == nil {
				t.Errorf("%s at %v x %v pt: no fill left out", name, sz[0].Points(), sz[1].Points())
			}
		}
	}
}
