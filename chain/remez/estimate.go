package remez

import "math"

// Order estimates. dp and ds are linear deviations (0 < dp, ds < 1),
// transition and rate are in Hz. Each returns a filter length in taps, at
// least 1, rounded up. Inputs outside their domain (a deviation not in
// (0, 1), a transition or rate that is not positive and finite, or a
// transition wider than rate/2) give 0, which callers must treat as "no
// estimate". Lengths beyond math.MaxInt32 are clipped to it.

// KaiserLength is Kaiser's formula as given in Oppenheim and Schafer,
//
//	N = (-20 log10 sqrt(dp ds) - 13) / (14.6 df) + 1,  df = transition/rate.
func KaiserLength(dp, ds, transition, rate float64) int {
	df, ok := estimateDomain(dp, ds, transition, rate)
	if !ok {
		return 0
	}
	return clipLength((-20*math.Log10(math.Sqrt(dp*ds))-13)/(14.6*df) + 1)
}

// HerrmannLength is the Herrmann-Rabiner-Chan (1973) formula,
//
//	N = D(dp, ds)/df - f(dp, ds) df + 1,  df = transition/rate,
//
// with D from HerrmannD and f from HerrmannF.
func HerrmannLength(dp, ds, transition, rate float64) int {
	df, ok := estimateDomain(dp, ds, transition, rate)
	if !ok {
		return 0
	}
	return clipLength(HerrmannD(dp, ds)/df - HerrmannF(dp, ds)*df + 1)
}

// BellangerLength is Bellanger's formula,
//
//	N = (2/3) log10(1/(10 dp ds)) / df,  df = transition/rate.
func BellangerLength(dp, ds, transition, rate float64) int {
	df, ok := estimateDomain(dp, ds, transition, rate)
	if !ok {
		return 0
	}
	return clipLength(2.0 / 3.0 * math.Log10(1/(10*dp*ds)) / df)
}

// Herrmann-Rabiner-Chan (1973) coefficients of D-infinity.
const (
	herrA1 = 0.005309
	herrA2 = 0.07114
	herrA3 = -0.4761
	herrA4 = 0.00266
	herrA5 = 0.5941
	herrA6 = 0.4278
)

// HerrmannD is Herrmann-Rabiner-Chan's D-infinity(dp, ds),
//
//	D = (a1 L1^2 + a2 L1 + a3) L2 - (a4 L1^2 + a5 L1 + a6),
//
// with L1 = log10 dp and L2 = log10 ds after swapping so that dp >= ds, as
// the formula was fitted for. Deviations outside
// (0, 1) give 0.
func HerrmannD(dp, ds float64) float64 {
	if !devOK(dp) || !devOK(ds) {
		return 0
	}
	if dp < ds {
		dp, ds = ds, dp
	}
	l1, l2 := math.Log10(dp), math.Log10(ds)
	return (herrA1*l1*l1+herrA2*l1+herrA3)*l2 - (herrA4*l1*l1 + herrA5*l1 + herrA6)
}

// HerrmannF is Herrmann-Rabiner-Chan's f(dp, ds) = 11.01217 + 0.51244 (L1 - L2),
// with the same swap as HerrmannD. Deviations outside (0, 1) give 0.
func HerrmannF(dp, ds float64) float64 {
	if !devOK(dp) || !devOK(ds) {
		return 0
	}
	if dp < ds {
		dp, ds = ds, dp
	}
	return 11.01217 + 0.51244*(math.Log10(dp)-math.Log10(ds))
}

func devOK(d float64) bool { return d > 0 && d < 1 }

func estimateDomain(dp, ds, transition, rate float64) (df float64, ok bool) {
	if !devOK(dp) || !devOK(ds) {
		return 0, false
	}
	if !(rate > 0) || math.IsInf(rate, 0) || !(transition > 0) || transition > rate/2 {
		return 0, false
	}
	return transition / rate, true
}

func clipLength(n float64) int {
	if !(n < math.MaxInt32) {
		return math.MaxInt32
	}
	if n < 1 {
		return 1
	}
	return int(math.Ceil(n))
}
