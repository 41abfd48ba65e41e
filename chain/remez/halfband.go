package remez

import (
	"context"
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
	return HalfBandContext(context.Background(), k, fp, rate, s)
}

// HalfBandContext is HalfBand stopped by ctx (see DesignContext).
func HalfBandContext(ctx context.Context, k int, fp, rate float64, s Settings) (*Result, error) {
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
		res, gerr = DesignContext(ctx, 2*k, 1, []Band{{Lo: 0, Hi: band, Gain: 1, Weight: 1}}, s)
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
// most dev. The search is MinLength's on the length 2k of the single-band
// G: it starts from the Herrmann-Rabiner-Chan estimate with dp = ds = dev
// and transition rate/2 - 2 fp, then a safeguarded secant on the log of the
// error ratio, galloping until it brackets the answer and bisecting, so it
// typically takes a handful of designs (at most 40). k = 1 is solved in
// closed form first. A k that cannot be designed (the exchange breaks down)
// is skipped as failing, and one met to rounding level counts as too long.
// It gives up beyond k = 16384 (65 535 taps).
func MinHalfBand(fp, rate, dev float64, s Settings) (*Result, error) {
	r, _, err := minHalfBand(context.Background(), fp, rate, dev, s)
	return r, err
}

// MinHalfBandContext is MinHalfBand stopped by ctx (see MinLengthContext).
func MinHalfBandContext(ctx context.Context, fp, rate, dev float64, s Settings) (*Result, error) {
	r, _, err := minHalfBand(ctx, fp, rate, dev, s)
	return r, err
}

// minHalfBand is MinHalfBand that also returns its search state (for
// tests; nil when k = 1 meets).
func minHalfBand(ctx context.Context, fp, rate, dev float64, s Settings) (*Result, *lengthSearch, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, searchStopped(err)
	}
	if err := halfBandSpec(fp, rate); err != nil {
		return nil, nil, err
	}
	if !(dev > 0 && dev < 0.5) {
		return nil, nil, fmt.Errorf("remez: half-band deviation dev = %v: must lie strictly between 0 and 0.5", dev)
	}
	if err := validateSpec(1, []Band{{Lo: 0, Hi: 0.25, Gain: 1}}, s); err != nil {
		return nil, nil, err
	}
	const kMax = 16384
	if r, err := HalfBandContext(ctx, 1, fp, rate, s); err == nil && r.Deviations[0] <= dev {
		return r, nil, nil
	}
	m := &lengthSearch{
		ctx:   ctx,
		bands: []Band{{MaxError: dev}}, maxTaps: 2 * kMax, s: s,
		cache: map[int]*Result{}, ratio: map[int]float64{}, lax: map[int]bool{},
		designFn: func(n int) (*Result, []float64, bool) {
			r, err := HalfBandContext(ctx, n/2, fp, rate, s)
			lax := errors.Is(err, errRounding)
			if r == nil {
				return nil, nil, lax
			}
			return r, r.Deviations[:1], lax
		},
	}
	n := HerrmannLength(dev, dev, rate/2-2*fp, rate)
	k0 := max(2, min(kMax, (n+1+3)/4))
	res, err := m.finish(m.search(2*k0, 0))
	var se *SearchError
	if errors.As(err, &se) && se.Met == 0 && errors.Is(err, ErrNoLength) {
		// The search's own words count the single-band G's length
		// (maxTaps = 2 kMax), which no caller chose: say it in the
		// half-band's.
		return nil, m, &SearchError{Fail: 2*se.Fail - 1, Limit: 4*kMax - 1, errs: []error{ErrNoLength},
			msg: fmt.Sprintf("remez: half-band fp = %v Hz, rate %v Hz, dev = %v: not met by any half-band up to k = %d (%d taps): lower fp or raise dev", fp, rate, dev, kMax, 4*kMax-1)}
	}
	if err != nil {
		return nil, m, fmt.Errorf("remez: half-band fp = %v Hz, rate %v Hz, dev = %v, k up to %d (%d taps): %w", fp, rate, dev, kMax, 4*kMax-1, err)
	}
	return res, m, nil
}
