package plots

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Spectrum is one measured power spectrum for Spectra, as an averaged
// periodogram (signalio.Welch) gives it.
type Spectrum struct {
	// Label names the signal in its panel's title (a file name, say);
	// empty leaves it out.
	Label string
	// RateHz is the signal's sample rate in Hz, finite and > 0. The
	// panel spans 0 to RateHz/2, or -RateHz/2 to RateHz/2 when some bin
	// is at a negative frequency (a two-sided spectrum of I/Q).
	RateHz float64
	// Hz are the bin frequencies: at least two, strictly increasing,
	// within ±RateHz/2.
	Hz []float64
	// DB is the level in each bin, in dB relative to full scale (dBFS);
	// -Inf (an empty bin) is drawn at the floor, NaN and +Inf are errors.
	DB []float64
	// RBWHz is the noise bandwidth of one bin in Hz, stated in the
	// panel's title since noise reads lower in narrower bins; zero
	// leaves it out.
	RBWHz float64
}

// SpectraData is the input of Spectra.
type SpectraData struct {
	// Title is the figure title; empty selects "Spectra through the
	// chain".
	Title string
	// In is the spectrum of the signal entering the chain, Out that of
	// the chain's output.
	In, Out Spectrum
	// PassbandHz is the passband edge in Hz, drawn as a dashed line on
	// both panels (at ±PassbandHz on a two-sided one). Zero draws none.
	PassbandHz float64
	// AliasBands are the input-frequency intervals in Hz, 0 <= low <=
	// high, that fold onto the protected band at the output; they are
	// shaded on the input panel (mirrored onto negative frequencies when
	// it is two-sided: the chain's filters are real). Overlapping bands
	// and bands closer than about a pixel are drawn merged. It may be
	// empty.
	AliasBands [][2]float64
	// Levels are lines of measured levels (say, "in-band tone -3.1
	// dBFS"), listed under the legend beside the panels. It may be
	// empty.
	Levels []string
}

// Spectra draws the spectrum of a signal before and after the chain, in
// dBFS against frequency: the input over its Nyquist range with the alias
// bands shaded, and below it the output over its own, narrower, range
// with the passband edge marked. Two panels, because the input and output
// rates differ by the decimation ratio, often a hundred or more: on one
// axis the whole output band would be a sliver at the left. Both panels
// share one dBFS scale, so a level reads the same in either; the floor is
// 200 dB below the top, or just under the deepest bin when that is
// shallower, and deeper bins are drawn at it.
func Spectra(d SpectraData) (*Figure, error) {
	if err := d.check(); err != nil {
		return nil, err
	}
	dmin, dmax := math.Inf(1), math.Inf(-1)
	for _, s := range []Spectrum{d.In, d.Out} {
		for _, v := range s.DB {
			if !math.IsInf(v, -1) {
				dmin, dmax = math.Min(dmin, v), math.Max(dmax, v)
			}
		}
	}
	if math.IsInf(dmax, -1) { // every bin empty
		dmin, dmax = -160, 0
	}
	top := math.Max(5, 5*math.Ceil((dmax+3)/5))
	floor := math.Max(10*math.Floor((dmin-5)/10), top-200)
	if top-floor < 40 {
		floor = top - 40
	}

	title := d.Title
	if title == "" {
		title = "Spectra through the chain"
	}
	leg := newLegend()
	in, inDense := spectrumPanel(d.In, "Input", d, floor, top, true)
	out, outDense := spectrumPanel(d.Out, "Output", d, floor, top, false)
	// The legend in reading order: the curves, then the marks.
	inKey := draw.LineStyle{Color: blue, Width: vg.Points(1)}
	outKey := draw.LineStyle{Color: black, Width: vg.Points(1)}
	leg.Add("input spectrum", lineKey(inKey))
	leg.Add("output spectrum", lineKey(outKey))
	if inDense || outDense {
		leg.Add(denseNote, denseKey{})
	}
	if len(d.AliasBands) > 0 {
		leg.Add("alias bands (input)", aliasShade(nil))
	}
	if d.PassbandHz > 0 {
		leg.Add("passband edge "+hz(d.PassbandHz), lineKey(passbandStyle))
	}
	if len(d.Levels) > 0 {
		leg.Add("", textOnly{})
		leg.Add("measured:", textOnly{})
		for _, l := range d.Levels {
			leg.Add(l, textOnly{})
		}
	}
	return &Figure{title: title, panels: []panel{{p: in, weight: 1}, {p: out, weight: 1}}, side: leg}, nil
}

func (d *SpectraData) check() error {
	for _, s := range []struct {
		name string
		s    Spectrum
	}{{"In", d.In}, {"Out", d.Out}} {
		field := "plots: SpectraData." + s.name
		r := s.s.RateHz
		if !(r > 0) || math.IsInf(r, 0) {
			return fmt.Errorf("%s.RateHz = %v: must be finite and > 0", field, r)
		}
		n := len(s.s.Hz)
		if n < 2 {
			return fmt.Errorf("%s.Hz has %d points: need at least 2", field, n)
		}
		if len(s.s.DB) != n {
			return fmt.Errorf("%s.DB has %d values: must match Hz (%d)", field, len(s.s.DB), n)
		}
		tol := r * 1e-9
		for i, f := range s.s.Hz {
			if math.IsNaN(f) || f < -r/2-tol || f > r/2+tol {
				return fmt.Errorf("%s.Hz[%d] = %v: must lie within ±RateHz/2 (±%v)", field, i, f, r/2)
			}
			if i > 0 && f <= s.s.Hz[i-1] {
				return fmt.Errorf("%s.Hz[%d] = %v: must exceed Hz[%d] = %v (strictly increasing)", field, i, f, i-1, s.s.Hz[i-1])
			}
		}
		for i, v := range s.s.DB {
			if math.IsNaN(v) || math.IsInf(v, 1) {
				return fmt.Errorf("%s.DB[%d] = %v: must be finite or -Inf", field, i, v)
			}
		}
		if b := s.s.RBWHz; math.IsNaN(b) || math.IsInf(b, 0) || b < 0 {
			return fmt.Errorf("%s.RBWHz = %v: must be finite and >= 0", field, b)
		}
	}
	if p := d.PassbandHz; math.IsNaN(p) || math.IsInf(p, 0) || p < 0 {
		return fmt.Errorf("plots: SpectraData.PassbandHz = %v: must be finite and >= 0", p)
	}
	for i, b := range d.AliasBands {
		if math.IsNaN(b[0]) || math.IsNaN(b[1]) || math.IsInf(b[0], 0) || math.IsInf(b[1], 0) || b[0] < 0 || b[1] < b[0] {
			return fmt.Errorf("plots: SpectraData.AliasBands[%d] = %v: need finite 0 <= low <= high", i, b)
		}
	}
	return nil
}

// passbandStyle is the passband edge's line, as in Response.
var passbandStyle = draw.LineStyle{Color: color.RGBA{0x50, 0x50, 0x50, 0xff}, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}

// spectrumPanel draws one spectrum over its Nyquist range; input selects
// the input panel's colour and its alias bands. It reports whether the
// curve has a dense stretch.
func spectrumPanel(s Spectrum, side string, d SpectraData, floor, top float64, input bool) (*plot.Plot, bool) {
	p := newPlot()
	lo, hi := 0.0, s.RateHz/2
	twoSided := s.Hz[0] < 0
	if twoSided {
		lo = -hi
	}
	u := freqUnit(hi)
	p.X.Min, p.X.Max = lo, hi
	p.Y.Min, p.Y.Max = floor, top
	p.X.Tick.Marker = scaledTicks{scale: u.scale}
	p.X.Label.Text = side + " frequency (" + u.name + ")"
	p.Y.Label.Text = fmt.Sprintf("dBFS per bin (floor %g)", floor)
	p.Y.Tick.Marker = dbTicks{}
	p.Title.Text = panelTitle(s, side)
	p.Title.TextStyle.Font.Size = 11
	addGrid(p)

	if input && len(d.AliasBands) > 0 {
		bands := merged(d.AliasBands, (hi-lo)/columns, 0)
		var rings []plotter.XYer
		ring := func(b0, b1 float64) {
			b0, b1 = math.Max(b0, lo), math.Min(b1, hi)
			if b1 >= b0 {
				rings = append(rings, plotter.XYs{{X: b0, Y: floor}, {X: b1, Y: floor}, {X: b1, Y: top}, {X: b0, Y: top}})
			}
		}
		for _, b := range bands {
			ring(b[0], b[1])
			if twoSided {
				ring(-b[1], -b[0])
			}
		}
		if len(rings) > 0 {
			p.Add(aliasShade(rings))
		}
	}
	if d.PassbandHz > 0 {
		edges := []float64{d.PassbandHz}
		if twoSided {
			edges = append(edges, -d.PassbandHz)
		}
		for _, e := range edges {
			if e >= lo && e <= hi {
				l, _ := plotter.NewLine(plotter.XYs{{X: e, Y: floor}, {X: e, Y: top}})
				l.LineStyle = passbandStyle
				p.Add(l)
			}
		}
	}
	sty := draw.LineStyle{Color: black, Width: vg.Points(1)}
	if input {
		sty.Color = blue
	}
	env := newEnvelope(s.Hz, s.DB, lo, hi, floor, (top-floor)/50, false, sty)
	p.Add(env)
	return p, env.hasDense()
}

// panelTitle is "Input: capture.wav, 122.88 MS/s, bin noise bandwidth 60
// kHz", saying so when every bin is empty.
func panelTitle(s Spectrum, side string) string {
	t := side
	if s.Label != "" {
		t += ": " + s.Label
	}
	u := freqUnit(s.RateHz)
	// Rates are often exact figures like 122.88 MS/s: up to 6 digits.
	rate := strconv.FormatFloat(s.RateHz/u.scale, 'g', 6, 64) + " " + map[string]string{"Hz": "S/s", "kHz": "kS/s", "MHz": "MS/s", "GHz": "GS/s"}[u.name]
	t += ", " + rate
	if s.RBWHz > 0 {
		t += ", bin noise bandwidth " + hz(s.RBWHz)
	}
	for _, v := range s.DB {
		if !math.IsInf(v, -1) {
			return t
		}
	}
	// Else the curve lies on the floor like a signal at the floor.
	return t + ": every bin empty (all-zero signal)"
}

// aliasShade is the alias bands' fill, the same tint as Response's.
func aliasShade(rings []plotter.XYer) *plotter.Polygon {
	if rings == nil {
		rings = []plotter.XYer{plotter.XYs{}}
	}
	poly, _ := plotter.NewPolygon(rings...)
	poly.Color = color.RGBA{0xF6, 0xDC, 0xC4, 0xff}
	poly.LineStyle.Width = 0
	return poly
}

// lineKey is a legend thumbnail: a short line in a style.
type lineKey draw.LineStyle

func (k lineKey) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(draw.LineStyle(k), c.Min.X, y, c.Max.X, y)
}

// textOnly is a legend entry with no thumbnail: a line of text.
type textOnly struct{}

func (textOnly) Thumbnail(*draw.Canvas) {}
