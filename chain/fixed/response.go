package fixed

import "math"

// cascadeResp evaluates a cascade's absolute gain, stage by stage at its own rate.
type cascadeResp struct {
	rates []float64 // input rate of each stage
	cic   []bool
	n, rm []int
	scale []float64 // CIC: DC gain
	taps  [][]float64
}

func newResp(c Cascade, w *Widths, quantised bool) cascadeResp {
	r := cascadeResp{}
	rate := c.InputRate
	for i, st := range c.Stages {
		r.rates = append(r.rates, rate)
		r.cic = append(r.cic, st.CIC)
		r.n = append(r.n, st.N)
		r.rm = append(r.rm, st.R*st.M)
		var taps []float64
		sc := 1.0
		switch {
		case st.CIC:
			sc = w.Stages[i].Gain
		case quantised:
			taps = w.Stages[i].Coefficients.Float()
		default:
			taps = w.Stages[i].floatTaps(st)
			if sym, err := symmetrized(taps); err == nil {
				taps = sym
			}
		}
		r.scale = append(r.scale, sc)
		r.taps = append(r.taps, taps)
		rate /= float64(st.R)
	}
	return r
}

func quantisedCascade(c Cascade, w *Widths) cascadeResp { return newResp(c, w, true) }

func (c Cascade) floatGain(g float64, w *Widths) float64 { return newResp(c, w, false).gain(g) }

// gain returns |H(g)| of the cascade at input frequency g Hz.
func (r cascadeResp) gain(g float64) float64 {
	p := 1.0
	for i, rate := range r.rates {
		if r.cic[i] {
			p *= r.scale[i] * cicNorm(r.n[i], r.rm[i], g, rate)
		} else {
			p *= math.Abs(Amplitude(r.taps[i], math.Mod(g, rate), rate))
		}
	}
	return p
}

// cicNorm is |sin(pi f RM/F) / (RM sin(pi f/F))|^N, 1 at DC (DESIGN §4).
func cicNorm(n, rm int, f, rate float64) float64 {
	x := math.Mod(math.Abs(f)/rate, 1)
	if x > 0.5 {
		x = 1 - x
	}
	if x == 0 {
		return 1
	}
	y := math.Mod(x*float64(rm), 2)
	v := math.Abs(math.Sin(math.Pi*y) / (float64(rm) * math.Sin(math.Pi*x)))
	return math.Pow(math.Min(v, 1), float64(n))
}

// worstAlias returns the input frequency of the largest |H(g)|/|H(0)| over
// the alias bands [k FK - fa, k FK + fa], k >= 1, clipped to [0, F0/2], and
// the rejection there in positive dB. The grid resolves every stage's
// response (16 points per expected ripple) and the best few peaks are
// refined by golden-section search.
func worstAlias(r cascadeResp, fk, fa float64) (float64, float64) {
	f0 := r.rates[0]
	h0 := r.gain(0)
	// Ripples per Hz: a length-L filter at rate F has about L/F extrema per Hz.
	dens := 0.0
	for i, rate := range r.rates {
		l := float64(len(r.taps[i]))
		if r.cic[i] {
			l = float64(r.n[i] * r.rm[i])
		}
		dens += l / rate
	}
	type peak struct{ lo, hi, g, v float64 }
	var peaks []peak
	for k := 1; float64(k)*fk-fa < f0/2; k++ {
		lo, hi := math.Max(0, float64(k)*fk-fa), math.Min(f0/2, float64(k)*fk+fa)
		if hi <= lo {
			continue
		}
		pts := int(math.Ceil(16*dens*(hi-lo))) + 17
		step := (hi - lo) / float64(pts-1)
		bg, bv := lo, -1.0
		for j := 0; j < pts; j++ {
			g := lo + step*float64(j)
			if v := r.gain(g); v > bv {
				bg, bv = g, v
			}
		}
		peaks = append(peaks, peak{math.Max(lo, bg-step), math.Min(hi, bg+step), bg, bv})
	}
	// Refine the four best grid peaks.
	for t := 0; t < 4 && t < len(peaks); t++ {
		b := t
		for j := t + 1; j < len(peaks); j++ {
			if peaks[j].v > peaks[b].v {
				b = j
			}
		}
		peaks[t], peaks[b] = peaks[b], peaks[t]
	}
	bestG, bestV := 0.0, -1.0
	for t := 0; t < 4 && t < len(peaks); t++ {
		p := peaks[t]
		g, v := goldenArgMax(r.gain, p.lo, p.hi)
		if p.v > v {
			g, v = p.g, p.v
		}
		if v > bestV {
			bestG, bestV = g, v
		}
	}
	return bestG, posDB(bestV / h0)
}

// goldenArgMax is golden-section search for the maximum of g on [lo, hi].
func goldenArgMax(g func(float64) float64, lo, hi float64) (float64, float64) {
	const r = 0.6180339887498949
	a, b := lo, hi
	x1, x2 := b-r*(b-a), a+r*(b-a)
	g1, g2 := g(x1), g(x2)
	for it := 0; it < 60 && b-a > 1e-9*(math.Abs(hi)+1); it++ {
		if g1 > g2 {
			b, x2, g2 = x2, x1, g1
			x1 = b - r*(b-a)
			g1 = g(x1)
		} else {
			a, x1, g1 = x1, x2, g2
			x2 = a + r*(b-a)
			g2 = g(x2)
		}
	}
	if g1 > g2 {
		return x1, g1
	}
	return x2, g2
}
