package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// The empty-front error carries optimize's Reason as well as the dropped
// counts: for a spec that exhausts the design budget the counts alone do not
// say so.
func TestEmptyFrontReason(t *testing.T) {
	res := &optimize.Result{
		Reason:  "No chain was designed within the design budget (MaxDesigns, MaxWork) at a tap limit of 511;\n12 candidates were left undesigned.",
		Dropped: map[optimize.Reason]int{optimize.ReasonLongFIR: 3, optimize.ReasonCICRejection: 2},
	}
	got := emptyFront(res, chain.Spec{}, nil, false, "out left as it was").Error()
	// The optimiser's setting names are said in the spec's and the flags' terms.
	want := "no chain meets the spec: No chain was designed within the design budget (a fixed amount of design work per run: " +
		"lower search.max_stages or --max-stages, narrow search.kinds or search.cic_orders, or relax ripple or rejection, " +
		"so that fewer or shorter filters are designed) at a tap limit of 511; " +
		"12 candidates were left undesigned (dropped: cic rejection below target: 2, fir stage over the tap limit: 3); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	if got := emptyFront(&optimize.Result{}, chain.Spec{}, nil, false, "out left as it was").Error(); got != "no chain meets the spec (dropped: no candidates); out left as it was" {
		t.Errorf("no reason: %q", got)
	}
}

// Chains dropped because their word lengths could not be planned are named
// first, with the keys to change, and a design-budget reason is then said
// short (it blamed search.max_stages for what the words caused).
func TestEmptyFrontWordLengths(t *testing.T) {
	res := &optimize.Result{
		Reason:    "No chain was designed within the design budget (MaxDesigns, MaxWork) at a tap limit of 511; 10 candidates were left undesigned.",
		Unsettled: 10,
		Dropped:   map[optimize.Reason]int{optimize.ReasonWordLengths: 596, optimize.ReasonCICRejection: 337},
	}
	got := emptyFront(res, chain.Spec{}, nil, false, "out left as it was").Error()
	want := "no chain meets the spec: the word lengths of 596 designed chains could not be planned (an accumulator over 63 bits or a CIC register over 256 bits): " +
		"narrow words.coefficients, words.input or words.output (check --chain on one names the widths); the design budget left 10 candidates undesigned " +
		"(dropped: cic rejection below target: 337, word lengths could not be planned: 596); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	// With the accumulator's excess known, the widths that would fit the
	// closest chain are named: the coefficient word when the spec fixes
	// it, the input word and the word between stages (words.output) where
	// a chain passes only at its first or only at its later stages.
	res.AccumulatorExcess = optimize.AccumulatorExcess{Coefficients: 3, InputBits: 24, OutputBits: 25}
	got = emptyFront(res, chain.Spec{CoefBits: 36, InputBits: 28, OutputBits: 30}, nil, false, "out left as it was").Error()
	if want := "the closest is 3 bits over: try words.coefficients = 33 or words.input = 24 or words.output = 25 (estimated from its taps as designed; check --chain on one names the widths); "; !strings.Contains(got, want) {
		t.Errorf("with an excess of 3 bits: %q\nwant it to contain %q", got, want)
	}
	res.AccumulatorExcess = optimize.AccumulatorExcess{Coefficients: 1, OutputBits: 23}
	got = emptyFront(res, chain.Spec{}, nil, false, "out left as it was").Error()
	if want := "the closest is 1 bit over: try words.output = 23 ("; !strings.Contains(got, want) {
		t.Errorf("auto coefficients, default output: %q\nwant it to contain %q", got, want)
	}
	// With words.unity_gain and no accumulator known to be too wide, the
	// correction with no gain to correct is named among the causes (an
	// adversarial review found 2-bit taps summing to zero blamed on the
	// accumulators alone).
	res.AccumulatorExcess = optimize.AccumulatorExcess{}
	got = emptyFront(res, chain.Spec{}, nil, true, "out left as it was").Error()
	if want := "(an accumulator over 63 bits or a CIC register over 256 bits, or words.unity_gain with no gain at 0 Hz to correct): "; !strings.Contains(got, want) {
		t.Errorf("unity gain: %q\nwant it to contain %q", got, want)
	}
	res.AccumulatorExcess = optimize.AccumulatorExcess{Coefficients: 1, OutputBits: 23}
	// A search without CIC stages has no CIC register to blame.
	got = emptyFront(res, chain.Spec{}, []chain.Kind{chain.FIR, chain.HalfBand}, false, "out left as it was").Error()
	if want := "(an accumulator over 63 bits): "; !strings.Contains(got, want) {
		t.Errorf("FIR and half-band only: %q\nwant it to contain %q", got, want)
	}
	res.Reason = "No chain met the spec; Dropped says why each candidate was set aside."
	if got := emptyFront(res, chain.Spec{}, nil, false, "out left as it was").Error(); strings.Contains(strings.ToLower(got), "no chain met the spec") {
		t.Errorf("the optimiser's reason repeats the words' message: %q", got)
	}
}

// A spec whose words leave no accumulator within 63 bits is refused with
// the widths that would fit the closest chain, and each of those widths,
// tried alone, plans: two invented receivers, a 100 MHz to 1 MHz one whose
// chains start with a CIC (32-bit input, 24-bit output, 40-bit
// coefficients: its FIR accumulators need 64 bits) and an 80 MHz to
// 10 MHz complex one of FIR and half-band stages only (28-bit input,
// 36-bit coefficients: its first stage's need 64). The hint is checked
// against the tool itself. Outside CI's long step the CIC receiver
// searches two stages at most (accumulatorSpec) and only the first width
// named is tried.
func TestAccumulatorHintPlans(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ name, spec string }{
		{"cic", accumulatorSpec()},
		{"fir", "input_rate = \"80 MHz\"\noutput_rate = \"10 MHz\"\npassband = \"3 MHz\"\nripple = \"0.1 dB\"\nrejection = \"85 dB\"\nsignal = \"complex\"\n[words]\ninput = 28\noutput = 24\ncoefficients = 36\n[search]\nkinds = [\"fir\", \"halfband\"]\n"},
	}
	hint := regexp.MustCompile(`the closest is \d+ bits? over: try (.*?) \(estimated`)
	word := regexp.MustCompile(`words\.(\w+) = (\d+)`)
	for _, c := range cases {
		p := filepath.Join(dir, c.name+".toml")
		must(t, os.WriteFile(p, []byte(c.spec), 0o644))
		r := runBinary(t, dir, nil, "plan", p, "--out", "o-"+c.name, "--quiet")
		m := hint.FindStringSubmatch(r.stderr)
		if r.code != 1 || m == nil {
			t.Fatalf("%s: exit %d, %q; want exit 1 naming the widths that fit", c.name, r.code, r.stderr)
		}
		ws := word.FindAllStringSubmatch(m[1], -1)
		if len(ws) < 2 {
			t.Errorf("%s: the hint %q names fewer than two widths", c.name, m[0])
		}
		for k, w := range ws {
			if k > 0 && os.Getenv("STEPDOWN_LONG") == "" {
				break // the other widths in CI's long step
			}
			fixed := regexp.MustCompile(`(?m)^`+w[1]+` = \d+$`).ReplaceAllString(c.spec, w[1]+" = "+w[2])
			q := filepath.Join(dir, c.name+"-"+w[1]+w[2]+".toml")
			must(t, os.WriteFile(q, []byte(fixed), 0o644))
			if r := runBinary(t, dir, nil, "plan", q, "--out", "o-"+c.name+w[1], "--quiet"); r.code != 0 {
				t.Errorf("%s: words.%s = %s, as the hint says: exit %d, %q", c.name, w[1], w[2], r.code, r.stderr)
			}
		}
	}
}

// accumulatorSpec is an invented 100 MHz to 1 MHz receiver whose words
// (32-bit input, 24-bit output, 40-bit coefficients) leave its FIR
// accumulators 64 bits or more; outside CI's long step (STEPDOWN_LONG) it
// searches two stages at most, which halves the time of the tests that
// plan it and each width they are told.
func accumulatorSpec() string {
	spec := "input_rate = \"100 MHz\"\noutput_rate = \"1 MHz\"\npassband = \"300 kHz\"\nripple = \"0.1 dB\"\nrejection = \"80 dB\"\n[words]\ninput = 32\noutput = 24\ncoefficients = 40\n"
	if os.Getenv("STEPDOWN_LONG") == "" {
		spec += "[search]\nmax_stages = 2\n"
	}
	return spec
}

// check --chain on a chain whose accumulator passes 63 bits names the
// widths at which it would fit (report.AddWordLengths), and each of them,
// applied alone, lets check judge the chain's rounded taps (the first
// alone outside CI's long step).
func TestCheckAccumulatorHint(t *testing.T) {
	dir := t.TempDir()
	spec := accumulatorSpec()
	const named = "cic4m1r25 > fir4"
	p := filepath.Join(dir, "cc.toml")
	must(t, os.WriteFile(p, []byte(spec), 0o644))
	r := runBinary(t, dir, nil, "check", p, "--chain", named, "--out", "o-cc")
	hint := regexp.MustCompile(`cannot be judged with its taps rounded: .*?; (words\..*?) would fit \(planned with these taps as designed; the rounded taps must still meet the spec\)`)
	m := hint.FindStringSubmatch(r.stdout)
	if m == nil {
		t.Fatalf("exit %d, %q; want the widths that fit named", r.code, r.stdout+r.stderr)
	}
	if !strings.Contains(r.stdout, "float figures: rounded taps not judged") || strings.Contains(r.stdout, "* the worse of") {
		t.Errorf("the table does not say its figures are the float design's:\n%s", r.stdout)
	}
	ws := regexp.MustCompile(`words\.(\w+) = (\d+)`).FindAllStringSubmatch(m[1], -1)
	if len(ws) < 2 {
		t.Errorf("the hint %q names fewer than two widths", m[1])
	}
	for k, w := range ws {
		if k > 0 && os.Getenv("STEPDOWN_LONG") == "" {
			break // the other widths in CI's long step
		}
		fixed := regexp.MustCompile(`(?m)^`+w[1]+` = \d+$`).ReplaceAllString(spec, w[1]+" = "+w[2])
		q := filepath.Join(dir, "cc-"+w[1]+w[2]+".toml")
		must(t, os.WriteFile(q, []byte(fixed), 0o644))
		r := runBinary(t, dir, nil, "check", q, "--chain", named, "--out", "o-cc"+w[1])
		if r.code != 0 || strings.Contains(r.stdout, "cannot be judged") || !strings.Contains(r.stdout, "bit-true SNR") {
			t.Errorf("words.%s = %s, as the hint says: exit %d, %q", w[1], w[2], r.code, r.stdout+r.stderr)
		}
	}
}

// An empty front whose designed chains missed the targets in floating point
// names the closest and by how much, in the spec's direction.
func TestEmptyFrontClosest(t *testing.T) {
	spec := chain.Spec{InputRate: 7.68e6, OutputRate: 10e6, RippleDB: 0.4, RejectionDB: 65}
	plan := []chain.StagePlan{{Kind: chain.Polyphase, Factor: 1, Up: 96, Down: 125}}
	res := &optimize.Result{
		Reason:  "No chain met the spec; Dropped says why each candidate was set aside.",
		Dropped: map[optimize.Reason]int{optimize.ReasonMissRejection: 1},
		Closest: &optimize.Candidate{Plan: plan},
	}
	res.Closest.Figures.Analysis = chain.Analysis{AliasRejectionDB: 64.89462441957761, PassbandRippleDB: 0.39918}
	want := "no chain met the spec; the dropped counts say why candidates were set aside; the closest, poly125/96, misses the 65 dB rejection by 0.105 dB (64.8946 dB) (dropped: designed chain misses rejection: 1); out left as it was"
	if got := emptyFront(res, spec, nil, false, "out left as it was").Error(); got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	res.Closest.Figures.Analysis = chain.Analysis{AliasRejectionDB: 70, PassbandRippleDB: 0.41}
	if got, want := emptyFront(res, spec, nil, false, "out left as it was").Error(), "the closest, poly125/96, exceeds the 0.4 dB ripple by 0.01 dB (0.41 dB) (dropped"; !strings.Contains(got, want) {
		t.Errorf("got  %q\nwant it to contain %q", got, want)
	}
	res.Closest.Figures.Analysis = chain.Analysis{AliasRejectionDB: 64, PassbandRippleDB: 0.5}
	if got, want := emptyFront(res, spec, nil, false, "out left as it was").Error(), "the closest, poly125/96, misses the 65 dB rejection by 1 dB (64 dB) and exceeds the 0.4 dB ripple by 0.1 dB (0.5 dB)"; !strings.Contains(got, want) {
		t.Errorf("got  %q\nwant it to contain %q", got, want)
	}
}
