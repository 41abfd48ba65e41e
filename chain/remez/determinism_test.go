package remez

import (
	"runtime"
	"testing"
)

// TestDeterministic: the same design gives the same bytes whatever
// GOMAXPROCS is (RULES.md: deterministic output).
func TestDeterministic(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var ref []float64
	for _, p := range []int{1, 2, 3, 8} {
		runtime.GOMAXPROCS(p)
		res, err := Design(2047, 1, shrinking(2047), Settings{})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = res.Taps
			continue
		}
		for i, v := range res.Taps {
			if v != ref[i] {
				t.Fatalf("GOMAXPROCS=%d: tap %d differs (%v vs %v)", p, i, v, ref[i])
			}
		}
	}
}
