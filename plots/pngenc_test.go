package plots

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math/rand/v2"
	"testing"
)

// encodePNG's files decode with the standard library's PNG decoder (which
// checks every chunk's CRC and the zlib stream's Adler-32) to the very
// pixels encoded: seeded random opaque images large enough to span several
// IDAT chunks, flat ones, a sub-image with its own stride and origin, and
// images it hands to image/png (translucent, not RGBA).
func TestEncodePNGRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 17))
	var imgs []image.Image
	for k := 0; k < 6; k++ {
		w, h := 1+rng.IntN(400), 1+rng.IntN(300)
		m := image.NewRGBA(image.Rect(0, 0, w, h))
		for i := range m.Pix {
			m.Pix[i] = byte(rng.IntN(256))
			if i%4 == 3 {
				m.Pix[i] = 0xff
			}
		}
		if k%3 == 0 {
			// Runs of flat colour, as in a figure.
			for i := 4; i < len(m.Pix); i++ {
				if i%4 != 3 && rng.IntN(50) != 0 {
					m.Pix[i] = m.Pix[i-4]
				}
			}
		}
		imgs = append(imgs, m)
	}
	big := image.NewRGBA(image.Rect(0, 0, 300, 200))
	for i := range big.Pix {
		big.Pix[i] = 0xff
	}
	imgs = append(imgs, big, big.SubImage(image.Rect(17, 9, 220, 150)))
	translucent := image.NewRGBA(image.Rect(0, 0, 20, 10))
	translucent.Set(3, 4, color.RGBA{40, 0, 40, 40}) // exact in non-premultiplied form
	gray := image.NewGray(image.Rect(0, 0, 20, 10))
	gray.Pix[7] = 99
	imgs = append(imgs, translucent, gray)
	for k, m := range imgs {
		var a, b bytes.Buffer
		if err := encodePNG(&a, m); err != nil {
			t.Fatalf("image %d: %v", k, err)
		}
		if err := encodePNG(&b, m); err != nil || !bytes.Equal(a.Bytes(), b.Bytes()) {
			t.Errorf("image %d: a second encoding gives other bytes (err %v)", k, err)
		}
		got, err := png.Decode(&a)
		if err != nil {
			t.Fatalf("image %d (%v): image/png cannot decode it: %v", k, m.Bounds(), err)
		}
		if got.Bounds().Size() != m.Bounds().Size() {
			t.Fatalf("image %d: decoded %v, encoded %v", k, got.Bounds(), m.Bounds())
		}
		o, d := m.Bounds().Min, got.Bounds().Min
		for y := 0; y < m.Bounds().Dy(); y++ {
			for x := 0; x < m.Bounds().Dx(); x++ {
				r0, g0, b0, a0 := m.At(o.X+x, o.Y+y).RGBA()
				r1, g1, b1, a1 := got.At(d.X+x, d.Y+y).RGBA()
				if r0 != r1 || g0 != g1 || b0 != b1 || a0 != a1 {
					t.Fatalf("image %d: pixel (%d, %d) decodes to %v, encoded %v", k, x, y, got.At(d.X+x, d.Y+y), m.At(o.X+x, o.Y+y))
				}
			}
		}
	}
}
