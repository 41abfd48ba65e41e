package rtl_test

import (
	"bufio"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/handoff/rtl"
	"github.com/stepdown-dsp/stepdown/internal/testfilters"
)

// The generated Verilog is checked by the tool it is written for, Icarus
// Verilog (Debian's iverilog, 11 or later): the testbench runs the model on
// vector files whose expected outputs come from fixed.Model, the integer
// data path of the bit-true run, and must print PASS. Without iverilog on
// PATH these tests skip, unless STEPDOWN_RTL=1 (CI, .ci/rtl), which also
// runs the long randomized set.

func long() bool { return os.Getenv("STEPDOWN_RTL") == "1" }

func needIverilog(t *testing.T) {
	t.Helper()
	for _, tool := range []string{"iverilog", "vvp"} {
		if _, err := exec.LookPath(tool); err != nil {
			if long() {
				t.Fatalf("STEPDOWN_RTL=1 but %s is not on PATH (apt-get install -y iverilog)", tool)
			}
			t.Skipf("%s is not on PATH; set STEPDOWN_RTL=1 to make this a failure", tool)
		}
	}
}

// kaiserLowpass is internal/testfilters' Kaiser lowpass, cutoff fc a
// fraction of the rate.
func kaiserLowpass(n int, fc, beta float64) []float64 { return testfilters.KaiserLowpass(n, fc, beta) }

// kaiserHalfBand is internal/testfilters' 4K-1 tap half-band.
func kaiserHalfBand(k int, beta float64) []float64 { return testfilters.KaiserHalfBand(k, beta) }

// loose bands: the tests need widths, not a filter that meets a spec.
func looseBands(rate float64) []remez.Band {
	return []remez.Band{{Lo: 0, Hi: 0.05 * rate, Gain: 1, MaxError: 0.5}, {Lo: 0.45 * rate, Hi: 0.5 * rate, MaxError: 0.5}}
}

// randomChain returns a seeded random cascade and its plan: 1 to 4 stages
// of CICs (order 1..6, M 1..2), half-bands and FIRs (symmetric, odd and
// even lengths), real or complex, words from 2 to 32 bits (often narrow),
// fixed coefficient widths, sometimes the unity-gain correction. It
// returns an error when the plan refuses the draw.
func randomChain(rng *rand.Rand, maxDecim int) (fixed.Cascade, *fixed.Widths, string, error) {
	ns := 1 + rng.IntN(4)
	c := fixed.Cascade{InputRate: 1e6, Complex: rng.IntN(2) == 0}
	rate := c.InputRate
	d := 1
	var desc []string
	for i := 0; i < ns; i++ {
		var st fixed.Stage
		switch k := rng.IntN(3); {
		case k == 0 && i < 2:
			st = fixed.Stage{CIC: true, N: 1 + rng.IntN(6), M: 1 + rng.IntN(2), R: 2 + rng.IntN(min(31, maxDecim/4))}
			desc = append(desc, fmt.Sprintf("cic%dm%dr%d", st.N, st.M, st.R))
		case k == 1:
			st = fixed.Stage{R: 2, HalfBand: true, Taps: kaiserHalfBand(2+rng.IntN(5), 6+4*rng.Float64()), Bands: looseBands(rate)}
			desc = append(desc, fmt.Sprintf("hb%d", len(st.Taps)))
		default:
			st = fixed.Stage{R: 1 + rng.IntN(4), Taps: kaiserLowpass(3+rng.IntN(30), 0.1+0.2*rng.Float64(), 4+6*rng.Float64()), Bands: looseBands(rate)}
			desc = append(desc, fmt.Sprintf("fir%dr%d", len(st.Taps), st.R))
		}
		if d*st.R > maxDecim {
			break
		}
		d *= st.R
		rate /= float64(st.R)
		c.Stages = append(c.Stages, st)
	}
	desc = desc[:len(c.Stages)]
	c.Passband = 0.1 * rate
	narrow := func() int {
		if rng.IntN(2) == 0 {
			return 2 + rng.IntN(7)
		}
		return 2 + rng.IntN(31)
	}
	words := fixed.Words{InputBits: narrow(), OutputBits: narrow(), DataBits: narrow(), CoefBits: 4 + rng.IntN(17)}
	set := fixed.Settings{UnityGain: rng.IntN(4) == 0}
	name := fmt.Sprintf("%s complex=%v words=%+v unity=%v", strings.Join(desc, ">"), c.Complex, words, set.UnityGain)
	w, err := fixed.Plan(c, words, set)
	return c, w, name, err
}

// designed returns an invented spec's chain designed by the chain package
// and planned by fixed.FromChain and fixed.Plan.
func designed(t *testing.T, tc designedCase) (fixed.Cascade, *fixed.Widths) {
	t.Helper()
	const out = 1e6
	plan, err := chain.ParseNotation(tc.notation)
	if err != nil {
		t.Fatal(err)
	}
	d := 1
	for _, p := range plan {
		d *= p.Factor
	}
	spec := chain.Spec{InputRate: out * float64(d), OutputRate: out, Passband: tc.fp * out, RippleDB: 0.1, RejectionDB: 70,
		Complex: tc.complexIQ, InputBits: tc.inBits, OutputBits: tc.outBits}
	ch, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatalf("%s: %v", tc.notation, err)
	}
	c, words, err := fixed.FromChain(spec, ch)
	if err != nil {
		t.Fatal(err)
	}
	w, err := fixed.Plan(c, words, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	return c, w
}

// stimulus returns the test signals for a chain: a full-scale impulse (the
// most negative code), full-scale steps of both signs, a tone near the
// passband edge at full scale and seeded random full-scale codes; the Q
// component differs from I (negated, or another draw), so that a swapped or
// shared path shows. n is the number of input samples of each.
func stimulus(c fixed.Cascade, w *fixed.Widths, rng *rand.Rand, n int) map[string][2][]int64 {
	lo, hi := -(int64(1) << (w.InputBits - 1)), int64(1)<<(w.InputBits-1)-1
	mk := func(f func(k int) (int64, int64)) [2][]int64 {
		var s [2][]int64
		s[0], s[1] = make([]int64, n), make([]int64, n)
		for k := range n {
			s[0][k], s[1][k] = f(k)
		}
		return s
	}
	nu := c.Passband / c.InputRate
	amp := float64(hi)
	return map[string][2][]int64{
		"impulse": mk(func(k int) (int64, int64) {
			if k == 0 {
				return lo, hi
			}
			return 0, 0
		}),
		"step_pos": mk(func(int) (int64, int64) { return hi, lo }),
		"step_neg": mk(func(int) (int64, int64) { return lo, hi }),
		"tone": mk(func(k int) (int64, int64) {
			p := 2 * math.Pi * nu * float64(k)
			return int64(math.Round(amp * math.Cos(p))), int64(math.Round(amp * math.Sin(p)))
		}),
		"random": mk(func(int) (int64, int64) {
			return lo + rng.Int64N(hi-lo+1), lo + rng.Int64N(hi-lo+1)
		}),
	}
}

var signals = []string{"impulse", "step_pos", "step_neg", "tone", "random"}

// layout writes rtl/ (the model and the testbench) and vectors/ (each
// signal's input and fixed.Model's output of every stage) under dir.
func layout(t *testing.T, dir string, c fixed.Cascade, w *fixed.Widths, o rtl.Options, sig map[string][2][]int64) {
	t.Helper()
	model, err := rtl.Model(c, w, o)
	if err != nil {
		t.Fatal(err)
	}
	names := make([]string, 0, len(sig))
	for _, s := range signals {
		if _, ok := sig[s]; ok {
			names = append(names, s)
		}
	}
	tb, err := rtl.Testbench(c, w, o, names)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range []string{"rtl", "vectors"} {
		if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	must(t, os.WriteFile(filepath.Join(dir, "rtl", "stepdown_chain.v"), model, 0o644))
	must(t, os.WriteFile(filepath.Join(dir, "rtl", "stepdown_tb.v"), tb, 0o644))
	for _, name := range names {
		x := sig[name]
		paths := 1
		if c.Complex {
			paths = 2
		}
		var outs [2][][]int64
		for p := 0; p < paths; p++ {
			m, err := fixed.NewModel(c, w)
			if err != nil {
				t.Fatal(err)
			}
			if outs[p], err = m.Run(x[p]); err != nil {
				t.Fatal(err)
			}
		}
		write := func(file string, i, q []int64) {
			var b strings.Builder
			for k := range i {
				if c.Complex {
					fmt.Fprintf(&b, "%d %d\n", i[k], q[k])
				} else {
					fmt.Fprintf(&b, "%d\n", i[k])
				}
			}
			must(t, os.WriteFile(filepath.Join(dir, "vectors", file), []byte(b.String()), 0o644))
		}
		write(name+".in.txt", x[0], x[1])
		q := func(k int) []int64 {
			if c.Complex {
				return outs[1][k]
			}
			return nil
		}
		for k := range c.Stages {
			write(fmt.Sprintf("%s.stage%d.txt", name, k+1), outs[0][k], q(k))
		}
		last := len(c.Stages) - 1
		write(name+".out.txt", outs[0][last], q(last))
	}
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// simulate compiles and runs the testbench as the documentation says,
// from inside rtl/ (fromParent: from dir), and returns vvp's output.
func simulate(t *testing.T, dir string, fromParent bool) string {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	wd, src := filepath.Join(dir, "rtl"), []string{"stepdown_chain.v", "stepdown_tb.v"}
	if fromParent {
		wd, src = dir, []string{"rtl/stepdown_chain.v", "rtl/stepdown_tb.v"}
	}
	comp := exec.CommandContext(ctx, "iverilog", append([]string{"-g2012", "-o", "sim"}, src...)...)
	comp.Dir = wd
	if out, err := comp.CombinedOutput(); err != nil || len(out) > 0 {
		t.Fatalf("iverilog: %v\n%s", err, out)
	}
	run := exec.CommandContext(ctx, "vvp", "-n", "sim")
	run.Dir = wd
	out, err := run.CombinedOutput()
	if err != nil {
		t.Fatalf("vvp: %v\n%s", err, out)
	}
	return string(out)
}

// verdict returns the PASS or FAIL line of vvp's output.
func verdict(out string) string {
	sc := bufio.NewScanner(strings.NewReader(out))
	for sc.Scan() {
		if l := sc.Text(); strings.HasPrefix(l, "PASS") || strings.HasPrefix(l, "FAIL") {
			return l
		}
	}
	return ""
}

func inputLen(c fixed.Cascade, w *fixed.Widths, maxIn int) int {
	d, span, p := 1, 1, 1
	for i, st := range c.Stages {
		l := len(w.Stages[i].Coefficients.Ints)
		if st.CIC {
			l = st.N*(st.R*st.M-1) + 1
		}
		span += (l - 1) * p
		p *= st.R
		d *= st.R
	}
	return min(maxIn, max(span+16*d, 40*d))
}

// passes runs one chain through iverilog and requires PASS.
func passes(t *testing.T, c fixed.Cascade, w *fixed.Widths, seed uint64, maxIn int) string {
	t.Helper()
	return passesWith(t, c, w, rtl.Options{}, seed, maxIn)
}

func passesWith(t *testing.T, c fixed.Cascade, w *fixed.Widths, o rtl.Options, seed uint64, maxIn int) string {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(seed, 77))
	layout(t, dir, c, w, o, stimulus(c, w, rng, inputLen(c, w, maxIn)))
	out := simulate(t, dir, false)
	if v := verdict(out); !strings.HasPrefix(v, "PASS") {
		t.Fatalf("the testbench did not pass:\n%s", out)
	}
	return verdict(out)
}

// designedCase is an invented spec's chain: passband fp (a fraction of the
// output rate), real or complex, input and output words.
type designedCase struct {
	notation        string
	fp              float64
	complexIQ       bool
	inBits, outBits int
}

func TestDesignedChainsBitExact(t *testing.T) {
	needIverilog(t)
	cases := []designedCase{
		{"cic4m1r8 > hb > fir2", 0.2, true, 14, 18},
		{"cic3m2r5 > fir4", 0.2, false, 12, 20},
	}
	maxIn := 3000
	if long() {
		maxIn = 20000
		cases = append(cases, []designedCase{
			{"cic6m1r16 > fir4", 0.2, false, 16, 24},
			{"hb > hb > fir2L", 0.2, true, 16, 16},
			{"fir4", 0.2, false, 8, 12},
			{"cic5m2r8 > hb > hb", 0.03, true, 6, 24},
			{"cic1m1r4 > fir2", 0.2, false, 4, 8},
			{"cic2m1r32 > fir2 > hb", 0.1, true, 2, 32},
		}...)
	}
	for _, tc := range cases {
		t.Run(strings.ReplaceAll(tc.notation, " ", ""), func(t *testing.T) {
			t.Parallel()
			c, w := designed(t, tc)
			t.Log(passes(t, c, w, 1, maxIn))
		})
	}
}

func TestRandomChainsBitExact(t *testing.T) {
	needIverilog(t)
	n, maxDecim, maxIn := 4, 48, 3000
	if long() {
		n, maxDecim, maxIn = 150, 512, 20000
	}
	rng := rand.New(rand.NewPCG(6, 5)) // the first draws cover CIC (N = 1, 6; M = 2), half-band, FIR (R = 1), real and complex
	planned, refused := 0, 0
	seen := map[string]int{}
	for planned < n {
		c, w, name, err := randomChain(rng, maxDecim)
		if err != nil {
			refused++
			if refused > 4*n {
				t.Fatalf("the planner refused %d draws; last: %s: %v", refused, name, err)
			}
			continue
		}
		if _, err := fixed.NewModel(c, w); err != nil {
			refused++ // beyond the integer model (a CIC register over 63 bits)
			continue
		}
		planned++
		tally(seen, c, w)
		seed := uint64(planned)
		t.Run(fmt.Sprint(planned), func(t *testing.T) {
			t.Parallel()
			v := passes(t, c, w, seed, maxIn)
			t.Logf("%s: %s", name, v)
		})
	}
	t.Logf("%d random chains run, %d draws refused by the planner; features: %v", planned, refused, seen)
	if long() {
		// The long set must cover every kind of stage and data path.
		for _, f := range []string{"cic", "cic M=2", "cic N=1", "cic N=6", "half-band", "fir", "fir R=1", "complex", "real", "negative shift", "saturating", "word <= 4 bits", "unity gain"} {
			if seen[f] == 0 {
				t.Errorf("no random chain had %q", f)
			}
		}
	}
}

// tally counts the features of a planned chain.
func tally(seen map[string]int, c fixed.Cascade, w *fixed.Widths) {
	add := func(f string, ok bool) {
		if ok {
			seen[f]++
		}
	}
	add("complex", c.Complex)
	add("real", !c.Complex)
	add("word <= 4 bits", w.InputBits <= 4)
	add("unity gain", w.CorrectedStage >= 0)
	for i, st := range c.Stages {
		sw := w.Stages[i]
		add("word <= 4 bits", sw.OutputBits <= 4)
		switch {
		case st.CIC:
			add("cic", true)
			add("cic M=2", st.M == 2)
			add(fmt.Sprintf("cic N=%d", st.N), true)
		case st.HalfBand:
			add("half-band", true)
		default:
			add("fir", true)
			add("fir R=1", st.R == 1)
		}
		if !st.CIC {
			add("negative shift", sw.OutputShift < 0)
			add("saturating", sw.AccumulatorBits-sw.OutputShift > sw.OutputBits)
		}
	}
}

// A chain with a negative OutputShift (a narrow input into a wide output),
// a CIC of order 6 with M = 2, and a non-symmetric FIR (the direct form) are
// each present whatever the random draws give.
func TestCornerChainsBitExact(t *testing.T) {
	needIverilog(t)
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Passband: 1e3, Stages: []fixed.Stage{
		{CIC: true, N: 6, M: 2, R: 4},
		{R: 2, HalfBand: true, Taps: kaiserHalfBand(3, 8), Bands: looseBands(rate / 4)},
		{R: 3, Taps: kaiserLowpass(12, 0.15, 8), Bands: looseBands(rate / 8)},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 3, OutputBits: 28, DataBits: 4, CoefBits: 6}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if sh := w.Stages[2].OutputShift; sh >= 0 {
		t.Fatalf("stage 3's OutputShift = %d; the case needs a negative one", sh)
	}
	// Make the last FIR's taps non-symmetric: the generator then writes the
	// direct form (fixed.Model runs any taps).
	h := append([]int64(nil), w.Stages[2].Coefficients.Ints...)
	h[0]++
	w.Stages[2].Coefficients.Ints = h
	w.Stages[2].AccumulatorBits = max(w.Stages[2].AccumulatorBits, fixed.AccumulatorBits(h, w.Stages[2].InputBits))
	model, err := rtl.Model(c, w, rtl.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"not symmetric (direct form)", "shift left", "comb6_i_d2"} {
		if !strings.Contains(string(model), want) {
			t.Errorf("the model does not contain %q", want)
		}
	}
	t.Log(passes(t, c, w, 3, 4000))
}

// The widest words the integer model holds: a CIC whose full register is
// 62 or 63 bits (32-bit input, order 6, M = 2) and an FIR accumulator of
// 57 bits or more (32-bit data, 24-bit coefficients).
func TestWideChainBitExact(t *testing.T) {
	needIverilog(t)
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Complex: true, Passband: 1e3, Stages: []fixed.Stage{
		{CIC: true, N: 6, M: 2, R: 16},
		{R: 2, Taps: kaiserLowpass(31, 0.2, 9), Bands: looseBands(rate / 16)},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 32, OutputBits: 32, CoefBits: 24}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	full, acc := w.Stages[0].Pruning.FullBits, w.Stages[1].AccumulatorBits
	t.Logf("CIC full register %d bits, FIR accumulator %d bits", full, acc)
	if full < 62 || acc < 57 {
		t.Fatalf("the case needs a CIC register of 62 bits or more (got %d) and an accumulator of 57 or more (got %d)", full, acc)
	}
	t.Log(passes(t, c, w, 4, 4000))
}

// CICs whose registers pass 64 bits (fixed.Model runs them in 128-bit
// arithmetic): order 10, R = 40, 20-bit input (about 74 bits), and, in the
// long run (STEPDOWN_RTL=1; Icarus takes about a minute on it), order 10,
// R = 1000, 24-bit input (about 124 bits), both bit-exact.
func TestCICBeyond64BitsBitExact(t *testing.T) {
	needIverilog(t)
	rate := 1e6
	cases := []struct{ n, r, in int }{{10, 40, 20}}
	if os.Getenv("STEPDOWN_RTL") == "1" {
		cases = append(cases, struct{ n, r, in int }{10, 1000, 24})
	}
	for _, tc := range cases {
		c := fixed.Cascade{InputRate: rate, Passband: 10, Stages: []fixed.Stage{
			{CIC: true, N: tc.n, M: 1, R: tc.r},
			{R: 2, Taps: kaiserLowpass(9, 0.2, 6), Bands: looseBands(rate / float64(tc.r))},
		}}
		w, err := fixed.Plan(c, fixed.Words{InputBits: tc.in, OutputBits: 24, CoefBits: 16}, fixed.Settings{})
		if err != nil {
			t.Fatal(err)
		}
		full := w.Stages[0].Pruning.FullBits
		if full <= 64 {
			t.Fatalf("the case needs a CIC register over 64 bits, got %d", full)
		}
		t.Logf("CIC full register %d bits", full)
		t.Log(passes(t, c, w, 6, 2*tc.r*tc.n+8*tc.r))
	}
}

// One- and two-tap FIRs (no delay line; one folded pair), an R = 1 CIC,
// one input every clock (MaxIdle < 0), a long idle pattern, and a prefix
// of our own.
func TestSmallStagesAndOptions(t *testing.T) {
	needIverilog(t)
	rate := 1e6
	c := fixed.Cascade{InputRate: rate, Complex: true, Passband: 1e3, Stages: []fixed.Stage{
		{R: 1, Taps: []float64{0.75}, Bands: looseBands(rate)},
		{CIC: true, N: 2, M: 1, R: 1},
		{R: 2, Taps: []float64{0.5, 0.5}, Bands: looseBands(rate)},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 8, OutputBits: 10, CoefBits: 8}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for _, o := range []rtl.Options{{Prefix: "rx_a", MaxIdle: -1}, {Prefix: "B2", MaxIdle: 17}} {
		t.Run(o.Prefix, func(t *testing.T) {
			t.Parallel()
			t.Log(passesWith(t, c, w, o, 5, 600))
		})
	}
}

// The testbench must fail, naming the signal, the stage and the sample, on
// one flipped expected sample; name a missing vector file; and catch a
// model that ignores in_valid (the idle cycles carry junk data).
func TestTestbenchFails(t *testing.T) {
	needIverilog(t)
	c, w := designed(t, designedCase{"cic3m1r4 > hb > fir2", 0.2, true, 10, 16})
	rng := rand.New(rand.NewPCG(9, 9))
	sig := stimulus(c, w, rng, 400)

	t.Run("flipped", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		f := filepath.Join(dir, "vectors", "tone.stage2.txt")
		b, err := os.ReadFile(f)
		must(t, err)
		lines := strings.Split(string(b), "\n")
		var i, q int64
		if _, err := fmt.Sscan(lines[17], &i, &q); err != nil {
			t.Fatal(err)
		}
		lines[17] = fmt.Sprintf("%d %d", i, q^1)
		must(t, os.WriteFile(f, []byte(strings.Join(lines, "\n")), 0o644))
		out := simulate(t, dir, true) // from the parent folder this time
		want := fmt.Sprintf("FAIL: signal tone, stage 2 (vectors/tone.stage2.txt), sample 17: expected %d %d, got %d %d", i, q^1, i, q)
		if v := verdict(out); v != want {
			t.Errorf("got %q\nwant %q\n%s", v, want, out)
		}
	})
	t.Run("missing", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		must(t, os.Remove(filepath.Join(dir, "vectors", "random.out.txt")))
		out := simulate(t, dir, false)
		if v := verdict(out); !strings.HasPrefix(v, "FAIL") || !strings.Contains(v, "vectors/random.out.txt") {
			t.Errorf("got %q, want a FAIL naming vectors/random.out.txt\n%s", v, out)
		}
	})
	t.Run("short", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		f := filepath.Join(dir, "vectors", "step_neg.out.txt")
		b, err := os.ReadFile(f)
		must(t, err)
		lines := strings.SplitAfter(string(b), "\n")
		must(t, os.WriteFile(f, []byte(strings.Join(lines[:len(lines)-3], "")), 0o644))
		out := simulate(t, dir, false)
		if v := verdict(out); !strings.HasPrefix(v, "FAIL: signal step_neg, output") || !strings.Contains(v, "expected no more samples") {
			t.Errorf("got %q, want a FAIL for an output beyond the file\n%s", v, out)
		}
	})
	t.Run("malformed", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		f := filepath.Join(dir, "vectors", "step_pos.in.txt")
		b, err := os.ReadFile(f)
		must(t, err)
		lines := strings.Split(string(b), "\n")
		lines[5] = "12 x7"
		must(t, os.WriteFile(f, []byte(strings.Join(lines, "\n")), 0o644))
		out := simulate(t, dir, false)
		want := `FAIL: signal step_pos, input (vectors/step_pos.in.txt): line 6 is not two integers "I Q"`
		if v := verdict(out); v != want {
			t.Errorf("got %q\nwant %q\n%s", v, want, out)
		}
	})
	t.Run("out_of_range", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		f := filepath.Join(dir, "vectors", "tone.in.txt")
		b, err := os.ReadFile(f)
		must(t, err)
		lines := strings.Split(string(b), "\n")
		lines[3] = "0 512" // the input word is 10 bits: at most 511
		must(t, os.WriteFile(f, []byte(strings.Join(lines, "\n")), 0o644))
		out := simulate(t, dir, false)
		want := "FAIL: signal tone, input (vectors/tone.in.txt), sample 3: 0 512 lies outside the 10-bit input word"
		if v := verdict(out); v != want {
			t.Errorf("got %q\nwant %q\n%s", v, want, out)
		}
	})
	t.Run("ignores_valid", func(t *testing.T) {
		t.Parallel()
		dir := t.TempDir()
		layout(t, dir, c, w, rtl.Options{}, sig)
		f := filepath.Join(dir, "rtl", "stepdown_chain.v")
		b, err := os.ReadFile(f)
		must(t, err)
		// Stage 2 (the half-band) takes every cycle as an input.
		mod := string(b)
		i := strings.Index(mod, "module stepdown_s2_hb")
		j := i + strings.Index(mod[i:], "if (in_valid)")
		mod = mod[:j] + "if (1'b1)" + mod[j+len("if (in_valid)"):]
		must(t, os.WriteFile(f, []byte(mod), 0o644))
		out := simulate(t, dir, false)
		if v := verdict(out); !strings.HasPrefix(v, "FAIL: signal impulse, stage 2") {
			t.Errorf("got %q, want a FAIL at stage 2\n%s", v, out)
		}
	})
}

// Verilator (when on PATH) lints the model without a warning.
func TestVerilatorLint(t *testing.T) {
	if _, err := exec.LookPath("verilator"); err != nil {
		t.Skip("verilator is not on PATH")
	}
	c := fixed.Cascade{InputRate: 1e6, Complex: true, Passband: 1e3, Stages: []fixed.Stage{
		{CIC: true, N: 4, M: 2, R: 5},
		{R: 2, HalfBand: true, Taps: kaiserHalfBand(3, 8), Bands: looseBands(2e5)},
		{R: 1, Taps: kaiserLowpass(8, 0.15, 8), Bands: looseBands(1e5)},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 5, OutputBits: 30, DataBits: 12, CoefBits: 10}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	model, err := rtl.Model(c, w, rtl.Options{Prefix: "lint"})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	f := filepath.Join(dir, "lint_chain.v")
	must(t, os.WriteFile(f, model, 0o644))
	// Every warning but two: the bits a truncation drops are unused by
	// design (UNUSEDSIGNAL), and one file holds every module (DECLFILENAME).
	cmd := exec.Command("verilator", "--lint-only", "-Wall", "-Wno-UNUSEDSIGNAL", "-Wno-DECLFILENAME", "--top-module", "lint_chain", f)
	if out, err := cmd.CombinedOutput(); err != nil || len(out) > 0 {
		t.Errorf("verilator --lint-only -Wall: %v\n%s", err, out)
	}
}
