package chain

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strings"
	"testing"
)

// TestRunInterpolationStructure checks what the structure guarantees on its
// own: len(x) L samples; a half-band's centre phase passes its input
// through bit for bit (its centre tap times 2 is exactly 1 and the phase's
// other taps are exactly 0); every kind alone, its phases' sums equal, at
// DC gain sum h (1 for the CIC) in every phase once its delay line is full;
// and the same panics as a decimation chain's.
func TestRunInterpolationStructure(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	x := make([]float64, 50)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	// A half-band of 4K - 1 taps (K = 3): centre tap 5 is phase 1's k = 2.
	hbTaps := []float64{0.006, 0, -0.049, 0, 0.293, 0.5, 0.293, 0, -0.049, 0, 0.006}
	hb := FIRStage{R: 2, Taps: hbTaps, Length: len(hbTaps), HalfBand: true}
	y := Run(&Chain{InputRate: 2, Direction: Interpolate, Stages: []Stage{hb}, Designed: true}, x)
	if len(y) != 2*len(x) {
		t.Fatalf("half-band: %d samples from %d", len(y), len(x))
	}
	for n := range x {
		want := 0.0
		if n >= 2 {
			want = x[n-2]
		}
		if y[2*n+1] != want {
			t.Errorf("half-band: output %d = %v, want input %d = %v exactly", 2*n+1, y[2*n+1], n-2, want)
			break
		}
	}
	for _, s := range []Stage{
		hb,
		// Each phase sums to 1/3, so DC comes out flat.
		FIRStage{R: 3, Taps: []float64{1.0 / 12, 2.0 / 12, 3.0 / 12, 3.0 / 12, 2.0 / 12, 1.0 / 12}, Length: 6},
		NewCICInterpolator(3, 2, 5, 16, 24),
		NewCICInterpolator(7, 2, 64, 16, 24), // 43 bits of growth: the equivalent FIR
	} {
		c := &Chain{InputRate: 1, Direction: Interpolate, Stages: []Stage{s}, Designed: true}
		ones := make([]float64, 40)
		for i := range ones {
			ones[i] = 1
		}
		y := Run(c, ones)
		sum := 1.0
		if f, ok := s.(FIRStage); ok {
			sum = 0
			for _, v := range f.Taps {
				sum += v
			}
		}
		if len(y) != 40*s.Factor() {
			t.Errorf("%s by %d: %d samples from 40", s.Kind(), s.Factor(), len(y))
			continue
		}
		for _, v := range y[len(y)-s.Factor():] {
			if math.Abs(v-sum) > 1e-12 {
				t.Errorf("%s by %d: DC gives %v at the end, want %.15g", s.Kind(), s.Factor(), y[len(y)-s.Factor():], sum)
				break
			}
		}
	}
	for _, tc := range []struct {
		s    Stage
		want string
	}{
		{FIRStage{R: 2, Length: 7, HalfBand: true}, "stage 1 (halfband) has no taps"},
		{&FIRStage{R: 2, Taps: []float64{0.5, 0.5}, Length: 2}, "stage 1 is a *chain.FIRStage"},
	} {
		func() {
			defer func() {
				if msg, _ := recover().(string); !strings.Contains(msg, tc.want) {
					t.Errorf("Run panics with %q, want it to say %q", msg, tc.want)
				}
			}()
			Run(&Chain{InputRate: 1, Direction: Interpolate, Stages: []Stage{tc.s}}, make([]float64, 8))
		}()
	}
}

// TestRunCICInterpolatorInteger holds the CIC interpolator's wrapping
// integer run to its equivalent FIR run in float64 (N boxcars of length R M,
// polyphase, times R/(RM)^N) on seeded random orders, delays and factors
// whose growth leaves the integer run at least 24 bits, over 3000 input
// samples: the two differ by the input's quantisation alone, at most
// 2^(e - inBits) for a peak below 2^e, inBits = 62 - ceil(log2((RM)^N/R))
// (each phase of the response sums to the DC gain), plus float64 rounding.
func TestRunCICInterpolatorInteger(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 81))
	worst := 0.0
	for trial := 0; trial < 60; trial++ {
		n, m, r := 1+rng.IntN(7), 1+rng.IntN(3), 2+rng.IntN(40)
		inBits := 62 - interpolatorGrowth(n, m, r)
		if inBits < 24 {
			continue
		}
		st := NewCICInterpolator(n, m, r, 16, 24)
		x := make([]float64, 3000)
		for i := range x {
			x[i] = 3 * rng.NormFloat64()
		}
		peak := 0.0
		for _, v := range x {
			peak = math.Max(peak, math.Abs(v))
		}
		_, e := math.Frexp(peak)
		bound := math.Ldexp(1, e-inBits) + 1e-12*peak
		got := runCICInterpolator(st, x)
		want := polyphaseInterpolate(cicTaps(st), r, x)
		for k := range want {
			d := math.Abs(got[k] - want[k])
			worst = math.Max(worst, d/peak)
			if d > bound {
				t.Errorf("N=%d M=%d R=%d (%d input bits): sample %d: integer run %.17g, FIR %.17g", n, m, r, inBits, k, got[k], want[k])
				break
			}
		}
	}
	t.Logf("worst difference %.3g of the input's peak", worst)
}

// goldenInterp is chain/testdata/interp/upfirdn.json.
type goldenInterp struct {
	SciPy  string `json:"scipy"`
	Chains []struct {
		Name   string `json:"name"`
		Stages []struct {
			Kind   string    `json:"kind"`
			Factor int       `json:"factor"`
			Taps   []float64 `json:"taps"`
			N      int       `json:"N"`
			M      int       `json:"M"`
		} `json:"stages"`
		Signals []struct {
			Name string    `json:"name"`
			X    []float64 `json:"x"`
			Y    []float64 `json:"y"`
		} `json:"signals"`
	} `json:"chains"`
}

// TestRunInterpolationSciPy holds Run on interpolation chains to SciPy's
// scipy.signal.upfirdn, stage by stage (chain/testdata/interp/gen_upfirdn.py,
// SciPy version recorded in the file): FIR and half-band stages designed in
// the script with remez and firwin, CIC interpolators as their equivalent
// FIR (N boxcars of length R M, times R/(RM)^N), and a chain of all three.
// Every output sample must match to 1e-9 of the input's peak: the FIR
// arithmetic differs from SciPy's only in the order of its sums (about 1e-16),
// and the CIC's integer run quantises its input to at least 31 bits below its
// peak (2^-31 ~ 5e-10 of it, times the DC gain, through taps that sum to the
// DC gain in every phase); cic7m2r64 grows 43 bits and runs as its FIR.
func TestRunInterpolationSciPy(t *testing.T) {
	b, err := os.ReadFile("testdata/interp/upfirdn.json")
	if err != nil {
		t.Fatal(err)
	}
	var g goldenInterp
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	if len(g.Chains) == 0 {
		t.Fatal("no chains in upfirdn.json")
	}
	for _, gc := range g.Chains {
		// Stages are held from the high rate down: the signal order reversed.
		c := &Chain{Direction: Interpolate, Designed: true}
		l := 1
		for _, s := range gc.Stages {
			var st Stage
			switch s.Kind {
			case "cic":
				st = NewCICInterpolator(s.N, s.M, s.Factor, 16, 24)
			case "fir", "halfband":
				st = FIRStage{R: s.Factor, Taps: s.Taps, Length: len(s.Taps), HalfBand: s.Kind == "halfband"}
			default:
				t.Fatalf("%s: stage kind %q", gc.Name, s.Kind)
			}
			c.Stages = append(c.Stages, st)
			l *= s.Factor
		}
		slices.Reverse(c.Stages)
		c.Plan = planOf(c)
		c.InputRate = 1e3 * float64(l)
		for _, sig := range gc.Signals {
			y := Run(c, sig.X)
			if len(y) != len(sig.Y) || len(y) != len(sig.X)*l {
				t.Errorf("%s, %s: %d samples, SciPy %d, want %d x %d", gc.Name, sig.Name, len(y), len(sig.Y), len(sig.X), l)
				continue
			}
			peak := 0.0
			for _, v := range sig.X {
				peak = math.Max(peak, math.Abs(v))
			}
			worst, at := 0.0, 0
			for m := range y {
				if d := math.Abs(y[m] - sig.Y[m]); d > worst {
					worst, at = d, m
				}
			}
			if worst > 1e-9*peak {
				t.Errorf("%s, %s: sample %d: Run %.17g, SciPy %.17g (off by %.3g of the input's peak)", gc.Name, sig.Name, at, y[at], sig.Y[at], worst/peak)
			}
			t.Logf("%s, %s: %d samples, worst difference %.3g of the input's peak", gc.Name, sig.Name, len(y), worst/peak)
			// RunComplex runs the same real filters on each part.
			xc := make([]complex128, len(sig.X))
			for n, v := range sig.X {
				xc[n] = complex(v, -0.5*v)
			}
			yc := RunComplex(c, xc)
			for m := range yc {
				if real(yc[m]) != y[m] || math.Abs(imag(yc[m])+0.5*y[m]) > 1e-9*peak {
					t.Errorf("%s, %s: RunComplex sample %d = %v, Run %g", gc.Name, sig.Name, m, yc[m], y[m])
					break
				}
			}
		}
	}
}

// bestWindow returns the window of n in [lo, hi] input samples and the p
// in [0, n/2) for which the tone p/n cycles per sample is nearest alpha
// (in [0, 1/2)) and not above top: a window of whole cycles of every image
// of the tone.
func bestWindow(alpha, top float64, lo, hi int) (p, n int) {
	best := math.Inf(1)
	for w := lo; w <= hi; w++ {
		q := int(math.Round(alpha * float64(w)))
		if 2*q >= w {
			q = (w - 1) / 2
		}
		if float64(q) > top*float64(w) {
			q = int(math.Floor(top * float64(w)))
		}
		if d := math.Abs(alpha - float64(q)/float64(w)); d < best {
			best, p, n = d, q, w
		}
	}
	return p, n
}

// toneRun is a tone of p/n cycles per input sample through an interpolation
// chain by L, measured over the last n L outputs, where every image of the
// tone runs whole cycles.
type toneRun struct {
	y          []complex128 // the window
	cos, sin   []float64    // cos and sin of 2 pi i/(n L)
	n, l, p    int
	complexRun bool
}

// runTone runs the real tone cos(2 pi p k/n) (or, complex, exp(j 2 pi p
// k/n)) for t + n input samples, t of them for the transient.
func runTone(c *Chain, p, n, t int, complexRun bool) toneRun {
	l := c.Ratio()
	tr := toneRun{n: n, l: l, p: p, complexRun: complexRun}
	nl := n * l
	tr.cos, tr.sin = make([]float64, nl), make([]float64, nl)
	for i := range tr.cos {
		tr.sin[i], tr.cos[i] = math.Sincos(2 * math.Pi * float64(i) / float64(nl))
	}
	if complexRun {
		x := make([]complex128, t+n)
		for k := range x {
			i := (p * k) % n * l
			x[k] = complex(tr.cos[i], tr.sin[i])
		}
		tr.y = RunComplex(c, x)[t*l:]
	} else {
		x := make([]float64, t+n)
		for k := range x {
			x[k] = tr.cos[(p*k)%n*l]
		}
		y := Run(c, x)[t*l:]
		tr.y = make([]complex128, len(y))
		for m, v := range y {
			tr.y[m] = complex(v, 0)
		}
	}
	return tr
}

// amp returns the amplitude of the output's component at num/(n L) cycles
// per output sample by projection over the window: |sum y e^{-j w m}| / (n
// L), twice that for a real output away from 0 and half the rate (the
// component is a cosine, half of it at -w).
func (tr toneRun) amp(num int) float64 {
	nl := tr.n * tr.l
	num = ((num % nl) + nl) % nl
	var re, im float64
	for m, v := range tr.y {
		i := (num * m) % nl
		c, s := tr.cos[i], tr.sin[i]
		re += real(v)*c + imag(v)*s
		im += imag(v)*c - real(v)*s
	}
	a := math.Hypot(re, im) / float64(nl)
	if !tr.complexRun && num != 0 && 2*num != nl {
		a *= 2
	}
	return a
}

// TestRunInterpolationTones runs tones at the channel rate through invented
// designed interpolation chains and measures their images at the output
// rate by projection over whole cycles after the transient (so every other
// component of the output is orthogonal to the one measured):
//
//   - the tone whose image is Analyze's worst (WorstAliasHz), its channel
//     frequency moved to the nearest whole number of cycles in 2048-4096
//     samples within the protected band (on it exactly in three chains,
//     1.2e-5 F_in inside in the fourth): that image measures at most
//     Analyze's figure (1e-6 dB: Analyze is never optimistic and the tone
//     lies in the band) and at least 0.01 dB below it (its search stops
//     within 0.002 dB; the move costs far less at a peak or a band edge);
//   - every image of that tone, and the passband tones, at the level of the
//     brute-force response (newInterpRef, the impulse response through the
//     structure) at the same frequency to 1e-4 dB down to -200 dB: the
//     projection is exact but for float64 rounding and the CIC's input
//     quantisation, 2^-23 of the peak at the coarsest (-138 dB) and far finer
//     in these chains;
//   - tones at the passband's largest and smallest gain (found by the brute
//     force) and two more: their gains span Analyze's ripple, at most it and
//     within 0.01 dB of it.
func TestRunInterpolationTones(t *testing.T) {
	cic := func(n, m, r int) StagePlan { return StagePlan{Kind: CIC, Factor: r, CICOrder: n, CICDelay: m} }
	hb := StagePlan{Kind: HalfBand, Factor: 2}
	fir := func(r int) StagePlan { return StagePlan{Kind: FIR, Factor: r} }
	for _, tc := range []struct {
		plan []StagePlan // from the high rate down: the signal passes it backwards
		sp   Spec
	}{
		{[]StagePlan{cic(4, 1, 16), hb, fir(2)}, Spec{InputRate: 1.536e6, OutputRate: 98.304e6, Passband: 0.5e6, Protected: 0.6e6, RippleDB: 0.2, RejectionDB: 75}},
		{[]StagePlan{hb, fir(3)}, Spec{InputRate: 48e3, OutputRate: 288e3, Passband: 18e3, Protected: 20e3, RippleDB: 0.1, RejectionDB: 80}},
		{[]StagePlan{fir(5), hb}, Spec{InputRate: 2e6, OutputRate: 20e6, Passband: 0.6e6, Protected: 0.7e6, RippleDB: 0.5, RejectionDB: 65, Complex: true}},
		{[]StagePlan{cic(3, 2, 8), fir(2)}, Spec{InputRate: 250e3, OutputRate: 4e6, Passband: 40e3, Protected: 50e3, RippleDB: 0.3, RejectionDB: 60}},
	} {
		plan := tc.plan
		name := Notation(plan)
		c, err := Design(tc.sp, plan, Settings{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		a, err := Analyze(c, tc.sp)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		ref := newInterpRef(c)
		fig := ref.figures(tc.sp)
		l, fin := c.Ratio(), tc.sp.InputRate
		h0 := ref.at(0)
		trans := len(ref.h)/l + 2
		worstDiff := 0.0
		// level is the measured gain relative to the DC gain h0 / L, and
		// checks it against the reference at num/(n L) of the output rate.
		level := func(tr toneRun, num int) float64 {
			lvl := 20 * math.Log10(tr.amp(num)*float64(l)/h0)
			want := 20 * math.Log10(ref.at(float64(num)/float64(tr.n*l)*ref.fOut)/h0)
			if nl := tr.n * l; tr.p == 0 && !tr.complexRun && num%nl != 0 && (2*num)%nl != 0 {
				// A real DC input's image, with its mirror: twice the
				// response (but at 0 Hz and half the output rate).
				want += 20 * math.Log10(2)
			}
			if want > -200 {
				worstDiff = math.Max(worstDiff, math.Abs(lvl-want))
				if math.Abs(lvl-want) > 1e-4 {
					t.Errorf("%s: output at %.8g Hz: %.6f dB, brute-force response %.6f dB", name, float64(num)/float64(tr.n*l)*ref.fOut, lvl, want)
				}
			}
			return lvl
		}

		// The worst image: g = k F_in + s f0.
		g := a.WorstAliasHz
		k := int(math.Round(g / fin))
		f0, s := g-float64(k)*fin, 1
		if f0 < 0 {
			f0, s = -f0, -1
		}
		p, n := bestWindow(f0/fin, tc.sp.Protected/fin, 2048, 4096)
		off := math.Abs(f0/fin - float64(p)/float64(n))
		tr := runTone(c, p, n, trans, tc.sp.Complex)
		got := level(tr, k*n+s*p)
		if got > -a.AliasRejectionDB+1e-6 || got < -a.AliasRejectionDB-0.01 {
			t.Errorf("%s: tone at %.8g Hz (%.2g F_in from the worst): image at %.8g Hz measures %.5f dB, Analyze's worst image %.5f dB at %.8g Hz",
				name, float64(p)/float64(n)*fin, off, (float64(k)+float64(s*p)/float64(n))*fin, got, -a.AliasRejectionDB, g)
		}
		// Every image of that tone up to half the output rate (both sides
		// of zero for a complex tone).
		images := 0
		for kk := -l / 2; kk <= l/2; kk++ {
			for _, sg := range []int{1, -1} {
				num := kk*n + sg*p
				if tc.sp.Complex && sg < 0 || !tc.sp.Complex && (num <= 0 || 2*num >= n*l) || 2*num > n*l || 2*num <= -n*l {
					continue
				}
				level(tr, num)
				images++
			}
		}

		// Passband tones.
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, f := range []float64{fig.maxHz, fig.minHz, 0.37 * tc.sp.Passband, tc.sp.Passband} {
			p, n := bestWindow(f/fin, tc.sp.Passband/fin, 2048, 4096)
			lvl := level(runTone(c, p, n, trans, tc.sp.Complex), p)
			lo, hi = math.Min(lo, lvl), math.Max(hi, lvl)
		}
		if rip := hi - lo; rip > a.PassbandRippleDB+1e-6 || rip < a.PassbandRippleDB-0.01 {
			t.Errorf("%s: passband tones span %.6f dB, Analyze's ripple %.6f dB", name, rip, a.PassbandRippleDB)
		}
		t.Logf("%s (L = %d): worst image %.4f dB measured (tone %.2g F_in from the worst), Analyze %.4f dB; %d components (the tone and its images) within %.2g dB of the brute force; passband tones span %.5f dB, Analyze's ripple %.5f dB",
			name, l, got, off, -a.AliasRejectionDB, images, worstDiff, hi-lo, a.PassbandRippleDB)
	}
}
