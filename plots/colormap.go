package plots

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
)

// viridisStops are ten evenly spaced samples of the viridis colour map
// (van der Walt and Smith, matplotlib 2.0), rounded to 8 bits; from memory.
// Its lightness rises monotonically, so it reads in grey and under colour
// blindness.
var viridisStops = []color.RGBA{
	{0x44, 0x01, 0x54, 0xff}, {0x48, 0x28, 0x78, 0xff}, {0x3E, 0x49, 0x89, 0xff},
	{0x31, 0x68, 0x8E, 0xff}, {0x26, 0x82, 0x8E, 0xff}, {0x1F, 0x9E, 0x89, 0xff},
	{0x35, 0xB7, 0x79, 0xff}, {0x6D, 0xCD, 0x59, 0xff}, {0xB4, 0xDE, 0x2C, 0xff},
	{0xFD, 0xE7, 0x25, 0xff},
}

// viridis is a palette.ColorMap interpolating viridisStops in sRGB.
type viridis struct {
	min, max, alpha float64
}

var _ palette.ColorMap = (*viridis)(nil)

func (m *viridis) At(v float64) (color.Color, error) {
	if !(v >= m.min && v <= m.max) {
		return nil, fmt.Errorf("plots: colour map value %v outside [%v, %v]", v, m.min, m.max)
	}
	t := 0.0
	if m.max > m.min {
		t = (v - m.min) / (m.max - m.min)
	}
	return m.at(t), nil
}

// at returns the colour at t in [0, 1].
func (m *viridis) at(t float64) color.Color {
	n := len(viridisStops) - 1
	x := math.Max(0, math.Min(1, t)) * float64(n)
	i := min(int(x), n-1)
	f := x - float64(i)
	a, b := viridisStops[i], viridisStops[i+1]
	mix := func(p, q uint8) uint8 { return uint8(math.Round(float64(p)*(1-f) + float64(q)*f)) }
	return color.NRGBA{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B), uint8(math.Round(255 * m.alpha))}
}

func (m *viridis) Max() float64       { return m.max }
func (m *viridis) SetMax(v float64)   { m.max = v }
func (m *viridis) Min() float64       { return m.min }
func (m *viridis) SetMin(v float64)   { m.min = v }
func (m *viridis) Alpha() float64     { return m.alpha }
func (m *viridis) SetAlpha(a float64) { m.alpha = a }

func (m *viridis) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for i := range cs {
		t := 0.0
		if n > 1 {
			t = float64(i) / float64(n-1)
		}
		cs[i] = m.at(t)
	}
	return colors(cs)
}

type colors []color.Color

func (c colors) Colors() []color.Color { return c }
