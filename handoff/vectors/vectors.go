package vectors

import (
	"bytes"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"strconv"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff"
)

// Signals are the stimuli's names, in the order they are generated and
// listed.
var Signals = []string{"impulse", "step_pos", "step_neg", "tone_pass", "tone_alias", "noise"}

// Defaults of Options.
const (
	// DefaultTailOutputs is the number of the chain's output samples a
	// stimulus runs beyond the chain's settling.
	DefaultTailOutputs = 32
	// MaxInputSamples caps every stimulus: six stimuli of this many input
	// samples and their outputs are about 60 MB of text.
	MaxInputSamples = 1 << 20
	// MaxOutputSamples caps every stimulus of an interpolation chain by its
	// output: at most this many output samples (MaxOutputSamples / L input
	// samples, at least one), so that its files, whose largest are the
	// chain's output and the last stage's, stay within the size of a
	// decimation chain's at its cap.
	MaxOutputSamples = 1 << 18
	// DefaultSeed seeds the noise stimulus.
	DefaultSeed = 1
	// ToneDBFS is the level of both tones: -1 dBFS.
	ToneDBFS = -1.0
)

// Options tune Generate. The zero value is the documented default.
type Options struct {
	// AliasHz is the input frequency of the tone_alias stimulus: the
	// quantised chain's worst alias (chain.Analysis.WorstAliasHz of the
	// rounded taps). Zero means the chain's output rate, whose alias lands
	// on 0 Hz.
	//
	// For an interpolation chain it is the rounded chain's worst image g,
	// at the output rate (chain.Analysis.WorstAliasHz of an interpolation
	// chain), and the stimulus is the tone at g folded into [0, F_in/2],
	// F_in the input rate: the channel frequency whose image g is. Zero
	// then gives a 0 Hz tone, whose images lie at multiples of F_in.
	AliasHz float64
	// TailOutputs is how many output samples of the chain each stimulus
	// runs beyond its settling; zero means DefaultTailOutputs.
	TailOutputs int
	// MaxInput caps each stimulus's length in input samples; zero means
	// MaxInputSamples, which is also the largest value taken. An
	// interpolation chain's stimuli are also capped at MaxOutputSamples
	// output samples.
	MaxInput int
	// Seed seeds the noise (PCG, math/rand/v2); zero means DefaultSeed.
	Seed uint64
	// Notation names the chain in the README (e.g. "cic5m1r16 > fir2").
	Notation string
}

// Set is one stimulus and the bit-true model's outputs. Each is one slice
// per data path: one for a real chain, I then Q for a complex one.
type Set struct {
	Name string
	// In is the chain's input, codes of the input word.
	In [][]int64
	// Stages[k] is stage k+1's output, codes of its output word.
	Stages [][][]int64
}

// Vectors are the stimuli of a planned chain and its bit-true outputs.
type Vectors struct {
	Sets []Set
	// InputSamples is every stimulus's length; Settling the length of the
	// chain's impulse response in input samples (the samples after which
	// every delay line holds only stimulus); Settled says InputSamples
	// reaches Settling, which the cap can prevent.
	//
	// For an interpolation chain, OutputSamples is every stimulus's output,
	// InputSamples times the interpolation, and SettlingOutput the impulse
	// response's length in output samples (Settling is that in input
	// samples, rounded up). Both are zero for a decimation chain.
	InputSamples, Settling int
	Settled                bool
	OutputSamples          int
	SettlingOutput         int
	// LatencyInput is the chain's group delay in input samples, the sum of
	// each linear-phase stage's (L - 1) / 2 at its input rate, counted in
	// the chain's input samples; LatencyOutput the same in output samples.
	// An interpolation chain's stages count (L - 1) / 2 at their output
	// rate.
	LatencyInput, LatencyOutput float64

	c    fixed.Cascade
	w    *fixed.Widths
	o    Options
	freq [2]float64 // the tones' frequencies, Hz
}

// Generate runs the stimuli (see the package documentation) through the
// bit-true integer model of c planned as w (fixed.Model) and returns them
// with every stage's output.
func Generate(c fixed.Cascade, w *fixed.Widths, o Options) (*Vectors, error) {
	if c.Fractional() {
		return nil, fmt.Errorf("vectors: the chain has a fractional stage (polyphase or farrow); the hand-off is written for chains of integer stages only")
	}
	if w == nil {
		return nil, fmt.Errorf("vectors: no widths: plan the cascade first (fixed.Plan)")
	}
	if len(c.Stages) == 0 || len(w.Stages) != len(c.Stages) {
		return nil, fmt.Errorf("vectors: a chain of %d stages planned with widths of %d", len(c.Stages), len(w.Stages))
	}
	if c.Interpolate {
		l := 1
		for i, st := range c.Stages {
			if st.R < 1 || st.R > MaxOutputSamples || l > MaxOutputSamples/st.R {
				return nil, fmt.Errorf("vectors: stage %d interpolates by %d, making the chain's interpolation over %d: one input sample would give more output samples than a stimulus holds (MaxOutputSamples)", i+1, st.R, MaxOutputSamples)
			}
			l *= st.R
		}
	}
	if o.TailOutputs <= 0 {
		o.TailOutputs = DefaultTailOutputs
	}
	if o.MaxInput <= 0 || o.MaxInput > MaxInputSamples {
		o.MaxInput = MaxInputSamples
	}
	if o.Seed == 0 {
		o.Seed = DefaultSeed
	}
	v := &Vectors{c: c, w: w, o: o, Settling: 1}
	if c.Interpolate {
		v.lengthInterp()
	} else {
		v.length()
	}
	paths := 1
	if c.Complex {
		paths = 2
	}
	for _, name := range Signals {
		set := Set{Name: name, In: make([][]int64, paths), Stages: make([][][]int64, len(c.Stages))}
		for p := range paths {
			set.In[p] = v.stimulus(name, p)
		}
		for k := range set.Stages {
			set.Stages[k] = make([][]int64, paths)
		}
		for p := range paths {
			m, err := fixed.NewModel(c, w)
			if err != nil {
				return nil, fmt.Errorf("vectors: %w", err)
			}
			out, err := m.Run(set.In[p])
			if err != nil {
				return nil, fmt.Errorf("vectors: stimulus %s: %w", name, err)
			}
			for k := range out {
				set.Stages[k][p] = out[k]
			}
		}
		v.Sets = append(v.Sets, set)
	}
	return v, nil
}

// length sets a decimation chain's settling, latency, stimulus length and
// tone frequencies.
func (v *Vectors) length() {
	c, o := v.c, v.o
	d := 1
	for _, st := range c.Stages {
		l := st.Length()
		v.Settling += (l - 1) * d
		v.LatencyInput += float64(l-1) / 2 * float64(d)
		if d > math.MaxInt32/max(st.R, 1) {
			d = math.MaxInt32
		} else {
			d *= st.R
		}
	}
	v.LatencyOutput = v.LatencyInput / float64(d)
	n := v.Settling + o.TailOutputs*d
	if n < 0 || n > o.MaxInput {
		n = o.MaxInput
	} else {
		n = (n + d - 1) / d * d
		if n > o.MaxInput {
			n = o.MaxInput
		}
	}
	v.InputSamples, v.Settled = n, n >= v.Settling
	outRate := c.InputRate / float64(d)
	v.freq = [2]float64{0.4 * c.Passband, o.AliasHz}
	if v.freq[1] == 0 {
		v.freq[1] = outRate
	}
}

// lengthInterp sets an interpolation chain's settling, latency, stimulus
// length and tone frequencies. Stage i's impulse response, Length() taps
// at its output rate, spans Length() - 1 of its output samples, each
// L / U_i of the chain's (U_i the interpolation up to and with stage i),
// so the chain's spans 1 + sum_i (Length_i - 1) L / U_i output samples.
// Generate has checked that L is at most MaxOutputSamples.
func (v *Vectors) lengthInterp() {
	c, o := v.c, v.o
	l := c.Ratio()
	u := 1
	span := 1.0 // the impulse response in output samples
	lat := 0.0  // the group delay in output samples
	for _, st := range c.Stages {
		u *= st.R
		per := float64(l / u) // the chain's output samples per stage output sample
		span += float64(st.Length()-1) * per
		lat += float64(st.Length()-1) / 2 * per
	}
	v.LatencyOutput = lat
	v.LatencyInput = lat / float64(l)
	v.SettlingOutput = int(min(span, math.MaxInt32))
	v.Settling = int(min(math.Ceil(span/float64(l)), math.MaxInt32))
	limit := min(o.MaxInput, MaxOutputSamples/l)
	n := min(v.Settling+(o.TailOutputs+l-1)/l, limit)
	v.InputSamples, v.Settled = n, n >= v.Settling
	v.OutputSamples = n * l
	// The image tone: g folded into [0, F_in/2].
	f := math.Mod(math.Abs(o.AliasHz), c.InputRate)
	if f > c.InputRate/2 {
		f = c.InputRate - f
	}
	v.freq = [2]float64{0.4 * c.Passband, f}
}

// stimulus returns path p's codes of the named stimulus (p = 0 for a real
// chain and for I, 1 for Q).
func (v *Vectors) stimulus(name string, p int) []int64 {
	b := v.w.InputBits
	hi, lo := int64(1)<<(b-1)-1, -(int64(1) << (b - 1))
	x := make([]int64, v.InputSamples)
	fill := func(c int64) {
		for i := range x {
			x[i] = c
		}
	}
	switch name {
	case "impulse":
		// Q takes the most negative code, so both signs are driven.
		x[0] = hi
		if p == 1 {
			x[0] = lo
		}
	case "step_pos":
		fill([]int64{hi, lo}[p])
	case "step_neg":
		fill([]int64{lo, hi}[p])
	case "tone_pass", "tone_alias":
		f := v.freq[0]
		if name == "tone_alias" {
			f = v.freq[1]
		}
		a := math.Pow(10, ToneDBFS/20)
		w := 2 * math.Pi * f / v.c.InputRate
		y := make([]float64, len(x))
		for i := range y {
			// I is the cosine, Q the sine: a complex tone at +f.
			ph := w * float64(i)
			if p == 0 {
				y[i] = a * math.Cos(ph)
			} else {
				y[i] = a * math.Sin(ph)
			}
		}
		fixed.ADC(x, y, b)
	case "noise":
		rng := rand.New(rand.NewPCG(v.o.Seed, uint64(p)))
		span := uint64(1) << b
		for i := range x {
			x[i] = lo + int64(rng.Uint64N(span))
		}
	}
	return x
}

// Files returns the vector files under "vectors/": README.txt, then for
// every stimulus NAME.in.txt (the chain's input), NAME.stageK.txt (stage
// K's output, K from 1) and NAME.out.txt (the chain's output, the last
// stage's). One sample per line: one integer for a real chain, "I Q" for a
// complex one.
func (v *Vectors) Files() []handoff.File {
	files := []handoff.File{{Name: "vectors/README.txt", Data: v.readme()}}
	for _, s := range v.Sets {
		files = append(files, handoff.File{Name: "vectors/" + s.Name + ".in.txt", Data: lines(s.In)})
		var last []byte
		for k, out := range s.Stages {
			last = lines(out)
			files = append(files, handoff.File{Name: fmt.Sprintf("vectors/%s.stage%d.txt", s.Name, k+1), Data: last})
		}
		// The chain's output is the last stage's: the same bytes, shared.
		files = append(files, handoff.File{Name: "vectors/" + s.Name + ".out.txt", Data: last})
	}
	return files
}

// lines writes one sample per line, the paths' codes separated by a space.
func lines(paths [][]int64) []byte {
	// Room for codes of up to 7 digits and a sign, so that the buffer
	// seldom grows.
	b := make([]byte, 0, len(paths[0])*len(paths)*9)
	for i := range paths[0] {
		for p := range paths {
			if p > 0 {
				b = append(b, ' ')
			}
			b = strconv.AppendInt(b, paths[p][i], 10)
		}
		b = append(b, '\n')
	}
	return b
}

func (v *Vectors) readme() []byte {
	if v.c.Interpolate {
		return v.readmeInterp()
	}
	var b bytes.Buffer
	c, w := v.c, v.w
	p := func(format string, args ...any) { fmt.Fprintf(&b, format+"\n", args...) }
	p("Test vectors of a stepdown plan")
	p("===============================")
	p("")
	if v.o.Notation != "" {
		p("Chain: %s", v.o.Notation)
	}
	p("Input rate: %.10g Hz; %d stages; %s data.", c.InputRate, len(c.Stages), map[bool]string{false: "real", true: "complex (I/Q)"}[c.Complex])
	p("")
	readmeCommon(p)
	p("Files, for each stimulus NAME in this order: %v", Signals)
	p("  NAME.in.txt       the chain's input, %d samples, %d-bit codes", v.InputSamples, w.InputBits)
	for k, sw := range w.Stages {
		p("  NAME.stage%d.txt   stage %d's output, %d-bit codes", k+1, k+1, sw.OutputBits)
	}
	p("  NAME.out.txt      the chain's output (the last stage's), %d-bit codes", w.Stages[len(w.Stages)-1].OutputBits)
	p("Stage k's input is stage k-1's output (the chain's input for stage 1).")
	p("")
	p("Stages")
	p("------")
	for k, st := range c.Stages {
		sw := w.Stages[k]
		switch {
		case st.CIC:
			pr := sw.Pruning
			p("%d. CIC, order %d, delay %d, decimation %d: %d-bit input, registers %v bits", k+1, st.N, st.M, st.R, sw.InputBits, pr.RegisterBits)
			p("   (LSBs dropped, floor, at the input of each register, then at the output: %v);", pr.Dropped)
			p("   output the top %d bits, gain %.9g.", sw.OutputBits, sw.Gain)
		default:
			kind := "FIR"
			if st.HalfBand {
				kind = "half-band"
			}
			p("%d. %s, %d taps, decimation %d: %d-bit input, %d-bit coefficients (tap = code / 2^%d),", k+1, kind, len(st.Taps), st.R, sw.InputBits, sw.Coefficients.Bits, sw.Coefficients.Frac)
			p("   %d-bit accumulator, exact; output rounded half up after a shift of %d bits and", sw.AccumulatorBits, sw.OutputShift)
			p("   saturated to %d bits; gain %.9g.", sw.OutputBits, sw.Gain)
		}
	}
	p("Decimating stages keep input samples 0, R, 2R, ... of their input: output m")
	p("of a stage of factor R is computed when its input sample mR arrives.")
	p("Chain DC gain (input full scale to output full scale): %.9g.", w.DCGain)
	p("")
	p("Timing")
	p("------")
	p("Impulse response: %d input samples long (the chain's settling).", v.Settling)
	if v.Settled {
		p("Every stimulus runs %d input samples: past the settling, plus output samples", v.InputSamples)
		p("beyond it.")
	} else {
		p("Every stimulus runs %d input samples, the cap: it does NOT reach the chain's", v.InputSamples)
		p("settling; the stage files still prove every stage that settles within it.")
	}
	p("Group delay: %.6g input samples, %.6g output samples (linear phase).", v.LatencyInput, v.LatencyOutput)
	p("")
	p("Stimuli")
	p("-------")
	p("impulse     one full-scale sample (largest positive code; Q: most negative), then zeros")
	p("step_pos    the largest positive code throughout (Q: the most negative)")
	p("step_neg    the most negative code throughout (Q: the largest positive)")
	p("tone_pass   a %.3g dBFS tone at %.10g Hz, 0.4 times the passband edge", ToneDBFS, v.freq[0])
	if v.o.AliasHz != 0 {
		p("tone_alias  a %.3g dBFS tone at %.10g Hz, the rounded chain's worst alias", ToneDBFS, v.freq[1])
	} else {
		p("tone_alias  a %.3g dBFS tone at %.10g Hz, the output rate (it aliases to 0 Hz)", ToneDBFS, v.freq[1])
	}
	p("            (I: cosine, Q: sine; codes rounded to nearest, halves away from zero)")
	p("noise       uniform random codes over the whole input word (PCG seed %d, stream", v.o.Seed)
	p("            0 for I, 1 for Q)")
	return b.Bytes()
}

// readmeInterp is readme for an interpolation chain.
func (v *Vectors) readmeInterp() []byte {
	var b bytes.Buffer
	c, w := v.c, v.w
	p := func(format string, args ...any) { fmt.Fprintf(&b, format+"\n", args...) }
	rates := c.Rates()
	l := c.Ratio()
	p("Test vectors of a stepdown plan")
	p("===============================")
	p("")
	if v.o.Notation != "" {
		p("Chain: %s", v.o.Notation)
	}
	p("Interpolation chain: input rate %.10g Hz, output rate %.10g Hz", c.InputRate, rates[len(rates)-1])
	p("(interpolation %d); %d stages; %s data.", l, len(c.Stages), map[bool]string{false: "real", true: "complex (I/Q)"}[c.Complex])
	p("")
	readmeCommon(p)
	p("Files, for each stimulus NAME in this order: %v", Signals)
	p("  NAME.in.txt       the chain's input, %d samples at %.10g Hz, %d-bit codes", v.InputSamples, c.InputRate, w.InputBits)
	u := 1
	for k, sw := range w.Stages {
		u *= c.Stages[k].R
		p("  NAME.stage%d.txt   stage %d's output, %d samples at %.10g Hz, %d-bit codes", k+1, k+1, v.InputSamples*u, rates[k+1], sw.OutputBits)
	}
	p("  NAME.out.txt      the chain's output (the last stage's), %d samples, %d-bit codes", v.OutputSamples, w.Stages[len(w.Stages)-1].OutputBits)
	p("Stage k's input is stage k-1's output (the chain's input for stage 1). Each")
	p("file holds its stage's output at its own rate: a stage of factor L gives L")
	p("output samples per input sample.")
	p("")
	p("Stages")
	p("------")
	for k, st := range c.Stages {
		sw := w.Stages[k]
		switch {
		case st.CIC && sw.CICInterp != nil:
			ci := sw.CICInterp
			p("%d. CIC interpolator, order %d, delay %d, interpolation %d", k+1, ci.N, ci.M, ci.R)
			p("   (%.10g Hz to %.10g Hz): %d-bit input;", rates[k], rates[k+1], sw.InputBits)
			p("   %d combs at the input rate, y = x - x[%d back], registers %v bits;", ci.N, ci.M, ci.RegisterBits[:ci.N])
			p("   each comb output, then %s (zero stuffing);", zeros(ci.R-1))
			p("   %d integrators at the output rate, registers %v bits,", ci.N, ci.RegisterBits[ci.N:])
			p("   each taking its input sign-extended. Every register is full width")
			p("   (unpruned, nothing truncated inside) and wraps in two's complement at its")
			p("   width. Output: the top %d bits of the %d-bit last integrator, truncated", sw.OutputBits, ci.FullBits())
			p("   (floor, %d LSBs dropped); gain %.9g.", sw.OutputShift, sw.Gain)
		default:
			kind := "FIR"
			if st.HalfBand {
				kind = "half-band"
			}
			r := st.R
			p("%d. %s interpolator, %d taps, interpolation %d", k+1, kind, len(sw.Coefficients.Ints), r)
			p("   (%.10g Hz to %.10g Hz): %d-bit input, %d-bit coefficients", rates[k], rates[k+1], sw.InputBits, sw.Coefficients.Bits)
			p("   (tap = code / 2^%d). The input is zero-stuffed (each sample, then %s)", sw.Coefficients.Frac, zeros(r-1))
			p("   and filtered by the taps, as %d polyphase phases: output nL + p is", r)
			p("   sum_k h[p + Lk] x[n - k] (L = %d, inputs before the first zero), exact in", r)
			p("   a %d-bit accumulator (the widest phase's). Output: rounded half up after", sw.AccumulatorBits)
			p("   a shift of %d bits, the decimating FIR's less floor(log2 L) = %d (each", sw.OutputShift, log2Floor(r))
			p("   phase's DC gain is about 1/L, so the sum is taken times 2^%d), and", log2Floor(r))
			p("   saturated to %d bits; gain %.9g.", sw.OutputBits, sw.Gain)
			if ph := hbCentre(sw.Coefficients, r); st.HalfBand && ph >= 0 {
				p("   Phase %d holds only the centre tap, 2^%d (one half): it passes the input with", ph, sw.Coefficients.Frac-1)
				p("   gain 1, a shift (rounded half up when the output word is the narrower).")
			}
		}
	}
	p("Interpolating stages give L output samples per input sample, the first with")
	p("the input and no delay: outputs nL .. nL + L - 1 of a stage of factor L are")
	p("its phases 0 .. L - 1 for input sample n.")
	p("Chain DC gain (input full scale to output full scale): %.9g.", w.DCGain)
	p("")
	p("Timing")
	p("------")
	p("Impulse response: %d output samples long (%d input samples, the chain's", v.SettlingOutput, v.Settling)
	p("settling).")
	if v.Settled {
		p("Every stimulus runs %d input samples (%d output samples): past the settling,", v.InputSamples, v.OutputSamples)
		p("plus output samples beyond it.")
	} else {
		p("Every stimulus runs %d input samples (%d output samples), the cap: it does", v.InputSamples, v.OutputSamples)
		p("NOT reach the chain's settling; the stage files still prove every stage that")
		p("settles within it.")
	}
	p("Stimuli are capped at %d input samples and %d output samples.", v.o.MaxInput, MaxOutputSamples)
	p("Group delay: %.6g input samples, %.6g output samples (linear phase).", v.LatencyInput, v.LatencyOutput)
	p("")
	p("Stimuli")
	p("-------")
	p("impulse     one full-scale sample (largest positive code; Q: most negative), then zeros")
	p("step_pos    the largest positive code throughout (Q: the most negative)")
	p("step_neg    the most negative code throughout (Q: the largest positive)")
	p("tone_pass   a %.3g dBFS tone at %.10g Hz, 0.4 times the passband edge", ToneDBFS, v.freq[0])
	if v.o.AliasHz != 0 {
		p("tone_alias  a %.3g dBFS tone at %.10g Hz, whose image at %.10g Hz is the", ToneDBFS, v.freq[1], math.Abs(v.o.AliasHz))
		p("            rounded chain's worst image")
	} else {
		p("tone_alias  a %.3g dBFS tone at %.10g Hz (no worst image given; its images lie at", ToneDBFS, v.freq[1])
		p("            multiples of the input rate)")
	}
	p("            (I: cosine, Q: sine; codes rounded to nearest, halves away from zero)")
	p("noise       uniform random codes over the whole input word (PCG seed %d, stream", v.o.Seed)
	p("            0 for I, 1 for Q)")
	return b.Bytes()
}

// log2Floor returns floor(log2 l) for l >= 1.
func log2Floor(l int) int { return bits.Len(uint(l)) - 1 }

// hbCentre returns the polyphase phase of factor l whose only non-zero tap
// is 2^(Frac-1), one half (a half-band's centre phase), or -1.
func hbCentre(cf fixed.Coefficients, l int) int {
	if cf.Frac < 1 || cf.Frac > 63 {
		return -1
	}
	half := int64(1) << (cf.Frac - 1)
	for p := 0; p < l; p++ {
		nz, centre := 0, false
		for k := p; k < len(cf.Ints); k += l {
			if cf.Ints[k] != 0 {
				nz++
				centre = cf.Ints[k] == half
			}
		}
		if nz == 1 && centre {
			return p
		}
	}
	return -1
}

// zeros returns "n zeros", "1 zero" or "no zeros".
func zeros(n int) string {
	switch n {
	case 0:
		return "no zeros"
	case 1:
		return "1 zero"
	}
	return fmt.Sprintf("%d zeros", n)
}

// readmeCommon writes the README's paragraphs that every chain's share:
// the planning caveat and the file format.
func readmeCommon(p func(format string, args ...any)) {
	p("These are planning data for hardware, from stepdown's bit-true model of the")
	p("chain (package chain/fixed). Prove your RTL against them, then rely on your")
	p("own bit-true simulation of the RTL and your team's sign-off before silicon")
	p("or FPGA commitment.")
	p("")
	p("Format")
	p("------")
	p("One sample per line, a decimal two's-complement integer code; complex")
	p("chains have two columns, I then Q, separated by one space. A b-bit code w")
	p("stands for w / 2^(b-1) of full scale. Every stimulus starts from reset")
	p("(all registers and delay lines zero).")
	p("")
}
