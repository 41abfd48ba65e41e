package fixed

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/stepdown-dsp/stepdown/chain"
)

// maxOutputSamples and autoOutputSamples bound an interpolation cascade's
// bit-true run by its output samples, as maxInputSamples and
// autoInputSamples bound a decimation cascade's by its input samples: the
// high rate's samples are the run's cost either way.
const (
	maxOutputSamples  = maxInputSamples
	autoOutputSamples = autoInputSamples
)

// minWindowInputs is the fewest input samples an interpolation cascade's
// measurement window spans, so that the test tone makes whole cycles in it.
const minWindowInputs = 64

// bitTrueInterp is BitTrueContext for an interpolation cascade (see the
// package doc, Bit-true run): the test signal at the input (channel) rate,
// the SNR and the DC offset over a window of the output at the high rate,
// and the image test: one tone at the channel frequency f whose image is
// the quantised cascade's worst, g, measured at the output at g and at f.
//
// The window spans a whole number of input samples, so that every image
// k F_in +- f of a tone makes whole cycles in it too, and is measured as
// it streams (running sums), so that the run's memory does not grow with
// the interpolation or the window.
func bitTrueInterp(ctx context.Context, c Cascade, w *Widths, sig Signal) (BitTrueResult, error) {
	fp, fa := c.Passband, c.protectedEdge()
	// outNum/outDen output samples per input sample: the interpolation
	// l, times Up/Down after a fractional stage (its own, in signal order).
	l := c.Ratio()
	frac, _ := c.fracStage()
	outNum, outDen := l, 1
	if frac.fractional() {
		outNum, outDen = l*frac.Up, frac.Down
	}
	fin := c.InputRate
	high := fin * float64(outNum) / float64(outDen)
	if !(fp > 0) || fp >= fin/2 || fa < fp || fa > fin/2 {
		return BitTrueResult{}, fmt.Errorf("fixed: cascade Passband = %g Hz, Protected = %g Hz: need 0 < Passband <= Protected <= input rate/2 = %g Hz", fp, fa, fin/2)
	}
	auto := sig.Samples == 0
	nmIn := 2048 // input samples the window spans
	if !auto {
		if sig.Samples < 64 {
			return BitTrueResult{}, fmt.Errorf("fixed: signal Samples = %d: must be >= 64", sig.Samples)
		}
		nmIn = max(minWindowInputs, (sig.Samples+l-1)/l)
	}
	// The default levels leave room for the largest gain from the input to
	// any stage's output (above 1 when a UnityGain correction comes before a
	// stage that loses gain, such as a CIC), so that no stage saturates on
	// them: at the tones' own frequencies, images included (gainModel.at),
	// not only at 0 Hz, since a compensator before its CIC lifts them by up
	// to the CIC's droop.
	toneFs := []float64{0.4 * fp} // the default tone's (Signal.fill)
	if sig.Tones != nil {
		toneFs = toneFs[:0]
		for _, t := range sig.Tones {
			toneFs = append(toneFs, t.Freq)
		}
	}
	gm := newGainModel(c, w)
	gmax := 1.0
	for i := range w.Stages {
		gmax = math.Max(gmax, prefixGain(w, i))
	}
	for _, f := range toneFs {
		gmax = math.Max(gmax, gm.maxGainAt(f))
	}
	aliasDefault := sig.AliasLevel == 0
	sd, err := sig.fill(w.InputBits, fp, fin, high, 20*math.Log10(gmax))
	// The image test's default tone (Run 2) starts from the same level
	// before that lowering and is lowered by the gain at its own frequency,
	// near the band's edge where a compensator lifts most (imageAmp); NaN
	// when the caller set the level.
	imageBase := math.NaN()
	if aliasDefault {
		imageBase = sig.AliasLevel + 20*math.Log10(gmax)
	}
	if err != nil {
		return BitTrueResult{}, err
	}
	if err := checkCICRun(c, w); err != nil {
		return BitTrueResult{}, err
	}
	// Transient: the cascade's impulse response length in output samples;
	// each stage's response is at its output rate, spread by the later
	// stages' factors. A fractional stage's spans its prototype's taps at
	// L Fm (a Farrow stage's N samples at Fm) and two samples of Fm more
	// for its rounded times.
	// Each stage's span, in samples at its rate, counts hi / that rate
	// output samples (a stage after a fractional one runs at a rate that
	// is no integer fraction of the output's).
	rates := c.Rates()
	hi := rates[len(rates)-1]
	span := 1.0
	for i, st := range c.Stages {
		if st.fractional() {
			lv, _ := st.fracView()
			n := len(st.Farrow0())
			if st.Farrow == nil {
				n = (len(st.Taps) + lv - 1) / lv
			}
			span += float64(n+2) * hi / rates[i]
			continue
		}
		span += float64(st.Length()-1) * hi / rates[i+1]
	}
	skip := int(math.Ceil(span)) + l
	// phases: the output repeats its phases every outNum output samples,
	// outDen input samples (one for an integer cascade). A fractional
	// cascade's window spans a multiple of 2 outDen input samples, so
	// that the images of a tone make whole cycles in it and the two paths
	// of a tone that meet do so on its grid, and at least 32 periods, so
	// that a family (2 outNum dimensions) takes at most 1/16 of it.
	step := 1
	if frac.fractional() {
		step = 2 * outDen
		nmIn = max(nmIn, 32*outDen)
	}
	nmIn = (nmIn + step - 1) / step * step
	for auto && nmIn > max(256, 32*outDen) && skip+nmIn*outNum/outDen > autoOutputSamples {
		nmIn = (nmIn/2 + step - 1) / step * step
	}
	win := nmIn * outNum / outDen
	if nout := skip + win; nout > maxOutputSamples {
		return BitTrueResult{}, fmt.Errorf("fixed: bit-true run needs %d output samples (interpolation %s, %d output samples measured over %d input samples); at most %d are supported", skip+win, ratioText(outNum, outDen), win, nmIn, maxOutputSamples)
	}
	// need is the input samples that make nout output samples: a Farrow
	// stage's outputs wait for its later inputs (N/2 of its outputs).
	need := func(nout int) int {
		n := (nout+outNum-1)/outNum*outDen + 1
		if frac.fractional() {
			n += (len(frac.Farrow0())+4)*frac.Down/frac.Up + 2
		}
		return n
	}
	nin := need(skip + win)
	res := BitTrueResult{Samples: win, InputSamples: nin, Skip: skip, NoiseDBFS: math.Max(-300, 20*math.Log10(sd.noise))}
	rng := rand.New(rand.NewPCG(sig.Seed, 0x5eed))
	obits := w.OutputBits

	// Run 1: the wanted tones plus noise.
	var ms []int
	var tones []toneGen
	// A tone's family (it and its images) repeats every period bins; a
	// tone whose bin shares a factor with it would have harmonics (the
	// rounding's) on its family, which the SNR leaves out (a tone at
	// F_in/6 read 13 dB too high): the bin is moved to the nearest one
	// prime to the period.
	period := nmIn
	if frac.fractional() {
		period = nmIn / outDen
	}
	for _, t := range sig.Tones {
		m := coprimeNear(int(math.Round(t.Freq/fin*float64(nmIn))), period)
		ms = append(ms, m)
		f := float64(m) * fin / float64(nmIn)
		res.Tones = append(res.Tones, Tone{Freq: f, Level: t.Level})
		tones = append(tones, toneGen{f, math.Pow(10, t.Level/20), 2 * math.Pi * rng.Float64()})
	}
	// newFam is the family of a tone at m cycles over nm input samples.
	newFam := func(nm, m int) *family {
		if frac.fractional() {
			return newFamilyOut(outNum, nm*outNum/outDen, m)
		}
		return newFamily(l, nm, m)
	}
	meas := newInterpMeasure(obits)
	for k, m := range ms {
		// A tone met before has its family removed once.
		if !containsInt(ms[:k], m) {
			meas.families = append(meas.families, newFam(nmIn, m))
		}
		meas.outs = append(meas.outs, newRotor(int64(m), int64(win)))
	}
	cs := newChainState(c, w)
	inPow, inErr, clipped, err := streamTo(ctx, cs, c, nin, skip, win, signalGen(tones, sd.noise, rng, fin), meas.add)
	if err != nil {
		return BitTrueResult{}, err
	}
	res.Clipped = clipped
	res.InputSNRDB = ratioDB(inPow, inErr)
	nw := float64(win)
	refPow := meas.ref2 / nw
	res.MatchDB = ratioDB(refPow, meas.e2/nw)
	mean := meas.e1 / nw
	res.OutputOffset = math.Ldexp(mean, obits-1)
	// The error less its mean and its component at every tone and every
	// image of it (each tone's family), which are orthogonal over the
	// window: the energy left is the error's less theirs.
	left := meas.e2 - nw*mean*mean
	dims := 1
	for _, fam := range meas.families {
		left -= fam.energy()
		dims += fam.dims()
		if fam.holdsDC() {
			left += nw * mean * mean // a family at DC holds the mean
			dims--
		}
	}
	errPow := math.Max(0, left) / nw
	if frac.fractional() {
		// A family after a fractional stage spans up to 1/16 of the
		// window: the noise it removed with the signal is made up for
		// (the noise per dimension left, exact for white noise).
		errPow = math.Max(0, left) / float64(max(1, win-dims))
	}
	if meas.n != win {
		return BitTrueResult{}, fmt.Errorf("fixed: bit-true run measured %d of %d output samples (an internal miscount of the input needed)", meas.n, win)
	}
	for k, m := range ms {
		res.OutputLevels = append(res.OutputLevels, math.Max(-300, 20*math.Log10(meas.outs[k].amplitude(m == 0 || 2*m == win, win))))
	}
	res.SNRDB = ratioDB(refPow, errPow)
	res.ENOB = (res.SNRDB - 1.76) / 6.02
	res.OutputClipped = meas.clipped
	res.SNRNote = snrNote(w.InputBits, sd.defaultTones && !sd.fits, clipped, nin, res.OutputOffset, math.Ldexp(math.Sqrt(errPow), obits-1))
	if res.OutputClipped*1000 > win {
		note := fmt.Sprintf("the output saturated in %d of %d samples at the %d-bit output word (the chain's gain lifts the test signal past full scale)", res.OutputClipped, win, obits)
		if res.SNRNote != "" {
			note = res.SNRNote + "; " + note
		}
		res.SNRNote = note
	}
	// A stage before the last that saturates (its output word is not the
	// output's, which OutputClipped counts) spoils the SNR the same way.
	for i, n := range cs.saturations()[:len(c.Stages)-1] {
		if n*1000 > cs.outs[i] {
			note := fmt.Sprintf("stage %d saturated in %d of its %d output samples (the gain from the input to its output, %.4g at 0 Hz, lifts the test signal past full scale)", i+1, n, cs.outs[i], prefixGain(w, i))
			if res.SNRNote != "" {
				note = res.SNRNote + "; " + note
			}
			res.SNRNote = note
		}
	}
	res.SNRValid = res.SNRNote == ""
	if frac.fractional() {
		if err := imageRunFrac(ctx, c, w, sig, &res, rng, sd.noise, nmIn, skip, outNum, outDen, need, imageBase); err != nil {
			return BitTrueResult{}, err
		}
		return res, nil
	}

	// Run 2: a tone at the channel frequency whose image is the quantised
	// cascade's worst.
	q, qspec := cascadeChain(c, w, true)
	var g0 float64
	if sig.AliasHz > 0 {
		g0 = sig.AliasHz
		res.WorstAliasResponseDB = posDB(q.Gain(g0) / q.Gain(0))
	} else {
		a, err := chain.AnalyzeContext(ctx, q, qspec)
		if err != nil {
			return BitTrueResult{}, fmt.Errorf("fixed: the quantised cascade's worst image: %w", err)
		}
		g0, res.WorstAliasResponseDB = a.WorstAliasHz, a.AliasRejectionDB
	}
	fold0 := math.Mod(g0, fin)
	if fold0 > fin/2 {
		fold0 = fin - fold0
	}
	amp := imageAmp(gm, sig.AliasLevel, imageBase, fold0)
	for nm := nmIn; ; nm *= 4 {
		wn := nm * l
		// f: g folded into [0, F_in/2], moved to whole cycles over the
		// window's input samples; g moves with it, so it stays f's image.
		fold := math.Mod(g0, fin)
		mirror := fold > fin/2
		if mirror {
			fold = fin - fold
		}
		m := wholeCycles(fold, fin, nm, fa)
		f := float64(m) * fin / float64(nm)
		g := g0 + (f - fold)
		if mirror {
			g = g0 - (f - fold)
		}
		// g's cycles over the window: an image of f, k F_in +- f, makes
		// k nm +- m.
		kf := math.Round((g0 - fold) / fin)
		if mirror {
			kf = math.Round((g0 + fold) / fin)
		}
		gm := int64(kf)*int64(nm) + int64(m)
		if mirror {
			gm = int64(kf)*int64(nm) - int64(m)
		}
		res.AliasHz, res.AliasOutHz, res.AliasSamples = g, f, wn
		res.AliasResponseDB = posDB(q.Gain(g) / q.Gain(f))
		im := newImageMeasure(l, nm, int64(m), gm, int64(wn))
		tone := []toneGen{{f, amp, 2 * math.Pi * rng.Float64()}}
		_, _, _, err := streamTo(ctx, newChainState(c, w), c, (skip+wn+l-1)/l, skip, wn, signalGen(tone, sd.noise, rng, fin), im.add)
		if err != nil {
			return BitTrueResult{}, err
		}
		edge := 2*gm == int64(wn) || gm%int64(wn) == 0
		aif, aig := im.fi.amplitude(false, wn), im.gi.amplitude(edge, wn)
		aff, afg := im.ff.amplitude(false, wn), im.gf.amplitude(edge, wn)
		res.AliasRejectionDB = posDB(aig / aif)
		res.AliasFloatRunDB = posDB(afg / aff)
		// The noise in g's bin: what is left of the output once its mean
		// and the tone's family (the tone and all its images) are removed.
		fw := float64(wn)
		mean := im.y1 / fw
		resid := math.Sqrt(math.Max(0, im.y2-fw*mean*mean-im.fam.energy()) / fw)
		res.AliasNoiseDB = posDB(2 * resid / math.Sqrt(fw) / aif)
		res.AliasValid = res.AliasNoiseDB >= res.AliasRejectionDB+20 && !leftBand(fold, f, fa)
		if res.AliasValid || res.AliasNoiseDB+12 < res.AliasRejectionDB+20 || skip+4*wn > autoOutputSamples || wn >= 16*win {
			break
		}
	}
	res.AliasValid = res.AliasValid && !aliasFlattered(&res)
	return res, nil
}

// prefixGain is the DC gain from the input to stage i's output; a
// fractional stage's is its largest phase's (a transposed Farrow stage's
// phases differ widely: the images it leaves for the later stages).
func prefixGain(w *Widths, i int) float64 {
	g := 1.0
	for _, sw := range w.Stages[:i+1] {
		if sw.Up > 0 {
			g *= math.Max(sw.Gain, sw.PhaseGainMax)
			continue
		}
		g *= sw.Gain
	}
	return g
}

func containsInt(s []int, v int) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

// rotor projects a stream onto cos and sin of 2 pi num j / den, j = 0, 1,
// 2, ...: the phase is reduced exactly in integers every toneAnchor samples
// and rotated in between (as tone does).
type rotor struct {
	num, den int64
	j        int64
	c, s     float64 // cos and sin at j
	cw, sw   float64 // one step
	re, im   float64 // the sums of y cos and y sin
}

func newRotor(num, den int64) *rotor {
	num %= den
	if num < 0 {
		num += den
	}
	r := &rotor{num: num, den: den}
	r.sw, r.cw = math.Sincos(2 * math.Pi * float64(num) / float64(den))
	return r
}

// next returns cos and sin at the current j and steps j.
func (r *rotor) next() (c, s float64) {
	if r.j%toneAnchor == 0 {
		ph := (r.num * (r.j % r.den)) % r.den
		r.s, r.c = math.Sincos(2 * math.Pi * float64(ph) / float64(r.den))
	}
	c, s = r.c, r.s
	r.c, r.s = c*r.cw-s*r.sw, s*r.cw+c*r.sw
	r.j++
	return c, s
}

// add projects the next sample y.
func (r *rotor) add(y float64) {
	c, s := r.next()
	r.re += y * c
	r.im += y * s
}

// amplitude returns the amplitude of the projected component over n
// samples; edge marks a frequency at DC or at half the rate, whose sine is
// zero.
func (r *rotor) amplitude(edge bool, n int) float64 {
	k := 2 / float64(n)
	if edge {
		k = 1 / float64(n)
	}
	return math.Hypot(r.re*k, r.im*k)
}

// family is the projection of a window of an interpolation cascade's
// output onto a tone at m cycles over the window's nm input samples and
// every image of it: the signals Re(c_p e^(i 2 pi m n / nm)) whose
// complex amplitude c_p depends only on the output sample's phase p = j
// mod L (n = j div L), which span exactly the frequencies k F_in +- f.
// Per phase the projection is a sinusoid's least-squares fit over nm
// samples.
//
// After a fractional stage (newFamilyOut) the output repeats its phases
// every P = R Up output samples (Up/Down the stage's own rate change, R
// the integer stages' interpolation), which span Down input samples: the
// family is then Re(c_p e^(i 2 pi m j / win)) over the window's win
// samples j, p = j mod P, which spans exactly the frequencies f + k F_in /
// Down where every image of the tone lies; each phase holds nm = win / P
// samples and its carrier makes m whole cycles over them.
type family struct {
	m, nm, l int
	c, s     []float64 // per phase: sum y cos, sum y sin
	rot      *rotor    // the phase at input sample n (every sample when perOut)
	cn, sn   float64
	perOut   bool
}

func newFamily(l, nm, m int) *family {
	return &family{m: m, nm: nm, l: l, c: make([]float64, l), s: make([]float64, l), rot: newRotor(int64(m), int64(nm))}
}

// coprimeNear returns the integer nearest m (m itself, then m+1, m-1,
// m+2, ...) that is at least 1 and shares no factor with period.
func coprimeNear(m, period int) int {
	for d := 0; ; d++ {
		for _, c := range []int{m + d, m - d} {
			if c >= 1 && chain.GCD(c, period) == 1 {
				return c
			}
		}
	}
}

// newFamilyOut is the family of a tone at m cycles over a window of win
// output samples whose phases repeat every p samples (a multiple of p).
func newFamilyOut(p, win, m int) *family {
	return &family{m: m, nm: win / p, l: p, c: make([]float64, p), s: make([]float64, p), rot: newRotor(int64(m), int64(win)), perOut: true}
}

// add takes window sample j, y.
func (f *family) add(j int, y float64) {
	p := j % f.l
	if p == 0 || f.perOut {
		f.cn, f.sn = f.rot.next()
	}
	f.c[p] += y * f.cn
	f.s[p] += y * f.sn
}

// edge says that the carrier steps a whole or half cycle per sample of a
// phase: its sine part is then the cosine part's multiple, one dimension
// per phase (m = 0 or 2m = nm for an integer cascade).
func (f *family) edge() bool { return (2*f.m)%f.nm == 0 }

// holdsDC says that the family spans 0 Hz: its carrier steps whole
// cycles per sample of a phase (m = 0 for an integer cascade).
func (f *family) holdsDC() bool { return f.m%f.nm == 0 }

// dims returns the dimensions the family spans: one or two per phase.
func (f *family) dims() int {
	if f.edge() {
		return f.l
	}
	return 2 * f.l
}

// energy returns the energy (sum of squares) of the projection.
func (f *family) energy() float64 {
	var e float64
	edge := f.edge()
	for p := range f.c {
		switch {
		case edge && f.perOut:
			// cos and sin are both multiples of one +-1 sequence.
			e += (f.c[p]*f.c[p] + f.s[p]*f.s[p]) / float64(f.nm)
		case edge:
			e += f.c[p] * f.c[p] / float64(f.nm)
		default:
			e += 2 * (f.c[p]*f.c[p] + f.s[p]*f.s[p]) / float64(f.nm)
		}
	}
	return e
}

// interpMeasure holds run 1's running sums over the window: the float
// output's energy, the error's sum and energy, each tone family's
// projection of the error, each tone's projection of the integer output,
// and the saturated outputs.
type interpMeasure struct {
	ref2, e1, e2 float64
	families     []*family
	outs         []*rotor
	top          float64
	clipped      int
	n            int // window samples seen
}

func newInterpMeasure(obits int) *interpMeasure {
	return &interpMeasure{top: 1 - math.Ldexp(1, 1-obits)}
}

func (ms *interpMeasure) add(yi, yf []float64, j0 int) {
	ms.n += len(yi)
	for k, vi := range yi {
		vf := yf[k]
		e := vi - vf
		ms.ref2 += vf * vf
		ms.e1 += e
		ms.e2 += e * e
		for _, f := range ms.families {
			f.add(j0+k, e)
		}
		for _, r := range ms.outs {
			r.add(vi)
		}
		if vi >= ms.top || vi <= -1 {
			ms.clipped++
		}
	}
}

// imageMeasure holds run 2's running sums: both outputs' projections at f
// and at g, and the integer output's sum, energy and projection onto f's
// family.
type imageMeasure struct {
	fi, gi, ff, gf *rotor
	fam            *family
	y1, y2         float64
}

func newImageMeasure(l, nm int, m, gm, win int64) *imageMeasure {
	// f makes m cycles over the window, as over its nm input samples.
	return &imageMeasure{fi: newRotor(m, win), gi: newRotor(gm, win), ff: newRotor(m, win), gf: newRotor(gm, win),
		fam: newFamily(l, nm, int(m))}
}

func (im *imageMeasure) add(yi, yf []float64, j0 int) {
	for k, vi := range yi {
		im.fi.add(vi)
		im.gi.add(vi)
		im.ff.add(yf[k])
		im.gf.add(yf[k])
		im.fam.add(j0+k, vi)
		im.y1 += vi
		im.y2 += vi * vi
	}
}

// complex returns the projected component's complex amplitude over n
// samples, in projectC's convention.
func (r *rotor) complex(n int) complex128 {
	k := 2 / float64(n)
	return complex(r.re*k, -r.im*k)
}

// imageRunFrac is bitTrueInterp's image test (run 2) for a cascade that
// begins with a fractional stage: the channel tone y whose image g is the
// quantised cascade's worst (chain.Analysis's WorstAliasHz through
// WorstPath, in the decimation view), moved to whole cycles over the
// window's nm input samples (a multiple of 2 outDen), g with it: every
// image of y lies at +-y + j F_in / outDen, j whole, so g stays one. When
// two paths of the tone meet at g (its +y and -y, at multiples of
// F_in / (2 outDen)) what comes out depends on the tone's phase: the run
// is made twice a quarter cycle apart and the figure is the worst phase's,
// |c1| + |c2|, as aliasRun does, and the response's is the paths' sum.
func imageRunFrac(ctx context.Context, c Cascade, w *Widths, sig Signal, res *BitTrueResult, rng *rand.Rand, noise float64, nmIn, skip, outNum, outDen int, need func(int) int, imageBase float64) error {
	fin := c.InputRate
	q, qspec := cascadeChain(c, w, true)
	var g0 float64
	path := 0
	if sig.AliasHz > 0 {
		g0 = sig.AliasHz
		path = worstPath(q, g0, c.Protected, c.Passband)
		res.WorstAliasResponseDB = posDB(pathGain(q, g0, path) / q.Gain(0))
	} else {
		a, err := chain.AnalyzeContext(ctx, q, qspec)
		if err != nil {
			return fmt.Errorf("fixed: the quantised cascade's worst image: %w", err)
		}
		g0, res.WorstAliasResponseDB, path = a.WorstAliasHz, a.AliasRejectionDB, a.WorstPath
	}
	y0 := 0.0
	for _, p := range chain.PathGains(q, g0, 0) {
		if p.K == path {
			y0 = p.OutputHz
		}
	}
	spacing := fin / float64(outDen)
	// g0 = s y0 + j spacing: the sign and j that fit best.
	jp, jm := (g0-y0)/spacing, (g0+y0)/spacing
	sgn, j := 1, math.Round(jp)
	if math.Abs(jm-math.Round(jm)) < math.Abs(jp-j) {
		sgn, j = -1, math.Round(jm)
	}
	amp := imageAmp(newGainModel(c, w), sig.AliasLevel, imageBase, y0)
	win0 := nmIn * outNum / outDen
	for nm := nmIn; ; nm *= 4 {
		wn := nm * outNum / outDen
		m := wholeCycles(y0, fin, nm, c.protectedEdge())
		f := float64(m) * fin / float64(nm)
		g := float64(sgn)*f + j*spacing
		gm := int64(sgn*m) + int64(j)*int64(nm/outDen)
		res.AliasHz, res.AliasOutHz, res.AliasSamples = g, f, wn
		// The path of g that lands on f, and the paths' sum where two do.
		bin := func(h float64) int { return int(math.Round(h / fin * float64(nm))) }
		best := 0.0
		for _, p := range chain.PathGains(q, g, 0) {
			if bin(p.OutputHz) == m {
				best = math.Max(best, p.Gain)
			}
		}
		res.AliasResponseDB = posDB(best / q.Gain(f))
		run := func(phase float64) (*imageMeasure, error) {
			im := &imageMeasure{fi: newRotor(int64(m), int64(wn)), gi: newRotor(gm, int64(wn)), ff: newRotor(int64(m), int64(wn)), gf: newRotor(gm, int64(wn)),
				fam: newFamilyOut(outNum, wn, m)}
			tone := []toneGen{{f, amp, phase}}
			seen := 0
			_, _, _, err := streamTo(ctx, newChainState(c, w), c, need(skip+wn), skip, wn, signalGen(tone, noise, rng, fin), func(yi, yf []float64, j0 int) {
				seen += len(yi)
				im.add(yi, yf, j0)
			})
			if err != nil {
				return nil, err
			}
			if seen != wn {
				return nil, fmt.Errorf("fixed: bit-true image run measured %d of %d output samples (an internal miscount of the input needed)", seen, wn)
			}
			return im, nil
		}
		phase := 2 * math.Pi * rng.Float64()
		im, err := run(phase)
		if err != nil {
			return err
		}
		edge := (2*gm%int64(wn)+int64(wn))%int64(wn) == 0
		aif, aig := im.fi.amplitude(false, wn), im.gi.amplitude(edge, wn)
		aff, afg := im.ff.amplitude(false, wn), im.gf.amplitude(edge, wn)
		if n, sum := pathsInBin(q, g, f, fin, nm); n > 1 {
			im2, err := run(phase + math.Pi/2)
			if err != nil {
				return err
			}
			aig = worstPhase(im.gi.complex(wn), im2.gi.complex(wn))
			afg = worstPhase(im.gf.complex(wn), im2.gf.complex(wn))
			res.AliasResponseDB = posDB(sum / q.Gain(f))
		}
		res.AliasRejectionDB = posDB(aig / aif)
		res.AliasFloatRunDB = posDB(afg / aff)
		// The noise in g's bin: what is left of the output once its mean
		// and the tone's family are removed, per dimension left.
		fw := float64(wn)
		mean := im.y1 / fw
		left, dims := im.y2-fw*mean*mean-im.fam.energy(), im.fam.dims()+1
		if im.fam.holdsDC() {
			left, dims = left+fw*mean*mean, dims-1 // the family holds the mean
		}
		resid := math.Sqrt(math.Max(0, left) / float64(max(1, wn-dims)))
		res.AliasNoiseDB = posDB(2 * resid / math.Sqrt(fw) / aif)
		// That is the output's average; an image can land in the
		// passband (a path k != 0 of a fractional chain into [0, fa]),
		// where the input's own noise and rounding pass at the
		// passband's gain, far above the average the stopband thins.
		// The bin's noise is then at most the input's in one bin of the
		// window's input samples, relative to the tone: the larger of
		// the two counts (the safe side for AliasValid).
		lsb := math.Ldexp(1, 1-w.InputBits)
		in := math.Sqrt(noise*noise + lsb*lsb/12)
		res.AliasNoiseDB = math.Min(res.AliasNoiseDB, posDB(2*in/math.Sqrt(float64(nm))/amp))
		res.AliasValid = res.AliasNoiseDB >= res.AliasRejectionDB+20 && !leftBand(y0, f, c.protectedEdge())
		if res.AliasValid || res.AliasNoiseDB+12 < res.AliasRejectionDB+20 || skip+4*wn > autoOutputSamples || wn >= 16*win0 {
			break
		}
	}
	res.AliasValid = res.AliasValid && !aliasFlattered(res)
	return nil
}

// ratioText writes num/den, or num alone when den is 1.
func ratioText(num, den int) string {
	if den == 1 {
		return fmt.Sprint(num)
	}
	return fmt.Sprintf("%d/%d", num, den)
}

// imageAmp is the amplitude of the image test's channel tone at f Hz: the
// caller's level (base NaN), or the default one, base, lowered by the
// largest gain from the input to a stage's output at f, images included
// (gainModel.at), when that is above 1, so that no stage saturates on it.
func imageAmp(gm *gainModel, level, base, f float64) float64 {
	if math.IsNaN(base) {
		return math.Pow(10, level/20)
	}
	return math.Pow(10, base/20) / gm.maxGainAt(f)
}
