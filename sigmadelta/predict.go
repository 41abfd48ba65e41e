package sigmadelta

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

// IntegrationTol is the relative accuracy of every noise integral here:
// each band's integral is refined until doubling its panels moves it by
// less than this fraction (8-point Gauss-Legendre panels).
const IntegrationTol = 1e-7

// Rates are the rates and the band of a decimation chain fed by the
// modulator: InputRate the modulator's, OutputRate the chain's, Passband
// the edge of the band the SNR is taken over, at the output.
type Rates struct {
	InputRate, OutputRate, Passband float64
}

func (r Rates) check() error {
	switch {
	case !(r.InputRate > 0) || math.IsInf(r.InputRate, 0):
		return fmt.Errorf("sigmadelta: InputRate = %g: must be a finite rate above 0 Hz", r.InputRate)
	case !(r.OutputRate > 0) || r.OutputRate > r.InputRate:
		return fmt.Errorf("sigmadelta: OutputRate = %g: must lie in (0, InputRate = %g Hz]", r.OutputRate, r.InputRate)
	case !(r.Passband > 0) || r.Passband >= r.OutputRate/2:
		return fmt.Errorf("sigmadelta: Passband = %g: must lie in (0, OutputRate/2 = %g Hz)", r.Passband, r.OutputRate/2)
	}
	return nil
}

// bands returns the input frequencies that land in [0, Passband] at the
// output: [k OutputRate - Passband, k OutputRate + Passband] within
// [0, InputRate/2], k = 0, 1, ... (k = 0 is the band itself, [0, Passband]).
func (r Rates) bands() [][2]float64 {
	var out [][2]float64
	h := r.InputRate / 2
	for k := 0; ; k++ {
		lo := math.Max(0, float64(k)*r.OutputRate-r.Passband)
		if lo >= h {
			break
		}
		out = append(out, [2]float64{lo, math.Min(h, float64(k)*r.OutputRate+r.Passband)})
	}
	return out
}

// psd returns the one-sided noise density at input frequency g Hz of a
// white quantisation noise of variance s2 shaped by ntf at the rate f0,
// full-scale units squared per Hz: |NTF(g/F0)|^2 s2 / (F0/2).
func psd(ntf NTF, s2, f0 float64) func(g float64) float64 {
	d := s2 / (f0 / 2)
	return func(g float64) float64 { v := ntf.Gain(g / f0); return v * v * d }
}

// NoiseBands is the noise a ToneDBFS tone competes with at the chain's
// output, in full-scale units squared referred to the input (the chain's
// gain at 0 Hz taken as 1): InBand is the modulator's own noise in
// [0, Passband], Aliases the noise of every other band that folds onto it.
type NoiseBands struct {
	InBand, Aliases float64
}

// SNRDB is the tone's power over the total.
func (n NoiseBands) SNRDB() float64 {
	return snrDB(n.InBand + n.Aliases)
}

func snrDB(noise float64) float64 {
	a := ToneAmplitude()
	if !(noise > 0) {
		return chain.MaxFigureDB
	}
	return math.Min(chain.MaxFigureDB, 10*math.Log10(a*a/2/noise))
}

// Noise integrates the modulator's noise density times the chain's
// |H(g)/H(0)|^2 over every input frequency g that lands in [0, Passband] at
// the output. gain is the chain's |H| at input frequency g Hz (any scale;
// nil is an ideal chain, 1 everywhere). Each band is integrated by
// composite 8-point Gauss-Legendre, its panels doubled from 16 until the
// integral moves by less than IntegrationTol of itself (at most 2^16
// panels; an integrand that has not settled by then is an error).
func (m Modulator) Noise(gain func(g float64) float64, r Rates) (NoiseBands, error) {
	if err := r.check(); err != nil {
		return NoiseBands{}, err
	}
	ntf, err := m.NTF()
	if err != nil {
		return NoiseBands{}, err
	}
	return noise(ntf, m.NoiseVariance(), gain, r)
}

// noise is Noise for the NTF ntf and a white quantisation noise of
// variance s2.
func noise(ntf NTF, s2 float64, gain func(g float64) float64, r Rates) (NoiseBands, error) {
	h0 := 1.0
	if gain != nil {
		h0 = gain(0)
		if !(h0 > 0) || math.IsInf(h0, 0) {
			return NoiseBands{}, fmt.Errorf("sigmadelta: the chain's gain at 0 Hz is %g; a chain that passes no DC has no SNR", h0)
		}
	}
	s := psd(ntf, s2, r.InputRate)
	f := func(g float64) float64 {
		v := s(g)
		if gain != nil {
			h := gain(g) / h0
			v *= h * h
		}
		return v
	}
	var out NoiseBands
	for k, b := range r.bands() {
		v, err := integrate(f, b[0], b[1])
		if err != nil {
			return NoiseBands{}, fmt.Errorf("sigmadelta: the noise in [%g, %g] Hz: %w", b[0], b[1], err)
		}
		if k == 0 {
			out.InBand = v
		} else {
			out.Aliases += v
		}
	}
	return out, nil
}

// PredictedSNR returns the in-band SNR of a ToneDBFS tone at the output
// of the chain whose gain at input frequency g is gain(g): the tone over
// the noise of Noise (the modulator's noise through the chain, folded;
// the chain's own rounding noise is not counted). The tone is referred to
// the gain at 0 Hz, so a tone elsewhere in the passband reads differently
// by the passband ripple there.
func (m Modulator) PredictedSNR(gain func(g float64) float64, r Rates) (float64, error) {
	n, err := m.Noise(gain, r)
	if err != nil {
		return 0, err
	}
	return n.SNRDB(), nil
}

// AchievableSNR returns the SNR with perfect filtering: the tone over the
// modulator's own noise in [0, Passband].
func (m Modulator) AchievableSNR(r Rates) (float64, error) {
	n, err := m.Noise(func(g float64) float64 {
		if g <= r.Passband {
			return 1
		}
		return 0
	}, r)
	if err != nil {
		return 0, err
	}
	return snrDB(n.InBand), nil
}

// gl8 are the 8-point Gauss-Legendre nodes and weights on [-1, 1]
// (Abramowitz and Stegun, Table 25.4).
var gl8 = [8][2]float64{
	{-0.9602898564975363, 0.1012285362903763},
	{-0.7966664774136267, 0.2223810344533745},
	{-0.5255324099163290, 0.3137066458778873},
	{-0.1834346424956498, 0.3626837833783620},
	{0.1834346424956498, 0.3626837833783620},
	{0.5255324099163290, 0.3137066458778873},
	{0.7966664774136267, 0.2223810344533745},
	{0.9602898564975363, 0.1012285362903763},
}

// integrate returns the integral of f over [a, b] to IntegrationTol.
func integrate(f func(float64) float64, a, b float64) (float64, error) {
	if !(b > a) {
		return 0, nil
	}
	panels := func(n int) float64 {
		h := (b - a) / float64(n)
		var sum float64
		for i := range n {
			c := a + (float64(i)+0.5)*h
			for _, p := range gl8 {
				sum += p[1] * f(c+p[0]*h/2)
			}
		}
		return sum * h / 2
	}
	prev := panels(16)
	for n := 32; n <= 1<<16; n *= 2 {
		cur := panels(n)
		if math.Abs(cur-prev) <= IntegrationTol*math.Abs(cur) || cur == 0 {
			return cur, nil
		}
		prev = cur
	}
	return 0, fmt.Errorf("the integral did not settle to %g within %d panels", IntegrationTol, 1<<16)
}

// InBandNoiseDifferentiator is the textbook in-band noise of the NTF
// (1 - z^-1)^order at oversampling ratio osr = F0/(2 fb), for a white
// quantisation noise of variance s2: s2 pi^(2 order) / ((2 order + 1)
// osr^(2 order + 1)), from the small-angle approximation |NTF| ~
// (2 pi f/F0)^order (Schreier and Temes, Understanding Delta-Sigma Data
// Converters, ch. 2, from memory). It is a check on Noise, not used by it.
func InBandNoiseDifferentiator(order int, osr, s2 float64) float64 {
	l := float64(order)
	return s2 * math.Pow(math.Pi, 2*l) / ((2*l + 1) * math.Pow(osr, 2*l+1))
}
