package vectors

import (
	"bytes"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// wrapBig reduces v modulo 2^bits into two's complement.
func wrapBig(v *big.Int, bits int) *big.Int {
	m := new(big.Int).Lsh(big.NewInt(1), uint(bits))
	r := new(big.Int).Mod(v, m) // Euclidean: in [0, m)
	if r.Cmp(new(big.Int).Rsh(m, 1)) >= 0 {
		r.Sub(r, m)
	}
	return r
}

// roundSatBig rounds acc half up at bit shift (floor((acc + 2^(shift-1)) /
// 2^shift)), or shifts it left for a negative shift, and saturates it to
// ob bits: the FIR output rule of chain/fixed's documentation.
func roundSatBig(acc *big.Int, shift, ob int) int64 {
	acc = new(big.Int).Set(acc)
	switch {
	case shift > 0:
		acc.Add(acc, new(big.Int).Lsh(big.NewInt(1), uint(shift-1)))
		acc.Div(acc, new(big.Int).Lsh(big.NewInt(1), uint(shift))) // Euclidean: floor for a positive divisor
	case shift < 0:
		acc.Lsh(acc, uint(-shift))
	}
	hi := new(big.Int).Sub(new(big.Int).Lsh(big.NewInt(1), uint(ob-1)), big.NewInt(1))
	lo := new(big.Int).Neg(new(big.Int).Lsh(big.NewInt(1), uint(ob-1)))
	if acc.Cmp(hi) > 0 {
		return hi.Int64()
	}
	if acc.Cmp(lo) < 0 {
		return lo.Int64()
	}
	return acc.Int64()
}

// refFIRInterp is the interpolation contract's FIR interpolator by l with
// math/big, written from the zero-stuffed form rather than the polyphase
// one: u[i] = x[i/l] when l divides i, else 0; y[m] = sum_j h[j] u[m - j]
// (u before the first sample zero), exact, then roundSatBig.
func refFIRInterp(x, h []int64, l, shift, ob int) []int64 {
	u := make([]int64, len(x)*l)
	for n, v := range x {
		u[n*l] = v
	}
	out := make([]int64, len(u))
	for m := range u {
		acc := new(big.Int)
		for j, hj := range h {
			if i := m - j; i >= 0 && u[i] != 0 {
				acc.Add(acc, new(big.Int).Mul(big.NewInt(hj), big.NewInt(u[i])))
			}
		}
		out[m] = roundSatBig(acc, shift, ob)
	}
	return out
}

// refCICInterp is the interpolation contract's CIC interpolator with
// math/big, sharing no code with package fixed: N combs at the input rate,
// c_j[n] = c_(j-1)[n] - c_(j-1)[n - M] wrapped to RegisterBits[j-1]; each
// comb output then R-1 zeros; N integrators at the output rate, s_j[m] =
// s_j[m-1] + s_(j-1)[m] wrapped to RegisterBits[N+j-1]; the output the
// last integrator floored by 2^(W_2N - OutputBits) and wrapped to
// OutputBits. Hogenauer (1981) describes the structure.
func refCICInterp(x []int64, p *fixed.CICInterpolation) []int64 {
	n := p.N
	hist := make([][]*big.Int, n) // comb j's last M inputs, oldest first
	for j := range hist {
		for range p.M {
			hist[j] = append(hist[j], new(big.Int))
		}
	}
	integ := make([]*big.Int, n)
	for j := range integ {
		integ[j] = new(big.Int)
	}
	full := p.RegisterBits[2*n-1]
	unit := new(big.Int).Lsh(big.NewInt(1), uint(full-p.OutputBits))
	var out []int64
	for _, s := range x {
		v := big.NewInt(s)
		for j := 0; j < n; j++ {
			old := hist[j][0]
			hist[j] = append(hist[j][1:], v)
			v = wrapBig(new(big.Int).Sub(v, old), p.RegisterBits[j])
		}
		for k := 0; k < p.R; k++ {
			u := v
			if k > 0 {
				u = new(big.Int)
			}
			for j := 0; j < n; j++ {
				integ[j] = wrapBig(new(big.Int).Add(integ[j], u), p.RegisterBits[n+j])
				u = integ[j]
			}
			out = append(out, wrapBig(new(big.Int).Div(u, unit), p.OutputBits).Int64())
		}
	}
	return out
}

// randomInterpCascade is randomCascade for interpolation: CIC
// interpolators of order 1-5, delay 1-2, factor 2-8; half-bands and FIRs
// with random symmetric taps, factor 1-3 (L = 3 gives an output gain of
// 2/3); bands that ask nothing.
func randomInterpCascade(rng *rand.Rand) (fixed.Cascade, fixed.Words) {
	c := fixed.Cascade{InputRate: 1e6, Passband: 1e4, Complex: rng.IntN(3) == 0, Interpolate: true}
	loose := []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
	for i, n := 0, 1+rng.IntN(3); i < n; i++ {
		var st fixed.Stage
		switch rng.IntN(3) {
		case 0:
			st = fixed.Stage{CIC: true, N: 1 + rng.IntN(5), M: 1 + rng.IntN(2), R: 2 + rng.IntN(7)}
		case 1:
			k := 1 + rng.IntN(4)
			h := make([]float64, 4*k-1)
			for j := 0; j < 2*k-1; j += 2 {
				v := (rng.Float64() - 0.5) * 0.6
				h[j], h[len(h)-1-j] = v, v
			}
			h[2*k-1] = 0.5
			st = fixed.Stage{R: 2, Taps: h, HalfBand: true, Bands: loose}
		default:
			l := 2 + rng.IntN(14)
			h := make([]float64, l)
			for j := 0; j <= (l-1)/2; j++ {
				v := rng.Float64() - 0.3
				h[j], h[l-1-j] = v, v
			}
			st = fixed.Stage{R: 1 + rng.IntN(3), Taps: h, Bands: loose}
		}
		st.Interpolate = true
		c.Stages = append(c.Stages, st)
	}
	w := fixed.Words{InputBits: 2 + rng.IntN(17), OutputBits: 2 + rng.IntN(27), CoefBits: 4 + rng.IntN(17)}
	if rng.IntN(2) == 0 {
		w.DataBits = 2 + rng.IntN(27)
	}
	return c, w
}

// An interpolation chain's vectors are the contract's data path: on 200
// seeded random planned interpolation chains (CIC interpolators,
// half-bands and FIRs in any order, real and complex, words of 2 to 28
// bits), every stage's output in every stimulus equals an independent
// re-implementation in math/big (refFIRInterp from the zero-stuffed form,
// refCICInterp), fed the stage's input from the previous stage's file, and
// every stage's file holds its input's length times its factor.
func TestInterpVectorsMatchReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 3))
	checked := 0
	for trial := 0; trial < 200; trial++ {
		c, words := randomInterpCascade(rng)
		w, err := fixed.Plan(c, words, fixed.Settings{UnityGain: trial%4 == 0})
		if err != nil {
			continue // e.g. a half-band centre at 2 bits
		}
		v, err := Generate(c, w, Options{MaxInput: 40, AliasHz: 3.3e6, TailOutputs: 200})
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		for _, s := range v.Sets {
			for p := range s.In {
				in := s.In[p]
				if len(in) != v.InputSamples {
					t.Fatalf("trial %d %s: %d input samples, the vectors say %d", trial, s.Name, len(in), v.InputSamples)
				}
				for k, st := range c.Stages {
					sw := w.Stages[k]
					var want []int64
					if st.CIC {
						want = refCICInterp(in, sw.CICInterp)
					} else {
						want = refFIRInterp(in, sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits)
					}
					got := s.Stages[k][p]
					if len(got) != len(in)*st.R {
						t.Fatalf("trial %d %s path %d stage %d: %d outputs of %d inputs, factor %d", trial, s.Name, p, k+1, len(got), len(in), st.R)
					}
					for i := range got {
						if got[i] != want[i] {
							t.Fatalf("trial %d %s path %d stage %d sample %d: vectors %d, reference %d (words %+v)", trial, s.Name, p, k+1, i, got[i], want[i], words)
						}
					}
					in = got
				}
				if len(in) != v.OutputSamples {
					t.Fatalf("trial %d %s: %d output samples, the vectors say %d", trial, s.Name, len(in), v.OutputSamples)
				}
			}
		}
		checked++
	}
	t.Logf("%d random interpolation chains checked", checked)
	if checked < 150 {
		t.Fatalf("only %d of 200 random interpolation chains could be planned", checked)
	}
}

// An interpolation chain's lengths, latency and tones are what the package
// documentation says, worked by hand for a 12-tap FIR interpolating by 2
// then a CIC of order 3, R = 4 (L = 8): its impulse response spans
// 1 + 11*4 + 9*1 = 54 output samples (the CIC's N(RM - 1) + 1 = 10 taps),
// 7 input samples, plus 32 output samples, 4 input samples: 11 input
// samples, 88 output samples; the group delay is 11/2*4 + 9/2 = 26.5
// output samples. The worst image g folds into [0, F_in/2].
func TestInterpLengthsAndTones(t *testing.T) {
	loose := []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
	h := []float64{-0.02, 0.01, 0.05, 0.1, 0.16, 0.2, 0.2, 0.16, 0.1, 0.05, 0.01, -0.02}
	c := fixed.Cascade{InputRate: 1e6, Passband: 2e5, Complex: true, Interpolate: true, Stages: []fixed.Stage{
		{R: 2, Taps: h, Bands: loose, Interpolate: true},
		{CIC: true, N: 3, M: 1, R: 4, Interpolate: true},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 14, CoefBits: 12}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		g, f float64 // the worst image and its channel frequency, Hz
	}{
		{7.3e6, 3e5},    // 7 F_in + 0.3 MHz
		{7.8e6, 2e5},    // 8 F_in - 0.2 MHz
		{1.5e6, 5e5},    // F_in + F_in/2: the fold's edge
		{0, 0},          // none given: 0 Hz
		{2.25e6, 2.5e5}, // 2 F_in + 0.25 MHz
	} {
		v, err := Generate(c, w, Options{AliasHz: tc.g, Notation: "fir2 > cic3m1r4"})
		if err != nil {
			t.Fatal(err)
		}
		if v.SettlingOutput != 54 || v.Settling != 7 || v.InputSamples != 11 || v.OutputSamples != 88 || !v.Settled {
			t.Errorf("settling %d output / %d input samples, %d input / %d output samples, settled %v; want 54, 7, 11, 88, true",
				v.SettlingOutput, v.Settling, v.InputSamples, v.OutputSamples, v.Settled)
		}
		if v.LatencyOutput != 26.5 || v.LatencyInput != 26.5/8 {
			t.Errorf("latency %v output, %v input samples; want 26.5, 3.3125", v.LatencyOutput, v.LatencyInput)
		}
		// The tone_alias input is -1 dBFS at f: codes of a 12-bit word
		// rounded to nearest (fixed.ADC's rule, from the formula here).
		var set Set
		for _, s := range v.Sets {
			if s.Name == "tone_alias" {
				set = s
			}
		}
		a := math.Pow(10, -1.0/20) * 2048
		for n, x := range set.In[0] {
			want := math.Round(a * math.Cos(2*math.Pi*tc.f*float64(n)/1e6))
			q := math.Round(a * math.Sin(2*math.Pi*tc.f*float64(n)/1e6))
			if math.Abs(float64(x)-want) > 0 || math.Abs(float64(set.In[1][n])-q) > 0 {
				t.Fatalf("g = %g Hz: tone_alias sample %d is %d %d, want %v %v (a tone at %g Hz)", tc.g, n, x, set.In[1][n], want, q, tc.f)
			}
		}
		readme := string(v.Files()[0].Data)
		for _, want := range []string{
			"Interpolation chain: input rate 1000000 Hz, output rate 8000000 Hz\n(interpolation 8)",
			"NAME.stage1.txt   stage 1's output, 22 samples at 2000000 Hz, 14-bit codes",
			"NAME.out.txt      the chain's output (the last stage's), 88 samples",
			"FIR interpolator, 12 taps, interpolation 2",
			"CIC interpolator, order 3, delay 1, interpolation 4",
			"(floor, 4 LSBs dropped)",
			"a shift of 10 bits, the decimating FIR's less floor(log2 L) = 1",
			"Impulse response: 54 output samples long (7 input samples",
			"Group delay: 3.3125 input samples, 26.5 output samples",
			fmt.Sprintf("tone at %.10g Hz", tc.f),
		} {
			if !strings.Contains(readme, want) {
				t.Errorf("g = %g Hz: the README lacks %q:\n%s", tc.g, want, readme)
			}
		}
	}
}

// The output cap: a 200-tap FIR interpolating by 2 before a CIC of R =
// 2048 spans 1 + 199*2048 + 2*2047 = 411647 output samples, over
// MaxOutputSamples (2^18), so the stimuli stop at 2^18 / 4096 = 64 input
// samples, marked as not settled; Options.MaxInput caps too; a chain
// whose one input sample would overflow the cap is an error.
func TestInterpCaps(t *testing.T) {
	loose := []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
	h := make([]float64, 200)
	for i := range h {
		h[i] = 1.0 / 200
	}
	c := fixed.Cascade{InputRate: 1e3, Passband: 10, Interpolate: true, Stages: []fixed.Stage{
		{R: 2, Taps: h, Bands: loose, Interpolate: true},
		{CIC: true, N: 2, M: 1, R: 2048, Interpolate: true},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 8, OutputBits: 12, CoefBits: 10}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	v, err := Generate(c, w, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if v.SettlingOutput != 411647 || v.Settling != 101 || v.InputSamples != 64 || v.OutputSamples != 1<<18 || v.Settled {
		t.Errorf("settling %d output / %d input, %d input / %d output samples, settled %v; want 411647, 101, 64, 262144, false",
			v.SettlingOutput, v.Settling, v.InputSamples, v.OutputSamples, v.Settled)
	}
	if !bytes.Contains(v.Files()[0].Data, []byte("does\nNOT reach")) {
		t.Errorf("the README does not say the vectors stop short of the settling:\n%s", v.Files()[0].Data)
	}
	v, err = Generate(c, w, Options{MaxInput: 5})
	if err != nil || v.InputSamples != 5 || v.OutputSamples != 5*4096 {
		t.Errorf("MaxInput 5: %v input, %v output samples, err %v", v.InputSamples, v.OutputSamples, err)
	}
	big := fixed.Cascade{InputRate: 1, Passband: 0.1, Interpolate: true, Stages: []fixed.Stage{
		{CIC: true, N: 1, M: 1, R: 1 << 10, Interpolate: true},
		{CIC: true, N: 1, M: 1, R: 1 << 9, Interpolate: true},
	}}
	bw, err := fixed.Plan(big, fixed.Words{InputBits: 8, OutputBits: 12}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Generate(big, bw, Options{}); err == nil || !strings.Contains(err.Error(), "stage 2 interpolates by 512") {
		t.Errorf("an interpolation by 2^19: err = %v, want one naming stage 2", err)
	}
}
