package main

import (
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
