package report

import (
	"context"
	"fmt"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// Multiplierless with "auto" widths or a unity-gain correction: the search
// ranks the front on the adders of the taps as the word-length plan rounds
// them, so report.json's
// adders (counted on its coefficients_int) are the search's, chain by
// chain, and the front figure takes them (it refuses a front whose chains
// dominate one another). Invented 2.4 GS/s specs, real and complex.
func TestAutoWidthAddersAreTheSearchs(t *testing.T) {
	for _, tc := range []struct {
		out, sig, coef string
		unity          bool
	}{{"37.5 MHz", "real", `"auto"`, false}, {"18.75 MHz", "complex", `"auto"`, true}, {"37.5 MHz", "complex", "16", true}} {
		text := fmt.Sprintf("input_rate = \"2.4 GHz\"\noutput_rate = %q\npassband = \"2 MHz\"\nripple = \"0.2 dB\"\nrejection = \"60 dB\"\nsignal = %q\n[words]\ninput = 12\noutput = 16\ncoefficients = %s\nunity_gain = %v\n[hardware]\nclock = \"400 MHz\"\nmultiplierless = true\n", tc.out, tc.sig, tc.coef, tc.unity)
		s, err := specfile.Parse("auto.toml", []byte(text))
		if err != nil {
			t.Fatal(err)
		}
		ctx := context.Background()
		res, err := optimize.Plan(ctx, s.Chain, s.SearchSettings())
		if err != nil {
			t.Fatal(err)
		}
		rep, err := NewContext(ctx, "plan", s, res)
		if err != nil {
			t.Fatal(err)
		}
		for i, c := range rep.Front {
			if c.Adders == nil || *c.Adders != res.Front[i].Figures.Adders {
				t.Errorf("%s %s: %s: report.json %v adders, the search ranked it on %d", tc.out, tc.sig, c.Notation, c.Adders, res.Front[i].Figures.Adders)
			}
		}
		if _, err := Files(ctx, rep, res, s); err != nil {
			t.Errorf("%s %s: %v", tc.out, tc.sig, err)
		}
	}
}
