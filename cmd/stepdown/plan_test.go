package main

import (
	"strings"
	"testing"

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
	got := emptyFront(res, "out").Error()
	// The optimiser's setting names are said in the spec's and the flags' terms.
	want := "no chain meets the spec: No chain was designed within the design budget (a fixed amount of design work per run: " +
		"lower search.max_stages or --max-stages, narrow search.kinds or search.cic_orders, or relax ripple or rejection, " +
		"so that fewer or shorter filters are designed) at a tap limit of 511; " +
		"12 candidates were left undesigned (dropped: cic rejection below target: 2, fir stage over the tap limit: 3); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	if got := emptyFront(&optimize.Result{}, "out").Error(); got != "no chain meets the spec (dropped: no candidates); out left as it was" {
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
	got := emptyFront(res, "out").Error()
	want := "no chain meets the spec: the word lengths of 596 designed chains could not be planned (a FIR or half-band accumulator beyond 63 bits or a CIC register beyond 256): " +
		"narrow words.coefficients, words.input or words.output (check --chain on one names the widths); the design budget left 10 candidates undesigned " +
		"(dropped: cic rejection below target: 337, word lengths could not be planned: 596); out left as it was"
	if got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	if strings.Contains(got, "max_stages") || strings.Contains(got, "\n") {
		t.Errorf("misleading or not one line: %q", got)
	}
}
