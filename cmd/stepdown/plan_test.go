package main

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
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
	got := emptyFront(res, chain.Spec{}, "out").Error()
	// The optimiser's setting names are said in the spec's and the flags' terms.
	want := "no chain meets the spec: No chain was designed within the design budget (a fixed amount of design work per run: " +
		"lower search.max_stages or --max-stages, narrow search.kinds or search.cic_orders, or relax ripple or rejection, " +
		"so that fewer or shorter filters are designed) at a tap limit of 511; " +
		"12 candidates were left undesigned (dropped: cic rejection below target: 2, fir stage over the tap limit: 3); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	if got := emptyFront(&optimize.Result{}, chain.Spec{}, "out").Error(); got != "no chain meets the spec (dropped: no candidates); out left as it was" {
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
	got := emptyFront(res, chain.Spec{}, "out").Error()
	want := "no chain meets the spec: the word lengths of 596 designed chains could not be planned (an accumulator over 63 bits or a CIC register over 256): " +
		"narrow words.coefficients, words.input or words.output (check --chain on one names the widths); the design budget left 10 candidates undesigned " +
		"(dropped: cic rejection below target: 337, word lengths could not be planned: 596); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	// With the accumulator's excess known, the widths that would fit it
	// are named: the coefficient word when the spec fixes it, the data
	// word (words.output) by the same bits.
	res.AccumulatorExcess = 3
	got = emptyFront(res, chain.Spec{CoefBits: 36, OutputBits: 30}, "out").Error()
	if want := "the closest needs 3 bits less: words.coefficients = 33 or words.output = 27 (words.input too if no CIC comes first) would fit it, with its taps as designed (check --chain on one names the widths); "; !strings.Contains(got, want) {
		t.Errorf("with an excess of 3 bits: %q\nwant it to contain %q", got, want)
	}
	res.AccumulatorExcess = 1
	got = emptyFront(res, chain.Spec{}, "out").Error()
	if want := "the closest needs 1 bit less: words.output = 23 (words.input too if no CIC comes first) would fit it"; !strings.Contains(got, want) {
		t.Errorf("auto coefficients, default output: %q\nwant it to contain %q", got, want)
	}
	if strings.Contains(got, "max_stages") || strings.Contains(got, "\n") {
		t.Errorf("misleading or not one line: %q", got)
	}
}

// A spec whose coefficient word leaves no accumulator within 63 bits is
// refused with the widths that would fit the closest chain, and those
// widths plan: an invented 100 MHz to 1 MHz receiver with 32-bit input,
// 24-bit output and 40-bit coefficients, whose FIR accumulators need 64
// bits (24 + 40 less the sign bits, plus their taps' growth). The hint is
// checked against the tool itself: the coefficient width it names plans a
// front, one bit more does not.
func TestAccumulatorHintPlans(t *testing.T) {
	dir := t.TempDir()
	spec := func(coef int) string {
		p := filepath.Join(dir, fmt.Sprintf("w%d.toml", coef))
		must(t, os.WriteFile(p, []byte(fmt.Sprintf("input_rate = \"100 MHz\"\noutput_rate = \"1 MHz\"\npassband = \"300 kHz\"\nripple = \"0.1 dB\"\nrejection = \"80 dB\"\n[words]\ninput = 32\noutput = 24\ncoefficients = %d\n", coef)), 0o644))
		return p
	}
	r := runBinary(t, dir, nil, "plan", spec(40), "--out", "o40", "--quiet")
	m := regexp.MustCompile(`the closest needs (\d+) bits? less: words\.coefficients = (\d+) or words\.output = (\d+) `).FindStringSubmatch(r.stderr)
	if r.code != 1 || m == nil {
		t.Fatalf("40-bit coefficients: exit %d, %q; want exit 1 naming the widths that fit", r.code, r.stderr)
	}
	k, _ := strconv.Atoi(m[1])
	c, _ := strconv.Atoi(m[2])
	o, _ := strconv.Atoi(m[3])
	if c != 40-k || o != 24-k {
		t.Fatalf("the hint %q: want words.coefficients = 40 - %d and words.output = 24 - %d", m[0], k, k)
	}
	if r := runBinary(t, dir, nil, "plan", spec(c), "--out", "ofit", "--quiet"); r.code != 0 {
		t.Errorf("words.coefficients = %d, as the hint says: exit %d, %q", c, r.code, r.stderr)
	}
	if c+1 < 40 {
		if r := runBinary(t, dir, nil, "plan", spec(c+1), "--out", "onot", "--quiet"); r.code != 1 {
			t.Errorf("words.coefficients = %d, a bit over the hint: exit %d, want 1", c+1, r.code)
		}
	}
}
