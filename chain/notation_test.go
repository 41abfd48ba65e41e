package chain

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

func TestNotationRoundTrip(t *testing.T) {
	for _, s := range []string{
		"cic5m1r16 > hb > hb > fir8 > fir2L",
		"fir100",
		"fir2L",
		"cic1m2r3 > fir7",
		"hb > hb > hb",
	} {
		p, err := ParseNotation(s)
		if err != nil {
			t.Errorf("%q: %v", s, err)
			continue
		}
		if got := Notation(p); got != s {
			t.Errorf("Notation(ParseNotation(%q)) = %q", s, got)
		}
	}
	want := []StagePlan{
		{Kind: CIC, Factor: 16, CICOrder: 5, CICDelay: 1},
		{Kind: HalfBand, Factor: 2},
		{Kind: FIR, Factor: 8, Variant: Multiband},
		{Kind: FIR, Factor: 2, Variant: Lowpass},
	}
	// Spaces around ">" are optional.
	got, err := ParseNotation("cic5m1r16>hb >  fir8\t>fir2L")
	if err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("got %+v, %v", got, err)
	}
}

func TestNotationErrors(t *testing.T) {
	for _, tc := range []struct {
		in       string
		pos      int
		expected string
	}{
		{"", 0, "a stage"},
		{"fir", 3, "FIR decimation factor"},
		{"fir1", 3, "FIR decimation factor"},
		{"fir08", 3, "leading zeros"},
		{"cic5r16", 4, `"m"`},
		{"cic5m1", 6, `"r"`},
		{"cic0m1r4", 3, "CIC order"},
		{"hb > ", 5, "a stage"},
		{"hb hb", 3, `" > "`},
		{"fir8 > fir2x", 11, `" > "`},
		{"fir99999999999999999999", 3, "FIR decimation factor"},
	} {
		_, err := ParseNotation(tc.in)
		var ne *NotationError
		if !errors.As(err, &ne) {
			t.Errorf("%q: want *NotationError, got %v", tc.in, err)
			continue
		}
		if ne.Pos != tc.pos || !strings.Contains(ne.Expected, tc.expected) {
			t.Errorf("%q: at %d expected %q; want %d, %q", tc.in, ne.Pos, ne.Expected, tc.pos, tc.expected)
		}
		if !strings.Contains(err.Error(), "at byte") {
			t.Errorf("%q: message %q lacks the position", tc.in, err)
		}
	}
}

// FuzzParseNotation checks the round-trip property: whatever parses prints
// back to a canonical string that parses to the same plan.
func FuzzParseNotation(f *testing.F) {
	for _, s := range []string{"cic5m1r16 > hb > hb > fir8 > fir2L", "fir2", "hb>hb", "cic1m1r2", "fir0", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		p, err := ParseNotation(s)
		if err != nil {
			var ne *NotationError
			if !errors.As(err, &ne) || ne.Pos < 0 || ne.Pos > len(s) {
				t.Fatalf("%q: bad error %v", s, err)
			}
			return
		}
		n := Notation(p)
		q, err := ParseNotation(n)
		if err != nil || !reflect.DeepEqual(p, q) || Notation(q) != n {
			t.Fatalf("%q -> %q -> %+v, %v", s, n, q, err)
		}
	})
}
