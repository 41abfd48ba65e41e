package fixed

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strconv"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// gainModel holds what gainModel.at needs of a cascade, built once: each
// stage's response (its rounded taps, or its CIC) with the rate its taps
// run at, its magnitude at 0 Hz, and the stages' gains at 0 Hz up to it.
type gainModel struct {
	// frac is set for a cascade with a fractional stage, whose paths the
	// model does not follow (a fractional stage's images and its
	// prototype's lift): at is then prefixGain, the gain at 0 Hz, and
	// headroomPoints says nothing.
	frac   bool
	interp bool
	fin    float64
	rates  []float64
	stages []chain.Stage // nil for a fractional stage (shape 1)
	hi, g0 []float64
	dc     []float64 // prefixGain
	// period[j] is stage j's tap rate over the input rate (an integer in
	// an interpolation cascade): its response at k F_in +- f depends on k
	// mod period[j] alone, so at evaluates period[j] values a sign, not
	// one an image. minus and plus are at's scratch for them.
	period      []int
	minus, plus [][]float64
	// sup[j] bounds stage j's magnitude over its magnitude at 0 Hz: its
	// taps' absolute sum over their sum (1 for a CIC, whose taps are all
	// positive).
	sup []float64
	// lines is how many of a CIC's images at sums before bounding the
	// rest (maxImageLines).
	lines int
	// halt, when set, is set once the caller's context is done: at, which
	// can take seconds with a FIR's thousands of taps at tens of thousands
	// of image frequencies, then returns at once (headroomPoints).
	halt *atomic.Bool
}

// haltCheckEvery is how many stage magnitudes or image lines at computes
// between looks at the halt flag.
const haltCheckEvery = 256

func (m *gainModel) halted() bool { return m.halt != nil && m.halt.Load() }

func newGainModel(c Cascade, w *Widths) *gainModel {
	m := &gainModel{interp: c.Interpolate, fin: c.InputRate, rates: c.Rates(), lines: maxImageLines}
	for i, st := range c.Stages {
		hi := m.rates[i] // a decimating stage's taps run at its input rate
		if c.Interpolate {
			hi = m.rates[i+1]
		}
		var s chain.Stage
		g0 := 1.0
		switch {
		case st.fractional():
			m.frac = true
		case st.CIC:
			s = chain.CICStage{N: st.N, M: st.M, R: st.R}
		default:
			taps := w.Stages[i].Coefficients.Float()
			s = chain.FIRStage{R: st.R, Taps: taps, Length: len(taps), HalfBand: st.HalfBand}
		}
		if s != nil {
			if g0 = s.Gain(0, hi); !(g0 > 0) {
				s, g0 = nil, 1
			}
		}
		m.stages, m.hi, m.g0 = append(m.stages, s), append(m.hi, hi), append(m.g0, g0)
		sup := 1.0
		if f, ok := s.(chain.FIRStage); ok {
			abs := 0.0
			for _, h := range f.Taps {
				abs += math.Abs(h)
			}
			sup = math.Max(1, abs/g0)
		}
		m.sup = append(m.sup, sup)
		m.dc = append(m.dc, prefixGain(w, i))
		p := max(1, int(math.Round(hi/c.InputRate)))
		m.period = append(m.period, p)
		m.minus, m.plus = append(m.minus, make([]float64, p)), append(m.plus, make([]float64, p))
	}
	return m
}

// stageAt is stage j's magnitude at f Hz over its magnitude at 0 Hz.
func (m *gainModel) stageAt(j int, f float64) float64 {
	if s := m.stages[j]; s != nil {
		return s.Gain(f, m.hi[j]) / m.g0[j]
	}
	return 1
}

// shape is the product of stages 0..i's magnitudes at f Hz over theirs at
// 0 Hz.
func (m *gainModel) shape(i int, f float64) float64 {
	g := 1.0
	for j := 0; j <= i; j++ {
		g *= m.stageAt(j, f)
	}
	return g
}

// at bounds the peak at stage i's output, in its full scale, of
// an input tone of full scale at f Hz (of the signal, below every stage's
// Nyquist rate): prefixGain (the stages' gains at 0 Hz) times each stage's
// magnitude at f over its magnitude at 0 Hz, on its rounded taps, and in
// an interpolation cascade the sum of that over
// every image of the tone the stages up to i leave in their output
// (k F_in +- f up to its Nyquist rate), since the tone and its images can
// peak together. A CIC's droop compensator raises it above the gain at
// 0 Hz within the passband, by up to its CIC's droop at the band's edge:
// in an interpolation chain, whose compensator comes first, before the
// droop it corrects; and an interpolation stage that leaves images to the
// stages after it (which the cascade rule lets it do) adds them. For a
// cascade with a fractional stage it is prefixGain alone (gainModel.frac).
// Past m.lines images of a CIC the rest are bounded (cicTail), and the
// figure is at most the bound at the CIC's input carried through its
// positive taps.
func (m *gainModel) at(i int, f float64) float64 {
	if m.frac {
		return m.dc[i]
	}
	if !m.interp {
		return m.dc[i] * m.shape(i, f)
	}
	top := m.rates[i+1] / 2
	// A CIC with more images than m.lines (a million at
	// L = 1024000, each for every point of the peak search, and a period
	// as long) has its first maxImageLines summed and the rest bounded
	// (cicTail); its own factor is then read at each image, not from the
	// tables.
	_, cic := m.stages[i].(chain.CICStage)
	tail := cic && top/m.fin > float64(m.lines)
	n := i + 1
	if tail {
		n = i
	}
	for j := range n {
		for r := range m.period[j] {
			if r%haltCheckEvery == 0 && m.halted() {
				// Stopped: peak returns the context's error, not this.
				return 0
			}
			m.minus[j][r] = m.stageAt(j, float64(r)*m.fin-f)
			m.plus[j][r] = m.stageAt(j, float64(r)*m.fin+f)
		}
	}
	line := func(k int, v [][]float64, x float64) float64 {
		g := 1.0
		for j := range n {
			g *= v[j][k%m.period[j]]
		}
		if tail {
			g *= m.stageAt(i, x)
		}
		return g
	}
	sum := line(0, m.plus, f)
	k := 1
	for ; (!tail || k <= m.lines) && float64(k)*m.fin-f <= top; k++ {
		if k%haltCheckEvery == 0 && m.halted() {
			return 0
		}
		sum += line(k, m.minus, float64(k)*m.fin-f)
		// At f = 0 the two images meet in one line of twice the
		// amplitude: both count, but at the output's Nyquist rate, where
		// the line is the one alone.
		if x := float64(k)*m.fin + f; x <= top && !(f == 0 && x == top) {
			sum += line(k, m.plus, x)
		}
	}
	if !tail || float64(k)*m.fin-f > top {
		return m.dc[i] * sum
	}
	summed := m.dc[i] * (sum + m.cicTail(i, k, f, top))
	// The CIC's taps are all positive, so its output's peak is also at
	// most its input's (the bound at stage i-1, the tone itself at the
	// first stage) times its gain at 0 Hz, whatever the input: the
	// tighter of the two (an order-1 CIC's images fall only as 1/k).
	carried := m.dc[i]
	if i > 0 && m.dc[i-1] > 0 {
		carried = m.dc[i] * m.at(i-1, f) / m.dc[i-1]
	}
	return math.Min(summed, carried)
}

// cicTail bounds the sum, over the images k Fin -+ f from k = k0 on (up
// to top), of the stages' magnitudes at stage i, a CIC of order N,
// differential delay M, input rate Fc, output rate R Fc. Over 0 < x <=
// R Fc / 2, sin(pi x / (R Fc)) >= 2 x / (R Fc), so the CIC's magnitude
// over its gain at 0 Hz is at most (Fc / (2 M x))^N; an image's x is at
// least (k - 1/2) Fin (f lies below Fin / 2), and each earlier stage's
// magnitude is at most its taps' absolute sum over their sum (sup). The
// sum over k of (k - 1/2)^-N is at most its first term plus the integral
// from k0 on.
func (m *gainModel) cicTail(i, k0 int, f, top float64) float64 {
	st := m.stages[i].(chain.CICStage)
	a := 1.0
	for j := range i {
		a *= m.sup[j]
	}
	c := m.rates[i] / (2 * float64(st.M) * m.fin)
	n := float64(st.N)
	t0 := float64(k0) - 0.5
	integral := math.Pow(t0, 1-n) / (n - 1)
	if st.N == 1 {
		kEnd := (top+f)/m.fin + 1
		integral = math.Log((kEnd - 0.5) / t0)
	}
	return 2 * a * math.Pow(c, n) * (math.Pow(t0, -n) + integral)
}

// maxImageLines is how many images of a tone at sums at a CIC's output
// before it takes the CIC's positive taps' bound instead (see at).
const maxImageLines = 1 << 12

// maxGainAt is the largest at over the stages at f, at least 1.
func (m *gainModel) maxGainAt(f float64) float64 {
	g := 1.0
	for i := range m.stages {
		g = math.Max(g, m.at(i, f))
	}
	return g
}

// peak is the largest at over the channel's band
// [0, fa] (the protected edge; the passband's without one) and where it
// lies: the best of evenly spaced points, 64 or eight to each ripple of
// the stages up to i (a FIR of n taps at rate r ripples about n fa / r
// times over the band), at most 2^14, the highest peakRefines local maxima
// within 1% of the best refined between their neighbours by golden
// section.
func (m *gainModel) peak(ctx context.Context, c Cascade, i int) (f, g float64, err error) {
	fa := c.protectedEdge()
	at := func(x float64) float64 { return m.at(i, x) }
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
		if err := ctx.Err(); err != nil {
			return 0, 0, err
		}
		vals[k] = at(fa * float64(k) / float64(grid))
		if vals[k] > vals[best] {
			best = k
		}
	}
	f, g = fa*float64(best)/float64(grid), vals[best]
	// The local maxima within 1% of the best, the highest first; the
	// best peakRefines of them are refined.
	var tops []int
	for k := range vals {
		if vals[k] >= 0.99*vals[best] && (k == 0 || vals[k-1] <= vals[k]) && (k == grid || vals[k+1] <= vals[k]) {
			tops = append(tops, k)
		}
	}
	sort.SliceStable(tops, func(a, b int) bool { return vals[tops[a]] > vals[tops[b]] })
	for _, k := range tops[:min(len(tops), peakRefines)] {
		if err := ctx.Err(); err != nil {
			return 0, 0, err
		}
		lo, hi := fa*float64(max(0, k-1))/float64(grid), fa*float64(min(grid, k+1))/float64(grid)
		if x, gx := remez.GoldenMax(at, lo, hi, 40, fa*1e-9); gx > g {
			f, g = x, gx
		}
	}
	if f < fa*1e-6 {
		f = 0 // a refinement a hair from 0 Hz
	}
	// A halted at reads 0: no figure stands once the context is done.
	if err := ctx.Err(); err != nil {
		return 0, 0, err
	}
	return f, g, nil
}

// peakRefines is how many of the passband's highest local maxima
// peak refines.
const peakRefines = 4

// headroomPoints (Evaluate's, for the report) adds to every stage whose
// output an input tone at the input word's largest code in the channel's
// band can drive past its own largest code (by gainModel.at's bound, images
// included) a point saying where and by how much: the input must stay
// that far below full scale there, or the stage may saturate.
func headroomPoints(ctx context.Context, c Cascade, w *Widths) error {
	if !(c.Passband > 0) {
		return nil
	}
	m := newGainModel(c, w)
	if m.frac {
		return nil
	}
	m.halt = new(atomic.Bool)
	defer context.AfterFunc(ctx, func() { m.halt.Store(true) })()
	// The loudest tone the input word carries: its largest code.
	in := 1 - math.Ldexp(1, 1-w.InputBits)
	if !(in > 0) {
		return nil // a 1-bit word's codes are 0 and -1 of full scale
	}
	// top is a stage's largest code less two LSBs, for the rounding of the
	// input and of the stages, which the bound, in real numbers, leaves out.
	top := func(i int) float64 { return 1 - 3*math.Ldexp(1, 1-w.Stages[i].OutputBits) }
stages:
	for i := range w.Stages {
		sw := &w.Stages[i]
		if !(top(i) > 0) {
			continue // a word of two or three bits: no room for the margin
		}
		f, g, err := m.peak(ctx, c, i)
		if err != nil {
			return err
		}
		if g*in <= top(i) {
			continue
		}
		// A stage whose input an earlier stage clips first, at this
		// tone, never sees the louder tone: that stage's point says it.
		for j := 0; j < i; j++ {
			if m.at(j, f)*top(i)/g > top(j) {
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
	// A halted at reads 0, so no point stands once the context is done.
	return ctx.Err()
}
