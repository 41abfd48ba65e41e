package simulate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// toWord's integer rounding is fixed.ADC's on the fractions of full scale
// (the bit-true run's input rule): 200 000 seeded random codes over every
// pair of widths, the extremes of each word included, and a wider word
// gets the code shifted up exactly.
func TestToWordIsTheADC(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	for from := 3; from <= 32; from++ {
		for to := 2; to < from; to++ {
			x := make([]int64, 200)
			for i := range x {
				x[i] = int64(rng.Uint64N(1<<from)) - 1<<(from-1)
			}
			x[0], x[1] = -(1 << (from - 1)), 1<<(from-1)-1
			f := make([]float64, len(x))
			for i, v := range x {
				f[i] = float64(v) * math.Ldexp(1, -(from-1))
			}
			want := make([]int64, len(x))
			wantClip := fixed.ADC(want, f, to)
			got := append([]int64(nil), x...)
			if clip := toWord(got, from, to); clip != wantClip {
				t.Fatalf("%d to %d bits: %d clipped, ADC %d", from, to, clip, wantClip)
			}
			for i := range x {
				if got[i] != want[i] {
					t.Fatalf("%d to %d bits: code %d gives %d, ADC %d", from, to, x[i], got[i], want[i])
				}
			}
		}
	}
	x := []int64{-8, 7, 0}
	if toWord(x, 4, 6); x[0] != -32 || x[1] != 28 || x[2] != 0 {
		t.Errorf("4 to 6 bits: %v", x)
	}
}
