package optimize

import (
	"context"
	"fmt"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// TestRoundingTable prints, for the built-in example and invented specs at
// 14, 16 and 18-bit coefficients, how many front chains meet the spec with
// their taps rounded (fixed.PlanChain, the search's tolerances) in the
// floating-point search (Settings.floatOnly) and in the search on rounded
// taps, and the recommended chain of each. Run it with
// testdata/optimize/rounding_table.sh; it is skipped otherwise (a few
// minutes).
func TestRoundingTable(t *testing.T) {
	if os.Getenv("STEPDOWN_TABLE") == "" {
		t.Skip("prints the before/after table; run testdata/optimize/rounding_table.sh")
	}
	ex, exS := exampleSpec()
	cases := []struct {
		name string
		spec chain.Spec
		s    Settings
	}{
		{"example 122.88M>1.92M 90dB IQ", ex, exS},
		// Invented: a 122.88 MS/s to 1.92 MS/s real receiver, 600 kHz
		// channel, 85 dB, 0.1 dB.
		{"122.88M>1.92M 85dB", chain.Spec{InputRate: 122.88e6, OutputRate: 1.92e6, Passband: 600e3, RippleDB: 0.1, RejectionDB: 85}, Settings{}},
		// Invented: 200 MS/s to 2.5 MS/s, 1 MHz passband, 90 dB, 0.1 dB.
		{"200M>2.5M 90dB", chain.Spec{InputRate: 200e6, OutputRate: 2.5e6, Passband: 1e6, RippleDB: 0.1, RejectionDB: 90}, Settings{}},
		// Invented: 61.44 MS/s to 480 kS/s, 180 kHz passband, 100 dB, 0.05 dB.
		{"61.44M>480k 100dB", chain.Spec{InputRate: 61.44e6, OutputRate: 480e3, Passband: 180e3, RippleDB: 0.05, RejectionDB: 100}, Settings{}},
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%-30s %4s | %-16s %-40s | %-16s %-40s | %s\n", "spec", "bits", "before: meet/front", "recommended (multiplies/output, rounded rejection)", "after: meet/front", "recommended (multiplies/output, rounded rejection)", "cost change")
	for _, c := range cases {
		for _, bits := range []int{14, 16, 18} {
			spec := c.spec
			spec.CoefBits = bits
			var cells [2]string
			var mpo [2]float64
			for i, off := range []bool{true, false} {
				s := c.s
				s.floatOnly = off
				r, err := Plan(context.Background(), spec, s)
				if err != nil {
					t.Fatal(err)
				}
				meet := 0
				for _, fc := range r.Front {
					_, a, err := fixed.PlanChain(spec, fc.Chain, fixed.Settings{})
					if err == nil && a.AliasRejectionDB >= spec.RejectionDB && a.PassbandRippleDB <= spec.RippleDB {
						meet++
					}
				}
				rec := "none: " + r.Reason
				if r.Recommended >= 0 {
					fc := r.Front[r.Recommended]
					_, a, _ := fixed.PlanChain(spec, fc.Chain, fixed.Settings{})
					rec = fmt.Sprintf("%s (%.1f, %.2f dB)", chain.Notation(fc.Plan), fc.Figures.MultipliesPerOutput, a.AliasRejectionDB)
					mpo[i] = fc.Figures.MultipliesPerOutput
				}
				cells[i] = fmt.Sprintf("%-16s %-40s", fmt.Sprintf("%d/%d", meet, len(r.Front)), rec)
			}
			change := "-"
			if mpo[0] > 0 && mpo[1] > 0 {
				change = fmt.Sprintf("%+.1f%% multiplies", 100*(mpo[1]/mpo[0]-1))
			}
			fmt.Fprintf(&b, "%-30s %4d | %s | %s | %s\n", c.name, bits, cells[0], cells[1], change)
		}
	}
	fmt.Print(b.String())
}
