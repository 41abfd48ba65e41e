package fixed

import (
	"fmt"
	"math"
	"strconv"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// stageShape is stage i's magnitude at f Hz (of the signal, below every
// stage's Nyquist rate) over its magnitude at 0 Hz, on its rounded taps: 1
// for a fractional stage, whose phases' gains its own headroom point
// states.
func stageShape(c Cascade, w *Widths, i int, f float64) float64 {
	st := c.Stages[i]
	if st.fractional() {
		return 1
	}
	r := c.Rates()
	hi := r[i] // a decimating stage's taps run at its input rate
	if c.Interpolate {
		hi = r[i+1]
	}
	var s chain.Stage = chain.CICStage{N: st.N, M: st.M, R: st.R}
	if !st.CIC {
		taps := w.Stages[i].Coefficients.Float()
		s = chain.FIRStage{R: st.R, Taps: taps, Length: len(taps), HalfBand: st.HalfBand}
	}
	g0 := s.Gain(0, hi)
	if !(g0 > 0) {
		return 1
	}
	return s.Gain(f, hi) / g0
}

// prefixGainAt bounds the peak at stage i's output, in its full scale, of
// an input tone of full scale at f Hz: prefixGain (the stages' gains at 0
// Hz) times each stage's shape at f, and in an interpolation cascade the
// sum of that over every image of the tone the stages up to i leave in
// their output (k F_in +- f up to its Nyquist rate), since the tone and
// its images can peak together. A CIC's droop compensator raises it above
// the gain at 0 Hz within the passband, by up to its CIC's droop at the
// band's edge: in an interpolation chain, whose compensator comes first,
// before the droop it corrects; and an interpolation stage that leaves
// images to the stages after it (which the cascade rule lets it do) adds
// them.
func prefixGainAt(c Cascade, w *Widths, i int, f float64) float64 {
	g0 := prefixGain(w, i)
	shape := func(x float64) float64 {
		g := 1.0
		for j := 0; j <= i; j++ {
			g *= stageShape(c, w, j, x)
		}
		return g
	}
	if !c.Interpolate {
		return g0 * shape(f)
	}
	fin, top := c.InputRate, c.Rates()[i+1]/2
	sum := shape(f)
	for k := 1; float64(k)*fin-f <= top; k++ {
		sum += shape(float64(k)*fin - f)
		// At f = 0 the two images meet in one line of twice the
		// amplitude: both count.
		if x := float64(k)*fin + f; x <= top {
			sum += shape(x)
		}
	}
	return g0 * sum
}

// passbandPeak is the largest prefixGainAt over the channel's band
// [0, fa] (the protected edge; the passband's without one) and where it
// lies: the best of evenly spaced points, 64 or eight to each ripple of
// the stages up to i (a FIR of n taps at rate r ripples about n fa / r
// times over the band), at most 2^14, every local maximum within 1% of the
// best refined between its neighbours by golden section.
func passbandPeak(c Cascade, w *Widths, i int) (f, g float64) {
	fa := c.protectedEdge()
	at := func(x float64) float64 { return prefixGainAt(c, w, i, x) }
	r := c.Rates()
	ripples := 0.0
	for j := 0; j <= i; j++ {
		hi := r[j]
		if c.Interpolate {
			hi = r[j+1]
		}
		ripples += float64(c.Stages[j].Length()) * fa / hi
	}
	grid := int(math.Min(1<<14, math.Max(64, 8*ripples)))
	vals := make([]float64, grid+1)
	best := 0
	for k := range vals {
		vals[k] = at(fa * float64(k) / float64(grid))
		if vals[k] > vals[best] {
			best = k
		}
	}
	f, g = fa*float64(best)/float64(grid), vals[best]
	for k := range vals {
		if vals[k] < 0.99*vals[best] || (k > 0 && vals[k-1] > vals[k]) || (k < grid && vals[k+1] > vals[k]) {
			continue
		}
		lo, hi := fa*float64(max(0, k-1))/float64(grid), fa*float64(min(grid, k+1))/float64(grid)
		if x, gx := remez.GoldenMax(at, lo, hi, 60, fa*1e-9); gx > g {
			f, g = x, gx
		}
	}
	return f, g
}

// headroomPoints (Evaluate's, for the report) adds to every stage whose
// output an input tone at the input word's largest code in the passband
// can drive past its own largest code (by prefixGainAt's bound, images
// included) a point saying where and by how much: the input must stay
// that far below full scale there, or the stage may saturate.
func headroomPoints(c Cascade, w *Widths) {
	if !(c.Passband > 0) {
		return
	}
	// The loudest tone the input word carries: its largest code.
	in := 1 - math.Ldexp(1, 1-w.InputBits)
	// top is a stage's largest code less two LSBs, for the rounding of the
	// input and of the stages, which the bound, in real numbers, leaves out.
	top := func(i int) float64 { return 1 - 3*math.Ldexp(1, 1-w.Stages[i].OutputBits) }
stages:
	for i := range w.Stages {
		sw := &w.Stages[i]
		if sw.OutputBits < 2 {
			continue
		}
		f, g := passbandPeak(c, w, i)
		if g*in <= top(i) {
			continue
		}
		// A stage whose input an earlier stage clips first, at this
		// tone, never sees the louder tone: that stage's point says it.
		for j := 0; j < i; j++ {
			if prefixGainAt(c, w, j, f)*top(i)/g > top(j) {
				continue stages
			}
		}
		db := 20 * math.Log10(g)
		f4, _ := strconv.ParseFloat(strconv.FormatFloat(f, 'g', 4, 64), 64) // 768.6 kHz
		where := "in the passband"
		if f > c.Passband {
			where = "in the protected band"
		}
		sw.Points = append(sw.Points, fmt.Sprintf("headroom: an input tone at %s %s can peak at %+.3f dB of this output's full scale (the stages' gain there, images included), so above %.3f dBFS it may saturate the %d-bit output", units.FormatComputedFrequency(f4), where, db, 20*math.Log10(top(i)/g), sw.OutputBits))
	}
}
