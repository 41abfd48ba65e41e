package plots

import (
	"errors"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// StagesData is the input of Stages. Its slices run over the stages in
// cascade order and must have equal, non-zero lengths.
type StagesData struct {
	// Title is the figure title; empty selects "Cost by stage".
	Title string
	// Names are the stages' names, shown under their bars; an empty name
	// shows as "stage i" (from 1).
	Names []string
	// Multiplies are each stage's multiplies per final output sample, >= 0.
	Multiplies []float64
	// MemoryBits are each stage's memory in bits, >= 0.
	MemoryBits []float64
	// PerInput says the multiplies are per input sample (an interpolation
	// chain's channel side); the zero value labels them per output.
	PerInput bool
}

// Stages draws each stage's share of the chain's multiplies and memory as a
// grouped bar chart in percent of the chain total, each bar labelled with
// its share and the stage's absolute figures written under its name.
func Stages(d StagesData) (*Figure, error) {
	n := len(d.Names)
	if n == 0 {
		return nil, errors.New("plots: StagesData.Names is empty: need at least one stage")
	}
	if len(d.Multiplies) != n {
		return nil, fmt.Errorf("plots: StagesData.Multiplies has %d values: must match Names (%d)", len(d.Multiplies), n)
	}
	if len(d.MemoryBits) != n {
		return nil, fmt.Errorf("plots: StagesData.MemoryBits has %d values: must match Names (%d)", len(d.MemoryBits), n)
	}
	var totM, totB float64
	for i := range n {
		for _, f := range []struct {
			name string
			v    float64
		}{{"Multiplies", d.Multiplies[i]}, {"MemoryBits", d.MemoryBits[i]}} {
			if math.IsNaN(f.v) || math.IsInf(f.v, 0) || f.v < 0 {
				return nil, fmt.Errorf("plots: StagesData.%s[%d] = %v: must be finite and >= 0", f.name, i, f.v)
			}
		}
		totM += d.Multiplies[i]
		totB += d.MemoryBits[i]
	}
	share := func(v []float64, tot float64) plotter.Values {
		s := make(plotter.Values, len(v))
		for i, x := range v {
			if tot > 0 {
				s[i] = 100 * x / tot
			}
		}
		return s
	}
	sm, sb := share(d.Multiplies, totM), share(d.MemoryBits, totB)

	p := newPlot()
	title := d.Title
	if title == "" {
		title = "Cost by stage"
	}
	p.Y.Label.Text = "Share of chain total (%)"
	p.Y.Min, p.Y.Max = 0, 100
	top := 0.0
	for i := range n {
		top = math.Max(top, math.Max(sm[i], sb[i]))
	}
	// Room above the tallest bar for its label.
	p.Y.Max = math.Min(110, math.Max(20, 10*math.Ceil((top*1.12+2)/10)))
	p.Y.Tick.Marker = scaledTicks{scale: 1}
	p.X.Tick.Label.Font.Size = 10
	p.X.Padding = vg.Points(6)

	// Bars scale with the group spacing so that a single stage and eight
	// stages both read well at the default width.
	w := vg.Points(math.Min(48, 135/float64(n)))
	bm, err := plotter.NewBarChart(sm, w)
	if err != nil {
		return nil, err
	}
	bm.Color, bm.LineStyle.Width, bm.Offset = blue, 0, -w/2-1
	bb, err := plotter.NewBarChart(sb, w)
	if err != nil {
		return nil, err
	}
	bb.Color, bb.LineStyle.Width, bb.Offset = orange, 0, w/2+1
	g := plotter.NewGrid()
	g.Vertical.Width = 0
	g.Horizontal.Color = color.RGBA{0xE0, 0xE0, 0xE0, 0xff}
	p.Add(g, bm, bb)
	p.Add(barLabels(sm, -w/2-1), barLabels(sb, w/2+1))

	side := "out"
	if d.PerInput {
		side = "in"
	}
	names := make([]string, n)
	for i, s := range d.Names {
		if s == "" {
			s = fmt.Sprintf("stage %d", i+1)
		}
		names[i] = fmt.Sprintf("%s\n%s mult/%s\n%s bits", s, amount(d.Multiplies[i]), side, amount(d.MemoryBits[i]))
	}
	p.NominalX(names...)
	p.X.Min, p.X.Max = -0.6, float64(n)-0.4

	leg := newLegend()
	leg.Add(fmt.Sprintf("multiplies per %s\n(chain: %s)", map[string]string{"out": "output", "in": "input"}[side], amount(totM)), bm)
	leg.Add(fmt.Sprintf("memory\n(chain: %s bits)", amount(totB)), bb)
	if totM == 0 {
		leg.Add("no multiplies in the chain:\nmultiply shares shown as 0", legendBlank{})
	}
	return &Figure{title: title, panels: []panel{{p: p, weight: 1}}, side: leg}, nil
}

// barLabels writes each bar's percentage above it.
func barLabels(vals plotter.Values, offset vg.Length) plot.Plotter {
	xys := make(plotter.XYs, len(vals))
	labels := make([]string, len(vals))
	for i, v := range vals {
		xys[i] = plotter.XY{X: float64(i), Y: v}
		labels[i] = fmt.Sprintf("%.0f%%", v)
	}
	l, _ := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: labels})
	for i := range l.TextStyle {
		l.TextStyle[i] = textStyle(10, false)
		l.TextStyle[i].XAlign = draw.XCenter
		l.TextStyle[i].YAlign = draw.YBottom
	}
	l.Offset = vg.Point{X: offset, Y: vg.Points(2)}
	return l
}

type legendBlank struct{}

func (legendBlank) Thumbnail(*draw.Canvas) {}
