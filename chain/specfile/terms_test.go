package specfile

import (
	"context"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// The library's messages reach the user through InFileTerms; each is made
// here by the library itself, so that a change of wording shows up.
func TestInFileTerms(t *testing.T) {
	spec, err := Parse("spec.toml", []byte(minimal))
	if err != nil {
		t.Fatal(err)
	}
	var msgs []string

	// A search space over optimize.MaxCandidates: D = 2^20 in 12 stages.
	big := spec.Chain
	big.InputRate, big.OutputRate, big.Passband, big.Protected, big.Stopband = 1<<20, 1, 0.1, 0.1, 0.9
	set := spec.SearchSettings()
	set.MaxStages, set.CICOrders, set.CICDelays = 12, []int{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, []int{1, 2, 3, 4}
	if _, err := optimize.Plan(context.Background(), big, set); err == nil {
		t.Error("optimize.Plan: no error for D = 2^20 in 12 stages")
	} else {
		msgs = append(msgs, err.Error())
	}

	// The design budget: almost no design work allowed.
	set = spec.SearchSettings()
	set.MaxWork = 1
	if res, err := optimize.Plan(context.Background(), spec.Chain, set); err != nil || len(res.Front) > 0 {
		t.Errorf("optimize.Plan with MaxWork 1: front %v, %v", res, err)
	} else {
		msgs = append(msgs, res.Reason)
	}

	// A band no filter of 5 taps meets.
	bands := []remez.Band{{Lo: 0, Hi: 0.1, Gain: 1, MaxError: 0.001}, {Lo: 0.12, Hi: 0.5, MaxError: 0.001}}
	if _, err := remez.MinLength(1, bands, 0, 5, remez.Settings{}); err == nil {
		t.Error("remez.MinLength: no error")
	} else {
		msgs = append(msgs, err.Error())
	}

	// The length search's own failures name its function (the format of
	// remez.MinLength's messages).
	msgs = append(msgs, "chain: FIR design: exchange did not converge: remez: MinLength: 7102 taps fail and 7104 taps are met only to rounding level (no usable taps): relax or tighten the bands")

	// A filter whose grid is over the engine's bound (remez.MinLength's
	// own message at 1.1 M taps of a 0.5 % transition).
	huge := []remez.Band{{Lo: 0, Hi: 0.1, Gain: 1, MaxError: 1e-3}, {Lo: 0.1000001, Hi: 0.5, MaxError: 1e-5}}
	if _, err := remez.MinLength(1, huge, 1, 4_000_001, remez.Settings{GridOnly: true, Density: 1 << 20}); err == nil {
		t.Error("remez.MinLength: no error for a grid over its bound")
	} else {
		grid := InFileTerms(err.Error())
		if !strings.Contains(grid, "design grid of more than") || strings.Contains(grid, "Density") || strings.Contains(grid, "MaxGridPoints") {
			t.Errorf("grid refusal in the spec's words: %q", grid)
		}
	}

	for _, m := range msgs {
		got := InFileTerms(m)
		for _, goWord := range []string{"MinLength", "MaxStages", "Kinds", "CICOrders", "CICDelays", "MaxDesigns", "MaxWork", "maxTaps", "MaxTaps", "MaxError", "Dropped", "optimize:", "remez:", "chain:"} {
			if strings.Contains(got, goWord) {
				t.Errorf("InFileTerms(%q) = %q: still says %q", m, got, goWord)
			}
		}
		t.Logf("%s\n  -> %s", m, got)
	}
	if len(msgs) == 4 {
		for i, want := range []string{"search.max_stages = 5 (or --max-stages 5) is the most that fits", "lower search.max_stages or --max-stages", "tap limit of 5 taps"} {
			if got := InFileTerms(msgs[i]); !strings.Contains(got, want) {
				t.Errorf("InFileTerms(%q) = %q, want it to contain %q", msgs[i], got, want)
			}
		}
	}
}
