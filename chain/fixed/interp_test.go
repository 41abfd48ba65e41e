package fixed

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// designedInterp designs an invented interpolation chain from fin by the
// notation's factors (signal order, the channel first).
func designedInterp(t *testing.T, notation string, fin, fp float64, in, out int) (chain.Spec, *chain.Chain) {
	t.Helper()
	plan, err := chain.Interpolate.ParseNotation(notation)
	if err != nil {
		t.Fatal(err)
	}
	l := 1
	for _, p := range plan {
		l *= p.Factor
	}
	spec := chain.Spec{InputRate: fin, OutputRate: fin * float64(l), Passband: fp, RippleDB: 0.1, RejectionDB: 80, InputBits: in, OutputBits: out}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatalf("%s: %v", notation, err)
	}
	return spec, c
}

// FromChain lists an interpolation chain's stages in signal order from
// the channel rate, each interpolating; the CIC's words and registers are
// the chain package's (chain.NewCICInterpolator: its input the words
// between stages unless it comes first); QuantisedChain puts each stage's
// coefficients back on its own chain stage; PlanChain's "auto" widths meet
// the spec on the quantised chain (chain.Analyze).
func TestFromChainInterpolation(t *testing.T) {
	for _, tc := range []struct {
		notation string
		fp       float64
	}{{"fir2 > hb > cic4m1r16", 200e3}, {"cic3m1r8 > fir2", 30e3}, {"hb > fir3 > hb", 150e3}} {
		spec, c := designedInterp(t, tc.notation, 1e6, tc.fp, 14, 18)
		cas, words, err := FromChain(spec, c)
		if err != nil {
			t.Fatal(err)
		}
		if !cas.Interpolate || cas.InputRate != 1e6 || cas.ChannelRate() != 1e6 || words.DataBits != 18 {
			t.Fatalf("%s: cascade %+v, words %+v", tc.notation, cas, words)
		}
		order := c.SignalOrder()
		rates := cas.Rates()
		for k, st := range cas.Stages {
			i := order[k]
			if !st.Interpolate || st.R != c.Stages[i].Factor() || st.CIC != (c.Stages[i].Kind() == chain.CIC) {
				t.Fatalf("%s: cascade stage %d %+v is not chain stage %d", tc.notation, k+1, st, i+1)
			}
			in, out := c.SignalRates(i)
			if rates[k] != in || rates[k+1] != out {
				t.Errorf("%s stage %d: rates %g -> %g, chain's %g -> %g", tc.notation, k+1, rates[k], rates[k+1], in, out)
			}
		}
		ws, a, err := PlanChain(spec, c, Settings{UnityGain: true})
		if err != nil {
			t.Fatal(err)
		}
		if !a.Meets(spec) {
			t.Errorf("%s: the quantised chain misses the spec: %+v", tc.notation, a)
		}
		q := QuantisedChain(c, ws)
		for k, st := range cas.Stages {
			sw := ws.Stages[k]
			if sw.InputRate != rates[k] || sw.OutputRate() != rates[k+1] || !sw.Interpolate {
				t.Errorf("%s stage %d: widths' rates %g -> %g", tc.notation, k+1, sw.InputRate, sw.OutputRate())
			}
			if st.CIC {
				cs := c.Stages[order[k]].(chain.CICStage)
				if !reflect.DeepEqual(cs.RegisterBits, sw.CICInterp.RegisterBits) || cs.OutputBits != sw.OutputBits || cs.InputBits != sw.InputBits {
					t.Errorf("%s stage %d: registers %v (%d -> %d bits), chain's %v (%d -> %d)", tc.notation, k+1, sw.CICInterp.RegisterBits, sw.InputBits, sw.OutputBits, cs.RegisterBits, cs.InputBits, cs.OutputBits)
				}
				continue
			}
			got := q.Stages[order[k]].(chain.FIRStage).Taps
			if !reflect.DeepEqual(got, sw.Coefficients.Float()) {
				t.Errorf("%s: QuantisedChain put other taps on stage %d", tc.notation, k+1)
			}
		}
		// The correction goes into the FIR that corrects the CIC droop,
		// chain.Compensator's, when the chain has one.
		if comp := chain.Compensator(c.Plan); comp >= 0 && order[ws.CorrectedStage] != comp {
			t.Errorf("%s: UnityGain corrected cascade stage %d (chain stage %d), the compensator is chain stage %d", tc.notation, ws.CorrectedStage+1, order[ws.CorrectedStage]+1, comp+1)
		}
		if math.Abs(ws.DCGain-1) > 1e-3 {
			t.Errorf("%s: UnityGain DC gain %g", tc.notation, ws.DCGain)
		}
	}
}

// Each stage's DC gain is the contract's: an interpolating FIR's
// 2^floor(log2 L) sum(h_int) / 2^Frac / L, a CIC interpolator's (RM)^N / R
// / 2^(W_2N - Bin); and the model passes a constant input at that gain
// (the settled output, its mean over the R phases, over the input, in
// full-scale units, within the rounding of the output word).
func TestInterpolationDCGain(t *testing.T) {
	spec, c := designedInterp(t, "fir3 > hb > cic3m1r10 > fir5", 1e6, 100e3, 16, 24)
	// A FIR after a CIC is unusual, but every rule holds for it.
	cas, words, err := FromChain(spec, c)
	if err != nil {
		t.Fatal(err)
	}
	w, err := Plan(cas, words, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for k, st := range cas.Stages {
		sw := w.Stages[k]
		var want float64
		if st.CIC {
			p := sw.CICInterp
			want = math.Pow(float64(st.R*st.M), float64(st.N)) / float64(st.R) / math.Ldexp(1, p.FullBits()-sw.InputBits)
		} else {
			var s int64
			for _, v := range sw.Coefficients.Ints {
				s += v
			}
			fl := 0
			for 1<<(fl+1) <= st.R {
				fl++
			}
			want = math.Ldexp(float64(s), fl-sw.Coefficients.Frac) / float64(st.R)
		}
		if math.Abs(sw.Gain-want) > 1e-12*want {
			t.Errorf("stage %d: gain %.15g, the contract's %.15g", k+1, sw.Gain, want)
		}
		m, err := NewModel(Cascade{InputRate: 1, Interpolate: true, Passband: 0.1, Stages: []Stage{st}}, &Widths{InputBits: sw.InputBits, OutputBits: sw.OutputBits, Stages: []StageWidths{sw}})
		if err != nil {
			t.Fatal(err)
		}
		x := make([]int64, st.Length()/st.R+4)
		in := int64(1)<<(sw.InputBits-1) - 1 - 12345
		for i := range x {
			x[i] = in
		}
		out, _ := m.Run(x)
		// Each phase has a DC gain of its own (the sum of its taps): the
		// stage's is their mean, over the last R outputs.
		var y float64
		for _, v := range out[0][len(out[0])-st.R:] {
			y += float64(v) / float64(st.R)
		}
		got := math.Ldexp(y, 1-sw.OutputBits) / math.Ldexp(float64(in), 1-sw.InputBits)
		if math.Abs(got-want) > math.Ldexp(2, 1-sw.OutputBits) {
			t.Errorf("stage %d: a constant input passes at %.9f, the DC gain is %.9f", k+1, got, want)
		}
	}
	if prod := w.Stages[0].Gain * w.Stages[1].Gain * w.Stages[2].Gain * w.Stages[3].Gain; math.Abs(w.DCGain-prod) > 1e-15 {
		t.Errorf("DCGain %g, the stages' product %g", w.DCGain, prod)
	}
}

// The bit-true run of interpolation chains with wide internal words (28
// bits between stages) on a 20-bit input and a 16-bit output: the output
// word's rounding dominates, so the SNR is the common-practice figure for
// a sine of the output's amplitude (the -1 dBFS tone times the chain's DC
// gain) over that word's quantisation noise, LSB^2/12: 10 log10((A G)^2 / 2
// / (2^-30 / 12)), within 0.5 dB (measured within 0.05 dB). A CIC at the
// output truncates: the offset is -0.5 output LSB (uniform error in [-1,
// 0)), within 0.1. The image rejection measured bit-true, 20 log10(A(f) /
// A(g)) by projection, agrees with the quantised response's H(f)/H(g)
// within 0.5 dB while the noise in g's bin is 20 dB below it (at most 0.9
// dB then), and that with chain.Analyze's image rejection within 0.5 dB
// (g moves to whole cycles of the window, f lies in the passband).
func TestInterpolationBitTrueSNRAndImages(t *testing.T) {
	for _, tc := range []struct {
		notation string
		fp       float64
		cic      bool
	}{
		{"fir2 > hb > cic4m1r16", 200e3, true},
		{"fir4 > hb", 200e3, false},
		{"hb > fir3", 150e3, false},
		{"fir2 > cic5m1r1024", 200e3, true}, // 68-bit registers: the 128-bit model
		{"fir3 > hb > cic3m1r10", 150e3, true},
	} {
		spec, c := designedInterp(t, tc.notation, 1e6, tc.fp, 20, 16)
		cas, words, err := FromChain(spec, c)
		if err != nil {
			t.Fatal(err)
		}
		words.DataBits = 28
		w, err := Plan(cas, words, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		aq, err := chain.Analyze(QuantisedChain(c, w), spec)
		if err != nil {
			t.Fatal(err)
		}
		bt, err := BitTrue(cas, w, Signal{})
		if err != nil {
			t.Fatal(err)
		}
		a := math.Pow(10, bt.Tones[0].Level/20) * w.DCGain
		pred := 10 * math.Log10(a*a/2/(math.Ldexp(1, -30)/12))
		t.Logf("%s: SNR %.2f dB (predicted %.2f), ENOB %.2f, offset %.3f LSB; image at %.0f Hz of %.0f Hz: bit-true %.2f dB, response %.2f, chain.Analyze %.2f, noise %.1f dB down; %d output samples",
			tc.notation, bt.SNRDB, pred, bt.ENOB, bt.OutputOffset, bt.AliasHz, bt.AliasOutHz, bt.AliasRejectionDB, bt.AliasResponseDB, aq.AliasRejectionDB, bt.AliasNoiseDB, bt.Samples)
		if !bt.SNRValid || math.Abs(bt.SNRDB-pred) > 0.5 {
			t.Errorf("%s: SNR %.2f dB (valid %v, %s), predicted %.2f", tc.notation, bt.SNRDB, bt.SNRValid, bt.SNRNote, pred)
		}
		if wantOff := map[bool]float64{true: -0.5, false: 0}[tc.cic]; math.Abs(bt.OutputOffset-wantOff) > 0.1 {
			t.Errorf("%s: DC offset %.3f LSB, want %.1f", tc.notation, bt.OutputOffset, wantOff)
		}
		// g is an image of f: k F_in +- f.
		if k := (bt.AliasHz - bt.AliasOutHz) / 1e6; math.Abs(k-math.Round(k)) > 1e-9 {
			if k := (bt.AliasHz + bt.AliasOutHz) / 1e6; math.Abs(k-math.Round(k)) > 1e-9 {
				t.Errorf("%s: %g Hz is no image of %g Hz", tc.notation, bt.AliasHz, bt.AliasOutHz)
			}
		}
		if !bt.AliasValid || math.Abs(bt.AliasRejectionDB-bt.AliasResponseDB) > 0.5 {
			t.Errorf("%s: bit-true image rejection %.2f dB (valid %v), response %.2f dB", tc.notation, bt.AliasRejectionDB, bt.AliasValid, bt.AliasResponseDB)
		}
		// A real chain's worst image may be a DC input's, at twice its
		// path (chain, dcImagesDoubled): the run's tone, a bin above
		// 0 Hz, then meets the path alone, 20 log10 2 dB lower.
		want := aq.AliasRejectionDB
		if k := aq.WorstAliasHz / spec.InputRate; !spec.Complex && math.Abs(k-math.Round(k)) < 1e-9 {
			want += 20 * math.Log10(2)
		}
		if math.Abs(bt.AliasResponseDB-want) > 0.5 || math.Abs(bt.WorstAliasResponseDB-aq.AliasRejectionDB) > 1e-9 {
			t.Errorf("%s: image rejection %.2f dB at the run's g (worst %.4f), chain.Analyze %.4f", tc.notation, bt.AliasResponseDB, bt.WorstAliasResponseDB, aq.AliasRejectionDB)
		}
	}
}

// With UnityGain on a chain whose CIC loses gain after the corrected FIR,
// that FIR's output carries a gain above 1: the default test tone is
// lowered by it, so that no stage saturates and the SNR is valid; a
// louder tone of the caller's saturates the stage, and the SNR note says
// which stage.
func TestInterpolationHeadroom(t *testing.T) {
	spec, c := designedInterp(t, "fir3 > hb > cic3m1r10", 1e6, 150e3, 14, 20)
	cas, words, err := FromChain(spec, c)
	if err != nil {
		t.Fatal(err)
	}
	w, err := Plan(cas, words, Settings{UnityGain: true})
	if err != nil {
		t.Fatal(err)
	}
	g := w.Stages[0].Gain * w.Stages[1].Gain
	if w.CorrectedStage != 0 || !(g > 1.2) {
		t.Fatalf("correction at stage %d, gain to stage 2 %g: the test needs a gain above 1 before the CIC", w.CorrectedStage+1, g)
	}
	bt, err := BitTrue(cas, w, Signal{})
	if err != nil {
		t.Fatal(err)
	}
	// Lowered by the largest gain to a stage's output at the tone's own
	// frequency, its images included (gainModel.at), which is at least the
	// gain at 0 Hz.
	gmax := g
	for i := range w.Stages {
		gmax = math.Max(gmax, newGainModel(cas, w).at(i, 0.4*cas.Passband))
	}
	if want := -1 - 20*math.Log10(gmax); math.Abs(bt.Tones[0].Level-want) > 1e-9 || bt.Tones[0].Level > -1-20*math.Log10(g) || !bt.SNRValid || bt.SNRDB < 80 {
		t.Errorf("default tone at %.3f dBFS (want %.3f), SNR %.2f dB valid %v (%s)", bt.Tones[0].Level, want, bt.SNRDB, bt.SNRValid, bt.SNRNote)
	}
	bt, err = BitTrue(cas, w, Signal{Tones: []Tone{{Freq: 20e3, Level: -0.5}}})
	if err != nil {
		t.Fatal(err)
	}
	if bt.SNRValid || !strings.Contains(bt.SNRNote, "stage 1 saturated") {
		t.Errorf("a -0.5 dBFS tone through a gain of %.3f: SNR %.2f dB, valid %v, note %q", g, bt.SNRDB, bt.SNRValid, bt.SNRNote)
	}
}

// Evaluate and Report on an interpolation chain: the CIC's registers in
// signal order with nothing dropped but the output's truncation, the
// image figures in the alias fields, and the run deterministic.
func TestEvaluateInterpolation(t *testing.T) {
	spec, c := designedInterp(t, "fir2 > hb > cic4m1r16", 1e6, 200e3, 16, 18)
	res, err := Evaluate(spec, c, Settings{NativeA: 18, NativeB: 27, Clock: 200e6}, Signal{})
	if err != nil {
		t.Fatal(err)
	}
	if res.BitTrueErr != nil {
		t.Fatal(res.BitTrueErr)
	}
	again, _ := Evaluate(spec, c, Settings{NativeA: 18, NativeB: 27, Clock: 200e6}, Signal{})
	if !reflect.DeepEqual(res.BitTrue, again.BitTrue) {
		t.Error("two runs differ")
	}
	rep := res.Report(true)
	cic := rep.Stages[2]
	p := res.Widths.Stages[2].CICInterp
	if !reflect.DeepEqual(cic.RegisterBits, p.RegisterBits) || len(cic.DroppedBits) != 9 || cic.DroppedBits[8] != p.FullBits()-p.OutputBits || cic.DroppedBits[0] != 0 {
		t.Errorf("CIC report: registers %v dropped %v; plan %v", cic.RegisterBits, cic.DroppedBits, p.RegisterBits)
	}
	if rep.BitTrueReport == nil || rep.BitTrueAliasHz != res.BitTrue.AliasHz || rep.BitTrueAliasRejectionDB != res.BitTrue.AliasRejectionDB ||
		rep.QuantisedRejectionDB != res.Quantised.AliasRejectionDB || !rep.BitTrueAliasValid || !rep.BitTrueSNRValid {
		t.Errorf("report %+v", rep)
	}
	// The FIRs' multiplies are the transpose's, per input sample, on
	// data words without a pre-adder.
	for k, sw := range res.Widths.Stages[:2] {
		if sw.MultiplierA != sw.InputBits || sw.HardwareMultipliers < 1 {
			t.Errorf("stage %d: multiplier %d x %d, %d at the clock", k+1, sw.MultiplierA, sw.MultiplierB, sw.HardwareMultipliers)
		}
	}
}

// The interpolation cascade's checks: one direction per cascade, no
// non-recursive CIC interpolator, the spec's direction, the input word,
// RunCodes' output bound, a cancelled run.
func TestInterpolationErrors(t *testing.T) {
	spec, c := designedInterp(t, "fir2 > cic3m1r8", 1e6, 50e3, 12, 16)
	cas, words, err := FromChain(spec, c)
	if err != nil {
		t.Fatal(err)
	}
	w, err := Plan(cas, words, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	mixed := cas
	mixed.Stages = append([]Stage(nil), cas.Stages...)
	mixed.Stages[0].Interpolate = false
	if _, err := Plan(mixed, words, Settings{}); err == nil || !strings.Contains(err.Error(), "one direction") {
		t.Errorf("mixed directions: %v", err)
	}
	nr := Cascade{InputRate: 1e6, Interpolate: true, Passband: 1e3, Stages: []Stage{{CIC: true, N: 2, M: 1, R: 4, NonRecursive: true, Interpolate: true}}}
	if _, err := Plan(nr, words, Settings{}); err == nil || !strings.Contains(err.Error(), "non-recursive") {
		t.Errorf("non-recursive CIC interpolator: %v", err)
	}
	if _, _, err := FromChain(chain.Spec{InputRate: 16e6, OutputRate: 1e6, Passband: 50e3, RippleDB: 0.1, RejectionDB: 80}, c); err == nil || !strings.Contains(err.Error(), "direction") {
		t.Errorf("decimation spec, interpolation chain: %v", err)
	}
	m, _ := NewModel(cas, w)
	if _, err := m.Run([]int64{1 << 11}); err == nil {
		t.Error("a code outside the 12-bit input word was accepted")
	}
	if _, _, err := RunCodes(context.Background(), cas, w, make([]int64, MaxRunCodesOutput/16+1)); err == nil || !strings.Contains(err.Error(), "output samples") {
		t.Errorf("RunCodes over its bound: %v", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := BitTrueContext(ctx, cas, w, Signal{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled bit-true run: %v", err)
	}
	if _, err := BitTrue(cas, w, Signal{AliasHz: 9e6}); err == nil {
		t.Error("an image frequency above the output rate's half was accepted")
	}
}

// The streaming run gives the same figures whatever the block: the
// interpolation cascade's run in blocks of one input sample (as a large L
// takes it) equals the run in blocks of many.
func TestInterpolationBlocksAgree(t *testing.T) {
	spec, c := designedInterp(t, "fir2 > hb > cic3m1r8", 1e6, 100e3, 14, 18)
	cas, words, _ := FromChain(spec, c)
	w, err := Plan(cas, words, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(8, 8))
	x := make([]float64, 3000)
	for i := range x {
		x[i] = 0.9 * (2*rng.Float64() - 1)
	}
	whole := newChainState(cas, w)
	yi, yf := whole.run(x)
	yi, yf = append([]float64(nil), yi...), append([]float64(nil), yf...)
	one := newChainState(cas, w)
	var bi, bf []float64
	for n := range x {
		a, b := one.run(x[n : n+1])
		bi, bf = append(bi, a...), append(bf, b...)
	}
	if !reflect.DeepEqual(yi, bi) || !reflect.DeepEqual(yf, bf) {
		t.Error("blocks of one input sample give another output")
	}
	if len(yi) != 32*len(x) {
		t.Errorf("%d outputs of %d inputs interpolated by 32", len(yi), len(x))
	}
}
