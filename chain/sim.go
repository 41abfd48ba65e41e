package chain

import (
	"fmt"
	"math"
)

// Run passes the real signal x (at the rate entering the chain, zero state
// before x[0]) through the chain as hardware would compute it.
//
// A decimation chain runs each FIR stage as a polyphase decimator (only the
// retained outputs are computed, phase by phase) and each CIC as N
// integrators at its input rate and N combs of delay M at its output rate.
// It returns len(x)/D output samples, where D is the chain's decimation;
// output m is the sample whose newest input is x[m D].
//
// An interpolation chain (Direction Interpolate) runs its stages in signal
// order (SignalOrder), each raising the rate by its factor L_i. A FIR stage
// is a polyphase interpolator: output n L_i + p is phase p's short filter,
// taps h[p + L_i k], over the inputs x[n - k], so no product with a stuffed
// zero is computed (nor with a zero tap: a half-band's centre phase passes
// its input through). Its taps are multiplied by L_i, so that its DC gain is
// sum h, about 1: the designed taps have DC gain 1 at the high rate, and
// zero stuffing divides it by L_i. (This float run uses L_i exactly; the
// integer data path of package fixed uses 2^floor(log2 L_i).) A CIC, whatever
// its Interpolator flag and Form, is a CIC interpolator: N combs of delay M
// at its input rate, R - 1 zeros after each comb output, N integrators at its
// output rate, rescaled from its DC gain (RM)^N/R to 1. Run returns len(x) L
// output samples, where L is the chain's interpolation; output m is at the
// time of input m/L, its newest input x[floor(m/L)], with no delay added:
// the first len(x) L samples of x stuffed with L - 1 zeros after every
// sample and filtered at the high rate by the cascade's equivalent FIR (each
// stage's taps times its factor, stuffed with zeros by the product of the
// factors after it in signal order, all convolved).
//
// FIR arithmetic is float64. CIC arithmetic is exact two's-complement integer
// arithmetic that wraps like the hardware registers: a float64 integrator
// would grow without bound and lose the signal to rounding after a few
// thousand samples. The CIC's input is scaled to the widest integer that
// leaves room for its bit growth in 63 bits (after checking the block's peak;
// the growth is ceil(N log2(R M)) for a decimator, ceil(log2((RM)^N/R)) for
// an interpolator, whose output is bounded by its DC gain times the input's
// peak), so its quantisation lies hundreds of dB down; the output is rescaled
// to the CIC's unit DC gain. A CIC whose growth leaves fewer than 24 bits of
// input resolution is run as its equivalent FIR (N boxcars of length R M) in
// float64 instead, polyphase as above.
//
// Run panics on a FIR stage without taps (an estimate: Chain.Designed is
// false) and on a stage that is not a CICStage or FIRStage value (a pointer
// or nil), naming the stage.
func Run(c *Chain, x []float64) []float64 {
	if c.Direction == Interpolate {
		return runInterpolation(c, x)
	}
	y := append([]float64(nil), x...)
	for i, s := range c.Stages {
		y = runStage(i, s, y)
	}
	return y
}

// RunComplex is Run for an I/Q signal, in either direction: the chain's real
// filters run on the real and imaginary parts separately, as two real chains
// would.
func RunComplex(c *Chain, x []complex128) []complex128 {
	re := make([]float64, len(x))
	im := make([]float64, len(x))
	for i, v := range x {
		re[i], im[i] = real(v), imag(v)
	}
	re, im = Run(c, re), Run(c, im)
	out := make([]complex128, len(re))
	for i := range out {
		out[i] = complex(re[i], im[i])
	}
	return out
}

// runStage runs stage i, s, on x. Its cases cover every kind (FIR and
// half-band are FIRStages); see Kinds.
func runStage(i int, s Stage, x []float64) []float64 {
	switch st := s.(type) {
	case FIRStage:
		if st.Taps == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no taps (an estimate)", i+1, st.Kind()))
		}
		return polyphaseDecimate(st.Taps, st.R, x)
	case CICStage:
		return runCIC(st, x)
	case PolyphaseStage:
		if st.Taps == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no taps (an estimate)", i+1, st.Kind()))
		}
		return Resample(st.Taps, st.Up, st.Down, x)
	case FarrowStage:
		if st.Filter.Coef == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no coefficients (an estimate)", i+1, st.Kind()))
		}
		return st.Filter.Run(x, FarrowTimes(st.Up, st.Down, len(x)))
	}
	panic(fmt.Sprintf("chain: Run: stage %d is a %T; Run takes CICStage and FIRStage values", i+1, s))
}

// Resample runs a polyphase L/M stage, L = up and M = down, on x: the
// zeros-stuffed sequence u[i] = x[i/L] (i a multiple of L, else 0),
// filtered by h at L times the input rate with gain L, every M-th sample
// kept:
//
//	y[m] = L sum_j h[j] u[m M - j],   m M < L len(x)
//
// computed phase by phase (only the taps j = m M mod L, +L, ... meet a
// sample). Without the factor L it is SciPy's upfirdn(h, x, up, down).
func Resample(h []float64, up, down int, x []float64) []float64 {
	if up < 1 || down < 1 || len(x) == 0 {
		return nil
	}
	n := (len(x)*up-1)/down + 1
	out := make([]float64, n)
	l := float64(up)
	for m := range out {
		t := m * down
		var acc float64
		for j := t % up; j < len(h); j += up {
			i := (t - j) / up
			if i < 0 {
				break
			}
			if i < len(x) {
				acc += h[j] * x[i]
			}
		}
		out[m] = l * acc
	}
	return out
}

// FarrowTimes returns the times, in input samples, of a fractional
// stage's outputs on n inputs: output m at m Down/Up, for every m with
// m Down < n Up, as Resample counts them. A Farrow stage evaluates its
// structure there (farrow.Convention), centred on each time: the hardware
// adds Length/2 samples of delay.
func FarrowTimes(up, down, n int) []float64 {
	if up < 1 || down < 1 || n < 1 {
		return nil
	}
	t := make([]float64, (n*up-1)/down+1)
	for m := range t {
		t[m] = float64(m/up*down) + float64(m%up*down)/float64(up)
	}
	return t
}

// polyphaseDecimate computes y[m] = sum_k h[k] x[mD - k] as the sum over the
// D phases p of sub-filter e_p[n] = h[nD + p] applied to the sub-sequence
// x[mD - p - nD].
func polyphaseDecimate(h []float64, d int, x []float64) []float64 {
	out := make([]float64, len(x)/d)
	for m := range out {
		var acc float64
		for p := 0; p < d && p < len(h); p++ {
			base := m*d - p
			for n := 0; p+n*d < len(h); n++ {
				i := base - n*d
				if i < 0 {
					break
				}
				acc += h[p+n*d] * x[i]
			}
		}
		out[m] = acc
	}
	return out
}

func runCIC(c CICStage, x []float64) []float64 {
	growth := CICGrowth(c.N, c.M, c.R)
	inBits := 62 - growth
	peak := 0.0
	for _, v := range x {
		peak = math.Max(peak, math.Abs(v))
	}
	if inBits < 24 || peak == 0 || math.IsInf(peak, 0) || math.IsNaN(peak) {
		return polyphaseDecimate(cicTaps(c), c.R, x)
	}
	// Scale so that |x q| <= 2^(inBits-1): the registers then never need more
	// than 63 bits and two's-complement wrap-around is exact (Hogenauer 1981).
	_, e := math.Frexp(peak) // peak < 2^e
	q := math.Ldexp(1, inBits-1-e)
	n, m, r := c.N, c.M, c.R
	integ := make([]int64, n)
	combs := make([][]int64, n) // each comb's last M inputs, circular
	for j := range combs {
		combs[j] = make([]int64, m)
	}
	out := make([]float64, len(x)/r)
	gain := math.Pow(float64(r*m), float64(n)) * q
	pos := 0
	for i, v := range x {
		acc := int64(math.Round(v * q))
		for j := range integ {
			integ[j] += acc // wraps like the hardware register
			acc = integ[j]
		}
		if i%r != 0 {
			continue
		}
		mi := i / r
		if mi >= len(out) {
			break
		}
		for j := range combs {
			old := combs[j][pos]
			combs[j][pos] = acc
			acc -= old
		}
		pos = (pos + 1) % m
		out[mi] = float64(acc) / gain
	}
	return out
}

// cicTaps returns the CIC's equivalent FIR, N boxcars of length R M
// convolved and scaled to unit DC gain.
func cicTaps(c CICStage) []float64 {
	h := []float64{1}
	for b := 0; b < c.N; b++ {
		h = convBoxcar(h, c.R*c.M)
	}
	g := math.Pow(float64(c.R*c.M), float64(c.N))
	for i := range h {
		h[i] /= g
	}
	return h
}
