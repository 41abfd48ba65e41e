package fixed

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/dsp/fourier"
)

// Encoder turns a signal into a noise-shaped converter's codes, holding
// its state from one call to the next.
type Encoder interface {
	// Encode writes the codes of x (fractions of the input word's full
	// scale) into dst, at least len(x) long: Bits-bit two's-complement
	// codes c with c/2^(Bits-1) equal to x plus the converter's shaped
	// noise plus at most a constant offset. An error (the converter went
	// unstable) ends the run.
	Encode(dst []int64, x []float64) error
}

// Shaper is a noise-shaped converter feeding a decimation cascade (a
// sigma-delta modulator: package sigmadelta's Modulator.Shaper). With one,
// the bit-true run (Signal.Shaper, Settings.Shaper) feeds both tests
// through the converter in place of the ADC, and measures the SNR where
// the converter's noise is meant to be low: in [0, passband] at the
// output.
type Shaper interface {
	// NewEncoder returns the converter in its initial state, seeded.
	NewEncoder(seed uint64) (Encoder, error)
	// ToneDBFS is the level of the converter's test tone relative to
	// the input word's full scale.
	ToneDBFS() float64
	// PredictedSNR is the converter's SNR (its test tone over the noise
	// in [0, passband] at the output) after the cascade whose gain at
	// input frequency g Hz is gain(g), the rates in Hz.
	PredictedSNR(gain func(g float64) float64, inputRate, outputRate, passband float64) (float64, error)
	// String describes the converter for the report.
	String() string
}

// Shaped run defaults: 8192 output samples measured (the in-band noise
// then comes from about 3000 windowed bins for a passband near 0.4 of the
// output rate: within about 0.1 dB), halved while the run would need more
// than autoInputSamples input samples, down to minShapedSamples.
const (
	defaultShapedSamples = 8192
	minShapedSamples     = 1024
)

// bitTrueShaped is BitTrue for a decimation cascade fed by sig.Shaper.
//
// The test signal is one tone (sig.Tones[0], or 0.4 fp at the Shaper's
// ToneDBFS) and no added noise: the converter's codes carry their own. The
// float chain runs on the tone itself with the unquantised taps; the error
// e, integer output less float output, holds the converter's shaped noise
// through the quantised chain, the data path's roundings and the
// converter's constant offset. Its mean and its component at the tone (the
// coefficients' gain error) are removed, and its power in [0, fp] is read
// from a periodogram over the window with a 4-term Blackman-Harris window
// (sidelobes 92 dB down, so that the noise outside the band, far stronger,
// does not leak in; common practice): bins 0 to floor(fp/fk N), each but
// DC counted twice (one-sided), over N times the window's sum of squares.
// SNRDB is the float output's power over that, ENOB (SNRDB - 1.76)/6.02.
// The offset is the converter's (a mid-rise quantiser's half code), so it
// does not invalidate the SNR; an unstable converter is an error, and an
// output saturated in more than one sample in a thousand marks the SNR.
func bitTrueShaped(ctx context.Context, c Cascade, w *Widths, sig Signal, fp, fk float64, d int, auto bool) (BitTrueResult, error) {
	if sig.Seed == 0 {
		sig.Seed = 1
	}
	level := sig.Shaper.ToneDBFS()
	if sig.Tones == nil {
		sig.Tones = []Tone{{Freq: 0.4 * fp, Level: level}}
	}
	if len(sig.Tones) != 1 {
		return BitTrueResult{}, fmt.Errorf("fixed: a noise-shaped run takes one tone, not %d", len(sig.Tones))
	}
	if sig.NoiseDBFS == 0 {
		sig.NoiseDBFS = math.Inf(-1)
	}
	if sig.AliasLevel == 0 {
		sig.AliasLevel = sig.Tones[0].Level
	}
	if auto {
		sig.Samples = defaultShapedSamples
	}
	if sig.Samples < 64 {
		return BitTrueResult{}, fmt.Errorf("fixed: signal Samples = %d: must be >= 64", sig.Samples)
	}
	sd, err := sig.fill(w.InputBits, fp, fk, c.InputRate, 0)
	if err != nil {
		return BitTrueResult{}, err
	}
	if err := checkCICRun(c, w); err != nil {
		return BitTrueResult{}, err
	}
	span, p := 1, 1
	for _, st := range c.Stages {
		span += (st.Length() - 1) * p
		p *= st.R
	}
	skip := (span+d-1)/d + 1
	nm := sig.Samples
	for auto && nm > minShapedSamples && (skip+nm)*d > autoInputSamples {
		nm /= 2
	}
	nin := (skip + nm) * d
	if nin > maxInputSamples {
		return BitTrueResult{}, fmt.Errorf("fixed: bit-true run needs %d input samples (decimation %d, %d output samples); at most %d are supported", nin, d, nm+skip, maxInputSamples)
	}
	res := BitTrueResult{Samples: nm, InputSamples: nin, Skip: skip, NoiseDBFS: -300, Shaped: sig.Shaper.String()}
	rng := rand.New(rand.NewPCG(sig.Seed, 0x5eed))
	seed := sig.Seed
	enc := func() (Encoder, error) {
		seed++
		return sig.Shaper.NewEncoder(seed)
	}

	t := sig.Tones[0]
	m := math.Round(t.Freq / fk * float64(nm))
	nu := m / float64(nm)
	res.Tones = []Tone{{Freq: m * fk / float64(nm), Level: t.Level}}
	tones := []toneGen{{m * fk / float64(nm), math.Pow(10, t.Level/20), 2 * math.Pi * rng.Float64()}}
	cs := newChainState(c, w)
	if cs.enc, err = enc(); err != nil {
		return BitTrueResult{}, err
	}
	yi, yf := make([]float64, 0, nm), make([]float64, 0, nm)
	inPow, inErr, _, err := streamTo(ctx, cs, c, nin, skip, nm, signalGen(tones, sd.noise, rng, c.InputRate), func(bi, bf []float64, _ int) {
		yi, yf = append(yi, bi...), append(yf, bf...)
	})
	if err == nil {
		err = cs.encErr
	}
	if err != nil {
		return BitTrueResult{}, err
	}
	res.InputSNRDB = ratioDB(inPow, inErr)
	e := outputError(&res, yi[:nm], yf[:nm], w.OutputBits)
	removeTone(e, nu)
	a, _ := project(yi, nu)
	res.OutputLevels = []float64{math.Max(-300, 20*math.Log10(a))}
	res.SNRDB = ratioDB(power(yf), inBandPower(e, fp/fk))
	res.ENOB = (res.SNRDB - 1.76) / 6.02
	top := 1 - math.Ldexp(1, 1-w.OutputBits)
	for _, v := range yi {
		if v >= top || v <= -1 {
			res.OutputClipped++
		}
	}
	if res.OutputClipped*1000 > nm {
		res.SNRNote = fmt.Sprintf("the output saturated in %d of %d samples at the %d-bit output word (the chain's gain lifts the test signal and the converter's offset past full scale)", res.OutputClipped, nm, w.OutputBits)
	}
	res.SNRValid = res.SNRNote == ""

	q, _ := cascadeChain(c, w, true)
	if res.PredictedSNRDB, err = sig.Shaper.PredictedSNR(q.Gain, c.InputRate, fk, fp); err != nil {
		return BitTrueResult{}, fmt.Errorf("fixed: the predicted SNR: %w", err)
	}
	if err := aliasRun(ctx, c, w, sig, &res, rng, sd.noise, nm, skip, func(n int) int { return n * d }, fk, enc); err != nil {
		return BitTrueResult{}, err
	}
	return res, nil
}

// inBandPower returns the power of e (one window of a real signal) in
// [0, edge] cycles per sample, from its periodogram with a 4-term
// Blackman-Harris window (Harris 1978: a0..a3 = 0.35875, 0.48829,
// 0.14128, 0.01168): sum over bins k <= edge N of |X_k|^2, each but DC
// twice, over N sum w^2.
func inBandPower(e []float64, edge float64) float64 {
	n := len(e)
	x := make([]float64, n)
	var w2 float64
	for i, v := range e {
		t := 2 * math.Pi * float64(i) / float64(n)
		w := 0.35875 - 0.48829*math.Cos(t) + 0.14128*math.Cos(2*t) - 0.01168*math.Cos(3*t)
		x[i] = w * v
		w2 += w * w
	}
	xs := fourier.NewFFT(n).Coefficients(nil, x)
	kb := min(int(math.Floor(edge*float64(n))), len(xs)-1)
	var p float64
	for k := 0; k <= kb; k++ {
		v := real(xs[k])*real(xs[k]) + imag(xs[k])*imag(xs[k])
		if k > 0 && 2*k != n {
			v *= 2
		}
		p += v
	}
	return p / (float64(n) * w2)
}
