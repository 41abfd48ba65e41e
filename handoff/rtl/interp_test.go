package rtl_test

import (
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff/rtl"
)

// interpSpec is an invented transmit spec: a channel at 1 MS/s, flat to
// fp times that, brought up by the plan's interpolation L.
type interpSpec struct {
	plan            []chain.StagePlan // decimation order, the high rate first
	fp              float64
	complexIQ       bool
	inBits, outBits int
	unity           bool
}

// designedInterp designs the spec's chain with the chain package and
// plans it with fixed.FromChain and fixed.Plan.
func designedInterp(sp interpSpec) (fixed.Cascade, *fixed.Widths, string, error) {
	const fin = 1e6
	l := 1
	for _, p := range sp.plan {
		l *= p.Factor
	}
	name := chain.Interpolate.Notation(sp.plan)
	spec := chain.Spec{InputRate: fin, OutputRate: float64(l) * fin, Passband: sp.fp * fin, RippleDB: 0.2, RejectionDB: 60,
		Complex: sp.complexIQ, InputBits: sp.inBits, OutputBits: sp.outBits}
	ch, err := chain.Design(spec, sp.plan, chain.Settings{})
	if err != nil {
		return fixed.Cascade{}, nil, name, err
	}
	c, words, err := fixed.FromChain(spec, ch)
	if err != nil {
		return fixed.Cascade{}, nil, name, err
	}
	w, err := fixed.Plan(c, words, fixed.Settings{UnityGain: sp.unity})
	name = fmt.Sprintf("%s complex=%v in=%d out=%d fp=%.3g unity=%v", name, sp.complexIQ, sp.inBits, sp.outBits, sp.fp, sp.unity)
	return c, w, name, err
}

// randomInterpSpec draws an invented transmit spec: in decimation order
// an optional CIC (order 1..6, M 1..2, R 2..64; one draw in eight order 6
// with R 400..1024 on a 22- to 24-bit word, so that its registers pass 63
// bits, and a compensating FIR), up to two half-bands, and an optional FIR
// of factor 2..4 on the channel side; real or complex; words of 4 to 24
// bits; passband 0.04 to 0.3 of the channel rate.
func randomInterpSpec(rng *rand.Rand) interpSpec {
	sp := interpSpec{fp: 0.04 + 0.26*rng.Float64(), complexIQ: rng.IntN(2) == 0,
		inBits: 4 + rng.IntN(21), outBits: 4 + rng.IntN(21), unity: rng.IntN(4) == 0}
	wide := false
	if rng.IntN(4) != 0 {
		p := chain.StagePlan{Kind: chain.CIC, Factor: 2 + rng.IntN(63), CICOrder: 1 + rng.IntN(6), CICDelay: 1 + rng.IntN(2)}
		if rng.IntN(8) == 0 {
			wide = true
			p.Factor, p.CICOrder, p.CICDelay, sp.inBits, sp.fp = 400+rng.IntN(625), 6, 1, 22+rng.IntN(3), 0.04+0.1*rng.Float64()
		}
		sp.plan = append(sp.plan, p)
	}
	for range rng.IntN(3) {
		sp.plan = append(sp.plan, chain.StagePlan{Kind: chain.HalfBand, Factor: 2})
	}
	if wide || len(sp.plan) == 0 || rng.IntN(3) != 0 {
		sp.plan = append(sp.plan, chain.StagePlan{Kind: chain.FIR, Factor: 2 + rng.IntN(3)})
	}
	return sp
}

// interpInputLen returns how many input samples to run: past the chain's
// impulse response (in input samples) and 16 more, at least 24, with at
// most maxOut output samples (and at least 4 inputs).
func interpInputLen(c fixed.Cascade, maxOut int) int {
	l := c.Ratio()
	span, u := 1, 1
	for _, st := range c.Stages {
		u *= st.R
		span += (st.Length() - 1) * (l / u)
	}
	return max(4, min(max(span/l+16, 24), maxOut/l))
}

// passesInterp runs an interpolation chain under iverilog and requires PASS.
func passesInterp(t *testing.T, c fixed.Cascade, w *fixed.Widths, o rtl.Options, seed uint64, maxOut int) string {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(seed, 78))
	layout(t, dir, c, w, o, stimulus(c, w, rng, interpInputLen(c, maxOut)))
	out := simulate(t, dir, false)
	if v := verdict(out); !strings.HasPrefix(v, "PASS") {
		t.Fatalf("the testbench did not pass:\n%s", out)
	}
	return verdict(out)
}

// Designed interpolation chains (invented transmit specs) run bit-exact
// against fixed.Model's interpolating data path: a complex FIR, half-band
// and CIC interpolator, and a real FIR of L = 3 (gain 2/3) before a CIC
// with M = 2; with STEPDOWN_RTL=1 also a half-band pair, a lone FIR, a
// narrow-word chain and a CIC interpolator whose registers pass 63 bits.
func TestInterpDesignedBitExact(t *testing.T) {
	needIverilog(t)
	cic := func(r, n, m int) chain.StagePlan {
		return chain.StagePlan{Kind: chain.CIC, Factor: r, CICOrder: n, CICDelay: m}
	}
	hb := chain.StagePlan{Kind: chain.HalfBand, Factor: 2}
	fir := func(f int) chain.StagePlan { return chain.StagePlan{Kind: chain.FIR, Factor: f} }
	cases := []interpSpec{
		{plan: []chain.StagePlan{cic(8, 5, 1), hb, fir(2)}, fp: 0.2, complexIQ: true, inBits: 16, outBits: 14},
		{plan: []chain.StagePlan{cic(5, 4, 2), fir(3)}, fp: 0.15, inBits: 12, outBits: 16, unity: true},
	}
	maxOut := 2000
	if long() {
		maxOut = 40000
		cases = append(cases,
			interpSpec{plan: []chain.StagePlan{hb, hb}, fp: 0.2, complexIQ: true, inBits: 18, outBits: 18},
			interpSpec{plan: []chain.StagePlan{fir(4)}, fp: 0.1, inBits: 8, outBits: 10},
			interpSpec{plan: []chain.StagePlan{cic(16, 3, 1), fir(2)}, fp: 0.1, complexIQ: true, inBits: 4, outBits: 5},
			interpSpec{plan: []chain.StagePlan{cic(512, 6, 1), fir(2)}, fp: 0.1, inBits: 24, outBits: 24},
		)
	}
	for _, sp := range cases {
		c, w, name, err := designedInterp(sp)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		t.Run(strings.Fields(name)[0], func(t *testing.T) {
			t.Parallel()
			t.Logf("%s: %s", name, passesInterp(t, c, w, rtl.Options{}, 1, maxOut))
		})
	}
}

// Random designed interpolation chains (invented specs drawn by
// randomInterpSpec) run bit-exact under Icarus Verilog: 150 with
// STEPDOWN_RTL=1, covering every stage kind, real and complex, narrow
// words, saturation, the unity-gain correction and CIC registers over 63
// bits; none by default (the designed cases stand for them).
func TestInterpRandomChainsBitExact(t *testing.T) {
	needIverilog(t)
	if !long() {
		t.Skip("150 random designed interpolation chains run with STEPDOWN_RTL=1")
	}
	const n = 150
	rng := rand.New(rand.NewPCG(7, 11))
	planned, refused, widest := 0, 0, 0
	seen := map[string]int{}
	for planned < n {
		sp := randomInterpSpec(rng)
		c, w, name, err := designedInterp(sp)
		if err == nil {
			_, err = fixed.NewModel(c, w)
		}
		if err == nil {
			_, err = rtl.Model(c, w, rtl.Options{})
		}
		if err != nil {
			refused++
			if refused > 4*n {
				t.Fatalf("%d draws refused; last: %s: %v", refused, name, err)
			}
			continue
		}
		planned++
		tallyInterp(seen, c, w)
		for _, sw := range w.Stages {
			if sw.CICInterp != nil {
				widest = max(widest, slices.Max(sw.CICInterp.RegisterBits))
			}
		}
		seed := uint64(planned)
		t.Run(fmt.Sprint(planned), func(t *testing.T) {
			t.Parallel()
			t.Logf("%s: %s", name, passesInterp(t, c, w, rtl.Options{MaxIdle: []int{0, -1, 5}[seed%3]}, seed, 20000))
		})
	}
	t.Logf("%d random designed interpolation chains run, %d draws refused (design or plan); widest CIC register %d bits; features: %v", planned, refused, widest, seen)
	for _, f := range []string{"cic", "cic M=2", "cic > 63 bits", "half-band", "fir", "fir L=3", "complex", "real", "saturating", "word <= 6 bits", "unity gain"} {
		if seen[f] == 0 {
			t.Errorf("no random interpolation chain had %q", f)
		}
	}
}

// tallyInterp counts the features of a planned interpolation chain.
func tallyInterp(seen map[string]int, c fixed.Cascade, w *fixed.Widths) {
	add := func(f string, ok bool) {
		if ok {
			seen[f]++
		}
	}
	add("complex", c.Complex)
	add("real", !c.Complex)
	add("word <= 6 bits", w.InputBits <= 6)
	add("unity gain", w.CorrectedStage >= 0)
	for i, st := range c.Stages {
		sw := w.Stages[i]
		switch {
		case st.CIC:
			add("cic", true)
			add("cic M=2", st.M == 2)
			add("cic > 63 bits", slices.Max(sw.CICInterp.RegisterBits) > 63)
		case st.HalfBand:
			add("half-band", true)
		default:
			add("fir", true)
			add(fmt.Sprintf("fir L=%d", st.R), true)
		}
		if !st.CIC {
			add("saturating", sw.AccumulatorBits-sw.OutputShift > sw.OutputBits)
		}
	}
}

// Hand-made interpolation cascades at the corners: a one-tap FIR with
// L = 1 (no history beyond the newest input), a two-tap FIR with L = 4 (two
// all-zero phases), a CIC interpolator with L = 1 and M = 3 and one of
// order 7 with L = 2 whose widest register is a comb; a narrow input into a wide
// output (a negative shift); and each input every clock (MaxIdle < 0) and
// long stalls (MaxIdle 17) with a prefix of our own.
func TestInterpCornersBitExact(t *testing.T) {
	needIverilog(t)
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Complex: true, Passband: 1e4, Interpolate: true, Stages: []fixed.Stage{
		{R: 1, Taps: []float64{0.75}, Bands: looseBands(rate), Interpolate: true},
		{R: 4, Taps: []float64{0.5, 0.5}, Bands: looseBands(4 * rate), Interpolate: true},
		{CIC: true, N: 2, M: 3, R: 1, Interpolate: true},
		{CIC: true, N: 7, M: 1, R: 2, Interpolate: true},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 3, OutputBits: 20, DataBits: 9, CoefBits: 3}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	ci := w.Stages[3].CICInterp
	if slices.Max(ci.RegisterBits[:ci.N]) <= ci.FullBits() {
		t.Fatalf("the case needs a comb wider than the last integrator: %v", ci.RegisterBits)
	}
	if sh := w.Stages[0].OutputShift; sh >= 0 {
		t.Fatalf("stage 1's OutputShift = %d; the case needs a negative one", sh)
	}
	for _, o := range []rtl.Options{{Prefix: "tx_a", MaxIdle: -1}, {Prefix: "B2", MaxIdle: 17}} {
		t.Run(o.Prefix, func(t *testing.T) {
			t.Parallel()
			t.Log(passesInterp(t, c, w, o, 5, 2000))
		})
	}
}

// The interpolation testbench fails, naming the signal, the stage and the
// sample, on one flipped expected sample; catches a stage that ignores
// in_valid, one that gives phases while its output is not taken
// (out_ready ignored), one that never takes an input and a chain that
// stops giving outputs.
func TestInterpTestbenchFails(t *testing.T) {
	needIverilog(t)
	sp := interpSpec{plan: []chain.StagePlan{{Kind: chain.CIC, Factor: 4, CICOrder: 3, CICDelay: 1}, {Kind: chain.HalfBand, Factor: 2}, {Kind: chain.FIR, Factor: 2}},
		fp: 0.15, complexIQ: true, inBits: 10, outBits: 16}
	c, w, name, err := designedInterp(sp)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	sig := stimulus(c, w, rand.New(rand.NewPCG(9, 9)), 30)
	edit := func(t *testing.T, dir, module, from, to string) {
		t.Helper()
		f := filepath.Join(dir, "rtl", "stepdown_chain.v")
		b, err := os.ReadFile(f)
		must(t, err)
		mod := string(b)
		i := strings.Index(mod, "module "+module)
		j := i + strings.Index(mod[i:], from)
		if i < 0 || j < i {
			t.Fatalf("%q not found in module %s", from, module)
		}
		must(t, os.WriteFile(f, []byte(mod[:j]+to+mod[j+len(from):]), 0o644))
	}
	cases := []struct {
		name string
		do   func(t *testing.T, dir string)
		want string // the FAIL line's start
	}{
		{"flipped", func(t *testing.T, dir string) {
			f := filepath.Join(dir, "vectors", "tone.stage3.txt")
			b, err := os.ReadFile(f)
			must(t, err)
			lines := strings.Split(string(b), "\n")
			var i, q int64
			if _, err := fmt.Sscan(lines[37], &i, &q); err != nil {
				t.Fatal(err)
			}
			lines[37] = fmt.Sprintf("%d %d", i^1, q)
			must(t, os.WriteFile(f, []byte(strings.Join(lines, "\n")), 0o644))
		}, "FAIL: signal tone, stage 3 (vectors/tone.stage3.txt), sample 37: expected"},
		{"ignores_valid", func(t *testing.T, dir string) {
			edit(t, dir, "stepdown_s2_hb", "wire take = in_valid & in_ready;", "wire take = in_ready;")
		}, "FAIL: signal impulse, stage 2"},
		{"ignores_ready", func(t *testing.T, dir string) {
			edit(t, dir, "stepdown_s3_cic", "wire load = pend & (~out_valid | out_ready);", "wire load = pend;")
		}, "FAIL: signal impulse, output"},
		{"never_ready", func(t *testing.T, dir string) {
			edit(t, dir, "stepdown_s1_fir", "assign in_ready = ~pend | (load & last);", "assign in_ready = 1'b0;")
		}, "FAIL: signal impulse, input (vectors/impulse.in.txt), sample 0: the chain did not take it within"},
		{"stalls", func(t *testing.T, dir string) {
			edit(t, dir, "stepdown_s3_cic", "if (last) pend <= 1'b0;", "if (last) pend <= 1'b0;\n        if (last) out_valid <= 1'b0;")
		}, "FAIL: signal impulse,"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if !long() && tc.name != "flipped" {
				t.Skip("with STEPDOWN_RTL=1")
			}
			t.Parallel()
			dir := t.TempDir()
			layout(t, dir, c, w, rtl.Options{}, sig)
			tc.do(t, dir)
			out := simulate(t, dir, true)
			if v := verdict(out); !strings.HasPrefix(v, tc.want) {
				t.Errorf("got %q, want a line starting %q\n%s", v, tc.want, out)
			}
		})
	}
}

// Verilator (when on PATH) lints the interpolation model without a
// warning but the two the decimation model waives.
func TestInterpVerilatorLint(t *testing.T) {
	if _, err := exec.LookPath("verilator"); err != nil {
		t.Skip("verilator is not on PATH")
	}
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Complex: true, Passband: 1e4, Interpolate: true, Stages: []fixed.Stage{
		{R: 3, Taps: kaiserLowpass(14, 0.15, 8), Bands: looseBands(3 * rate), Interpolate: true},
		{R: 2, HalfBand: true, Taps: kaiserHalfBand(3, 8), Bands: looseBands(6 * rate), Interpolate: true},
		{CIC: true, N: 4, M: 2, R: 5, Interpolate: true},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 5, OutputBits: 30, DataBits: 12, CoefBits: 10}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	model, err := rtl.Model(c, w, rtl.Options{Prefix: "lint"})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(model), "the input shifted") {
		t.Error("the half-band's centre phase is not written as a shift")
	}
	dir := t.TempDir()
	f := filepath.Join(dir, "lint_chain.v")
	must(t, os.WriteFile(f, model, 0o644))
	cmd := exec.Command("verilator", "--lint-only", "-Wall", "-Wno-UNUSEDSIGNAL", "-Wno-DECLFILENAME", "--top-module", "lint_chain", f)
	if out, err := cmd.CombinedOutput(); err != nil || len(out) > 0 {
		t.Errorf("verilator --lint-only -Wall: %v\n%s", err, out)
	}
}

// Interpolation plans the generator cannot write are errors naming the
// stage and the rule.
func TestInterpErrors(t *testing.T) {
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Passband: 1e4, Interpolate: true, Stages: []fixed.Stage{
		{R: 2, Taps: kaiserLowpass(9, 0.2, 8), Bands: looseBands(2 * rate), Interpolate: true},
		{CIC: true, N: 3, M: 1, R: 4, Interpolate: true},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 14, CoefBits: 12}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	mut := func(f func(c *fixed.Cascade, w *fixed.Widths)) (fixed.Cascade, *fixed.Widths) {
		cc := c
		cc.Stages = append([]fixed.Stage(nil), c.Stages...)
		ww := *w
		ww.Stages = append([]fixed.StageWidths(nil), w.Stages...)
		f(&cc, &ww)
		return cc, &ww
	}
	for _, tc := range []struct {
		name, want string
		f          func(c *fixed.Cascade, w *fixed.Widths)
	}{
		{"mixed", "stage 2: Interpolate is false", func(c *fixed.Cascade, _ *fixed.Widths) { c.Stages[1].Interpolate = false }},
		{"no plan", "stage 2: the CIC interpolator has no register plan", func(_ *fixed.Cascade, w *fixed.Widths) { w.Stages[1].CICInterp = nil }},
		{"order", "stage 2: the register plan is for N = 3", func(c *fixed.Cascade, _ *fixed.Widths) { c.Stages[1].N = 4 }},
		{"shift", "stage 2: OutputShift = ", func(_ *fixed.Cascade, w *fixed.Widths) { w.Stages[1].OutputShift++ }},
		{"accumulator", "stage 1: AccumulatorBits = 10", func(_ *fixed.Cascade, w *fixed.Widths) { w.Stages[0].AccumulatorBits = 10 }},
		{"non-recursive", "stage 2: a non-recursive CIC", func(c *fixed.Cascade, _ *fixed.Widths) { c.Stages[1].NonRecursive = true }},
	} {
		cc, ww := mut(tc.f)
		if _, err := rtl.Model(cc, ww, rtl.Options{}); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
	// Three CICs of R = 2^20: an interpolation of 2^60, beyond the
	// testbench's counts.
	big := fixed.Cascade{InputRate: 1, Passband: 0.1, Interpolate: true}
	for range 3 {
		big.Stages = append(big.Stages, fixed.Stage{CIC: true, N: 1, M: 1, R: 1 << 20, Interpolate: true})
	}
	bw, err := fixed.Plan(big, fixed.Words{InputBits: 8, OutputBits: 8}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := rtl.Testbench(big, bw, rtl.Options{}, []string{"x"}); err == nil || !strings.Contains(err.Error(), "stage 3: factor 1048576 makes the chain's interpolation over 1099511627776") {
		t.Errorf("an interpolation of 2^60: err = %v", err)
	}
}

// CIC interpolators whose registers pass 63 bits (fixed.Model runs them in
// 128-bit arithmetic), each after an FIR interpolating by 2: order 6,
// R = 128 on a 32-bit word (a 67-bit last integrator: Bin + N log2 R -
// log2 R, Hogenauer's interpolator growth), and with STEPDOWN_RTL=1 order
// 10, R = 1024 on a 24-bit word (114 bits), each run past its N inputs of
// comb history, bit-exact.
func TestInterpWideCICBitExact(t *testing.T) {
	needIverilog(t)
	type wideCase struct{ n, r, in, full, inputs int }
	cases := []wideCase{{6, 128, 32, 67, 8}}
	if long() {
		cases = append(cases, wideCase{10, 1024, 24, 114, 24})
	}
	for _, tc := range cases {
		rate := 1e4
		c := fixed.Cascade{InputRate: rate, Passband: 100, Interpolate: true, Stages: []fixed.Stage{
			{R: 2, Taps: kaiserLowpass(11, 0.2, 6), Bands: looseBands(2 * rate), Interpolate: true},
			{CIC: true, N: tc.n, M: 1, R: tc.r, Interpolate: true},
		}}
		w, err := fixed.Plan(c, fixed.Words{InputBits: 24, OutputBits: tc.in, CoefBits: 16}, fixed.Settings{})
		if err != nil {
			t.Fatal(err)
		}
		if full := w.Stages[1].CICInterp.FullBits(); full != tc.full {
			t.Fatalf("order %d, R = %d: the last integrator is %d bits, want %d", tc.n, tc.r, full, tc.full)
		}
		t.Run(fmt.Sprintf("n%dr%d", tc.n, tc.r), func(t *testing.T) {
			t.Parallel()
			t.Log(passesInterp(t, c, w, rtl.Options{}, 6, tc.inputs*tc.r*2))
		})
	}
}
