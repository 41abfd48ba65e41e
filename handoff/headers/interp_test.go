package headers

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// toolChains are the chains the tool tests (TestC, TestVHDL, TestVerilog,
// TestVerilator) compile: the decimation chains of testChains and the
// interpolation chains of interpChains.
func toolChains() []planned {
	return append(testChains(numRandom), interpChains()...)
}

// interpFIR returns an interpolating FIR (or half-band) stage with loose
// bands at its output rate: with a fixed coefficient width the plan keeps
// it whatever they say.
func interpFIR(rng *rand.Rand, hb bool) fixed.Stage {
	st := firStage(rng, hb)
	st.Interpolate = true
	return st
}

// interpChains are planned interpolation chains: seeded random ones of
// the shapes a transmit chain takes (FIR then CIC, FIR, half-bands and a
// CIC, half-bands only, FIRs only, a CIC alone; real or complex; words of 2
// to 32 bits; factors 1 to 64), a CIC interpolator whose registers pass 63
// bits (order 8, R = 1024, 24-bit input: registers up to 94 bits), and
// two chains designed by the chain package from invented transmit specs.
// The tests share one copy (interpChains) and change only copies of it.
func interpChains() []planned { return slices.Clone(interpChainsOnce()) }

var interpChainsOnce = sync.OnceValue(makeInterpChains)

func makeInterpChains() []planned {
	rng := rand.New(rand.NewPCG(20260513, 9))
	var out []planned
	for i := 0; len(out) < 6; i++ {
		c := fixed.Cascade{InputRate: 1e6, Complex: rng.IntN(2) == 0, Interpolate: true}
		cic := fixed.Stage{CIC: true, N: 1 + rng.IntN(6), M: 1 + rng.IntN(2), R: 2 + rng.IntN(63), Interpolate: true}
		switch i % 6 {
		case 0:
			c.Stages = append(c.Stages, interpFIR(rng, false), cic)
		case 1:
			c.Stages = append(c.Stages, interpFIR(rng, false))
			for range 1 + rng.IntN(2) {
				c.Stages = append(c.Stages, interpFIR(rng, true))
			}
			c.Stages = append(c.Stages, cic)
		case 2:
			for range 1 + rng.IntN(3) {
				c.Stages = append(c.Stages, interpFIR(rng, true))
			}
		case 3:
			for range 1 + rng.IntN(2) {
				c.Stages = append(c.Stages, interpFIR(rng, false))
			}
		case 4:
			c.Stages = append(c.Stages, cic)
		case 5:
			c.Stages = append(c.Stages, interpFIR(rng, true), cic)
		}
		words := fixed.Words{InputBits: 2 + rng.IntN(31), OutputBits: 2 + rng.IntN(31), DataBits: 2 + rng.IntN(31), CoefBits: 2 + rng.IntN(31)}
		w, err := fixed.Plan(c, words, fixed.Settings{UnityGain: rng.IntN(3) == 0})
		if err != nil {
			continue // e.g. a half-band's centre at 2 bits: draw again
		}
		n := len(out) + 1
		out = append(out, planned{c, w, Options{Prefix: fmt.Sprintf("I%d_rnd", n), Notation: fmt.Sprintf("random interpolation chain %d", n)}})
	}
	// A CIC interpolator over 63 bits: its last integrator holds 24 + 8
	// log2(1024) - log2(1024) = 94 bits (Hogenauer's interpolator growth).
	wide := fixed.Cascade{InputRate: 1e4, Interpolate: true, Stages: []fixed.Stage{
		{R: 2, Taps: []float64{0.1, 0.4, 0.4, 0.1}, Bands: []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}, Interpolate: true},
		{CIC: true, N: 8, M: 1, R: 1024, Interpolate: true},
	}}
	ww, err := fixed.Plan(wide, fixed.Words{InputBits: 24, OutputBits: 24, CoefBits: 40}, fixed.Settings{})
	if err != nil {
		panic(err)
	}
	out = append(out, planned{wide, ww, Options{Prefix: "Wide_tx", Notation: "fir2 > cic8m1r1024"}})
	for i, tc := range []struct {
		notation string
		cplx     bool
	}{{"fir2 > hb > cic5m1r8", true}, {"fir3 > cic4m2r5", false}} {
		plan, err := chain.Interpolate.ParseNotation(tc.notation)
		if err != nil {
			panic(err)
		}
		l := 1
		for _, p := range plan {
			l *= p.Factor
		}
		// Invented transmit specs: a 1 MS/s channel, flat to 200 kHz,
		// brought up to L MS/s.
		spec := chain.Spec{InputRate: 1e6, OutputRate: float64(l) * 1e6, Passband: 2e5, RippleDB: 0.1, RejectionDB: 70,
			Complex: tc.cplx, InputBits: 16, OutputBits: 14}
		ch, err := chain.Design(spec, plan, chain.Settings{})
		if err != nil {
			panic(err)
		}
		cas, _, err := fixed.FromChain(spec, ch)
		if err != nil {
			panic(err)
		}
		w, _, err := fixed.PlanChain(spec, ch, fixed.Settings{})
		if err != nil {
			panic(err)
		}
		out = append(out, planned{cas, w, Options{Prefix: fmt.Sprintf("Tx%d", i+1), Notation: tc.notation}})
	}
	return out
}

// wantInterp is want for an interpolation chain, from the plan and the
// interpolation contract: the chain's INTERPOLATE and INTERPOLATION, each
// stage's L, an FIR's shift, floor(log2 L), widest phase, taps per phase
// and coefficients, a CIC interpolator's combs and integrators.
func wantInterp(p planned) []constant {
	pre := toUpper(p.opts.Prefix)
	sc := func(name string, v int) constant { return constant{name: pre + "_" + name, values: []int64{int64(v)}} }
	b2i := map[bool]int{false: 0, true: 1}
	l := 1
	for _, st := range p.cas.Stages {
		l *= st.R
	}
	out := []constant{
		sc("NUM_STAGES", len(p.w.Stages)), sc("INPUT_BITS", p.w.InputBits), sc("OUTPUT_BITS", p.w.OutputBits),
		sc("COMPLEX", b2i[p.cas.Complex]), sc("INTERPOLATE", 1), sc("INTERPOLATION", l),
		sc("KIND_CIC", 0), sc("KIND_FIR", 1), sc("KIND_HALFBAND", 2), sc("KIND_CIC_NONRECURSIVE", 3),
	}
	for i, s := range p.w.Stages {
		st := p.cas.Stages[i]
		n := "S" + strconv.Itoa(i+1) + "_"
		kind := 1
		switch {
		case s.CIC:
			kind = 0
		case s.HalfBand:
			kind = 2
		}
		out = append(out, sc(n+"KIND", kind), sc(n+"L", st.R), sc(n+"INPUT_BITS", s.InputBits), sc(n+"OUTPUT_BITS", s.OutputBits))
		if s.CIC {
			ci := s.CICInterp
			var combs, integs []int64
			for j := 0; j < st.N; j++ {
				combs = append(combs, int64(ci.RegisterBits[j]))
				integs = append(integs, int64(ci.RegisterBits[st.N+j]))
			}
			full := ci.RegisterBits[2*st.N-1]
			out = append(out, sc(n+"OUTPUT_SHIFT", full-s.OutputBits), sc(n+"ACC_BITS", slices.Max(ci.RegisterBits)), sc(n+"FULL_BITS", full),
				sc(n+"ORDER", st.N), sc(n+"DELAY", st.M),
				constant{name: pre + "_" + n + "COMB_BITS", array: true, values: combs},
				constant{name: pre + "_" + n + "INTEG_BITS", array: true, values: integs})
			continue
		}
		cf := s.Coefficients
		gain := 0
		for 2<<gain <= st.R {
			gain++
		}
		out = append(out, sc(n+"OUTPUT_SHIFT", s.OutputShift), sc(n+"GAIN_SHIFT", gain), sc(n+"ACC_BITS", s.AccumulatorBits),
			sc(n+"NUM_TAPS", len(cf.Ints)), sc(n+"PHASE_TAPS", (len(cf.Ints)+st.R-1)/st.R),
			sc(n+"COEF_BITS", cf.Bits), sc(n+"COEF_FRAC", cf.Frac),
			constant{name: pre + "_" + n + "COEFS", array: true, values: cf.Ints, coef: true, bits: cf.Bits})
	}
	return out
}

// The interpolation chains' plans are what the tool tests need: FIR
// factors of 3 and 4 or more (floor(log2 L) of 1 and more), half-bands, CIC
// interpolators with M = 2, a register over 63 bits and the widest
// register a comb; their files say interpolation, name each stage's L and
// leave the decimation constants out.
func TestInterpChainsCover(t *testing.T) {
	seen := map[string]bool{}
	for _, p := range interpChains() {
		for i, st := range p.cas.Stages {
			sw := p.w.Stages[i]
			seen["fir L>=4"] = seen["fir L>=4"] || !st.CIC && st.R >= 4
			seen["half-band"] = seen["half-band"] || st.HalfBand
			seen["fir L=3"] = seen["fir L=3"] || !st.CIC && st.R == 3
			if st.CIC {
				ci := sw.CICInterp
				seen["cic M=2"] = seen["cic M=2"] || st.M == 2
				seen["cic > 63 bits"] = seen["cic > 63 bits"] || slices.Max(ci.RegisterBits) > 63
				seen["widest a comb"] = seen["widest a comb"] || slices.Max(ci.RegisterBits[:st.N]) > ci.FullBits()
			}
		}
		seen["complex"] = seen["complex"] || p.cas.Complex
		seen["unity gain"] = seen["unity gain"] || p.w.CorrectedStage >= 0
		fs, err := Files(p.cas, p.w, p.opts)
		if err != nil {
			t.Fatalf("%s: %v", p.opts.Notation, err)
		}
		pre := toUpper(p.opts.Prefix)
		for _, f := range fs {
			s := string(f.Data)
			for _, want := range []string{"the fixed-point plan of an interpolation chain", "Interpolation chain: output rate", pre + "_S1_L", pre + "_INTERPOLATION"} {
				if !strings.Contains(s, want) {
					t.Errorf("%s %s lacks %q", p.opts.Notation, f.Name, want)
				}
			}
			for _, not := range []string{pre + "_S1_R ", "REG_DROPPED", "GUARD_BITS", "decimation factor"} {
				if strings.Contains(s, not) {
					t.Errorf("%s %s holds %q", p.opts.Notation, f.Name, not)
				}
			}
		}
	}
	for _, f := range []string{"fir L>=4", "half-band", "fir L=3", "cic M=2", "cic > 63 bits", "widest a comb", "complex", "unity gain"} {
		if !seen[f] {
			t.Errorf("no interpolation chain has %q", f)
		}
	}
}

// An interpolation plan that does not belong to its cascade, or mixes
// directions, is an error naming the stage and the rule.
func TestInterpErrors(t *testing.T) {
	base := interpChains()[0] // an FIR, then a CIC interpolator
	for _, tc := range []struct {
		name  string
		edit  func(c *fixed.Cascade, w *fixed.Widths)
		wants []string
	}{
		{"mixed", func(c *fixed.Cascade, w *fixed.Widths) { c.Stages[1].Interpolate = false }, []string{"stage 2", "one direction"}},
		{"widths direction", func(c *fixed.Cascade, w *fixed.Widths) { w.Stages[0].Interpolate = false }, []string{"stage 1", "one direction"}},
		{"no plan", func(c *fixed.Cascade, w *fixed.Widths) { w.Stages[1].CICInterp = nil }, []string{"stage 2", "CICInterp is nil"}},
		{"order", func(c *fixed.Cascade, w *fixed.Widths) { c.Stages[1].N++ }, []string{"stage 2", "in its register plan"}},
		{"shift", func(c *fixed.Cascade, w *fixed.Widths) { w.Stages[1].OutputShift++ }, []string{"stage 2", "OutputShift"}},
		{"registers", func(c *fixed.Cascade, w *fixed.Widths) {
			ci := *w.Stages[1].CICInterp
			ci.RegisterBits = ci.RegisterBits[:1]
			w.Stages[1].CICInterp = &ci
		}, []string{"stage 2", "register widths"}},
		{"factor", func(c *fixed.Cascade, w *fixed.Widths) { c.Stages[0].R = 7 }, []string{"stage 1", "factor L = 7"}},
		{"non-recursive", func(c *fixed.Cascade, w *fixed.Widths) { c.Stages[1].NonRecursive = true }, []string{"stage 2", "non-recursive"}},
	} {
		c := base.cas
		c.Stages = append([]fixed.Stage(nil), c.Stages...)
		w := *base.w
		w.Stages = append([]fixed.StageWidths(nil), w.Stages...)
		tc.edit(&c, &w)
		_, err := Files(c, &w, base.opts)
		if err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		for _, s := range tc.wants {
			if !strings.Contains(err.Error(), s) {
				t.Errorf("%s: error %q does not say %q", tc.name, err, s)
			}
		}
	}
}

// Random damage to a valid interpolation plan gives files or an error,
// never a panic.
func TestInterpNoPanic(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 12))
	chains := interpChains()[:6]
	vals := []int{-1 << 40, -70, -1, 0, 1, 2, 31, 32, 33, 63, 64, 65, 255, 256, 1 << 40}
	for trial := range 2000 {
		p := chains[trial%len(chains)]
		c := p.cas
		c.Stages = append([]fixed.Stage(nil), c.Stages...)
		w := *p.w
		w.Stages = append([]fixed.StageWidths(nil), w.Stages...)
		i := rng.IntN(len(w.Stages))
		s := &w.Stages[i]
		v := vals[rng.IntN(len(vals))]
		switch rng.IntN(8) {
		case 0:
			s.OutputShift = v
		case 1:
			s.R, c.Stages[i].R = v, v
		case 2:
			if s.CICInterp != nil {
				q := *s.CICInterp
				q.N, c.Stages[i].N = v, v
				s.CICInterp = &q
			}
		case 3:
			if s.CICInterp != nil {
				q := *s.CICInterp
				q.RegisterBits = append([]int(nil), q.RegisterBits[:rng.IntN(len(q.RegisterBits)+1)]...)
				if len(q.RegisterBits) > 0 {
					q.RegisterBits[rng.IntN(len(q.RegisterBits))] = v
				}
				s.CICInterp = &q
			}
		case 4:
			s.AccumulatorBits = v
		case 5:
			s.CIC = !s.CIC
		case 6:
			s.Interpolate = !s.Interpolate
		case 7:
			c.Stages[i].NonRecursive = true
		}
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("trial %d: panic %v", trial, r)
				}
			}()
			_, _ = Files(c, &w, p.opts)
		}()
	}
}
