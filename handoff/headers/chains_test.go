package headers

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/internal/testfilters"
)

// planned is one chain for the tests: the cascade, its plan and the options
// its files are written with.
type planned struct {
	cas  fixed.Cascade
	w    *fixed.Widths
	opts Options
}

// kaiserLowpass is internal/testfilters' Kaiser lowpass, cutoff fc a
// fraction of the rate.
func kaiserLowpass(n int, fc, beta float64) []float64 { return testfilters.KaiserLowpass(n, fc, beta) }

// kaiserHalfBand is internal/testfilters' 4K-1 tap half-band.
func kaiserHalfBand(k int, beta float64) []float64 { return testfilters.KaiserHalfBand(k, beta) }

// firStage returns an FIR (or half-band) stage with loose bands: with a
// fixed coefficient width the plan keeps the width whatever the bands say.
func firStage(rng *rand.Rand, hb bool) fixed.Stage {
	if hb {
		return fixed.Stage{R: 2, HalfBand: true, Taps: kaiserHalfBand(1+rng.IntN(12), 4+4*rng.Float64()),
			Bands: []remez.Band{{Lo: 0, Hi: 0.1, Gain: 1, MaxError: 0.1}, {Lo: 0.4, Hi: 0.5, MaxError: 0.1}}}
	}
	r := 1 + rng.IntN(4)
	n := 1 + rng.IntN(80)
	if rng.IntN(6) == 0 {
		n = 1 + rng.IntN(3)
	}
	fc := 0.5 / float64(r) * (0.6 + 0.3*rng.Float64())
	return fixed.Stage{R: r, Taps: kaiserLowpass(n, fc, 3+6*rng.Float64()),
		Bands: []remez.Band{{Lo: 0, Hi: fc / 2, Gain: 1, MaxError: 0.5}, {Lo: math.Min(0.5, fc*1.5), Hi: 0.5, MaxError: 0.5}}}
}

// inHz returns c with firStage's bands, drawn as fractions of each
// stage's own rate, in Hz at the rate its taps run at, as fixed.Stage
// wants them.
func inHz(c fixed.Cascade) fixed.Cascade {
	c.Stages = slices.Clone(c.Stages)
	rate := c.InputRate
	for i := range c.Stages {
		st := &c.Stages[i]
		if !st.CIC {
			bs := slices.Clone(st.Bands)
			for j := range bs {
				bs[j].Lo *= rate
				bs[j].Hi *= rate
			}
			st.Bands = bs
		}
		rate /= float64(st.R)
	}
	return c
}

// randomChain draws a cascade and plans it, the shapes of chain/fixed's
// tests: CIC only, CIC then FIRs, half-bands, FIRs only; real or complex;
// coefficient widths in [coefLo, coefHi]; CIC registers of at most 63 bits.
func randomChain(rng *rand.Rand, shape, coefLo, coefHi int) (fixed.Cascade, *fixed.Widths) {
	for {
		c := fixed.Cascade{InputRate: 1, Complex: rng.IntN(2) == 0}
		cic := func() fixed.Stage {
			return fixed.Stage{CIC: true, N: 1 + rng.IntN(6), M: 1 + rng.IntN(2), R: 2 + rng.IntN(63)}
		}
		switch shape % 5 {
		case 0: // CIC only, sometimes two
			c.Stages = append(c.Stages, cic())
			if rng.IntN(3) == 0 {
				c.Stages = append(c.Stages, cic())
			}
		case 1: // CIC then an FIR
			c.Stages = append(c.Stages, cic(), firStage(rng, false))
		case 2: // CIC, half-bands, FIR
			c.Stages = append(c.Stages, cic())
			for range 1 + rng.IntN(3) {
				c.Stages = append(c.Stages, firStage(rng, true))
			}
			c.Stages = append(c.Stages, firStage(rng, false))
		case 3: // half-bands only
			for range 1 + rng.IntN(3) {
				c.Stages = append(c.Stages, firStage(rng, true))
			}
		case 4: // FIRs only
			for range 1 + rng.IntN(2) {
				c.Stages = append(c.Stages, firStage(rng, false))
			}
		}
		c = inHz(c)
		words := fixed.Words{
			InputBits:  2 + rng.IntN(31),
			OutputBits: 2 + rng.IntN(31),
			DataBits:   2 + rng.IntN(31),
			CoefBits:   coefLo + rng.IntN(coefHi-coefLo+1),
		}
		w, err := fixed.Plan(c, words, fixed.Settings{UnityGain: rng.IntN(3) == 0})
		if err != nil {
			continue // e.g. an accumulator over 63 bits, a half-band centre at 2 bits: draw again
		}
		ok := true
		for _, s := range w.Stages {
			if s.CIC && s.Pruning.FullBits > 63 {
				ok = false
			}
		}
		if ok {
			return c, w
		}
	}
}

// edgeChain is a plan made by hand at the limits of what the files carry: a
// 32-bit word holding +-(2^31 - 1) (the VHDL integer limit), 40- and 64-bit
// words (int64_t, signed vectors only), a single tap, negative shifts and
// fractional bits, and a CIC with 63-bit registers.
func edgeChain() (fixed.Cascade, *fixed.Widths) {
	m31, m39, m63 := int64(1)<<31-1, int64(1)<<39-1, int64(math.MaxInt64)
	p, err := chain.PruneCIC(6, 1, 128, 20, 32)
	if err != nil {
		panic(err)
	}
	c := fixed.Cascade{InputRate: 1e6, Complex: true, Stages: []fixed.Stage{
		{CIC: true, N: 6, M: 1, R: 128},
		{R: 2, Taps: make([]float64, 5)},
		{R: 3, Taps: make([]float64, 3)},
		{R: 1, Taps: make([]float64, 1)},
		{R: 2, HalfBand: true, Taps: make([]float64, 3)},
	}}
	w := &fixed.Widths{InputBits: 20, OutputBits: 2, DCGain: 1, GainCorrection: 1, CorrectedStage: -1, Stages: []fixed.StageWidths{
		{CIC: true, R: 128, InputBits: 20, OutputBits: p.OutputBits, OutputShift: p.Dropped[2*p.N], AccumulatorBits: p.FullBits, Pruning: &p, Gain: p.Gain(), GainCorrection: 1},
		{R: 2, InputBits: 32, OutputBits: 32, OutputShift: -7, AccumulatorBits: 63, Gain: 1, GainCorrection: 1,
			Coefficients: fixed.Coefficients{Bits: 32, Frac: 40, Ints: []int64{m31, -m31, 0, -1, 1}}},
		{R: 3, InputBits: 32, OutputBits: 20, OutputShift: 50, AccumulatorBits: 63, Gain: 1, GainCorrection: 1,
			Coefficients: fixed.Coefficients{Bits: 40, Frac: -3, Ints: []int64{-m39, m39, 12345678901}}},
		{R: 1, InputBits: 20, OutputBits: 2, OutputShift: 0, AccumulatorBits: 2, Gain: 1, GainCorrection: 1,
			Coefficients: fixed.Coefficients{Bits: 64, Frac: 63, Ints: []int64{-m63}}},
		{R: 2, HalfBand: true, InputBits: 2, OutputBits: 2, OutputShift: 1, AccumulatorBits: 4, Gain: 1, GainCorrection: 1,
			Coefficients: fixed.Coefficients{Bits: 2, Frac: 0, Ints: []int64{1, -1, 1}}},
	}}
	return c, w
}

// testChains returns the seeded random chains and the hand-made one, each
// with a prefix of its own (so that one program can include them all).
func testChains(n int) []planned {
	rng := rand.New(rand.NewPCG(20260512, 7))
	var out []planned
	for i := range n {
		lo, hi := 2, 32
		if i == n-1 {
			lo, hi = 33, fixed.MaxBits // the int64_t / signed-only path
		}
		c, w := randomChain(rng, i, lo, hi)
		out = append(out, planned{c, w, Options{Prefix: fmt.Sprintf("T%d_rnd", i+1), Notation: fmt.Sprintf("random chain %d", i+1)}})
	}
	c, w := edgeChain()
	out = append(out, planned{c, w, Options{Prefix: "Edge"}})
	for i, nr := range nrChains() {
		out = append(out, planned{nr.cas, nr.w, Options{Prefix: fmt.Sprintf("Nr%d", i+1), Notation: "non-recursive CIC"}})
	}
	return out
}

// nrChains are planned chains with non-recursive CICs: order 1 with R = 2
// alone, complex; order 6 with R = 256 (eight sub-stages, 16 to 58 bits)
// before a half-band and an FIR; order 3, R = 8, between FIRs as the
// second stage.
func nrChains() []planned {
	rng := rand.New(rand.NewPCG(15, 4))
	nr := func(n, r int) fixed.Stage { return fixed.Stage{CIC: true, N: n, M: 1, R: r, NonRecursive: true} }
	mk := func(c fixed.Cascade, words fixed.Words) planned {
		c = inHz(c)
		w, err := fixed.Plan(c, words, fixed.Settings{})
		if err != nil {
			panic(err)
		}
		return planned{cas: c, w: w}
	}
	return []planned{
		mk(fixed.Cascade{InputRate: 1, Complex: true, Stages: []fixed.Stage{nr(1, 2)}}, fixed.Words{InputBits: 8, OutputBits: 8}),
		mk(fixed.Cascade{InputRate: 1, Stages: []fixed.Stage{nr(6, 256), firStage(rng, true), firStage(rng, false)}}, fixed.Words{InputBits: 10, OutputBits: 24, CoefBits: 18}),
		mk(fixed.Cascade{InputRate: 1, Stages: []fixed.Stage{firStage(rng, false), nr(3, 8), firStage(rng, false)}}, fixed.Words{InputBits: 14, OutputBits: 16, CoefBits: 12}),
	}
}

// constant is one constant the files must declare, from the plan itself
// (fixed.Widths), written apart from the package's own layout.
type constant struct {
	name   string // with the prefix
	array  bool
	values []int64 // a scalar's value is values[0]
	coef   bool
	bits   int // a coefficient array's word width
}

func want(p planned) []constant {
	if p.cas.Interpolate {
		return wantInterp(p)
	}
	pre := "STEPDOWN"
	if p.opts.Prefix != "" {
		pre = toUpper(p.opts.Prefix)
	}
	sc := func(name string, v int) constant { return constant{name: pre + "_" + name, values: []int64{int64(v)}} }
	b2i := map[bool]int{false: 0, true: 1}
	out := []constant{
		sc("NUM_STAGES", len(p.w.Stages)), sc("INPUT_BITS", p.w.InputBits), sc("OUTPUT_BITS", p.w.OutputBits),
		sc("COMPLEX", b2i[p.cas.Complex]), sc("KIND_CIC", 0), sc("KIND_FIR", 1), sc("KIND_HALFBAND", 2), sc("KIND_CIC_NONRECURSIVE", 3),
	}
	ints := func(v []int) []int64 {
		o := make([]int64, len(v))
		for k, x := range v {
			o[k] = int64(x)
		}
		return o
	}
	for i, s := range p.w.Stages {
		n := "S" + strconv.Itoa(i+1) + "_"
		kind := 1
		switch {
		case s.CIC && s.NonRecursive:
			kind = 3
		case s.CIC:
			kind = 0
		case s.HalfBand:
			kind = 2
		}
		out = append(out, sc(n+"KIND", kind), sc(n+"R", p.cas.Stages[i].R), sc(n+"INPUT_BITS", s.InputBits),
			sc(n+"OUTPUT_BITS", s.OutputBits), sc(n+"ACC_BITS", s.AccumulatorBits))
		if s.CIC && s.NonRecursive {
			// chain.NonRecursiveBits, recomputed: Bin + N i for i = 1..log2 R.
			st := p.cas.Stages[i]
			var subs []int64
			for r, j := st.R, 1; r > 1; r, j = r/2, j+1 {
				subs = append(subs, int64(s.InputBits+st.N*j))
			}
			out = append(out, sc(n+"OUTPUT_SHIFT", int(subs[len(subs)-1])-s.OutputBits), sc(n+"ORDER", st.N), sc(n+"NUM_SUBSTAGES", len(subs)),
				constant{name: pre + "_" + n + "SUBSTAGE_BITS", array: true, values: subs})
			continue
		}
		if s.CIC {
			pr := s.Pruning
			out = append(out, sc(n+"OUTPUT_SHIFT", pr.Dropped[2*pr.N]), sc(n+"ORDER", p.cas.Stages[i].N), sc(n+"DELAY", p.cas.Stages[i].M),
				sc(n+"GUARD_BITS", pr.GuardBits), sc(n+"NUM_REGS", 2*pr.N),
				constant{name: pre + "_" + n + "REG_BITS", array: true, values: ints(pr.RegisterBits)},
				constant{name: pre + "_" + n + "REG_DROPPED", array: true, values: ints(pr.Dropped[:2*pr.N])})
			continue
		}
		cf := s.Coefficients
		out = append(out, sc(n+"OUTPUT_SHIFT", s.OutputShift), sc(n+"NUM_TAPS", len(cf.Ints)), sc(n+"COEF_BITS", cf.Bits), sc(n+"COEF_FRAC", cf.Frac),
			constant{name: pre + "_" + n + "COEFS", array: true, values: cf.Ints, coef: true, bits: cf.Bits})
	}
	return out
}

func toUpper(s string) string {
	b := []byte(s)
	for i, c := range b {
		if c >= 'a' && c <= 'z' {
			b[i] = c - 'a' + 'A'
		}
	}
	return string(b)
}
