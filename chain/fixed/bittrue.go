package fixed

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
)

// Tone is one sinusoid of a test signal.
type Tone struct {
	Freq  float64 // Hz at the chain's input (channel side for an interpolation cascade)
	Level float64 // amplitude in dB relative to full scale (dBFS), <= 0
}

// Signal is the bit-true run's test signal. The zero value is the default.
type Signal struct {
	// Tones are the wanted signals; nil means one tone at 0.4 fp at -1 dBFS,
	// or lower so that the tone plus four times the noise RMS stays within
	// the input word's largest code (half that code when the word is too
	// narrow for a tone of two LSBs so; the SNR is then marked, see
	// BitTrueResult.SNRValid). An interpolation cascade's default tones are
	// lowered further by the largest gain from its input to a stage's output
	// at the tones' frequencies, images included, when that is above 1 (see
	// the package doc, Interpolation).
	// Each frequency is moved to the nearest whole number of cycles in the
	// measurement window at the output rate (coherent sampling); in an
	// interpolation cascade to the nearest number that shares no factor
	// with the period of the tone's images, so that the rounding's
	// harmonics of the tone do not hide among them.
	Tones []Tone
	// NoiseDBFS is the RMS of white Gaussian noise added to the tones, dB
	// relative to full scale; zero means one input LSB (2^-(InputBits-1)),
	// math.Inf(-1) means none. Both the float and the integer chain see it.
	NoiseDBFS float64
	// AliasLevel is the level of the alias test tone in dBFS; zero means the
	// default tone level (see Tones).
	AliasLevel float64
	// AliasHz is the input frequency of the alias test tone; zero means the
	// worst alias of the quantised cascade, from chain.Analyze (Evaluate
	// passes the one PlanChain measured). For an interpolation cascade it
	// is the image frequency g at the output rate, and the test tone goes in
	// at g folded into [0, input rate/2].
	AliasHz float64
	// Samples is the number of output samples measured after the filters'
	// transients; zero means 2048, halved (down to 256) while the run would
	// need more than 4 Mi input samples; after a fractional stage it is
	// rounded up to a multiple of its L (package doc, Fractional stages).
	// For an interpolation cascade the
	// window spans whole input samples: zero means 2048 of them (2048 L
	// output samples), halved (down to 256) while the run would need more
	// than 4 Mi output samples; a given Samples is rounded up to whole input
	// samples, at least 64 of them.
	Samples int
	// Seed seeds the noise and the tones' phases (PCG); zero means 1.
	Seed uint64
	// Shaper, when not nil, is a noise-shaped converter (a sigma-delta
	// modulator) that makes the input codes in place of the ADC, and the
	// run measures the SNR in [0, passband] at the output (see Shaper).
	Shaper Shaper
	// Inputs, when not nil, keeps this run's input for other runs on the
	// same signal and takes it from there when held (see InputMemo): the
	// figures are the same bit for bit. Nil: the run makes its own.
	Inputs *InputMemo
}

// BitTrueResult compares the integer chain with the float chain.
type BitTrueResult struct {
	// SNRDB is 10 log10 of the float chain's output power over the power of
	// the error (integer output - float output) over the measurement window,
	// less the error's mean and its component at each test tone. The float
	// chain runs on the unquantised signal with the unquantised taps, so the
	// error holds the ADC word and every rounding and truncation point of
	// the data path; the coefficients' gain error at the tones is left out
	// (it is passband ripple, judged on the quantised response) and reported
	// in MatchDB.
	SNRDB float64
	// MatchDB is the same ratio with nothing left out: how closely the
	// integer chain tracks the float chain, coefficient gain error included.
	MatchDB float64
	// OutputOffset is the error's mean in output LSBs: the DC offset of the
	// CIC's truncation points (SNR conventionally leaves out DC).
	OutputOffset float64
	// ENOB = (SNRDB - 1.76) / 6.02 (common practice). It is the conventional
	// figure when the test signal is one full-scale sine; a tone backed off by
	// L dB lowers it by L/6.02.
	ENOB float64
	// InputSNRDB is the same ratio for the ADC word alone (signal over input
	// quantisation error); for a full-scale sine it is 6.02 B + 1.76 dB.
	InputSNRDB float64
	Clipped    int // input samples saturated by the ADC word
	// OutputClipped counts the measured output samples at either end of the
	// output word (saturated); over one in a thousand makes the SNR invalid.
	OutputClipped int
	// SNRValid says whether SNRDB (and ENOB) is meaningful; SNRNote says why
	// not, "" when it is: the input word cannot carry the default test tone
	// plus its noise (then run at half the largest code), the input clipped
	// more than one sample in a thousand, the output saturated in more than
	// one sample in a thousand (OutputClipped), or the DC offset is over ten
	// times the RMS of the error the SNR measures (the SNR leaves DC out).
	// The figures stay finite either way; report.json leaves them null.
	SNRValid bool
	SNRNote  string

	// The alias test: one tone at AliasHz (the worst alias of the quantised
	// cascade, or Signal.AliasHz; a fractional chain's, or one too near
	// 0 Hz or Nyquist at the output, moved to a whole number of output
	// cycles), measured at AliasOutHz over the window (see the package doc,
	// Bit-true run). Rejections are positive dB relative to the DC gain.
	//
	// For an interpolation cascade it is the image test (see the package
	// doc, Interpolation): AliasHz is the image g at the output, AliasOutHz
	// the tone f at the input whose image it is; AliasRejectionDB,
	// AliasFloatRunDB and AliasResponseDB are 20 log10 of the output at f
	// over the output at g (relative to the gain at f, not at DC);
	// WorstAliasResponseDB is chain.Analyze's image rejection, relative to
	// DC; AliasNoiseDB is relative to the output at f, and at most the
	// input's noise and rounding in one bin of the window's input
	// samples (an image in the passband carries the input's noise at
	// the passband's gain).
	AliasHz, AliasOutHz  float64
	AliasRejectionDB     float64 // bit-true, measured
	AliasFloatRunDB      float64 // float chain, measured the same way
	AliasResponseDB      float64 // frequency domain, quantised coefficients, at AliasHz
	WorstAliasResponseDB float64 // frequency domain, quantised coefficients: chain.Analyze's worst over the alias bands, or at Signal.AliasHz when given
	// AliasNoiseDB is the level (positive dB below the DC gain) of the integer
	// output's residual noise in the measured bin (quantisation noise and the
	// test signal's own noise); AliasValid says it is at least 20 dB below the
	// alias, so that it moves the bit-true figure by under 1 dB, and that
	// the figure is no better than AliasResponseDB by more than that noise
	// and aliasSlackDB explain (aliasFlattered). A window
	// shorter than Samples is kept only with it 40 dB below (an RMS error
	// under 0.1 dB); at Samples and beyond, while it is not valid, the alias
	// run is repeated on a window four times as long (6 dB less noise in the
	// bin), up to 16 x Samples and 4 Mi input samples.
	AliasNoiseDB float64
	AliasValid   bool

	// The test signal as run: tone frequencies (moved to whole cycles) and
	// levels, and the noise RMS in dBFS.
	Tones     []Tone
	NoiseDBFS float64
	// OutputLevels is each tone's level at the integer output in dBFS, its
	// amplitude measured by projection over the window: the tone's level plus
	// the chain's gain at its frequency (Widths.DCGain near DC).
	OutputLevels []float64

	// PredictedSNRDB is, for a run fed by a Shaper, its predicted SNR
	// for the quantised cascade (Shaper.PredictedSNR on the rounded taps),
	// beside the measured SNRDB; zero otherwise.
	PredictedSNRDB float64
	// Shaped describes the Shaper that fed the run, "" for none.
	Shaped string

	Samples      int // output samples measured
	AliasSamples int // output samples of the alias measurement (from Samples/16 to 16 x Samples, see AliasNoiseDB)
	InputSamples int // input samples run (the first run)
	Skip         int // output samples skipped for transients
}

// maxInputSamples bounds a bit-true run's length, and so its time (the run
// streams: its memory does not grow with it); with Signal.Samples left zero
// the window shrinks (to no fewer than 256 output samples) to keep the run
// within autoInputSamples.
const (
	maxInputSamples  = 1 << 25
	autoInputSamples = 1 << 22
)

// BitTrue runs the cascade in integer arithmetic at the widths w (from Plan)
// and in float64 arithmetic, on sig and on an alias tone (an image tone for
// an interpolation cascade: see the package doc, Interpolation), and
// compares them.
// Integer conventions are those of Plan: the CIC wraps in two's complement
// at its pruned widths (the modular arithmetic is exact for the final
// output), FIR products are exact, rounding and truncation happen only at the
// points StageWidths.Points state. The float chain has the same structure
// and gains (including the CIC's (RM)^N / 2^ceil(N log2 RM)) but no rounding.
// A complex chain runs one of its two identical real paths.
//
// The run streams: the test signal is generated and both chains run a block
// of blockSamples input samples at a time (an interpolation cascade's
// blocks make about as many output samples), and only the filters' state
// and the measured output window are kept, so its memory does not grow
// with the decimation or the window.
func BitTrue(c Cascade, w *Widths, sig Signal) (BitTrueResult, error) {
	return BitTrueContext(context.Background(), c, w, sig)
}

// BitTrueContext is BitTrue stopped by ctx, checked between blocks (a few
// milliseconds apart): once ctx is done it returns an error wrapping
// ctx.Err().
func BitTrueContext(ctx context.Context, c Cascade, w *Widths, sig Signal) (BitTrueResult, error) {
	if w == nil || len(w.Stages) != len(c.Stages) {
		return BitTrueResult{}, fmt.Errorf("fixed: BitTrue needs the widths Plan returned for this cascade")
	}
	if err := c.checkDirection(); err != nil {
		return BitTrueResult{}, err
	}
	if c.Interpolate {
		if sig.Shaper != nil {
			return BitTrueResult{}, fmt.Errorf("fixed: a noise-shaped input (Signal.Shaper) feeds a decimation cascade only")
		}
		return bitTrueInterp(ctx, c, w, sig)
	}
	fp, fa := c.Passband, c.protectedEdge()
	// num/den input samples per output sample: the decimation d, or d
	// Down/Up after a fractional stage.
	d := c.Ratio()
	num, den := c.fraction()
	fk := c.ChannelRate()
	if !(fp > 0) || fp >= fk/2 || fa < fp || fa > fk/2 {
		return BitTrueResult{}, fmt.Errorf("fixed: cascade Passband = %g Hz, Protected = %g Hz: need 0 < Passband <= Protected <= output rate/2 = %g Hz", fp, fa, fk/2)
	}
	auto := sig.Samples == 0
	if auto {
		sig.Samples = 2048
	}
	if sig.Samples < 64 {
		return BitTrueResult{}, fmt.Errorf("fixed: signal Samples = %d: must be >= 64", sig.Samples)
	}
	frac, _ := c.fracStage()
	if sig.Shaper != nil {
		if frac.fractional() {
			return BitTrueResult{}, fmt.Errorf("fixed: a noise-shaped input (Signal.Shaper) feeds a cascade of integer stages only")
		}
		return bitTrueShaped(ctx, c, w, sig, fp, fk, d, auto)
	}
	sd, err := sig.fill(w.InputBits, fp, fk, c.InputRate, 0)
	if err != nil {
		return BitTrueResult{}, err
	}
	noise, fits, defaultTones := sd.noise, sd.fits, sd.defaultTones
	if err := checkCICRun(c, w); err != nil {
		return BitTrueResult{}, err
	}
	// Transient: the cascade's impulse response length in input samples
	// (a fractional stage's span in its input samples; a stage after it
	// takes Down/Up of them per sample), in output samples.
	span, p := 1.0, 1.0
	for _, st := range c.Stages {
		span += float64(st.Length()-1) * p
		if st.fractional() {
			p *= float64(st.Down) / float64(st.Up)
		} else {
			p *= float64(st.R)
		}
	}
	skip := int(math.Ceil(span*float64(den)/float64(num))) + 1
	nm := sig.Samples
	for auto && nm > 256 && c.inputsFor(skip+nm) > autoInputSamples {
		nm /= 2
	}
	if frac.fractional() {
		// A window of whole periods of the output's phases (a multiple of
		// Up samples): every path k Fm of a tone on the window's grid then
		// lands on the grid too, so the projections are exact.
		nm = (nm + frac.Up - 1) / frac.Up * frac.Up
	}
	nin := c.inputsFor(skip + nm)
	if nin > maxInputSamples {
		ratio := fmt.Sprintf("decimation %d", num)
		if den != 1 {
			ratio = fmt.Sprintf("ratio %d/%d", num, den)
		}
		return BitTrueResult{}, fmt.Errorf("fixed: bit-true run needs %d input samples (%s, %d output samples); at most %d are supported", nin, ratio, nm+skip, maxInputSamples)
	}
	res := BitTrueResult{Samples: nm, InputSamples: nin, Skip: skip, NoiseDBFS: math.Max(-300, 20*math.Log10(noise))}
	pcg := rand.NewPCG(sig.Seed, 0x5eed)
	rng := rand.New(pcg)

	// Run 1: the wanted tones plus noise.
	var nus []float64
	var tones []toneGen
	for _, t := range sig.Tones {
		m := math.Round(t.Freq / fk * float64(nm))
		nus = append(nus, m/float64(nm))
		res.Tones = append(res.Tones, Tone{Freq: m * fk / float64(nm), Level: t.Level})
		tones = append(tones, toneGen{m * fk / float64(nm), math.Pow(10, t.Level/20), 2 * math.Pi * rng.Float64()})
	}
	var yi, yf []float64
	var inPow, inErr float64
	var clipped int
	if in := sig.Inputs.input(ctx, pcg, tones, noise, c.InputRate, w.InputBits, nin); in != nil {
		yi, yf, err = streamMemo(ctx, c, w, in, skip, nm)
		inPow, inErr, clipped = in.inPow/float64(nin), in.inErr/float64(nin), in.clipped
		if err == nil {
			err = pcg.UnmarshalBinary(in.state) // where the run's own draws would leave it
		}
	} else {
		yi, yf, inPow, inErr, clipped, err = stream(ctx, c, w, nin, skip, nm, signalGen(tones, noise, rng, c.InputRate))
	}
	if err != nil {
		return BitTrueResult{}, err
	}
	if len(yi) < nm {
		return BitTrueResult{}, fmt.Errorf("fixed: bit-true run made %d of %d output samples (an internal miscount of the input needed)", len(yi), nm)
	}
	res.Clipped = clipped
	res.InputSNRDB = ratioDB(inPow, inErr)
	e := outputError(&res, yi[:nm], yf[:nm], w.OutputBits)
	for _, nu := range nus {
		removeTone(e, nu)
		a, _ := project(yi, nu)
		if nu == 0 || nu == 0.5 {
			a /= 2 // project's 2/len is for a sinusoid between DC and Nyquist
		}
		res.OutputLevels = append(res.OutputLevels, math.Max(-300, 20*math.Log10(a)))
	}
	res.SNRDB = ratioDB(power(yf), power(e))
	res.ENOB = (res.SNRDB - 1.76) / 6.02
	// Output samples at either end of the output word saturated there (a
	// full-scale code is otherwise all but impossible on these signals).
	top := 1 - math.Ldexp(1, 1-w.OutputBits)
	for _, v := range yi {
		if v >= top || v <= -1 {
			res.OutputClipped++
		}
	}
	res.SNRNote = snrNote(w.InputBits, defaultTones && !fits, clipped, nin, res.OutputOffset, math.Ldexp(math.Sqrt(power(e)), w.OutputBits-1))
	if res.OutputClipped*1000 > nm {
		note := fmt.Sprintf("the output saturated in %d of %d samples at the %d-bit output word (the chain's gain lifts the test signal past full scale)", res.OutputClipped, nm, w.OutputBits)
		if res.SNRNote != "" {
			note = res.SNRNote + "; " + note
		}
		res.SNRNote = note
	}
	res.SNRValid = res.SNRNote == ""

	if err := aliasRun(ctx, c, w, sig, &res, rng, noise, nm, skip, c.inputsFor, fk, nil); err != nil {
		return BitTrueResult{}, err
	}
	return res, nil
}

// signalDefaults are what Signal.fill derived: the noise RMS (fraction of
// full scale), whether the input word carries the default tone plus its
// noise, and whether the tones are the default ones.
type signalDefaults struct {
	noise              float64
	fits, defaultTones bool
}

// fill sets sig's zero fields to their defaults for an inBits-bit input,
// passband edge fp, channel rate fk and high rate high, and checks the
// tones (in [0, fk/2)), AliasHz (in [0, high/2]) and the levels.
//
// headroomDB lowers the default levels further (an interpolation cascade's
// largest gain from its input to a stage's output, when above 1).
func (sig *Signal) fill(inBits int, fp, fk, high, headroomDB float64) (signalDefaults, error) {
	if sig.Seed == 0 {
		sig.Seed = 1
	}
	noise := math.Ldexp(1, -(inBits - 1))
	if sig.NoiseDBFS != 0 {
		noise = math.Pow(10, sig.NoiseDBFS/20)
	}
	// The default levels: -1 dBFS, lowered so that the tone plus four times
	// the noise RMS stays within the largest code; a word too narrow to
	// carry a tone of two LSBs so is run at half the largest code, and its
	// SNR is marked as not meaningful.
	lsb := math.Ldexp(1, -(inBits - 1))
	level, fits := -1.0, true
	if room := 1 - lsb - 4*noise; room < 2*lsb {
		level, fits = 20*math.Log10((1-lsb)/2), false
	} else {
		level = math.Min(level, 20*math.Log10(room))
	}
	level -= headroomDB
	if sig.AliasLevel == 0 {
		sig.AliasLevel = level
	}
	defaultTones := sig.Tones == nil
	if defaultTones {
		sig.Tones = []Tone{{Freq: 0.4 * fp, Level: level}}
	}
	for i, t := range sig.Tones {
		if !(t.Level <= 0) || !(t.Freq >= 0 && t.Freq < fk/2) {
			return signalDefaults{}, fmt.Errorf("fixed: signal tone %d at %g Hz, %g dBFS: the level must be <= 0 dBFS and the frequency in [0, %g Hz)", i, t.Freq, t.Level, fk/2)
		}
	}
	if !(sig.AliasHz >= 0 && sig.AliasHz <= high/2) {
		return signalDefaults{}, fmt.Errorf("fixed: signal AliasHz = %g: must lie in [0, %g Hz] (zero: search)", sig.AliasHz, high/2)
	}
	if sig.AliasLevel > 0 || math.IsNaN(sig.AliasLevel) || !(noise < 1) {
		return signalDefaults{}, fmt.Errorf("fixed: signal AliasLevel = %g dBFS, NoiseDBFS = %g: levels must be below 0 dBFS", sig.AliasLevel, sig.NoiseDBFS)
	}
	return signalDefaults{noise: noise, fits: fits, defaultTones: defaultTones}, nil
}

// checkCICRun refuses a cascade whose CIC registers are wider than the
// integer model runs, or whose CIC float model would be too long.
func checkCICRun(c Cascade, w *Widths) error {
	for i, sw := range w.Stages {
		if sw.CIC && cicModelWidth(&sw) > cicModelBits(&sw) {
			return fmt.Errorf("fixed: stage %d: %s", i+1, cicTooWide(&sw, "the bit-true run"))
		}
		// The float model runs a CIC as its equivalent filter of
		// N (RM - 1) + 1 taps, with as long a history: bounded so that
		// the run stays within memory.
		if st := c.Stages[i]; st.CIC && st.Length() > maxCICFloatTaps {
			return fmt.Errorf("fixed: stage %d: the CIC's float model would need %d taps, beyond the bit-true run's %d", i+1, st.Length(), maxCICFloatTaps)
		}
	}
	return nil
}

// snrNote says why the bit-true SNR is not meaningful, or "" when it is: the
// input word cannot carry the default test signal, the input clipped more
// than one sample in a thousand, or the DC offset (offset, in output LSBs)
// is over ten times the RMS of the error the SNR measures (rms, output LSBs).
func snrNote(inBits int, tooNarrow bool, clipped, samples int, offset, rms float64) string {
	var why []string
	if tooNarrow {
		why = append(why, fmt.Sprintf("a %d-bit input word cannot carry the test tone plus one LSB RMS of noise within full scale", inBits))
	}
	if clipped*1000 > samples {
		why = append(why, fmt.Sprintf("the test signal clipped %d of %d input samples at the %d-bit input word", clipped, samples, inBits))
	}
	if math.Abs(offset) > 10*rms {
		why = append(why, fmt.Sprintf("the DC offset of %.4g output LSBs is over ten times the error's RMS (%.4g LSBs), and the SNR leaves DC out", offset, rms))
	}
	return strings.Join(why, "; ")
}

// posDB returns -20 log10(v), bounded so that no figure is infinite
// (chain.DevToRejection).
func posDB(v float64) float64 { return chain.DevToRejection(v) }

func snrDB(ref, got []float64) float64 {
	var ps, pe float64
	for i, r := range ref {
		e := got[i] - r
		ps += r * r
		pe += e * e
	}
	if pe == 0 {
		return 300
	}
	return math.Max(-300, math.Min(300, 10*math.Log10(ps/pe)))
}

func power(x []float64) float64 {
	var p float64
	for _, v := range x {
		p += v * v
	}
	return p / float64(len(x))
}

// ratioDB is 10 log10(ps/pe), bounded to [-300, 300].
func ratioDB(ps, pe float64) float64 {
	if pe == 0 {
		return 300
	}
	if ps == 0 {
		return -300
	}
	return math.Max(-300, math.Min(300, 10*math.Log10(ps/pe)))
}

// removeTone subtracts from e its least-squares sinusoid at nu cycles per
// sample (a whole number of cycles over len(e)).
func removeTone(e []float64, nu float64) {
	var re, im float64
	for n, v := range e {
		s, c := math.Sincos(2 * math.Pi * nu * float64(n))
		re += v * c
		im += v * s
	}
	k := 2 / float64(len(e))
	if nu == 0 || nu == 0.5 {
		k = 1 / float64(len(e))
	}
	re, im = re*k, im*k
	for n := range e {
		s, c := math.Sincos(2 * math.Pi * nu * float64(n))
		e[n] -= re*c + im*s
	}
}

// toneGen is one tone of a generated test signal: frequency in Hz,
// amplitude, phase.
type toneGen struct{ f, a, phase float64 }

// signalGen returns the generator of stream for the sum of tones plus white
// Gaussian noise of RMS sigma drawn from rng: sample n is the tones' sum in
// order plus the noise, as addTone and addNoise would make it on the whole
// signal (the same samples, bit for bit, and the same draws from rng).
func signalGen(tones []toneGen, sigma float64, rng *rand.Rand, rate float64) func(x []float64, n0 int) {
	return func(x []float64, n0 int) {
		for i := range x {
			x[i] = 0
		}
		for _, t := range tones {
			tone(x, n0, 2*math.Pi*t.f/rate, t.a, t.phase)
		}
		addNoise(x, sigma, rng)
	}
}

func addTone(x []float64, f, a, phase, rate float64) {
	tone(x, 0, 2*math.Pi*f/rate, a, phase)
}

// toneAnchor is the spacing of the samples at which tone takes the cosine
// exactly; between them it rotates, 4 multiplies a sample instead of a
// cosine. Over 64 steps the rotation's error stays below 1e-14 of the
// amplitude, far below the least step of any input word (2^-31).
const toneAnchor = 64

// tone adds a cos(w n + phase) to x[i] for n = n0 + i. Each value depends
// only on n (it is rotated from the anchor at or below n), so a signal made
// in blocks equals one made whole, bit for bit. Every product is rounded
// on its own (the float64 conversions forbid the compiler to fuse it into
// a multiply-add, which targets with fused instructions would do in some
// loops and not others), so that holds on every target.
func tone(x []float64, n0 int, w, a, phase float64) {
	sw, cw := math.Sincos(w)
	for i := 0; i < len(x); {
		n := n0 + i
		if n%toneAnchor == 0 && len(x)-i >= 4*toneAnchor {
			// Four whole stretches from their anchors at once, each
			// rotated as below, so the samples are the same bit for bit,
			// but the four rotations do not wait on one another.
			s0, c0 := math.Sincos(w*float64(n) + phase)
			s1, c1 := math.Sincos(w*float64(n+toneAnchor) + phase)
			s2, c2 := math.Sincos(w*float64(n+2*toneAnchor) + phase)
			s3, c3 := math.Sincos(w*float64(n+3*toneAnchor) + phase)
			x0 := x[i : i+toneAnchor]
			x1 := x[i+toneAnchor : i+2*toneAnchor]
			x2 := x[i+2*toneAnchor : i+3*toneAnchor]
			x3 := x[i+3*toneAnchor : i+4*toneAnchor]
			for k := range x0 {
				x0[k] += float64(a * c0)
				c0, s0 = float64(c0*cw)-float64(s0*sw), float64(s0*cw)+float64(c0*sw)
				x1[k] += float64(a * c1)
				c1, s1 = float64(c1*cw)-float64(s1*sw), float64(s1*cw)+float64(c1*sw)
				x2[k] += float64(a * c2)
				c2, s2 = float64(c2*cw)-float64(s2*sw), float64(s2*cw)+float64(c2*sw)
				x3[k] += float64(a * c3)
				c3, s3 = float64(c3*cw)-float64(s3*sw), float64(s3*cw)+float64(c3*sw)
			}
			i += 4 * toneAnchor
			continue
		}
		anchor := n - n%toneAnchor
		s, c := math.Sincos(w*float64(anchor) + phase)
		for k := anchor; k < n; k++ {
			c, s = float64(c*cw)-float64(s*sw), float64(s*cw)+float64(c*sw)
		}
		end := min(len(x), i+toneAnchor-(n-anchor))
		for ; i < end; i++ {
			x[i] += float64(a * c)
			c, s = float64(c*cw)-float64(s*sw), float64(s*cw)+float64(c*sw)
		}
	}
}

func addNoise(x []float64, sigma float64, rng *rand.Rand) {
	if !(sigma > 0) {
		return
	}
	for n := range x {
		x[n] += sigma * rng.NormFloat64()
	}
}

// project returns the amplitude of y's component at normalised frequency nu
// (cycles per sample, a whole number of cycles over len(y)) and the RMS of
// what is left.
func project(y []float64, nu float64) (amp, resid float64) {
	var re, im float64
	for n, v := range y {
		s, c := math.Sincos(2 * math.Pi * nu * float64(n))
		re += v * c
		im += v * s
	}
	k := 2 / float64(len(y))
	re, im = re*k, im*k
	var r2 float64
	for n, v := range y {
		s, c := math.Sincos(2 * math.Pi * nu * float64(n))
		e := v - re*c - im*s
		r2 += e * e
	}
	return math.Hypot(re, im), math.Sqrt(r2 / float64(len(y)))
}

// projectC is project's complex amplitude of the sinusoid at nu cycles a
// sample in y: its modulus is project's amplitude.
func projectC(y []float64, nu float64) complex128 {
	var re, im float64
	for n, v := range y {
		s, c := math.Sincos(2 * math.Pi * nu * float64(n))
		re += v * c
		im -= v * s
	}
	k := 2 / float64(len(y))
	return complex(re*k, im*k)
}

// worstPhase is the largest output amplitude over the input tone's phase,
// |c1| + |c2|, from the complex amplitudes z0 and z1 of two runs a quarter
// cycle apart: z0 = c1 + c2 and z1 = i (c1 - c2) (phases taken from the
// first run's).
func worstPhase(z0, z1 complex128) float64 {
	return (cmplx.Abs(z0-1i*z1) + cmplx.Abs(z0+1i*z1)) / 2
}

// pathsInBin counts the paths of a tone at g through the quantised chain q
// that land in the window's bin of fout (win samples at fk) with a gain
// above 1e-9 of the chain's at 0 Hz, and sums their gains.
func pathsInBin(q *chain.Chain, g, fout, fk float64, win int) (n int, sum float64) {
	bin := func(f float64) int { return int(math.Round(f / fk * float64(win))) }
	for _, p := range chain.PathGains(q, g, 0) {
		if bin(p.OutputHz) == bin(fout) && p.Gain > 1e-9*q.Gain(0) {
			n++
			sum += p.Gain
		}
	}
	return n, sum
}

// blockSamples is the number of input samples generated and run at a time:
// the bit-true run keeps only this block, the filters' state and the output
// window, whatever the run's length.
const blockSamples = 1 << 15

// chainState is the integer and the float chain with their filters' state,
// run a block at a time.
type chainState struct {
	bits    int
	ints    []intFilter
	floats  []floatFilter
	ib      [][]int64   // per stage, its output block
	fb      [][]float64 // likewise for the float chain
	obits   int         // output word
	inErr   float64     // sum of squared input quantisation errors
	inPow   float64     // sum of squared input samples
	clipped int
	// noSums leaves inPow and inErr at zero, for runs that do not read them.
	noSums bool
	n      int   // input samples run
	outs   []int // per stage, its output samples so far
	xi     []int64
	// enc, when not nil, makes the input codes in place of ADC (a
	// Shaper's encoder); encErr is its first error, after which the
	// codes are zero.
	enc    Encoder
	encErr error
}

// saturations returns per stage how many of its outputs saturated (0 for
// a stage that does not count them).
func (cs *chainState) saturations() []int {
	sat := make([]int, len(cs.ints))
	for i, f := range cs.ints {
		if s, ok := f.(interface{ saturated() int }); ok {
			sat[i] = s.saturated()
		}
	}
	return sat
}

// intFilter is one stage of the integer chain.
type intFilter interface {
	// run appends to out the outputs of the input block x and returns out.
	run(x, out []int64) []int64
}

// floatFilter is one stage of the float chain.
type floatFilter interface {
	// run appends to out the outputs of the input block x and returns out.
	run(x, out []float64) []float64
}

func newChainState(c Cascade, w *Widths) *chainState {
	cs := &chainState{bits: w.InputBits, obits: w.Stages[len(w.Stages)-1].OutputBits}
	for i, st := range c.Stages {
		sw := &w.Stages[i]
		switch {
		case st.fractional():
			fi, ff := newFracFilters(st, sw)
			cs.ints, cs.floats = append(cs.ints, fi), append(cs.floats, ff)
		case st.CIC && st.Interpolate:
			cs.ints = append(cs.ints, newCICInterpFilter(sw.CICInterp))
			cs.floats = append(cs.floats, newFIRInterpFloat(cicTaps(st.N, st.R*st.M, cicFloatScale(sw)), st.R))
		case st.CIC:
			cs.ints = append(cs.ints, newCICInt(sw))
			cs.floats = append(cs.floats, newFIRFloat(cicTaps(st.N, st.R*st.M, cicFloatScale(sw)), st.R))
		case st.Interpolate:
			cs.ints = append(cs.ints, newFIRInterpInt(sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits))
			// The data path's gain 2^floor(log2 R) on the taps (see
			// interpAccumulator): exact, a power of two.
			h := slices.Clone(sw.floatTaps(st))
			for k := range h {
				h[k] = math.Ldexp(h[k], log2Floor(st.R))
			}
			cs.floats = append(cs.floats, newFIRInterpFloat(h, st.R))
		default:
			cs.ints = append(cs.ints, newFIRInt(sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits))
			cs.floats = append(cs.floats, newFIRFloat(sw.floatTaps(st), st.R))
		}
	}
	cs.ib = make([][]int64, len(c.Stages))
	cs.fb = make([][]float64, len(c.Stages))
	cs.outs = make([]int, len(c.Stages))
	return cs
}

// run passes one input block x (fractions of full scale) through both
// chains and returns the outputs it completes, in fractions of full scale
// (valid until the next call).
func (cs *chainState) run(x []float64) (yi, yf []float64) {
	if cap(cs.xi) < len(x) {
		cs.xi = make([]int64, len(x))
	}
	xi := cs.xi[:len(x)]
	if cs.enc == nil {
		cs.clipped += ADC(xi, x, cs.bits)
	} else {
		if cs.encErr == nil {
			cs.encErr = cs.enc.Encode(xi, x)
		}
		if cs.encErr != nil {
			clear(xi)
		}
	}
	if !cs.noSums {
		cs.inPow, cs.inErr = inputSums(cs.inPow, cs.inErr, x, xi, cs.bits)
	}
	return cs.runCodes(xi, x)
}

// runCodes is run on the input block x whose codes are xi, leaving the
// input's sums and clip count as they are.
func (cs *chainState) runCodes(xi []int64, x []float64) (yi, yf []float64) {
	cs.n += len(x)
	cur, fcur := xi, x
	for i := range cs.ints {
		cs.ib[i] = cs.ints[i].run(cur, cs.ib[i][:0])
		cs.fb[i] = cs.floats[i].run(fcur, cs.fb[i][:0])
		cur, fcur = cs.ib[i], cs.fb[i]
		cs.outs[i] += len(cur)
	}
	yi = make([]float64, 0, len(cur))
	olsb := math.Ldexp(1, -(cs.obits - 1))
	for _, v := range cur {
		yi = append(yi, float64(v)*olsb)
	}
	return yi, fcur
}

// stream runs the integer and the float chain on nin input samples that gen
// writes a block at a time (gen(x, n0) fills x with samples n0, n0+1, ...),
// checking ctx between blocks, and returns the output samples skip to
// skip+win of both chains in fractions of full scale, the input's mean
// square and the mean square error of the quantised input, and the number of
// clipped input samples. Only a block, the filters' state and the window
// are held.
func stream(ctx context.Context, c Cascade, w *Widths, nin, skip, win int, gen func(x []float64, n0 int)) (yi, yf []float64, inPow, inErr float64, clipped int, err error) {
	yi, yf = make([]float64, 0, win), make([]float64, 0, win)
	inPow, inErr, clipped, err = streamTo(ctx, newChainState(c, w), c, nin, skip, win, gen, func(bi, bf []float64, _ int) {
		yi, yf = append(yi, bi...), append(yf, bf...)
	})
	if err != nil {
		return nil, nil, 0, 0, 0, err
	}
	return yi, yf, inPow, inErr, clipped, nil
}

// streamMemo is stream on the input in holds (the samples and their
// codes); the input's sums are in's.
func streamMemo(ctx context.Context, c Cascade, w *Widths, in *memoInput, skip, win int) (yi, yf []float64, err error) {
	cs := newChainState(c, w)
	yi, yf = make([]float64, 0, win), make([]float64, 0, win)
	err = streamBlocks(ctx, len(in.x), blockSamples, skip, win, func(n0, n int) (bi, bf []float64) {
		return cs.runCodes(in.codes[n0:n0+n], in.x[n0:n0+n])
	}, func(bi, bf []float64, _ int) {
		yi, yf = append(yi, bi...), append(yf, bf...)
	})
	if err != nil {
		return nil, nil, err
	}
	return yi, yf, nil
}

// streamTo is stream on the chains cs (of c, in their reset state) handing
// the window to sink as it is made instead of holding it: sink(yi, yf, j)
// receives the window's samples j, j+1, ... of both chains (valid during
// the call), in order.
func streamTo(ctx context.Context, cs *chainState, c Cascade, nin, skip, win int, gen func(x []float64, n0 int), sink func(yi, yf []float64, j int)) (inPow, inErr float64, clipped int, err error) {
	x := make([]float64, min(blockLen(c), nin))
	err = streamBlocks(ctx, nin, len(x), skip, win, func(n0, n int) (bi, bf []float64) {
		blk := x[:n]
		gen(blk, n0)
		return cs.run(blk)
	}, sink)
	if err != nil {
		return 0, 0, 0, err
	}
	return cs.inPow / float64(nin), cs.inErr / float64(nin), cs.clipped, nil
}

// streamBlocks is streamTo's loop: block(n0, n) runs the chains on input
// samples n0 to n0+n-1 (n is blk but for the last block) and returns the
// outputs they complete.
func streamBlocks(ctx context.Context, nin, blk, skip, win int, block func(n0, n int) (bi, bf []float64), sink func(yi, yf []float64, j int)) error {
	out := 0 // output samples produced so far
	for n0 := 0; n0 < nin; n0 += blk {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("fixed: bit-true run stopped: %w", err)
		}
		bi, bf := block(n0, min(blk, nin-n0))
		lo, hi := max(0, skip-out), min(len(bi), skip+win-out)
		if lo < hi {
			sink(bi[lo:hi], bf[lo:hi], out+lo-skip)
		}
		out += len(bi)
	}
	return nil
}

// blockLen is the number of input samples a run passes through the chains
// at a time: blockSamples, or for an interpolation cascade as many as make
// about blockSamples output samples (at least one).
func blockLen(c Cascade) int {
	if c.Interpolate {
		return max(1, blockSamples/c.Ratio())
	}
	return blockSamples
}

// runBoth runs the integer and the float chain on the whole of x (fractions
// of full scale) and returns both outputs in fractions of full scale, the
// mean square error of the quantised input and the number of clipped input
// samples (stream over a signal held in memory, for tests).
func runBoth(c Cascade, w *Widths, x []float64) (yi, yf []float64, inErr float64, clipped int) {
	nout := len(x)
	for _, st := range c.Stages {
		if c.Interpolate {
			nout *= st.R
		} else {
			nout = (nout + st.R - 1) / st.R
		}
	}
	yi, yf, _, inErr, clipped, _ = stream(context.Background(), c, w, len(x), 0, nout, func(b []float64, n0 int) {
		copy(b, x[n0:])
	})
	return yi, yf, inErr, clipped
}

// ADC quantises x (fractions of full scale) to bits-bit two's-complement
// codes in dst: code = round(x * 2^(bits-1)) (halves away from zero),
// saturated to [-2^(bits-1), 2^(bits-1)-1]. It returns how many samples
// saturated. dst must be at least as long as x; bits must lie in [1, 62]
// (a 1-bit word, the codes -1 and 0, carries a noise-shaped converter's
// codes: see Signal.Shaper).
func ADC(dst []int64, x []float64, bits int) int {
	if bits < 1 || bits > 62 || len(dst) < len(x) {
		panic("fixed: ADC with a short dst or bits outside [1, 62]")
	}
	lim := int64(1)<<(bits-1) - 1
	clipped := 0
	scale := math.Ldexp(1, bits-1) // a power of two: v*scale is exact, as Ldexp is
	for n, v := range x {
		s := math.Round(v * scale)
		switch {
		case s > float64(lim):
			dst[n], clipped = lim, clipped+1
		case s < float64(-lim-1):
			dst[n], clipped = -lim-1, clipped+1
		default:
			dst[n] = int64(s)
		}
	}
	return clipped
}

// wrap reduces v to a w-bit two's-complement value.
func wrap(v int64, w int) int64 {
	s := uint(64 - w)
	return v << s >> s
}

// shiftTo moves v from units of 2^from to units of 2^to, truncating (floor).
func shiftTo(v int64, from, to int) int64 {
	if to >= from {
		return v >> uint(to-from)
	}
	return v << uint(from-to)
}

// cicState is a pruned CIC decimator run a block at a time: register j
// holds its value in units of 2^Dropped[j] and wraps at RegisterBits[j]
// (an integrator of an msbAligned pruning holds it modulo
// 2^RegisterBits[j], the same bits for what reads it); the output is taken
// at input sample indices 0, R, 2R, ...
type cicState struct {
	p      *CICPruning
	integ  []int64
	combIn [][]int64 // last M inputs of each comb
	pos    int
	phase  int // input samples since the last output (k mod R)
	// shift[j] is the LSBs integrator j drops from its input: Dropped[j]
	// less the previous register's (the input's for j = 0).
	shift []int
	// aligned: see msbAligned.
	aligned bool
	// blocks: aligned, and no integrator shifts its input up (run).
	blocks bool
	buf    []int64 // a stretch's integrator outputs (run)
}

// msbAligned reports whether no integrator's register reaches above its
// predecessor's top bit (Dropped[j] + RegisterBits[j] never grows, as in
// Hogenauer's pruning, where every register keeps the full width's MSB).
// Integrator j+1 then takes only bits of integrator j below its width, and
// a sum that agrees with the register modulo 2^RegisterBits[j] gives it
// the same bits (floor(u / 2^d) for u = v + k 2^w is floor(v / 2^d) +
// k 2^(w-d)): the integrators may run unwrapped, modulo the machine
// word, and only the last is wrapped, where the combs read it.
func msbAligned(p *CICPruning) bool {
	for j := 1; j < p.N; j++ {
		if p.Dropped[j]+p.RegisterBits[j] > p.Dropped[j-1]+p.RegisterBits[j-1] {
			return false
		}
	}
	return true
}

func newCICState(p *CICPruning) *cicState {
	s := &cicState{p: p, integ: make([]int64, p.N), combIn: make([][]int64, p.N), shift: make([]int, p.N)}
	for j := range s.combIn {
		s.combIn[j] = make([]int64, p.M)
	}
	prev := 0
	for j := range s.shift {
		s.shift[j] = p.Dropped[j] - prev
		prev = p.Dropped[j]
	}
	s.aligned = msbAligned(p)
	s.blocks = s.aligned && !slices.ContainsFunc(s.shift, func(d int) bool { return d < 0 })
	if s.blocks {
		s.buf = make([]int64, cicStretch)
	}
	return s
}

func (s *cicState) run(x, out []int64) []int64 {
	if !s.blocks {
		return s.runSamples(x, out)
	}
	// An aligned CIC whose integrators only drop bits (Hogenauer's) runs
	// one integrator over a stretch of the block (cicStretch samples),
	// then the next: the same sums in the same order for each register as
	// runSamples, with the register held in a machine register, and the
	// combs only at the output samples.
	r := s.p.R
	for len(x) > 0 {
		k := min(len(x), cicStretch)
		buf := s.buf[:k]
		copy(buf, x[:k])
		for j, acc := range s.integ {
			s.integ[j] = integrate64(acc, buf, s.shift[j])
		}
		for i := (r - s.phase) % r; i < k; i += r {
			out = append(out, s.comb(buf[i]))
		}
		s.phase = (s.phase + k) % r
		x = x[k:]
	}
	return out
}

// runSamples is run one input sample at a time, every integrator wrapped
// at its width: any pruning.
func (s *cicState) runSamples(x, out []int64) []int64 {
	p := s.p
	n, r := p.N, p.R
	integ, shift, regs := s.integ[:n], s.shift[:n], p.RegisterBits[:n]
	for _, v := range x {
		// shiftTo and wrap, written out.
		if s.aligned {
			for j := range integ {
				if d := shift[j]; d >= 0 {
					v >>= uint(d)
				} else {
					v <<= uint(-d)
				}
				v += integ[j]
				integ[j] = v
			}
		} else {
			for j := range integ {
				if d := shift[j]; d >= 0 {
					v >>= uint(d)
				} else {
					v <<= uint(-d)
				}
				sh := uint(64 - regs[j])
				v = (integ[j] + v) << sh >> sh
				integ[j] = v
			}
		}
		if s.phase != 0 {
			if s.phase++; s.phase == r {
				s.phase = 0
			}
			continue
		}
		if s.phase++; s.phase == r {
			s.phase = 0
		}
		out = append(out, s.comb(v))
	}
	return out
}

// comb runs the combs on v, the last integrator's value at an output
// sample, and returns the output.
func (s *cicState) comb(v int64) int64 {
	p := s.p
	n := p.N
	v = wrap(v, p.RegisterBits[n-1])
	unit := p.Dropped[n-1]
	for j := 0; j < n; j++ {
		d := p.Dropped[n+j]
		in := wrap(shiftTo(v, unit, d), p.RegisterBits[n+j])
		old := s.combIn[j][s.pos]
		s.combIn[j][s.pos] = in
		v, unit = wrap(in-old, p.RegisterBits[n+j]), d
	}
	s.pos = (s.pos + 1) % p.M
	return wrap(shiftTo(v, unit, p.Dropped[2*n]), p.OutputBits)
}

// newCICInt is the integer model of a planned CIC of either form.
func newCICInt(sw *StageWidths) intFilter {
	if sw.NonRecursive {
		return newNRState(sw)
	}
	return newCICFilter(sw.Pruning)
}

// nrState is a non-recursive CIC (chain.NonRecursive) run a block at a
// time: sub-stage i computes y_i[m] = sum_{j=0..N} C(N, j) x_i[2m - j]
// exactly (inputs before the first zero), so it outputs with its inputs
// 0, 2, 4, ..., and the chain of log2 R sub-stages with the inputs 0, R,
// 2R, ... as the recursive CIC does. The last sub-stage's output is
// truncated (floor) by Dropped[2N] bits to OutputBits. Every value fits
// its sub-stage's Bin + N i bits, at most 63 (NewModel checks).
type nrState struct {
	binom []int64   // C(N, j), j = 0..N
	hist  [][]int64 // per sub-stage: its last N inputs, newest first
	odd   []bool    // per sub-stage: the next input is odd-numbered
	shift int
}

func newNRState(sw *StageWidths) *nrState {
	n := sw.Pruning.N
	s := &nrState{binom: make([]int64, n+1), hist: make([][]int64, len(sw.SubStageBits)), odd: make([]bool, len(sw.SubStageBits)), shift: sw.OutputShift}
	s.binom[0] = 1
	for j := 1; j <= n; j++ {
		s.binom[j] = s.binom[j-1] * int64(n-j+1) / int64(j)
	}
	for i := range s.hist {
		s.hist[i] = make([]int64, n)
	}
	return s
}

func (s *nrState) run(x, out []int64) []int64 {
	for _, v := range x {
		done := true
		for i, h := range s.hist {
			odd := s.odd[i]
			s.odd[i] = !odd
			if odd {
				copy(h[1:], h)
				h[0] = v
				done = false
				break
			}
			y := s.binom[0] * v
			for j, u := range h {
				y += s.binom[j+1] * u
			}
			copy(h[1:], h)
			h[0] = v
			v = y
		}
		if done {
			out = append(out, v>>s.shift)
		}
	}
	return out
}

// cicInt runs a pruned CIC decimator on the whole of x.
func cicInt(x []int64, p *CICPruning) []int64 {
	return newCICState(p).run(x, make([]int64, 0, (len(x)+p.R-1)/p.R))
}

// firIntState is a decimating FIR with exact products and sum, rounded half
// up at bit shift and saturated to ob bits, run a block at a time:
// y[m] = sum_k h[k] x[mR-k] over k <= mR.
type firIntState struct {
	h        []int64
	r, shift int
	lo, hi   int64
	buf      []int64 // the last len(h)-1 inputs, then the block
	n        int     // input samples seen before the block
}

func newFIRInt(h []int64, r, shift, ob int) *firIntState {
	hi := int64(1)<<(ob-1) - 1
	return &firIntState{h: h, r: r, shift: shift, lo: -hi - 1, hi: hi, buf: make([]int64, len(h)-1)}
}

func (s *firIntState) run(x, out []int64) []int64 {
	l := len(s.h) - 1
	s.buf = append(s.buf[:l], x...)
	// The first output index at or after s.n.
	for g := (s.n + s.r - 1) / s.r * s.r; g < s.n+len(x); g += s.r {
		// Taps k = 0..min(l, g) against buf[j-k] (firFloatState's loop).
		j := l + g - s.n // g's place in buf
		h := s.h[:min(l, g)+1]
		b := s.buf[j+1-len(h) : j+1]
		var acc int64
		for k, hk := range h {
			acc += hk * b[len(b)-1-k]
		}
		switch {
		case s.shift > 0:
			acc = (acc + int64(1)<<(s.shift-1)) >> uint(s.shift)
		case s.shift < 0:
			acc <<= uint(-s.shift)
		}
		out = append(out, max(s.lo, min(s.hi, acc)))
	}
	s.n += len(x)
	copy(s.buf, s.buf[len(s.buf)-l:])
	return out
}

// firFloatState is firIntState's float chain: y[m] = sum_k h[k] x[mR-k]
// over k <= mR, in float64, summed in order of k, each product rounded on
// its own (as tone's, not fused into a multiply-add).
type firFloatState struct {
	h   []float64
	r   int
	buf []float64
	n   int
}

func newFIRFloat(h []float64, r int) *firFloatState {
	return &firFloatState{h: h, r: r, buf: make([]float64, len(h)-1)}
}

func (s *firFloatState) run(x, out []float64) []float64 {
	l := len(s.h) - 1
	s.buf = append(s.buf[:l], x...)
	end := s.n + len(x)
	for g := (s.n + s.r - 1) / s.r * s.r; g < end; {
		if g >= l && g+3*s.r < end {
			// Four outputs with whole windows at once, each summed in the
			// order of the one below, so the outputs are the same bit for
			// bit, but the four sums do not wait on one another.
			j := g - s.n // g's window is buf[j : j+l+1]
			h := s.h
			b0 := s.buf[j : j+l+1]
			b1 := s.buf[j+s.r : j+s.r+l+1]
			b2 := s.buf[j+2*s.r : j+2*s.r+l+1]
			b3 := s.buf[j+3*s.r : j+3*s.r+l+1]
			var a0, a1, a2, a3 float64
			for k, hk := range h {
				i := l - k
				a0 += float64(hk * b0[i])
				a1 += float64(hk * b1[i])
				a2 += float64(hk * b2[i])
				a3 += float64(hk * b3[i])
			}
			out = append(out, a0, a1, a2, a3)
			g += 4 * s.r
			continue
		}
		// Taps k = 0..min(l, g) against buf[j-k], summed in that order:
		// b is the window reversed, so b[len(b)-1-k] = buf[j-k].
		j := l + g - s.n
		h := s.h[:min(l, g)+1]
		b := s.buf[j+1-len(h) : j+1]
		var acc float64
		for k, hk := range h {
			acc += float64(hk * b[len(b)-1-k])
		}
		out = append(out, acc)
		g += s.r
	}
	s.n += len(x)
	copy(s.buf, s.buf[len(s.buf)-l:])
	return out
}

// maxCICFloatTaps bounds the float model of a CIC in the bit-true run (two
// float64 arrays of this length: 64 MiB).
const maxCICFloatTaps = 1 << 22

// cicTaps is the impulse response of n cascaded length-rm boxcars, times scale.
func cicTaps(n, rm int, scale float64) []float64 {
	h := []float64{scale}
	for b := 0; b < n; b++ {
		g := make([]float64, len(h)+rm-1)
		run := 0.0
		for k := range g {
			if k < len(h) {
				run += h[k]
			}
			if k-rm >= 0 {
				run -= h[k-rm]
			}
			g[k] = run
		}
		h = g
	}
	return h
}

// aliasRun is the bit-true run's alias test (run 2): a tone at the worst
// alias of the quantised cascade (or sig.AliasHz), measured after the
// chain by a least-squares fit at its own frequency (an integer chain's)
// or a projection over whole cycles, its window lengthened while the
// noise masks it (see the package doc, Bit-true run). It
// fills res's alias fields. enc, when not nil, makes the input codes of
// each run (a Shaper's fresh encoder) in place of the ADC.
func aliasRun(ctx context.Context, c Cascade, w *Widths, sig Signal, res *BitTrueResult, rng *rand.Rand, noise float64, nm, skip int, need func(nout int) int, fk float64, enc func() (Encoder, error)) error {
	// Run 2: a tone at the worst alias of the quantised cascade.
	q, qspec := cascadeChain(c, w, true)
	h0q := q.Gain(0) * cicScale(w)
	var g float64
	// path is the tone's path to the alias through a fractional stage
	// (chain.PathGains' K; 0 for an integer cascade), shift its k Fm.
	path := 0
	if sig.AliasHz > 0 {
		g = sig.AliasHz
		path = worstPath(q, g, c.Protected, c.Passband)
		res.WorstAliasResponseDB = posDB(pathGain(q, g, path) / q.Gain(0))
	} else {
		// The worst alias is chain.Analyze's, on the quantised cascade.
		a, err := chain.AnalyzeContext(ctx, q, qspec)
		if err != nil {
			return fmt.Errorf("fixed: the quantised cascade's worst alias: %w", err)
		}
		g, res.WorstAliasResponseDB, path = a.WorstAliasHz, a.AliasRejectionDB, a.WorstPath
	}
	shift := 0.0
	frac, fi := c.fracStage()
	if frac.fractional() {
		shift = float64(path) * c.Rates()[fi]
	}
	fch, _ := cascadeChain(c, w, false)
	h0f := fch.Gain(0) * cicScale(w)
	a := math.Pow(10, sig.AliasLevel/20)
	g0 := g
	fold0 := math.Mod(g0+shift, fk)
	if fold0 > fk/2 {
		fold0 = fk - fold0
	}
	// An integer chain's tone stays at g itself, measured by a least-squares
	// fit at its own frequency (fitTone), which needs no whole number of
	// cycles in the window: so the window can start short (aliasWindow). A
	// fractional chain's paths must land on the window's bins (see BitTrue),
	// so its tone moves to whole cycles of the window.
	exact := !frac.fractional()
	win := nm
	if exact {
		// The longest window the run may take: up to 16 x Samples and
		// the input bound, as the retries below.
		maxWin := nm
		for maxWin < 16*nm && need(skip+2*maxWin) <= autoInputSamples {
			maxWin *= 2
		}
		if w0 := aliasWindow(fold0/fk, nm, maxWin, skip); w0 > 0 {
			win = w0
		} else {
			exact = false
		}
	}
	for {
		g = g0
		fout := fold0
		if !exact {
			fold := math.Mod(g+shift, fk)
			mirror := fold > fk/2
			if mirror {
				fold = fk - fold
			}
			fout = float64(wholeCycles(fold, fk, win, c.protectedEdge())) * fk / float64(win)
			if mirror {
				g += fold - fout
			} else {
				g += fout - fold
			}
		}
		res.AliasHz, res.AliasOutHz, res.AliasSamples = g, fout, win
		res.AliasResponseDB = posDB(pathGain(q, g, path) / q.Gain(0))
		phase := 2 * math.Pi * rng.Float64()
		run := func(phase float64) (yi, yf []float64, err error) {
			tone := []toneGen{{g, a, phase}}
			yi, yf, err = streamEnc(ctx, c, w, enc, need(skip+win), skip, win, signalGen(tone, noise, rng, c.InputRate))
			if err != nil {
				return nil, nil, err
			}
			if len(yi) < win {
				return nil, nil, fmt.Errorf("fixed: bit-true alias run made %d of %d output samples (an internal miscount of the input needed)", len(yi), win)
			}
			if frac.fractional() {
				// The tone's other paths through the fractional stage land
				// on other bins of the window (whole cycles, see BitTrue):
				// they are signal, not noise in the alias's bin.
				yi = removePaths(yi, q, g, fout, fk, win)
			}
			return yi, yf, nil
		}
		yi, yf, err := run(phase)
		if err != nil {
			return err
		}
		var ai, af, resid float64
		if exact {
			ai, resid = fitTone(yi, fout/fk)
			af, _ = fitTone(yf, fout/fk)
		} else {
			ai, resid = project(yi, fout/fk)
			af, _ = project(yf, fout/fk)
		}
		if n, sum := pathsInBin(q, g, fout, fk, win); frac.fractional() && n > 1 {
			// Two paths of the real tone meet in the alias's bin (at +y
			// and -y, see package chain): what comes out depends on the
			// tone's phase. A second run a quarter cycle on separates the
			// two (Z(p) = c1 e^{ip} + c2 e^{-ip}), and the figure is the
			// worst phase's, |c1| + |c2|.
			yi2, yf2, err := run(phase + math.Pi/2)
			if err != nil {
				return err
			}
			ai = worstPhase(projectC(yi, fout/fk), projectC(yi2, fout/fk))
			af = worstPhase(projectC(yf, fout/fk), projectC(yf2, fout/fk))
			// The response's figure is then the paths' sum too.
			res.AliasResponseDB = posDB(sum / q.Gain(0))
		}
		res.AliasRejectionDB = posDB(ai / (a * h0q))
		res.AliasFloatRunDB = posDB(af / (a * h0f))
		res.AliasNoiseDB = posDB(2 * resid / math.Sqrt(float64(win)) / (a * h0q))
		res.AliasValid = res.AliasNoiseDB >= res.AliasRejectionDB+20 && !leftBand(fold0, fout, c.protectedEdge())
		margin := res.AliasNoiseDB - res.AliasRejectionDB
		if win < nm {
			// A window shorter than the SNR's is kept only when the noise
			// in the bin lies shortAliasMargin dB below the alias;
			// otherwise the window it would take (the noise falls 3 dB
			// each time the window doubles), up to the SNR's.
			if margin >= shortAliasMargin {
				break
			}
			next := 2 * win
			for next < nm && margin+10*math.Log10(float64(next)/float64(win)) < shortAliasMargin {
				next *= 2
			}
			win = min(next, nm)
			continue
		}
		// A window four times as long lowers the noise in the bin by 6 dB;
		// the run is retried so while the noise masks the alias and memory
		// allows.
		if res.AliasValid || margin+12 < 20 || need(skip+4*win) > autoInputSamples || win >= 16*nm {
			break
		}
		win *= 4
	}
	res.AliasValid = res.AliasValid && !aliasFlattered(res)
	return nil
}

// aliasFlattered reports a bit-true alias (or image) rejection better
// than the quantised chain's response at the tone (AliasResponseDB) by
// more than the noise in its bin and the measurement's own slack
// (aliasSlackDB) can explain: the data path's rounding, correlated with
// the tone, has partly cancelled the alias. That is what the hardware
// does for this tone at this level and phase, but another could add the
// same error instead, so the figure does not stand for the band (the
// safe side: AliasValid false). Noise of amplitude rho times the measured
// alias (m dB below it, rho = 10^(-m/20)) can have shrunk the true alias
// to the measured one from at most 1 + rho times it.
func aliasFlattered(res *BitTrueResult) bool {
	allow := aliasAllowanceDB(res)
	if math.IsNaN(allow) {
		return true
	}
	return res.AliasRejectionDB > res.AliasResponseDB+allow
}

// aliasAllowanceDB is how far above the response aliasFlattered lets a
// bit-true alias figure lie: 20 log10(1 + rho) for the noise in its bin,
// plus aliasSlackDB.
func aliasAllowanceDB(res *BitTrueResult) float64 {
	m := res.AliasNoiseDB - res.AliasRejectionDB
	return 20*math.Log10(1+math.Pow(10, -m/20)) + aliasSlackDB
}

// aliasSlackDB is how far a bit-true alias figure may lie above the
// response beyond what its bin's noise explains: the projection over a
// finite window of a tone moved to its bin, next to the other tones'
// leakage.
const aliasSlackDB = 0.1

// wholeCycles is the whole number of cycles over a window of win samples
// at rate nearest a tone at f Hz in [0, rate/2], from 1 to win/2 - 1; a
// tone within the protected band [0, fa] is kept within it (the cycles
// below f then, where the nearest lie above fa), so that the alias or
// image measured stays in its band: a worst alias sits at the band's edge,
// and moved past it, the figure would say nothing about the band.
func wholeCycles(f, rate float64, win int, fa float64) int {
	m := int(math.Max(1, math.Min(float64(win/2-1), math.Round(f/rate*float64(win)))))
	if f <= fa && float64(m)*rate/float64(win) > fa {
		m = max(1, int(math.Floor(fa/rate*float64(win))))
	}
	return m
}

// shortAliasMargin is how far (dB) the noise in the alias's bin must lie
// below the alias for a window shorter than the SNR's to be kept: the
// noise then moves the figure by under 0.1 dB RMS.
const shortAliasMargin = 40

// minAliasCycles is the fewest cycles of the alias's output tone, and of
// its distance to Nyquist, that a window measured by fitTone must hold:
// fewer, and its sine and cosine are nearly collinear with the constant
// over the window.
const minAliasCycles = 8

// aliasWindow is the first window (output samples) of an integer chain's
// alias run for an output tone at nu cycles a sample, given the SNR's
// window nm, the longest the run may take, maxWin, and the transient skip
// (which every run pays before its window): a sixteenth of nm, no shorter
// than the transient while below nm (a shorter one saves little and may
// be run again), doubled until it holds minAliasCycles cycles of the tone
// and of its distance to Nyquist; 0 when even maxWin does not (the run
// then moves the tone to whole cycles of nm, as a fractional chain's).
func aliasWindow(nu float64, nm, maxWin, skip int) int {
	room := math.Min(nu, 0.5-nu)
	if !(room > 0) {
		return 0
	}
	w := max(1, nm/16)
	for w < nm && w < skip {
		w *= 2
	}
	for room*float64(w) < minAliasCycles {
		if w >= maxWin {
			return 0
		}
		w *= 2
	}
	return min(w, maxWin)
}

// leftBand reports whether a tone at f Hz within the protected band
// [0, fa] was moved, to moved Hz, past its edge: its figure then says
// nothing about the band, and the run does not count as valid.
func leftBand(f, moved, fa float64) bool {
	return f <= fa && moved > fa*(1+1e-12)
}

// fitTone is the amplitude of the sinusoid at nu cycles a sample in y and
// the RMS of what is left, by least squares over a constant, cos(2 pi nu n)
// and sin(2 pi nu n): exact for a sinusoid plus a constant whatever the
// number of cycles in y, where project needs whole cycles. The caller keeps
// the tone minAliasCycles cycles from 0 and from Nyquist (aliasWindow), so
// the three are far from collinear.
func fitTone(y []float64, nu float64) (amp, resid float64) {
	var m [3][4]float64 // the normal equations, [A | b]
	w := 2 * math.Pi * nu
	for n, v := range y {
		s, c := math.Sincos(w * float64(n))
		u := [3]float64{1, c, s}
		for i := range u {
			for j := range u {
				m[i][j] += u[i] * u[j]
			}
			m[i][3] += u[i] * v
		}
	}
	// Gaussian elimination with partial pivoting on the 3 x 3 system.
	for col := 0; col < 3; col++ {
		p := col
		for r := col + 1; r < 3; r++ {
			if math.Abs(m[r][col]) > math.Abs(m[p][col]) {
				p = r
			}
		}
		m[col], m[p] = m[p], m[col]
		for r := col + 1; r < 3; r++ {
			f := m[r][col] / m[col][col]
			for k := col; k < 4; k++ {
				m[r][k] -= f * m[col][k]
			}
		}
	}
	var x [3]float64
	for r := 2; r >= 0; r-- {
		v := m[r][3]
		for k := r + 1; k < 3; k++ {
			v -= m[r][k] * x[k]
		}
		x[r] = v / m[r][r]
	}
	var r2 float64
	for n, v := range y {
		s, c := math.Sincos(w * float64(n))
		e := v - x[0] - x[1]*c - x[2]*s
		r2 += e * e
	}
	return math.Hypot(x[1], x[2]), math.Sqrt(r2 / float64(len(y)))
}

// streamEnc is stream on chains whose input codes come from enc() (a new
// encoder per run) when enc is not nil, and from the ADC otherwise; it
// returns the window of both outputs, or the encoder's error.
func streamEnc(ctx context.Context, c Cascade, w *Widths, enc func() (Encoder, error), nin, skip, win int, gen func(x []float64, n0 int)) (yi, yf []float64, err error) {
	cs := newChainState(c, w)
	cs.noSums = true
	if enc != nil {
		if cs.enc, err = enc(); err != nil {
			return nil, nil, err
		}
	}
	yi, yf = make([]float64, 0, win), make([]float64, 0, win)
	_, _, _, err = streamTo(ctx, cs, c, nin, skip, win, gen, func(bi, bf []float64, _ int) {
		yi, yf = append(yi, bi...), append(yf, bf...)
	})
	if err == nil {
		err = cs.encErr
	}
	if err != nil {
		return nil, nil, err
	}
	return yi, yf, nil
}

// outputError returns the integer output less the float one, its mean
// removed, and sets res's MatchDB (the float output's power over the
// error's) and OutputOffset (that mean in output LSBs of an outBits word).
func outputError(res *BitTrueResult, yi, yf []float64, outBits int) []float64 {
	e := make([]float64, len(yi))
	for n := range e {
		e[n] = yi[n] - yf[n]
	}
	res.MatchDB = ratioDB(power(yf), power(e))
	var mean float64
	for _, v := range e {
		mean += v
	}
	mean /= float64(len(e))
	for n := range e {
		e[n] -= mean
	}
	res.OutputOffset = math.Ldexp(mean, outBits-1)
	return e
}
