package report

import (
	"math/rand/v2"
	"testing"
)

// BeatenBy against a brute-force reading of the definition on seeded random
// fronts: a beater is at least as good on all three axes, better on one, and
// meets the targets; the savings are (was - now) / was in percent.
func TestBeatenBy(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	pick := func(n int) float64 { return float64(1 + rng.IntN(n)) }
	for trial := 0; trial < 500; trial++ {
		c := Chain{Notation: "checked", MultipliesPerOutput: pick(8), MemoryBits: int(pick(8)), LatencyS: pick(8) * 1e-6, MeetsTargets: true}
		var front []Chain
		for i := 0; i < 1+rng.IntN(8); i++ {
			front = append(front, Chain{Notation: string(rune('a' + i)), MultipliesPerOutput: pick(8), MemoryBits: int(pick(8)), LatencyS: pick(8) * 1e-6, MeetsTargets: rng.IntN(5) > 0})
		}
		if rng.IntN(4) == 0 {
			same := c
			front = append(front, same) // the checked chain itself never beats it
		}
		got := BeatenBy(c, front)
		k := 0
		for i, f := range front {
			le := f.MultipliesPerOutput <= c.MultipliesPerOutput && f.MemoryBits <= c.MemoryBits && f.LatencyS <= c.LatencyS
			lt := f.MultipliesPerOutput < c.MultipliesPerOutput || f.MemoryBits < c.MemoryBits || f.LatencyS < c.LatencyS
			if !(le && lt && f.MeetsTargets && f.Notation != c.Notation) {
				continue
			}
			if k >= len(got) || got[k].Rank != i+1 || got[k].Notation != f.Notation {
				t.Fatalf("trial %d: beater %d missing or out of order: %+v", trial, i+1, got)
			}
			want := 100 * (c.MultipliesPerOutput - f.MultipliesPerOutput) / c.MultipliesPerOutput
			if d := got[k].MultipliesSavingPct - want; d > 1e-9 || d < -1e-9 {
				t.Fatalf("trial %d: multiplies saving %v, want %v", trial, got[k].MultipliesSavingPct, want)
			}
			k++
		}
		if k != len(got) {
			t.Fatalf("trial %d: %d beaters, want %d: %+v", trial, len(got), k, got)
		}
	}
}

func TestBeaterText(t *testing.T) {
	for _, tc := range []struct {
		b    Beater
		want string
	}{
		{Beater{Rank: 2, Notation: "cic5m1r16 > fir4", MultipliesSavingPct: 41.2, MemorySavingPct: 12}, "#2 cic5m1r16 > fir4 does it with 41% fewer multiplies and 12% less memory"},
		{Beater{Rank: 1, Notation: "x", LatencySavingPct: 0.4}, "#1 x does it with 0.4% less latency"},
		{Beater{Rank: 3, Notation: "y", MultipliesSavingPct: 10, MemorySavingPct: 20, LatencySavingPct: 30}, "#3 y does it with 10% fewer multiplies, 20% less memory and 30% less latency"},
	} {
		if got := tc.b.Text(); got != tc.want {
			t.Errorf("Text() = %q, want %q", got, tc.want)
		}
	}
}
