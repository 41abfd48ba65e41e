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
	if err := validateSpec(rate, bands, s); err != nil {
		return nil, err
	}
	if parity < 0 || parity > 2 {
		return nil, fmt.Errorf("remez: parity = %d: must be 0 (any), 1 (odd) or 2 (even)", parity)
	}
	if maxTaps == 0 {
		maxTaps = 65535
	}
	if maxTaps < 3 {
		return nil, fmt.Errorf("remez: maxTaps = %d: must be at least 3 (0 means 65535)", maxTaps)
	}
	wb := make([]Band, len(bands))
	for i, b := range bands {
		if !(b.MaxError > 0) || math.IsInf(b.MaxError, 0) {
			return nil, fmt.Errorf("remez: band %d MaxError = %v: MinLength needs a positive, finite error limit for every band", i, b.MaxError)
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
		return nil, fmt.Errorf("remez: parity = 2 (even lengths) but band %d wants gain %v at rate/2, where an even-length symmetric filter is zero: use parity 0 or 1", len(bands)-1, bands[len(bands)-1].Gain)
	}
	m := &lengthSearch{rate: rate, bands: bands, wb: wb, s: s, maxTaps: maxTaps, cache: map[int]*Result{}}
	est := m.estimate()
	switch parity {
	case 1:
		return m.finish(m.search(est, 1))
	case 2:
		return m.finish(m.search(est, 0))
	}
	n, err := m.search(est, 1)
	if err != nil {
		if !evenOK {
			return nil, err
		}
		return m.finish(m.search(est, 0))
	}
	if !evenOK || n-1 < 4 || !m.meets(n-1) {
		return m.finish(n, nil)
	}
	return m.finish(m.search(n-1, 0))
}

type lengthSearch struct {
	rate    float64
	bands   []Band // the caller's, for MaxError and WeightFunc
	wb      []Band // weighted for the design
	s       Settings
	maxTaps int
	cache   map[int]*Result
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
// the measured response.
func (m *lengthSearch) meets(n int) bool {
	r, ok := m.cache[n]
	if !ok {
		var wdev []float64
		r, wdev = m.design(n)
		if r != nil {
			for b := range m.bands {
				if wdev[b] > m.bands[b].MaxError {
					m.cache[n] = nil
					return false
				}
			}
		}
		m.cache[n] = r
	}
	return r != nil
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
	var lo, hi int // lo fails (0: none tried), hi meets
	if m.meets(n0) {
		hi = n0
		for step := 2; hi > lowest; step *= 2 {
			c := max(lowest, hi-step)
			if !m.meets(c) {
				lo = c
				break
			}
			hi = c
		}
		if lo == 0 {
			return hi, nil
		}
	} else {
		lo = n0
		for step := 2; ; step *= 2 {
			c := min(top, lo+step)
			if m.meets(c) {
				hi = c
				break
			}
			if c == top {
				return 0, fmt.Errorf("remez: the bands are not met by any length up to maxTaps = %d: widen the transitions, relax MaxError or raise maxTaps", m.maxTaps)
			}
			lo = c
		}
	}
	for hi-lo > 2 {
		mid := lo + (hi-lo)/2
		if mid%2 != odd {
			mid++
		}
		if m.meets(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi, nil
}

func (m *lengthSearch) finish(n int, err error) (*Result, error) {
	if err != nil {
		return nil, err
	}
	return m.cache[n], nil
}
