package vectors

import (
	"bytes"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// refCIC is a pruned CIC decimator written from chain/fixed's documented
// rules with math/big, sharing no code with package fixed: register j
// (integrators 0..N-1, then combs N..2N-1) holds its value in units of
// 2^Dropped[j], takes its input floored to that unit (Euclidean division)
// and wraps modulo 2^RegisterBits[j] into two's complement; combs run on
// input samples 0, R, 2R, ...; the output is floored to 2^Dropped[2N] and
// wrapped to OutputBits. Hogenauer (1981) describes the structure.
func refCIC(x []int64, p *fixed.CICPruning) []int64 {
	n := p.N
	unitOf := func(j int) *big.Int { return new(big.Int).Lsh(big.NewInt(1), uint(p.Dropped[j])) }
	wrapTo := func(v *big.Int, bits int) *big.Int {
		m := new(big.Int).Lsh(big.NewInt(1), uint(bits))
		r := new(big.Int).Mod(v, m) // Euclidean: in [0, m)
		if r.Cmp(new(big.Int).Rsh(m, 1)) >= 0 {
			r.Sub(r, m)
		}
		return r
	}
	// to converts a value held in units u (as 2^d) to units 2^e by floor.
	to := func(v *big.Int, d, e int) *big.Int {
		full := new(big.Int).Lsh(v, uint(d)) // the value in input LSBs
		return new(big.Int).Div(full, unitOf(e))
	}
	reg := make([]*big.Int, n)
	for j := range reg {
		reg[j] = new(big.Int)
	}
	hist := make([][]*big.Int, n)
	for j := range hist {
		for range p.M {
			hist[j] = append(hist[j], new(big.Int))
		}
	}
	var out []int64
	for k, s := range x {
		v, unit := big.NewInt(s), 0
		for j := 0; j < n; j++ {
			reg[j] = wrapTo(new(big.Int).Add(reg[j], to(v, unit, j)), p.RegisterBits[j])
			v, unit = reg[j], p.Dropped[j]
		}
		if k%p.R != 0 {
			continue
		}
		for j := 0; j < n; j++ {
			in := wrapTo(to(v, unit, n+j), p.RegisterBits[n+j])
			old := hist[j][0]
			hist[j] = append(hist[j][1:], in)
			v, unit = wrapTo(new(big.Int).Sub(in, old), p.RegisterBits[n+j]), p.Dropped[n+j]
		}
		out = append(out, wrapTo(to(v, unit, 2*n), p.OutputBits).Int64())
	}
	return out
}

// refFIR is the documented FIR data path with math/big: output m =
// sum_k h[k] x[mR - k] (x before the first sample zero), exact, rounded half
// up at shift (floor((acc + 2^(shift-1)) / 2^shift)) or shifted left for a
// negative shift, saturated to ob bits.
func refFIR(x, h []int64, r, shift, ob int) []int64 {
	hi := new(big.Int).Sub(new(big.Int).Lsh(big.NewInt(1), uint(ob-1)), big.NewInt(1))
	lo := new(big.Int).Neg(new(big.Int).Lsh(big.NewInt(1), uint(ob-1)))
	var out []int64
	for m := 0; m*r < len(x); m++ {
		acc := new(big.Int)
		for k := range h {
			if i := m*r - k; i >= 0 {
				acc.Add(acc, new(big.Int).Mul(big.NewInt(h[k]), big.NewInt(x[i])))
			}
		}
		switch {
		case shift > 0:
			acc.Add(acc, new(big.Int).Lsh(big.NewInt(1), uint(shift-1)))
			acc.Div(acc, new(big.Int).Lsh(big.NewInt(1), uint(shift)))
		case shift < 0:
			acc.Lsh(acc, uint(-shift))
		}
		if acc.Cmp(hi) > 0 {
			acc = hi
		}
		if acc.Cmp(lo) < 0 {
			acc = lo
		}
		out = append(out, acc.Int64())
	}
	return out
}

// randomCascade returns a random cascade with random words: CICs of order
// 1-5, delay 1-2, factor 2-8; half-bands and FIRs with random symmetric
// taps (a half-band's even offsets from the centre zero, its centre 1/2),
// factor 1-3. Their bands ask nothing (MaxError 10), so any coefficient
// width is planned.
func randomCascade(rng *rand.Rand) (fixed.Cascade, fixed.Words) {
	c := fixed.Cascade{InputRate: 1e6, Passband: 1e3, Complex: rng.IntN(3) == 0}
	loose := []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
	for i, n := 0, 1+rng.IntN(3); i < n; i++ {
		switch rng.IntN(3) {
		case 0:
			c.Stages = append(c.Stages, fixed.Stage{CIC: true, N: 1 + rng.IntN(5), M: 1 + rng.IntN(2), R: 2 + rng.IntN(7)})
		case 1:
			k := 1 + rng.IntN(4)
			h := make([]float64, 4*k-1)
			for j := 0; j < 2*k-1; j += 2 {
				v := (rng.Float64() - 0.5) * 0.6
				h[j], h[len(h)-1-j] = v, v
			}
			h[2*k-1] = 0.5
			c.Stages = append(c.Stages, fixed.Stage{R: 2, Taps: h, HalfBand: true, Bands: loose})
		default:
			l := 2 + rng.IntN(14)
			h := make([]float64, l)
			for j := 0; j <= (l-1)/2; j++ {
				v := rng.Float64() - 0.3
				h[j], h[l-1-j] = v, v
			}
			c.Stages = append(c.Stages, fixed.Stage{R: 1 + rng.IntN(3), Taps: h, Bands: loose})
		}
	}
	w := fixed.Words{InputBits: 2 + rng.IntN(17), OutputBits: 2 + rng.IntN(27), CoefBits: 4 + rng.IntN(17)}
	if rng.IntN(2) == 0 {
		w.DataBits = 2 + rng.IntN(27)
	}
	return c, w
}

// The vectors are the data path the package fixed documents: on 300 seeded
// random planned chains (CICs, half-bands and FIRs in any order, real and
// complex, words of 2 to 28 bits), every stage's output in every stimulus
// equals an independent re-implementation in math/big (refCIC, refFIR),
// fed the stage's input from the previous stage's file.
func TestVectorsMatchReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 1))
	checked := 0
	for trial := 0; trial < 300; trial++ {
		c, words := randomCascade(rng)
		w, err := fixed.Plan(c, words, fixed.Settings{})
		if err != nil {
			continue // e.g. a CIC wider than the plan allows
		}
		v, err := Generate(c, w, Options{MaxInput: 600, AliasHz: 3e5})
		if err != nil {
			continue
		}
		for _, s := range v.Sets {
			for p := range s.In {
				in := s.In[p]
				for k, st := range c.Stages {
					var want []int64
					if st.CIC {
						want = refCIC(in, w.Stages[k].Pruning)
					} else {
						sw := w.Stages[k]
						want = refFIR(in, sw.Coefficients.Ints, st.R, sw.OutputShift, sw.OutputBits)
					}
					got := s.Stages[k][p]
					if len(got) != len(want) {
						t.Fatalf("trial %d %s path %d stage %d: %d outputs, reference %d", trial, s.Name, p, k+1, len(got), len(want))
					}
					for i := range got {
						if got[i] != want[i] {
							t.Fatalf("trial %d %s path %d stage %d sample %d: vectors %d, reference %d (words %+v)", trial, s.Name, p, k+1, i, got[i], want[i], words)
						}
					}
					in = got
				}
			}
		}
		checked++
	}
	if checked < 200 {
		t.Fatalf("only %d of 300 random chains could be planned", checked)
	}
}

// The stimuli are what the README says: full-scale codes of both signs,
// tones at the stated level within the input word, noise over the whole
// word; lengths past the settling; files that parse back to the sets.
func TestStimuliAndFiles(t *testing.T) {
	c := fixed.Cascade{InputRate: 8e6, Passband: 20e3, Complex: true, Stages: []fixed.Stage{
		{CIC: true, N: 3, M: 1, R: 8},
		{R: 2, Taps: []float64{-0.03, 0, 0.28, 0.5, 0.28, 0, -0.03}, HalfBand: true, Bands: []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 18, CoefBits: 14}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	v, err := Generate(c, w, Options{AliasHz: 499e3, Notation: "cic3m1r8 > hb"})
	if err != nil {
		t.Fatal(err)
	}
	// Settling: CIC 3*(8-1)+1 = 22 taps, half-band 7 taps at 8 input
	// samples each: 1 + 21 + 6*8 = 70; plus 32 outputs of 16 samples,
	// 582, rounded up to a multiple of 16: 592.
	if v.Settling != 70 || v.InputSamples != 592 || !v.Settled {
		t.Errorf("settling %d, input samples %d, settled %v; want 70, 592, true", v.Settling, v.InputSamples, v.Settled)
	}
	// Group delay: 21/2 + 3*8 = 34.5 input samples.
	if v.LatencyInput != 34.5 {
		t.Errorf("latency %v input samples, want 34.5", v.LatencyInput)
	}
	const hi, lo = 2047, -2048
	byName := map[string]Set{}
	for _, s := range v.Sets {
		byName[s.Name] = s
	}
	if s := byName["impulse"]; s.In[0][0] != hi || s.In[1][0] != lo || s.In[0][1] != 0 {
		t.Errorf("impulse starts %d/%d, %d", s.In[0][0], s.In[1][0], s.In[0][1])
	}
	if s := byName["step_neg"]; s.In[0][100] != lo || s.In[1][100] != hi {
		t.Errorf("step_neg %d/%d", s.In[0][100], s.In[1][100])
	}
	for _, name := range []string{"tone_pass", "tone_alias"} {
		peak := 0.0
		for _, x := range byName[name].In[0] {
			peak = math.Max(peak, math.Abs(float64(x)))
		}
		// -1 dBFS of 2048 is 1825.3: the peak lies within a code of it.
		if want := 2048 * math.Pow(10, -1.0/20); math.Abs(peak-want) > 1 && peak < want {
			t.Errorf("%s peaks at %v, want about %.1f", name, peak, want)
		}
	}
	var seenLo, seenHi bool
	for _, x := range byName["noise"].In[1] {
		if x < lo || x > hi {
			t.Fatalf("noise code %d outside the 12-bit word", x)
		}
		seenLo, seenHi = seenLo || x < -1900, seenHi || x > 1900
	}
	if !seenLo || !seenHi {
		t.Error("noise does not span the input word")
	}

	files := v.Files()
	if files[0].Name != "vectors/README.txt" || !bytes.Contains(files[0].Data, []byte("cic3m1r8 > hb")) {
		t.Errorf("first file %s lacks the notation", files[0].Name)
	}
	want := 1 + len(Signals)*(2+len(c.Stages))
	if len(files) != want {
		t.Fatalf("%d files, want %d", len(files), want)
	}
	data := map[string][]byte{}
	for _, f := range files {
		data[f.Name] = f.Data
	}
	for _, s := range v.Sets {
		check := func(name string, paths [][]int64) {
			rows := strings.Split(strings.TrimSuffix(string(data[name]), "\n"), "\n")
			if len(rows) != len(paths[0]) {
				t.Fatalf("%s: %d lines, want %d", name, len(rows), len(paths[0]))
			}
			for i, row := range rows {
				f := strings.Split(row, " ")
				for p := range paths {
					if n, err := strconv.ParseInt(f[p], 10, 64); err != nil || n != paths[p][i] {
						t.Fatalf("%s line %d: %q, want %d", name, i+1, row, paths[p][i])
					}
				}
			}
		}
		check("vectors/"+s.Name+".in.txt", s.In)
		for k := range s.Stages {
			check(fmt.Sprintf("vectors/%s.stage%d.txt", s.Name, k+1), s.Stages[k])
		}
		check("vectors/"+s.Name+".out.txt", s.Stages[len(s.Stages)-1])
	}
}

// A chain whose settling exceeds the cap gets vectors of the cap's length,
// marked as not settled.
func TestCapMarksUnsettled(t *testing.T) {
	c := fixed.Cascade{InputRate: 1e6, Passband: 10, Stages: []fixed.Stage{{CIC: true, N: 4, M: 1, R: 1000}}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 8, OutputBits: 16}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	v, err := Generate(c, w, Options{MaxInput: 2000})
	if err != nil {
		t.Fatal(err)
	}
	if v.Settled || v.InputSamples != 2000 || v.Settling != 3997 {
		t.Errorf("settled %v, %d samples, settling %d; want false, 2000, 3997", v.Settled, v.InputSamples, v.Settling)
	}
	if !bytes.Contains(v.Files()[0].Data, []byte("does NOT reach")) {
		t.Error("README does not say the vectors stop short of the settling")
	}
}

// CICs whose registers need 64 to 127 bits (run in 128-bit arithmetic)
// match the math/big re-implementation too: 16 seeded random ones, each
// followed by a short FIR, real and complex.
func TestWideCICMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 2))
	loose := []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
	checked := 0
	for checked < 16 {
		c := fixed.Cascade{InputRate: 1e6, Passband: 10, Complex: rng.IntN(2) == 0, Stages: []fixed.Stage{
			{CIC: true, N: 5 + rng.IntN(4), M: 1 + rng.IntN(2), R: 16 + rng.IntN(200)},
			{R: 2, Taps: []float64{0.1, 0.4, 0.4, 0.1}, Bands: loose},
		}}
		w, err := fixed.Plan(c, fixed.Words{InputBits: 12 + rng.IntN(9), OutputBits: 16 + rng.IntN(17), CoefBits: 12}, fixed.Settings{})
		if err != nil || w.Stages[0].Pruning.FullBits <= 63 {
			continue
		}
		v, err := Generate(c, w, Options{MaxInput: 2500})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range v.Sets {
			for p := range s.In {
				want := refCIC(s.In[p], w.Stages[0].Pruning)
				got := s.Stages[0][p]
				if len(got) != len(want) {
					t.Fatalf("%s: %d outputs, reference %d", s.Name, len(got), len(want))
				}
				for i := range got {
					if got[i] != want[i] {
						t.Fatalf("%d-bit CIC %+v, %s path %d sample %d: vectors %d, reference %d", w.Stages[0].Pruning.FullBits, c.Stages[0], s.Name, p, i, got[i], want[i])
					}
				}
			}
		}
		checked++
	}
}
