package plots

import (
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
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
