package plots

import (
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
	"runtime"
	"testing"
)

// TestFrontManyCandidates checks that a dense cloud of candidates stays
// within the SVG size bound.
func TestFrontManyCandidates(t *testing.T) {
	d := demoFront()
	r := rand.New(rand.NewPCG(3, 4))
	for range 60000 {
		d.Candidates = append(d.Candidates, Point{Multiplies: 30 + 1500*r.Float64(), MemoryBits: 3000 + 100000*r.Float64()})
	}
	d.FeasibleTotal = 250000
	f, err := Front(d)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := f.Render(&buf, "svg", 0, 0); err != nil {
		t.Fatal(err)
	}
	t.Logf("SVG %d bytes", buf.Len())
	if buf.Len() > 2<<20 {
		t.Errorf("SVG is %d bytes, want under 2 MiB", buf.Len())
	}
}

func BenchmarkResponseSVG(b *testing.B) {
	for _, n := range []int{5000, 50000} {
		d := demoResponse(n)
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			for b.Loop() {
				f, err := Response(d)
				if err != nil {
					b.Fatal(err)
				}
				if err := f.Render(io.Discard, "svg", 0, 0); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkFrontPNG(b *testing.B) {
	d := demoFront()
	for b.Loop() {
		f, err := Front(d)
		if err != nil {
			b.Fatal(err)
		}
		if err := f.Render(io.Discard, "png", 0, 0); err != nil {
			b.Fatal(err)
		}
	}
}

// A chain at a large ratio has D/2 alias bands (millions at D = 2^24); they
// come in order and are merged without being copied: a million bands
// (16 MB) allocate only the merged result.
func TestAliasBandsNotCopied(t *testing.T) {
	const fk, fa = 1.0, 0.4
	bands := make([][2]float64, 1<<20)
	for k := range bands {
		f := float64(k + 1)
		bands[k] = [2]float64{f*fk - fa, f*fk + fa}
	}
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	low := lowestMerged(bands)
	m := merged(bands, 0.25, 0) // gaps of 0.2 merge: one band
	runtime.ReadMemStats(&after)
	if low != [2]float64{0.6, 1.4} || len(m) != 1 || m[0] != [2]float64{0.6, float64(len(bands)) + fa} {
		t.Errorf("lowestMerged %v, merged %v: want [0.6 1.4] and one band [0.6 %v]", low, m, float64(len(bands))+fa)
	}
	if d := after.TotalAlloc - before.TotalAlloc; d > 1<<20 {
		t.Errorf("merging %d sorted bands allocated %d bytes, want under 1 MB (no copy)", len(bands), d)
	}
}
