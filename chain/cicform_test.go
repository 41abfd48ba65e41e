package chain

import (
	"strings"
	"testing"
)

// TestNonRecursiveNotation: the suffix round-trips, today's notation is
// unchanged, and an ineligible CIC is refused with the reason.
func TestNonRecursiveNotation(t *testing.T) {
	for _, s := range []string{"cic5m1r16nr > hb > fir2", "cic3m1r2nr > fir32", "cic5m1r16 > hb > fir2", "fir4 > cic2m1r1024nr"} {
		p, err := ParseNotation(s)
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		if got := Notation(p); got != s {
			t.Errorf("%q printed back as %q", s, got)
		}
		if strings.Contains(s, "nr") != (p[0].CICForm == NonRecursive || p[len(p)-1].CICForm == NonRecursive) {
			t.Errorf("%q: form %v", s, p)
		}
	}
	for _, tc := range []struct{ in, want string }{
		{"cic5m2r16nr", "differential delay M = 1"},
		{"cic5m1r12nr > fir2", "power of two"},
		{"cic5m1r16n", `" > " before`},
	} {
		_, err := ParseNotation(tc.in)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want it to say %q", tc.in, err, tc.want)
		}
	}
}

// TestNonRecursiveDesign designs the same chain in both forms: the same
// analysis (the transfer function is shared), full-precision sub-stage
// widths, and an error for an ineligible plan built by hand.
func TestNonRecursiveDesign(t *testing.T) {
	spec := Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3, RippleDB: 0.1, RejectionDB: 70, InputBits: 14, OutputBits: 24}
	var an [2]Analysis
	for i, s := range []string{"cic4m1r64 > hb > fir2", "cic4m1r64nr > hb > fir2"} {
		p, _ := ParseNotation(s)
		c, err := Design(spec, p, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		if an[i], err = Analyze(c, spec); err != nil {
			t.Fatal(err)
		}
		if i == 1 {
			cs := c.Stages[0].(CICStage)
			// Hand-worked: 14 + 4 i bits after sub-stage i of log2 64 = 6.
			want := []int{18, 22, 26, 30, 34, 38}
			for j := range want {
				if cs.RegisterBits[j] != want[j] {
					t.Fatalf("sub-stage widths %v, want %v", cs.RegisterBits, want)
				}
			}
			if cs.Form != NonRecursive || cs.OutputBits != 24 || cs.Width() != 38 {
				t.Errorf("form %v, output %d, width %d", cs.Form, cs.OutputBits, cs.Width())
			}
		}
	}
	if an[0] != an[1] {
		t.Errorf("recursive %+v, non-recursive %+v", an[0], an[1])
	}
	bad := []StagePlan{{Kind: CIC, Factor: 64, CICOrder: 4, CICDelay: 2, CICForm: NonRecursive}, {Kind: HalfBand, Factor: 2}, {Kind: FIR, Factor: 2}}
	if _, err := Design(spec, bad, Settings{}); err == nil || !strings.Contains(err.Error(), "M = 1") {
		t.Errorf("M = 2 non-recursive: %v", err)
	}
}
