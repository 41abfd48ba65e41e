// Package densecheck measures a decimation cascade's alias rejection and
// passband ripple by brute force, for tests: each stage's response is
// evaluated directly (a CIC's |sin(pi f R M / F) / (R M sin(pi f / F))|^N,
// a FIR's sum of taps times e^{-j 2 pi f k / F}, F the stage's input rate;
// common practice), on a grid 64 times finer than the finest lobe, with
// none of the bounds, refinements or caches of the code under test.
//
// The alias bands are [k Fout - fa, k Fout + fa] for k >= 1, up to half the
// input rate, fa the protected edge; the rejection is the largest gain
// there relative to the gain at 0 Hz, and the ripple the ratio of the
// largest to the smallest gain over [0, fp], both in dB. A grid can only
// miss a peak, so the rejection it gives is never below the truth by more
// than the grid's step allows.
package densecheck

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/stepdown-dsp/stepdown/chain"
)

// Stage is one stage of the cascade, from the input rate down: a CIC of
// order N, delay M and decimation R, or a FIR of the given taps
// decimating by R.
type Stage struct {
	CIC     bool
	N, M, R int
	Taps    []float64
}

// Figures returns the cascade's alias rejection and passband ripple, dB,
// for spec's rates and bands.
func Figures(spec chain.Spec, stages []Stage) (rejDB, rippleDB float64, err error) {
	ns, err := spec.Normalize()
	if err != nil {
		return 0, 0, err
	}
	rates := make([]float64, len(stages))
	rate := ns.InputRate
	spacing := math.Inf(1) // the finest lobe, Hz
	for i, s := range stages {
		if s.R < 1 || s.CIC && (s.N < 1 || s.M < 1) || !s.CIC && len(s.Taps) == 0 {
			return 0, 0, fmt.Errorf("densecheck: stage %d: %+v", i+1, s)
		}
		rates[i] = rate
		if s.CIC {
			spacing = math.Min(spacing, rate/float64(s.R*s.M))
		} else {
			spacing = math.Min(spacing, rate/float64(len(s.Taps)))
		}
		rate /= float64(s.R)
	}
	gain := func(f float64) float64 {
		g := 1.0
		for i, s := range stages {
			x := math.Pi * f / rates[i]
			if s.CIC {
				rm := float64(s.R * s.M)
				if math.Abs(math.Sin(x)) > 1e-15 {
					g *= math.Pow(math.Abs(math.Sin(x*rm)/(rm*math.Sin(x))), float64(s.N))
				}
				continue
			}
			var h complex128
			for k, v := range s.Taps {
				h += complex(v, 0) * cmplx.Exp(complex(0, -2*x*float64(k)))
			}
			g *= cmplx.Abs(h)
		}
		return g
	}
	step := spacing / 64
	worst := 0.0
	for k := 1; float64(k)*ns.OutputRate-ns.Protected < ns.InputRate/2; k++ {
		lo := float64(k)*ns.OutputRate - ns.Protected
		hi := math.Min(float64(k)*ns.OutputRate+ns.Protected, ns.InputRate/2)
		for f := lo; f <= hi; f += step {
			worst = math.Max(worst, gain(f))
		}
		worst = math.Max(worst, gain(hi))
	}
	lo, hi := math.Inf(1), 0.0
	for f := 0.0; f <= ns.Passband; f += step {
		g := gain(f)
		lo, hi = math.Min(lo, g), math.Max(hi, g)
	}
	g := gain(ns.Passband)
	lo, hi = math.Min(lo, g), math.Max(hi, g)
	return -20 * math.Log10(worst/gain(0)), 20 * math.Log10(hi/lo), nil
}
