package plots

import (
	"math"
	"math/rand/v2"
	"testing"
)

// aliasShadingLoop is AliasShading without the shortcut: every band k
// visited (the definition, practical up to a few million bands).
func aliasShadingLoop(inHz, outHz, faHz float64) [][2]float64 {
	var bands [][2]float64
	minGap := inHz / 2 / 4096
	for k := 1; float64(k)*outHz-faHz < inHz/2; k++ {
		lo, hi := float64(k)*outHz-faHz, math.Min(float64(k)*outHz+faHz, inHz/2)
		if n := len(bands); k > 64 && n > 0 && lo-bands[n-1][1] < minGap {
			bands[n-1][1] = hi
			continue
		}
		bands = append(bands, [2]float64{lo, hi})
	}
	return bands
}

// The shortcut gives the bands of the band-by-band definition, bit for bit,
// on seeded invented rates: ratios from 2 to 2^21, integer and not,
// protected bands from a sliver to the whole channel.
func TestAliasShadingAsLoop(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 17))
	for i := range 400 {
		in := math.Ldexp(1+rng.Float64(), 10+rng.IntN(30))
		ratio := math.Exp2(1 + 20*rng.Float64())
		if i%3 == 0 {
			ratio = math.Round(ratio)
		}
		out := in / ratio
		fa := out / 2 * math.Pow(rng.Float64(), 1+4*rng.Float64())
		if i%7 == 0 {
			fa = out / 2
		}
		got, want := AliasShading(in, out, fa), aliasShadingLoop(in, out, fa)
		if len(got) != len(want) {
			t.Fatalf("case %d (in %v, out %v, fa %v): %d bands, want %d", i, in, out, fa, len(got), len(want))
		}
		for k := range got {
			if got[k] != want[k] {
				t.Fatalf("case %d (in %v, out %v, fa %v): band %d = %v, want %v", i, in, out, fa, k, got[k], want[k])
			}
		}
	}
}

// A ratio of 2^30 (half a billion bands) is shaded in one step: 64 bands,
// the last reaching inHz/2.
func TestAliasShadingHugeRatio(t *testing.T) {
	in := 1073741824e3
	b := AliasShading(in, 1e3, 310)
	if len(b) != 64 || b[63][1] != in/2 || b[0] != [2]float64{690, 1310} {
		t.Errorf("%d bands, first %v, last %v; want 64, [690 1310], ending at %v", len(b), b[0], b[len(b)-1], in/2)
	}
}

// Past 2^53 bands a float64 band index no longer counts one by one: the
// shading still returns, ending at inHz/2 (only a caller of the exported
// function can ask it; a spec's ratio is at most 2^31 - 1).
func TestAliasShadingBeyondFloatCount(t *testing.T) {
	for _, c := range [][3]float64{{1e20, 1, 0.5}, {1e17, 1, 0.5}, {3e16, 1, 0.3}, {1e30, 1e-30, 5e-31}} {
		b := AliasShading(c[0], c[1], c[2])
		if len(b) == 0 || len(b) > 64 || b[len(b)-1][1] != c[0]/2 {
			t.Errorf("AliasShading(%v, %v, %v): %d bands ending at %v, want at most 64 ending at %v", c[0], c[1], c[2], len(b), b[len(b)-1][1], c[0]/2)
		}
	}
}
