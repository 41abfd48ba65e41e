package chain

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/dsp/fourier"

	"stepdown/chain/remez"
)

// Analysis is the truth of a designed cascade (DESIGN §7).
type Analysis struct {
	AliasRejectionDB float64 // positive dB
	WorstAliasHz     float64 // input frequency of the worst alias
	PassbandRippleDB float64 // peak-to-peak dB over [0, fp]
}

// Analyze measures a designed chain against spec (DESIGN §7):
//
//	alias rejection = -20 log10(max |H(g)|/|H(0)| over g in [k FK - fa, k FK + fa], k >= 1, g <= F0/2)
//	passband ripple = 20 log10(max |H| / min |H|) over [0, fp]
//
// with every extremum refined on the direct response to well under 0.01 dB.
// For a chain that is only estimated (Designed false) it returns the
// per-stage estimate instead: the least of the stages' rejections on their
// own bands (each FIR meets its Ds; a CIC's is computed exactly), and the sum
// of the stages' ripple shares plus the uncorrected CIC droop.
func Analyze(c *Chain, spec Spec) (Analysis, error) {
	spec, err := spec.Normalize()
	if err != nil {
		return Analysis{}, err
	}
	if err := checkChain(c, spec); err != nil {
		return Analysis{}, err
	}
	if !c.Designed || !hasTaps(c) {
		return estimateAnalysis(c, spec)
	}
	return measure(c, spec, nil), nil
}

func hasTaps(c *Chain) bool {
	for _, s := range c.Stages {
		if f, ok := s.(FIRStage); ok && f.Taps == nil {
			return false
		}
	}
	return true
}

func checkChain(c *Chain, spec Spec) error {
	if c == nil || len(c.Stages) == 0 {
		return errors.New("chain: empty chain")
	}
	if math.Abs(c.InputRate-spec.InputRate) > 1e-12*spec.InputRate {
		return fmt.Errorf("chain: chain InputRate = %s Hz differs from the spec's InputRate = %s Hz",
			fmtNum(c.InputRate), fmtNum(spec.InputRate))
	}
	if d := c.Decimation(); d != spec.Decimation() {
		return fmt.Errorf("chain: chain decimates by %d, the spec's ratio is %d", d, spec.Decimation())
	}
	return nil
}

func estimateAnalysis(c *Chain, spec Spec) (Analysis, error) {
	reqs, err := Requirements(spec, c.Plan)
	if err != nil {
		return Analysis{}, err
	}
	a := Analysis{AliasRejectionDB: MaxFigureDB}
	for i, r := range reqs {
		var rej, worst float64
		switch st := c.Stages[i].(type) {
		case CICStage:
			rej, worst = st.RejectionDB(r.Stopbands, r.InputRate)
			a.PassbandRippleDB += r.UncorrectedDroopDB
		default:
			// The stage's absolute limit Ds is StopbandScale below the target
			// so that the cascade's rejection relative to |H(0)| is Ds/scale.
			rej, worst = -toDB(r.Ds/r.StopbandScale), r.Stopbands[0].Lo
			a.PassbandRippleDB += DevToRipple(r.Dp)
		}
		if rej < a.AliasRejectionDB {
			a.AliasRejectionDB, a.WorstAliasHz = rej, worst
		}
	}
	return a, nil
}

// maximizeBands returns the maximum of f over the bands: each band is
// sampled at per(band)+1 points, and the grid maxima within 0.5 dB of the
// best (at most 16) are refined by golden-section search. When bound is not
// nil it gives an upper bound of f on a band, and bands that cannot beat the
// best so far are skipped.
func maximizeBands(f func(float64) float64, bands []Interval, per func(Interval) int, bound func(Interval) float64) (float64, float64) {
	type pt struct{ x, v, lo, hi, h float64 }
	var cands []pt
	best := 0.0
	win := math.Pow(10, -candidateWindow/20)
	for _, b := range bands {
		if bound != nil && bound(b) < best*win {
			continue
		}
		n := max(8, min(per(b), 1<<16))
		h := (b.Hi - b.Lo) / float64(n)
		prev2, prev1 := math.Inf(-1), math.Inf(-1)
		for j := 0; j <= n+1; j++ {
			v := math.Inf(-1)
			if j <= n {
				v = f(b.Lo + float64(j)*h)
			}
			if j >= 1 && prev1 >= prev2 && prev1 >= v && prev1 >= best*win {
				cands = append(cands, pt{b.Lo + float64(j-1)*h, prev1, b.Lo, b.Hi, h})
				best = math.Max(best, prev1)
			}
			prev2, prev1 = prev1, v
		}
	}
	sort.SliceStable(cands, func(i, j int) bool { return cands[i].v > cands[j].v })
	bx, bv := 0.0, 0.0
	for i, cd := range cands {
		if i >= 16 || cd.v < best*win {
			break
		}
		x, v := refine(f, cd.x, cd.h, cd.lo, cd.hi, 1)
		if v > bv {
			bx, bv = x, v
		}
	}
	return bx, bv
}

// refine maximises sign*f near the grid extremum x by golden-section search
// on [x-h, x+h] within [lo, hi]. On a very flat peak the grid's extremum can
// sit more than a step from the true one; when the search ends on an inner
// end of its window, the window moves there and the search goes on.
func refine(f func(float64) float64, x, h, lo, hi, sign float64) (float64, float64) {
	var v float64
	for try := 0; try < 8; try++ {
		a, b := math.Max(lo, x-h), math.Min(hi, x+h)
		x, v = golden(f, a, b, sign)
		tol := 1e-6 * h
		if !(x-a < tol && a > lo) && !(b-x < tol && b < hi) {
			break
		}
	}
	return x, v
}

// golden maximises sign*f on [a, b] by golden-section search and returns the
// best point seen (ends included) and f there.
func golden(f func(float64) float64, a, b float64, sign float64) (float64, float64) {
	const r = 0.6180339887498949
	bx, bv := a, f(a)
	if v := f(b); sign*v > sign*bv {
		bx, bv = b, v
	}
	x1, x2 := b-r*(b-a), a+r*(b-a)
	f1, f2 := f(x1), f(x2)
	for it := 0; it < 60 && b-a > 1e-12*math.Max(1, math.Abs(a)); it++ {
		if sign*f1 > sign*f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - r*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + r*(b-a)
			f2 = f(x2)
		}
	}
	for _, p := range [...]struct{ x, v float64 }{{x1, f1}, {x2, f2}} {
		if sign*p.v > sign*bv {
			bx, bv = p.x, p.v
		}
	}
	return bx, bv
}

// stageGrid is one stage's magnitude sampled on [0, rate/2] at its own input
// rate, for fast interpolated look-ups during the cascade scan.
type stageGrid struct {
	rate float64
	step float64 // Hz between grid points
	n    int     // intervals: grid points 0..n
	mag  []float64
	// blockMax[b] is the largest of mag[b B : (b+1) B], B = gridBlock, for
	// range maxima that bound a band's response before it is scanned.
	blockMax []float64
}

const gridBlock = 64

func (g *stageGrid) initBlocks() {
	nb := (len(g.mag) + gridBlock - 1) / gridBlock
	g.blockMax = make([]float64, nb)
	for b := range g.blockMax {
		m := 0.0
		for _, v := range g.mag[b*gridBlock : min(len(g.mag), (b+1)*gridBlock)] {
			m = math.Max(m, math.Abs(v))
		}
		g.blockMax[b] = m
	}
}

// rangeMax returns the largest grid value covering [a, b], 0 <= a <= b <= rate/2.
func (g *stageGrid) rangeMax(a, b float64) float64 {
	i0 := max(0, int(math.Floor(a/g.step)))
	i1 := min(g.n, int(math.Ceil(b/g.step)))
	m := 0.0
	for i0 <= i1 {
		if i0%gridBlock == 0 && i0+gridBlock-1 <= i1 {
			m = math.Max(m, g.blockMax[i0/gridBlock])
			i0 += gridBlock
			continue
		}
		m = math.Max(m, math.Abs(g.mag[i0]))
		i0++
	}
	return m
}

// bandMax returns the largest grid value of the stage over input
// frequencies [lo, hi], folding them onto [0, rate/2].
func (g *stageGrid) bandMax(lo, hi float64) float64 {
	f := g.rate
	if hi-lo >= f/2 {
		return g.rangeMax(0, f/2)
	}
	x := math.Mod(lo, f)
	y := x + (hi - lo)
	m := 0.0
	for k := 0; k < 4; k++ {
		s, e := math.Max(x, float64(k)*f/2), math.Min(y, float64(k+1)*f/2)
		if s > e {
			continue
		}
		switch k {
		case 0:
			m = math.Max(m, g.rangeMax(s, e))
		case 1:
			m = math.Max(m, g.rangeMax(f-e, f-s))
		case 2:
			m = math.Max(m, g.rangeMax(s-f, e-f))
		case 3:
			m = math.Max(m, g.rangeMax(2*f-e, 2*f-s))
		}
	}
	return m
}

// gridPointsPerTap sets the grid density: 16 points per tap over [0, rate/2]
// is 32 per lobe of width rate/N, where linear interpolation of the magnitude
// errs by well under 0.01 dB near a peak.
const gridPointsPerTap = 16

func nextPow2(n int) int {
	p := 1
	for p < n {
		p <<= 1
	}
	return p
}

func newStageGrid(s Stage, rate float64) stageGrid {
	var g stageGrid
	g.rate = rate
	switch st := s.(type) {
	case CICStage:
		// The signed response r^N, r = sin(pi x R M)/(R M sin(pi x)), is
		// smooth through its zeros, where |r|^N has cusps.
		g.n = nextPow2(max(minGridPoints, gridPointsPerTap*st.R*st.M))
		g.mag = make([]float64, g.n+1)
		g.step = rate / 2 / float64(g.n)
		rm := float64(st.R * st.M)
		for i := range g.mag {
			x := float64(i) * g.step / rate
			r := 1.0
			if i > 0 {
				r = math.Sin(math.Pi*math.Mod(x*rm, 2)) / (rm * math.Sin(math.Pi*x))
			}
			g.mag[i] = math.Pow(math.Abs(r), float64(st.N))
			if r < 0 && st.N%2 == 1 {
				g.mag[i] = -g.mag[i]
			}
		}
	case FIRStage:
		g.n = nextPow2(max(minGridPoints, gridPointsPerTap*len(st.Taps)))
		g.step = rate / 2 / float64(g.n)
		if symmetric(st.Taps) {
			g.mag = amplitudeGrid(st.Taps, g.n)
		} else {
			g.mag = remez.NewSpectrum(g.n+1).Magnitude(make([]float64, g.n+1), st.Taps)
		}
	default:
		g.n = 1 << 12
		g.mag = make([]float64, g.n+1)
		g.step = rate / 2 / float64(g.n)
		for i := range g.mag {
			g.mag[i] = s.Gain(float64(i)*g.step, rate)
		}
	}
	g.initBlocks()
	return g
}

// minGridPoints keeps short filters' grids fine enough that a cascade's peak
// found on them lies within a scan step of the true one.
const minGridPoints = 1024

func symmetric(h []float64) bool {
	n := len(h)
	scale := 0.0
	for _, v := range h {
		scale = math.Max(scale, math.Abs(v))
	}
	for i := 0; i < n/2; i++ {
		if math.Abs(h[i]-h[n-1-i]) > 1e-12*scale {
			return false
		}
	}
	return true
}

// amplitudeGrid returns the zero-phase amplitude A(f_k) = Re(e^(j w c) H(e^(j w))),
// c = (N-1)/2, of the symmetric filter h at f_k = k rate/(2n), k = 0..n, by
// one real FFT of length 2n >= N. Unlike |H| it is smooth through the
// stopband's zeros, so interpolating it is accurate there too.
func amplitudeGrid(h []float64, n int) []float64 {
	l := 2 * n
	seq := make([]float64, l)
	copy(seq, h)
	coef := fourier.NewFFT(l).Coefficients(nil, seq)
	c := float64(len(h)-1) / 2
	out := make([]float64, n+1)
	for k := range out {
		w := math.Pi * float64(k) / float64(n)
		sn, cs := math.Sincos(w * c)
		out[k] = real(coef[k])*cs - imag(coef[k])*sn
	}
	return out
}

type extremum struct{ x, v float64 }

// scanner walks the cascade's interpolated response over a band.
type scanner struct {
	grids []stageGrid
	h     float64   // scan step, Hz
	u     []float64 // per-stage position in grid units on [0, 2n)
	du    []float64
}

func newScanner(c *Chain) *scanner {
	rates := c.Rates()
	sc := &scanner{h: math.Inf(1)}
	for i, s := range c.Stages {
		g := newStageGrid(s, rates[i])
		sc.grids = append(sc.grids, g)
		sc.h = math.Min(sc.h, g.step)
	}
	sc.u = make([]float64, len(sc.grids))
	sc.du = make([]float64, len(sc.grids))
	return sc
}

// band scans [lo, hi] and calls visit for each local extremum of the
// interpolated cascade magnitude (maxima when sign > 0, minima when < 0),
// band ends included.
func (sc *scanner) band(lo, hi float64, sign float64, visit func(x, v float64)) float64 {
	npts := int(math.Ceil((hi-lo)/sc.h)) + 1
	if npts < 3 {
		npts = 3
	}
	hb := (hi - lo) / float64(npts-1)
	for i, g := range sc.grids {
		sc.u[i] = math.Mod(lo, g.rate) / g.step
		sc.du[i] = hb / g.step
	}
	prev2, prev1 := math.Inf(-1), math.Inf(-1)
	for j := 0; j <= npts; j++ {
		v := math.Inf(-1)
		if j < npts {
			p := 1.0
			for i := range sc.grids {
				g := &sc.grids[i]
				u := sc.u[i]
				n2 := float64(2 * g.n)
				for u >= n2 {
					u -= n2
				}
				sc.u[i] = u + sc.du[i]
				if u > float64(g.n) {
					u = n2 - u
				}
				k := int(u)
				if k >= g.n {
					p *= g.mag[g.n]
					continue
				}
				t := u - float64(k)
				p *= g.mag[k] + t*(g.mag[k+1]-g.mag[k])
			}
			v = sign * math.Abs(p)
		}
		if j >= 1 && prev1 >= prev2 && prev1 >= v {
			visit(lo+float64(j-1)*hb, sign*prev1)
		}
		prev2, prev1 = prev1, v
	}
	return hb
}

// Refinement limits: how many grid extrema are refined on the direct
// response, and how far below the best grid value a candidate may lie.
const (
	maxCandidates   = 64
	candidateWindow = 0.5 // dB
)

// measure computes the DESIGN §7 figures of a chain with taps. When grids is
// not nil it is reused.
func measure(c *Chain, spec Spec, sc *scanner) Analysis {
	if sc == nil {
		sc = newScanner(c)
	}
	fk, fa, fp := spec.OutputRate, spec.Protected, spec.Passband
	f0h := c.InputRate / 2
	h0 := c.Gain(0)
	if !(h0 > 0) {
		return Analysis{AliasRejectionDB: 0, PassbandRippleDB: MaxFigureDB}
	}

	// Alias rejection. Bound each band by the product of its stages' grid
	// maxima over it, then scan the bands from the highest bound down and stop
	// when no remaining band can come within the candidate window: most bands
	// lie deep in some stage's stopband and are never scanned.
	type cand struct{ x, v, lo, hi, h float64 }
	type band struct{ lo, hi, bound float64 }
	var bands []band
	for k := 1; float64(k)*fk-fa <= f0h; k++ {
		lo, hi := float64(k)*fk-fa, math.Min(float64(k)*fk+fa, f0h)
		if hi <= lo {
			continue
		}
		b := 1.0
		for i := range sc.grids {
			b *= sc.grids[i].bandMax(lo, hi)
		}
		bands = append(bands, band{lo, hi, b})
	}
	sort.SliceStable(bands, func(i, j int) bool { return bands[i].bound > bands[j].bound })
	var cands []cand
	best := 0.0
	win := math.Pow(10, -candidateWindow/20)
	for _, bd := range bands {
		if bd.bound < best*win {
			break
		}
		lo, hi := bd.lo, bd.hi
		hb := sc.band(lo, hi, 1, func(x, v float64) {
			if v >= best*win {
				cands = append(cands, cand{x: x, v: v, lo: lo, hi: hi})
				if v > best {
					best = v
				}
			}
		})
		for i := len(cands) - 1; i >= 0 && cands[i].h == 0; i-- {
			cands[i].h = hb
		}
	}
	sort.SliceStable(cands, func(i, j int) bool { return cands[i].v > cands[j].v })
	worstX, worstV := 0.0, 0.0
	for i, cd := range cands {
		if i >= maxCandidates || cd.v < best*win {
			break
		}
		x, v := refine(c.Gain, cd.x, cd.h, cd.lo, cd.hi, 1)
		if v > worstV {
			worstX, worstV = x, v
		}
	}
	a := Analysis{AliasRejectionDB: -toDB(worstV / h0), WorstAliasHz: worstX}

	// Passband ripple: refine the highest maxima and the lowest minima.
	hi, lo := refineExtrema(c, sc, fp, 1), refineExtrema(c, sc, fp, -1)
	a.PassbandRippleDB = toDB(hi / lo)
	return a
}

func refineExtrema(c *Chain, sc *scanner, fp, sign float64) float64 {
	var ex []extremum
	hb := sc.band(0, fp, sign, func(x, v float64) { ex = append(ex, extremum{x, v}) })
	sort.SliceStable(ex, func(i, j int) bool { return sign*ex[i].v > sign*ex[j].v })
	best := c.Gain(0)
	if sign*c.Gain(fp) > sign*best {
		best = c.Gain(fp)
	}
	for i, e := range ex {
		if i >= maxCandidates {
			break
		}
		_, v := refine(c.Gain, e.x, hb, 0, fp, sign)
		if sign*v > sign*best {
			best = v
		}
	}
	return best
}
