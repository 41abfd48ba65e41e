package remez

import (
	"errors"
	"fmt"
	"math"
)

// HalfBand designs the half-band filter of length 4k-1 with passband [0, fp]
// and stopband [rate/2-fp, rate/2] by the single-band trick (Vaidyanathan
// and Nguyen 1987): G of length 2k is designed on the one band
// [0, 2 fp/rate] (normalised, desired 1), and H(z) = (z^-(2k-1) + G(z^2))/2.
// Every other tap is then exactly zero, the centre tap is exactly 1/2, and
// the passband and stopband deviations are both half of G's.
//
// Result.Deviations holds the passband and the stopband deviation (equal by
// symmetry), Result.Delta the levelled one. k must be at least 1 and fp
// strictly between 0 and rate/4.
func HalfBand(k int, fp, rate float64, s Settings) (*Result, error) {
	if err := halfBandSpec(fp, rate); err != nil {
		return nil, err
	}
	if k < 1 {
		return nil, fmt.Errorf("remez: half-band k = %d: need k >= 1 (length 4k-1 >= 3)", k)
	}
	band := 2 * fp / rate
	var g []float64
	var res *Result
	var gerr error
	if k == 1 {
		// G = c (1 + z^-1) has amplitude 2c cos(pi f); the minimax c on
		// [0, band] levels 1 - 2c cos(pi band) against 2c - 1.
		cb := math.Cos(math.Pi * band)
		c := 1 / (1 + cb)
		g = []float64{c, c}
		d := (1 - cb) / (1 + cb)
		res = &Result{Deviations: []float64{d}, Delta: d, Converged: true}
	} else {
		res, gerr = Design(2*k, 1, []Band{{Lo: 0, Hi: band, Gain: 1, Weight: 1}}, s)
		if res == nil {
			return nil, fmt.Errorf("remez: half-band k = %d, fp = %v Hz: %w", k, fp, gerr)
		}
		g = res.Taps
	}
	h := make([]float64, 4*k-1)
	for m, v := range g {
		h[2*m] = v / 2
	}
	h[2*k-1] = 0.5
	dev := res.Deviations[0] / 2
	out := &Result{
		Taps:       h,
		Deviations: []float64{dev, dev},
		Delta:      res.Delta / 2,
		Iterations: res.Iterations,
		Converged:  res.Converged,
	}
	if gerr != nil {
		return out, fmt.Errorf("remez: half-band k = %d, fp = %v Hz: %w", k, fp, gerr)
	}
	return out, nil
}

func halfBandSpec(fp, rate float64) error {
	if !(rate > 0) || math.IsInf(rate, 0) {
		return fmt.Errorf("remez: half-band rate = %v Hz: must be positive and finite", rate)
	}
	if !(fp > 0 && fp < rate/4) {
		return fmt.Errorf("remez: half-band passband edge fp = %v Hz: must lie strictly between 0 and rate/4 = %v Hz", fp, rate/4)
	}
	return nil
}

// MinHalfBand returns the half-band with the smallest k whose deviation
// (passband and stopband alike, measured on the refined response) is at
// most dev. The search starts from the Herrmann-Rabiner-Chan estimate with
// dp = ds = dev and transition rate/2 - 2 fp, then steps and bisects; it
// gives up beyond k = 16384 (65 535 taps).
func MinHalfBand(fp, rate, dev float64, s Settings) (*Result, error) {
	if err := halfBandSpec(fp, rate); err != nil {
		return nil, err
	}
	if !(dev > 0 && dev < 0.5) {
		return nil, fmt.Errorf("remez: half-band deviation dev = %v: must lie strictly between 0 and 0.5", dev)
	}
	const kMax = 16384
	n := HerrmannLength(dev, dev, rate/2-2*fp, rate)
	k0 := max(1, min(kMax, (n+1+3)/4))
	cache := map[int]*Result{}
	var firstErr error
	meets := func(k int) bool {
		if r, ok := cache[k]; ok {
			return r != nil && r.Deviations[0] <= dev
		}
		r, err := HalfBand(k, fp, rate, s)
		if err != nil && firstErr == nil && !errors.Is(err, ErrNotConverged) {
			firstErr = err
		}
		cache[k] = r
		return r != nil && r.Deviations[0] <= dev
	}
	lo, hi := 0, 0 // lo fails (0: none known), hi meets
	if meets(k0) {
		hi = k0
		for step := 1; ; step *= 2 {
			c := hi - step
			if c < 1 {
				c = 1
			}
			if c == hi {
				break
			}
			if !meets(c) {
				lo = c
				break
			}
			hi = c
			if c == 1 {
				break
			}
		}
	} else {
		lo = k0
		for step := 1; ; step *= 2 {
			c := min(lo+step, kMax)
			if meets(c) {
				hi = c
				break
			}
			if firstErr != nil {
				return nil, firstErr
			}
			if c == kMax {
				return nil, fmt.Errorf("remez: half-band fp = %v Hz, rate %v Hz, dev = %v: not met with k up to %d (%d taps); widen the transition or relax dev", fp, rate, dev, kMax, 4*kMax-1)
			}
			lo = c
		}
	}
	for lo > 0 && hi-lo > 1 {
		mid := (lo + hi) / 2
		if meets(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return cache[hi], nil
}
