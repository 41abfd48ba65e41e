package chain

import (
	"fmt"
	"math"
	"slices"
)

// MaskPoint is one point of a rejection mask: at input frequency Hz, the
// rejection DB (positive dB) that an alias must have.
type MaskPoint struct{ Hz, DB float64 }

// Mask is a rejection mask over the input band (the high-rate axis: the
// input of a decimation chain, the output of an interpolation chain): the
// alias of input frequency g landing in [0, fa] (for an interpolation
// chain, the image at g of a channel frequency in [0, fa]) must lie at
// least At(g) dB below the passband. Between points the rejection is
// linear in dB against frequency; below the first point and above the last
// it stays at their values; two points at one frequency make a step, and
// at the step itself the larger rejection holds (the safe side). A Mask is
// immutable, so a Spec holding one stays comparable.
type Mask struct{ p []MaskPoint }

// NewMask returns the mask through points: at least one, frequencies
// finite, at least 0 Hz and non-decreasing, at most two at one frequency,
// rejections in (0, MaxRejectionDB] dB. Errors say which point breaks
// which rule.
func NewMask(points []MaskPoint) (*Mask, error) {
	return newMask(points, MaxRejectionDB)
}

// newMask is NewMask with the rejections held to (0, most] dB.
func newMask(points []MaskPoint, most float64) (*Mask, error) {
	if len(points) == 0 {
		return nil, fmt.Errorf("needs at least one [frequency, rejection] point")
	}
	for i, pt := range points {
		if !finite(pt.Hz) || pt.Hz < 0 {
			return nil, fmt.Errorf("point %d: frequency %s Hz: must be a finite frequency of at least 0 Hz", i+1, fmtNum(pt.Hz))
		}
		if !finite(pt.DB) || pt.DB <= 0 || pt.DB > most {
			return nil, fmt.Errorf("point %d: rejection %s dB: must lie in (0, %s] dB", i+1, fmtNum(pt.DB), fmtNum(most))
		}
		if i > 0 && pt.Hz < points[i-1].Hz {
			return nil, fmt.Errorf("point %d: frequency %s Hz is below the point before it (%s Hz): list the points in increasing frequency", i+1, fmtNum(pt.Hz), fmtNum(points[i-1].Hz))
		}
		if i > 1 && pt.Hz == points[i-2].Hz {
			return nil, fmt.Errorf("point %d: a third point at %s Hz: a step takes two points at one frequency", i+1, fmtNum(pt.Hz))
		}
	}
	return &Mask{p: slices.Clone(points)}, nil
}

// Points returns a copy of the mask's points.
func (m *Mask) Points() []MaskPoint { return slices.Clone(m.p) }

// Max returns the largest rejection anywhere on the mask.
func (m *Mask) Max() float64 {
	v := 0.0
	for _, pt := range m.p {
		v = math.Max(v, pt.DB)
	}
	return v
}

// At returns the rejection the mask asks of input frequency g.
func (m *Mask) At(g float64) float64 {
	p := m.p
	if g <= p[0].Hz {
		if g == p[0].Hz && len(p) > 1 && p[1].Hz == g {
			return math.Max(p[0].DB, p[1].DB)
		}
		return p[0].DB
	}
	last := p[len(p)-1]
	if g >= last.Hz {
		if g == last.Hz && len(p) > 1 && p[len(p)-2].Hz == g {
			return math.Max(last.DB, p[len(p)-2].DB)
		}
		return last.DB
	}
	// The first point above g; p[i-1].Hz <= g < p[i].Hz.
	i, _ := slices.BinarySearchFunc(p, g, func(pt MaskPoint, g float64) int {
		switch {
		case pt.Hz <= g:
			return -1
		default:
			return 1
		}
	})
	a, b := p[i-1], p[i]
	if g == a.Hz && i >= 2 && p[i-2].Hz == g {
		return math.Max(a.DB, p[i-2].DB)
	}
	return a.DB + (b.DB-a.DB)*(g-a.Hz)/(b.Hz-a.Hz)
}

// MaxOver returns the largest rejection the mask asks anywhere in [a, b]:
// the larger of its values at a and b and at every point inside (the mask
// is linear between points, so its extremes lie there).
func (m *Mask) MaxOver(a, b float64) float64 {
	v := math.Max(m.At(a), m.At(b))
	for _, pt := range m.p {
		if pt.Hz > a && pt.Hz < b {
			v = math.Max(v, pt.DB)
		}
	}
	return v
}

// MinOver returns the smallest rejection the mask asks anywhere in [a, b].
func (m *Mask) MinOver(a, b float64) float64 {
	v := math.Min(m.At(a), m.At(b))
	for _, pt := range m.p {
		if pt.Hz > a && pt.Hz < b {
			v = math.Min(v, pt.DB)
		}
	}
	return v
}

// Shifted returns the mask with every rejection raised by db dB (lowered
// for a negative db), or an error when a point leaves (0, MaxRejectionDB].
func (m *Mask) Shifted(db float64) (*Mask, error) {
	return m.shifted(db, MaxRejectionDB)
}

// shifted is Shifted with the points' rejections held to (0, most] dB.
func (m *Mask) shifted(db, most float64) (*Mask, error) {
	p := m.Points()
	for i := range p {
		p[i].DB += db
	}
	return newMask(p, most)
}
