package sweep

import (
	"io"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/plots"
)

// FigurePoint is one value of the sweep figure.
type FigurePoint = plots.SweepPoint

// FigureData is the input of Render: plots.SweepData with the swept key's
// name and dimension filled in.
type FigureData = plots.SweepData

// Figure size.
const (
	FigureWidth  = plots.SweepWidth
	FigureHeight = plots.SweepHeight
)

// NewFigureData collects the figure's points from a sweep's results.
func NewFigureData(title string, v Vary, rs []Result) FigureData {
	d := FigureData{Title: title, Name: v.Key.Name, Kind: sweepKind(v.Key.Dim), Unit: v.Key.Word, PerInput: Interpolates(rs)}
	for _, r := range rs {
		p := FigurePoint{Value: r.Value}
		if r.Status.HasChain() {
			c := r.Report.Front[r.Report.Recommended]
			b := BestOf(r.Report)
			p.OK = true
			p.Multiplies, p.MemoryBits, p.LatencyS, p.Notation = c.MultipliesPerOutput, float64(c.MemoryBits), c.LatencyS, c.Notation
			p.BestMultiplies, p.BestMemoryBits, p.BestLatencyS = b.Multiplies, float64(b.MemoryBits), b.LatencyS
			if c.Adders != nil && b.Adders >= 0 {
				d.Adders = true
				p.Adders, p.BestAdders = float64(*c.Adders), float64(b.Adders)
			}
			// A multiplierless chain has no multipliers to draw.
			if c.MultipliersAtClock != nil && b.Multipliers >= 0 && c.Adders == nil {
				d.Clock = true
				p.Multipliers, p.BestMultipliers = float64(*c.MultipliersAtClock), float64(b.Multipliers)
			}
		}
		d.Points = append(d.Points, p)
	}
	return d
}

func sweepKind(d Dim) plots.SweepKind {
	switch d {
	case Level:
		return plots.SweepLevel
	case Bits:
		return plots.SweepBits
	case Count:
		return plots.SweepCount
	}
	return plots.SweepFrequency
}

// Render draws the sweep figure (plots.Sweep) in "svg" or "png" at
// FigureWidth x FigureHeight.
func Render(w io.Writer, d FigureData, format string) error {
	f, err := plots.Sweep(d)
	if err != nil {
		return err
	}
	return f.Render(w, format, FigureWidth, FigureHeight)
}

// Interpolates reports whether the sweep's spec is an interpolation spec
// (its first value that parsed says), whose counts are per input sample.
func Interpolates(rs []Result) bool {
	for _, r := range rs {
		if r.Spec != nil {
			return r.Spec.Chain.Direction() == chain.Interpolate
		}
	}
	return false
}
