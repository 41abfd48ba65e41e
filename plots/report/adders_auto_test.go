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
// dominate one another). Invented 2.4 GS/s receivers, real and complex,
// and 20 MS/s channels up to a 640 MS/s DAC (an interpolation chain lists
// its stages DAC side first, its word-length plan in signal order: the
// counts were once given to the wrong stages there, and the front figure
// refused the report).
func TestAutoWidthAddersAreTheSearchs(t *testing.T) {
	for _, tc := range []struct {
		in, out, pass, sig, coef string
		unity                    bool
	}{
		{"2.4 GHz", "37.5 MHz", "2 MHz", "real", `"auto"`, false}, {"2.4 GHz", "18.75 MHz", "2 MHz", "complex", `"auto"`, true}, {"2.4 GHz", "37.5 MHz", "2 MHz", "complex", "16", true},
		{"20 MHz", "640 MHz", "8 MHz", "real", "14", false}, {"20 MHz", "640 MHz", "8 MHz", "complex", `"auto"`, true},
	} {
		text := fmt.Sprintf("input_rate = %q\noutput_rate = %q\npassband = %q\nripple = \"0.2 dB\"\nrejection = \"60 dB\"\nsignal = %q\n[words]\ninput = 12\noutput = 16\ncoefficients = %s\nunity_gain = %v\n[hardware]\nclock = \"400 MHz\"\nmultiplierless = true\n[search]\nmax_stages = 3\n", tc.in, tc.out, tc.pass, tc.sig, tc.coef, tc.unity)
		s, res, rep := planned(t, text)
		ctx := context.Background()
		for i, c := range rep.Front {
			if c.Adders == nil || *c.Adders != res.Front[i].Figures.Adders {
				t.Errorf("%s %s: %s: report.json %d adders, the search ranked it on %d", tc.out, tc.sig, c.Notation, deref(c.Adders), res.Front[i].Figures.Adders)
			}
		}
		if _, err := Files(ctx, rep, res, s); err != nil {
			t.Errorf("%s %s: %v", tc.out, tc.sig, err)
		}
	}
}

// planned parses the spec text, plans it and makes its report, as plan
// does.
func planned(t *testing.T, text string) (*specfile.Spec, *optimize.Result, *Report) {
	t.Helper()
	s, err := specfile.Parse("spec.toml", []byte(text))
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
	return s, res, rep
}
