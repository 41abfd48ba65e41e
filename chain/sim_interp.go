package chain

import (
	"fmt"
	"math"
	"math/big"
)

// runInterpolation is Run for an interpolation chain: the stages in signal
// order, each raising the rate by its factor.
func runInterpolation(c *Chain, x []float64) []float64 {
	y := append([]float64(nil), x...)
	for _, i := range c.SignalOrder() {
		y = runInterpStage(i, c.Stages[i], y)
	}
	return y
}

// runInterpStage runs Stages[i], s, as an interpolator on x. Its cases cover
// every kind (FIR and half-band are FIRStages); see Kinds.
func runInterpStage(i int, s Stage, x []float64) []float64 {
	switch st := s.(type) {
	case FIRStage:
		if st.Taps == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no taps (an estimate)", i+1, st.Kind()))
		}
		return polyphaseInterpolate(st.Taps, st.R, x)
	case CICStage:
		return runCICInterpolator(st, x)
	case PolyphaseStage:
		if st.Taps == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no taps (an estimate)", i+1, st.Kind()))
		}
		// The transpose: up Down, the same prototype, down Up.
		return Resample(st.Taps, st.Down, st.Up, x)
	case FarrowStage:
		if st.Filter.Coef == nil {
			panic(fmt.Sprintf("chain: Run: stage %d (%s) has no coefficients (an estimate)", i+1, st.Kind()))
		}
		return farrowTransposed(st, x)
	}
	panic(fmt.Sprintf("chain: Run: stage %d is a %T; Run takes CICStage and FIRStage values", i+1, s))
}

// polyphaseInterpolate computes y[nL + p] = sum_k L h[p + L k] x[n - k] for
// n < len(x) and p = 0..L-1: the filter h applied to x stuffed with L - 1
// zeros after every sample, times L, as the L phases' short filters over
// the input history. Zero taps are left out of each phase.
func polyphaseInterpolate(h []float64, l int, x []float64) []float64 {
	type tap struct {
		k int
		v float64
	}
	phases := make([][]tap, l)
	for p := range phases {
		for k := 0; p+l*k < len(h); k++ {
			if v := h[p+l*k]; v != 0 {
				phases[p] = append(phases[p], tap{k, v * float64(l)})
			}
		}
	}
	out := make([]float64, len(x)*l)
	for n := range x {
		for p, ph := range phases {
			var acc float64
			for _, t := range ph {
				if n-t.k < 0 {
					break
				}
				acc += t.v * x[n-t.k]
			}
			out[n*l+p] = acc
		}
	}
	return out
}

// interpolatorGrowth returns ceil(log2((RM)^N / R)), the bits a CIC
// interpolator's output grows over its input: its impulse response is
// non-negative and each of its R phases sums to its DC gain (RM)^N / R, so
// that is the largest output magnitude per unit of input.
func interpolatorGrowth(n, m, r int) int {
	p := new(big.Int).Exp(big.NewInt(int64(r)*int64(m)), big.NewInt(int64(n)), nil)
	return ceilLog2Ratio(p, big.NewInt(int64(r)))
}

// runCICInterpolator runs c as a CIC interpolator on x: N combs of delay M
// at the input rate, the rate raised by R (the comb output, then R - 1
// zeros), N integrators at the output rate, in wrapping int64 arithmetic on
// the input scaled to leave room for the growth (see Run), the output
// rescaled to unit DC gain.
func runCICInterpolator(c CICStage, x []float64) []float64 {
	n, m, r := c.N, c.M, c.R
	inBits := 62 - interpolatorGrowth(n, m, r)
	peak := 0.0
	for _, v := range x {
		peak = math.Max(peak, math.Abs(v))
	}
	if inBits < 24 || peak == 0 || math.IsInf(peak, 0) || math.IsNaN(peak) {
		return polyphaseInterpolate(cicTaps(c), r, x)
	}
	// |x q| <= 2^(inBits-1), so every output, at most the DC gain times
	// that, fits in 62 bits, and the registers' wrap-around in between is
	// exact (Hogenauer 1981).
	_, e := math.Frexp(peak) // peak < 2^e
	q := math.Ldexp(1, inBits-1-e)
	// The DC gain (RM)^N / R = R^(N-1) M^N is below 2^(62-inBits), well
	// within float64's exact integers.
	gain := math.Pow(float64(r), float64(n-1)) * math.Pow(float64(m), float64(n)) * q
	combs := make([][]int64, n) // each comb's last M inputs, circular
	for j := range combs {
		combs[j] = make([]int64, m)
	}
	integ := make([]int64, n)
	out := make([]float64, len(x)*r)
	pos := 0
	for i, v := range x {
		acc := int64(math.Round(v * q))
		for j := range combs {
			old := combs[j][pos]
			combs[j][pos] = acc
			acc -= old
		}
		pos = (pos + 1) % m
		for p := 0; p < r; p++ {
			in := acc
			if p != 0 {
				in = 0 // a stuffed zero
			}
			for j := range integ {
				integ[j] += in // wraps like the hardware register
				in = integ[j]
			}
			out[i*r+p] = float64(in) / gain
		}
	}
	return out
}

// farrowTransposed runs the transpose of a Farrow stage that changes the
// rate by Up/Down (its decimation view): input sample m, at time
// t_m = m Down/Up samples of the output, adds x[m] h(t_m - n) Down/Up to
// every output n within the structure's span (h the structure's impulse
// response, farrow.Convention): the transposed structure, whose paths have
// the decimation view's gains. The factor Down/Up, the rate raised, keeps
// the passband's gain at 1. Outputs n with n Up < len(x) Down are kept.
func farrowTransposed(st FarrowStage, x []float64) []float64 {
	if len(x) == 0 {
		return nil
	}
	n := (len(x)*st.Down-1)/st.Up + 1
	out := make([]float64, n)
	half := st.Filter.Len() / 2
	g := float64(st.Down) / float64(st.Up)
	times := FarrowTimes(st.Up, st.Down, n)
	// The decimation view's output m sits at times[m] (in samples of the
	// high rate); here it is input m.
	for m, v := range x {
		if m >= len(times) {
			break
		}
		t := times[m]
		b := int(math.Floor(t))
		for k := b - half + 1; k <= b+half; k++ {
			if k < 0 || k >= n {
				continue
			}
			out[k] += g * v * st.Filter.Impulse(t-float64(k))
		}
	}
	return out
}
