package report

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// Two's complement by hand (common practice): -1 at 18 bits is 0x3ffff,
// -131071 (the most negative code fixed.Quantize uses) is 0x20001.
func TestReadmemH(t *testing.T) {
	got, err := ReadmemH([]int64{0, 1, -1, 131071, -131071, -2}, 18)
	if err != nil {
		t.Fatal(err)
	}
	want := "00000\n00001\n3ffff\n1ffff\n20001\n3fffe\n"
	if string(got) != want {
		t.Errorf("ReadmemH = %q, want %q", got, want)
	}
	got, _ = ReadmemH([]int64{-1, 5}, 16)
	if string(got) != "ffff\n0005\n" {
		t.Errorf("ReadmemH 16 bits = %q", got)
	}
	got, _ = ReadmemH([]int64{-1}, 64)
	if string(got) != "ffffffffffffffff\n" {
		t.Errorf("ReadmemH 64 bits = %q", got)
	}
	if _, err := ReadmemH([]int64{131072}, 18); err == nil {
		t.Error("ReadmemH: no error for a value that does not fit")
	}
	if _, err := ReadmemH([]int64{1}, 1); err == nil {
		t.Error("ReadmemH: no error for 1 bit")
	}
}

func TestIntCSV(t *testing.T) {
	// 2^-17 = 0.00000762939453125 exactly; 65536 * 2^-17 = 0.5.
	got := string(IntCSV([]int64{1, 65536, -3, 0}, 17))
	want := "index,integer,value\n0,1,0.00000762939453125\n1,65536,0.5\n2,-3,-0.00002288818359375\n3,0,0\n"
	if got != want {
		t.Errorf("IntCSV = %q, want %q", got, want)
	}
	if got := dyadic(3, -2); got != "12" {
		t.Errorf("dyadic(3, -2) = %q, want 12", got)
	}
}

func TestFloatCSV(t *testing.T) {
	got := string(FloatCSV([]float64{0.5, -0.1, 1e-7}))
	if got != "index,coefficient\n0,0.5\n1,-0.1\n2,1e-07\n" {
		t.Errorf("FloatCSV = %q", got)
	}
}

func TestMarshalRejectsNaN(t *testing.T) {
	r := &Report{Schema: Schema, Front: []Chain{{Notation: "hb", AliasRejectionDB: math.NaN()}}}
	_, err := r.Marshal()
	if err == nil || !strings.Contains(err.Error(), "front[0].alias_rejection_db") {
		t.Errorf("Marshal with NaN: %v, want an error naming front[0].alias_rejection_db", err)
	}
	r.Front[0].AliasRejectionDB = 80
	b, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{`"schema": "stepdown.report/1"`, `"partial": false`, `"front": [`, `"recommended": 0`} {
		if !strings.Contains(string(b), k) {
			t.Errorf("report lacks %s:\n%s", k, b)
		}
	}
}

// A word-length error reads without its package's prefix, wherever a
// wrapped error repeats it.
func TestWithoutPackage(t *testing.T) {
	inner := fmt.Errorf("%w up to 32 bits", fixed.ErrNoWidth)
	err := fmt.Errorf("fixed: stage %d: %w", 3, inner)
	if got, want := withoutPackage(err), "stage 3: no coefficient width meets the bands up to 32 bits"; got != want {
		t.Errorf("withoutPackage = %q, want %q", got, want)
	}
}
