package remez

import (
	"math"
	"math/rand/v2"
	"testing"
)

// trimNaive is the exchange's trimming written the plain way, one scan per
// dropped point: the reference that trimmer.do must reproduce point for
// point.
func trimNaive(s []point, m int) []point {
	s = append([]point(nil), s...)
	for len(s) > m {
		if len(s) == m+1 {
			if math.Abs(s[0].e) < math.Abs(s[len(s)-1].e) {
				s = s[1:]
			} else {
				s = s[:len(s)-1]
			}
			break
		}
		k := 0
		for q := range s {
			if math.Abs(s[q].e) < math.Abs(s[k].e) {
				k = q
			}
		}
		switch {
		case k == 0:
			s = s[1:]
		case k == len(s)-1:
			s = s[:k]
		default:
			keep := s[k-1]
			if math.Abs(s[k+1].e) > math.Abs(keep.e) {
				keep = s[k+1]
			}
			s[k-1] = keep
			s = append(s[:k], s[k+2:]...)
		}
	}
	return s
}

// TestTrimAgainstNaive draws alternating runs (errors on a coarse set of
// levels, so that ties are common) and checks the heap trimming against
// the plain one, point for point, with the scratch reused between cases.
func TestTrimAgainstNaive(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 3))
	var tr trimmer
	for c := range 20000 {
		k := 1 + rng.IntN(60)
		if c%100 == 0 {
			k = 1 + rng.IntN(3000)
		}
		m := 1 + rng.IntN(k+2)
		levels := 1 + rng.IntN(12)
		s := make([]point, k)
		sign := 1.0
		if rng.IntN(2) == 0 {
			sign = -1
		}
		for i := range s {
			s[i].f = float64(i)
			s[i].band = i
			s[i].e = sign * float64(1+rng.IntN(levels))
			sign = -sign
		}
		want := trimNaive(s, m)
		got := tr.do(append([]point(nil), s...), m)
		if len(got) != len(want) {
			t.Fatalf("case %d (k %d, m %d): %d points, want %d", c, k, m, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] {
				t.Fatalf("case %d (k %d, m %d): point %d = %+v, want %+v", c, k, m, i, got[i], want[i])
			}
		}
	}
}

// BenchmarkTrimNoise trims a million noise-level extrema to 4097 points,
// the case of a design whose error sits at rounding level.
func BenchmarkTrimNoise(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	s := make([]point, 1<<20)
	for i := range s {
		s[i].f = float64(i)
		s[i].e = math.Copysign(rng.Float64(), float64(1-2*(i%2)))
	}
	w := make([]point, len(s))
	var tr trimmer
	for b.Loop() {
		copy(w, s)
		tr.do(w, 4097)
	}
}
