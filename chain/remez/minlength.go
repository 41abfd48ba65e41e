package remez

import (
	"fmt"
	"math"
)

// MinLength returns the shortest filter that meets every band's MaxError,
// measured on the real response with extrema refined locally. Parity, when
// 1 or 2, restricts the search to odd (1) or even (2) lengths; 0 allows both.
// maxTaps bounds the search (0 means 65535).
//
// The designs weight each band by 1/MaxError (times its WeightFunc, when
// given), so that the equiripple optimum balances the bands against their
// own limits; Band.Weight is ignored. The search starts from the largest
// Herrmann-Rabiner-Chan estimate over the transitions between adjacent
// bands, then gallops (steps of 2, 4, 8, ... taps of one parity) until it
// brackets the answer and bisects; it assumes that within one parity a
// longer filter never does worse. With parity 0 it finds the shortest odd
// length and then tries the even lengths below it. Even lengths are skipped
// when a band asks for a non-zero gain at rate/2, where they are zero.
func MinLength(rate float64, bands []Band, parity, maxTaps int, s Settings) (*Result, error) {
	r, _, err := minLength(rate, bands, parity, maxTaps, s)
	return r, err
}

// minLength is MinLength that also returns its search state (for tests).
func minLength(rate float64, bands []Band, parity, maxTaps int, s Settings) (*Result, *lengthSearch, error) {
	if err := validateSpec(rate, bands, s); err != nil {
		return nil, nil, err
	}
	if parity < 0 || parity > 2 {
		return nil, nil, fmt.Errorf("remez: parity = %d: must be 0 (any), 1 (odd) or 2 (even)", parity)
	}
	if maxTaps == 0 {
		maxTaps = 65535
	}
	if maxTaps < 3 {
		return nil, nil, fmt.Errorf("remez: maxTaps = %d: must be at least 3 (0 means 65535)", maxTaps)
	}
	wb := make([]Band, len(bands))
	for i, b := range bands {
		if !(b.MaxError > 0) || math.IsInf(b.MaxError, 0) {
			return nil, nil, fmt.Errorf("remez: band %d MaxError = %v: MinLength needs a positive, finite error limit for every band", i, b.MaxError)
		}
		wb[i] = b
		wb[i].Weight = 1 / b.MaxError
		if wf := b.WeightFunc; wf != nil {
			lim := b.MaxError
			wb[i].WeightFunc = func(f float64) float64 { return wf(f) / lim }
		}
	}
	evenOK := true
	if last := bands[len(bands)-1]; last.Hi == rate/2 {
		g := last.Gain
		if last.GainFunc != nil {
			g = last.GainFunc(rate / 2)
		}
		evenOK = g == 0
	}
	if parity == 2 && !evenOK {
		return nil, nil, fmt.Errorf("remez: parity = 2 (even lengths) but band %d wants gain %v at rate/2, where an even-length symmetric filter is zero: use parity 0 or 1", len(bands)-1, bands[len(bands)-1].Gain)
	}
	m := &lengthSearch{rate: rate, bands: bands, wb: wb, s: s, maxTaps: maxTaps, cache: map[int]*Result{}, ratio: map[int]float64{}}
	est := m.estimate()
	switch parity {
	case 1:
		r, err := m.finish(m.search(est, 1))
		return r, m, err
	case 2:
		r, err := m.finish(m.search(est, 0))
		return r, m, err
	}
	n, err := m.search(est, 1)
	if err != nil {
		if !evenOK {
			return nil, nil, err
		}
		r, err := m.finish(m.search(est, 0))
		return r, m, err
	}
	if !evenOK || n-1 < 4 || !m.meets(n-1) {
		r, err := m.finish(n, nil)
		return r, m, err
	}
	r, err := m.finish(m.search(n-1, 0))
	return r, m, err
}

type lengthSearch struct {
	rate    float64
	bands   []Band // the caller's, for MaxError and WeightFunc
	wb      []Band // weighted for the design
	s       Settings
	maxTaps int
	cache   map[int]*Result // results that meet
	ratio   map[int]float64 // worst measured/allowed error per length
}

// estimate is the largest Herrmann-Rabiner-Chan length over the
// transitions between adjacent bands (common practice for multiband
// specifications), or 3 without any transition.
func (m *lengthSearch) estimate() int {
	est := 3
	for i := 0; i+1 < len(m.bands); i++ {
		tr := m.bands[i+1].Lo - m.bands[i].Hi
		if tr <= 0 {
			continue
		}
		d1 := math.Min(m.bands[i].MaxError, 0.5)
		d2 := math.Min(m.bands[i+1].MaxError, 0.5)
		est = max(est, HerrmannLength(d1, d2, tr, m.rate))
	}
	return min(est, m.maxTaps)
}

// meets designs length n (once) and reports whether every band is met on
// the measured response; it records the worst ratio of measured to allowed
// error, which guides the search.
func (m *lengthSearch) meets(n int) bool {
	if _, ok := m.ratio[n]; !ok {
		r, wdev := m.design(n)
		worst := math.Inf(1)
		if r != nil {
			worst = 0
			for b := range m.bands {
				worst = math.Max(worst, wdev[b]/m.bands[b].MaxError)
			}
		}
		m.ratio[n] = worst
		if worst <= 1 {
			m.cache[n] = r
		}
	}
	return m.ratio[n] <= 1
}

func (m *lengthSearch) design(n int) (*Result, []float64) {
	e, err := newEngine(n, m.rate, m.wb, m.s)
	if err != nil {
		return nil, nil
	}
	res, _ := e.design()
	if res == nil {
		return nil, nil
	}
	_, wdev := e.deviations(res.Taps)
	return res, wdev
}

// search returns the shortest length of the given parity (n%2 == odd) that
// meets, starting from n0.
func (m *lengthSearch) search(n0, odd int) (int, error) {
	lowest := 3
	if odd == 0 {
		lowest = 4
	}
	top := m.maxTaps
	if top%2 != odd {
		top--
	}
	if top < lowest {
		return 0, fmt.Errorf("remez: maxTaps = %d leaves no length of this parity", m.maxTaps)
	}
	n0 = max(lowest, min(n0, top))
	if n0%2 != odd {
		n0++
		if n0 > top {
			n0 -= 2
		}
	}
	// The log of the worst error ratio falls about linearly with the
	// length (Herrmann's D/df law), so a safeguarded secant (regula falsi)
	// on it finds the crossing in a few designs; steps are clamped to the
	// bracket, and to doubling or halving before one exists.
	var lo, hi int // longest failing, shortest meeting (0: none yet)
	var pn [2]int
	var pg [2]float64
	np := 0
	eval := func(n int) {
		if m.meets(n) {
			if hi == 0 || n < hi {
				hi = n
			}
		} else if n > lo {
			lo = n
		}
		if g := math.Log(m.ratio[n]); !math.IsInf(g, 0) && !math.IsNaN(g) {
			pn[0], pg[0] = pn[1], pg[1]
			pn[1], pg[1] = n, g
			np++
		}
	}
	eval(n0)
	last, same := 0, 0
	for range 60 {
		if hi > 0 && (hi == lowest || (lo > 0 && hi-lo <= 2)) {
			return hi, nil
		}
		if hi == 0 && lo >= top {
			return 0, fmt.Errorf("remez: the bands are not met by any length up to maxTaps = %d: widen the transitions, relax MaxError or raise maxTaps", m.maxTaps)
		}
		var c float64
		switch {
		case np >= 2 && pn[0] != pn[1] && pg[0] != pg[1]:
			c = float64(pn[1]) - pg[1]*float64(pn[1]-pn[0])/(pg[1]-pg[0])
		case hi == 0:
			c = float64(lo) * 1.02
		default:
			c = float64(hi) * 0.98
		}
		if math.IsNaN(c) {
			c = float64(lo + hi)
		}
		switch {
		case hi == 0:
			c = math.Min(math.Max(c, float64(lo+2)), float64(min(top, 2*lo+2)))
		case lo == 0:
			c = math.Max(math.Min(c, float64(hi-2)), math.Max(float64(lowest), float64(hi/2)))
		default:
			c = math.Min(math.Max(c, float64(lo+2)), float64(hi-2))
			if same >= 2 { // regula falsi stalls on one side: bisect
				c = float64(lo+hi) / 2
			}
		}
		n := int(math.Ceil(c))
		if n%2 != odd {
			n++
		}
		if hi > 0 && n >= hi {
			n -= 2
		}
		if n <= lo {
			n = lo + 2
		}
		n = min(n, top)
		if _, done := m.ratio[n]; done {
			// Already designed: close the bracket by one step instead.
			if hi > 0 {
				n = hi - 2
			} else {
				n = lo + 2
			}
		}
		met := m.meets(n)
		side := 1
		if met {
			side = -1
		}
		if side == last {
			same++
		} else {
			same = 0
		}
		last = side
		eval(n)
	}
	if hi > 0 {
		return hi, nil
	}
	return 0, fmt.Errorf("remez: length search did not settle (last bracket %d..%d taps)", lo, hi)
}

func (m *lengthSearch) finish(n int, err error) (*Result, error) {
	if err != nil {
		return nil, err
	}
	return m.cache[n], nil
}
