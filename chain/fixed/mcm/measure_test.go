package mcm_test

import (
	"fmt"
	"math/rand"
	"os"
	"testing"
	"time"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// measureSeed seeds the random sets of TestMeasure (the doc's table).
const measureSeed = 2007

// TestMeasure prints the doc's table: mean adders of plain CSD and of the
// graph on random sets (magnitudes uniform in [1, 2^b - 1], random signs,
// 100 sets per cell, seed measureSeed), then on designed lowpass filters
// rounded to 16 and 18 bits. Run it with
//
//	STEPDOWN_LONG=1 go test -run TestMeasure -v ./chain/fixed/mcm
//
// It fails only if a graph is wrong or dearer than CSD.
func TestMeasure(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("set STEPDOWN_LONG=1 to measure")
	}
	rng := rand.New(rand.NewSource(measureSeed))
	const sets = 100
	fmt.Printf("random sets, seed %d, %d sets per row: mean adders\n", measureSeed, sets)
	fmt.Printf("%4s %5s %9s %9s %9s %7s %6s %9s\n", "bits", "N", "distinct", "CSD", "graph", "saving", "depth", "time")
	for _, b := range []int{12, 16, 20} {
		for _, n := range []int{10, 20, 50, 100} {
			var lo, csd, gr, dep int
			var el time.Duration
			for range sets {
				c := make([]int64, n)
				for i := range c {
					c[i] = 1 + rng.Int63n(1<<b-1)
					if rng.Intn(2) == 0 {
						c[i] = -c[i]
					}
				}
				st := time.Now()
				g := mustProve(t, c)
				el += time.Since(st)
				lo += distinct(c)
				csd += mcm.CSDAdders(c)
				gr += g.Adders()
				dep += g.Depth()
			}
			fmt.Printf("%4d %5d %9.2f %9.2f %9.2f %6.1f%% %6.2f %9v\n", b, n, float64(lo)/sets, float64(csd)/sets,
				float64(gr)/sets, 100*(1-float64(gr)/float64(csd)), float64(dep)/sets, (el / sets).Round(time.Microsecond))
		}
	}

	fmt.Printf("\ndesigned lowpass filters (remez.MinLength, rate 1), rounded by fixed.Quantize\n")
	fmt.Printf("%-38s %5s %4s %9s %6s %6s %7s %6s %9s\n", "filter", "taps", "bits", "distinct", "CSD", "graph", "saving", "depth", "time")
	for _, f := range []struct {
		name       string
		pass, stop float64
		dp, ds     float64
	}{
		{"pass 0.10, stop 0.15, 1e-3/1e-4", 0.10, 0.15, 1e-3, 1e-4},
		{"pass 0.20, stop 0.25, 1e-3/1e-5", 0.20, 0.25, 1e-3, 1e-5},
		{"pass 0.20, stop 0.30, 1e-4/1e-4 (*)", 0.20, 0.30, 1e-4, 1e-4},
		{"pass 0.02, stop 0.04, 1e-3/1e-4", 0.02, 0.04, 1e-3, 1e-4},
		{"pass 0.05, stop 0.06, 1e-3/1e-4", 0.05, 0.06, 1e-3, 1e-4},
	} {
		r, err := remez.MinLength(1, []remez.Band{
			{Lo: 0, Hi: f.pass, Gain: 1, MaxError: f.dp},
			{Lo: f.stop, Hi: 0.5, MaxError: f.ds},
		}, 0, 0, remez.Settings{})
		if err != nil {
			t.Fatalf("%s: %v", f.name, err)
		}
		for _, bits := range []int{16, 18} {
			c := fixed.Quantize(r.Taps, bits).Ints
			st := time.Now()
			g := mustProve(t, c)
			el := time.Since(st)
			csd := mcm.CSDAdders(c)
			fmt.Printf("%-38s %5d %4d %9d %6d %6d %6.1f%% %6d %9v\n", f.name, len(c), bits, distinct(c), csd,
				g.Adders(), 100*(1-float64(g.Adders())/float64(csd)), g.Depth(), el.Round(time.Microsecond))
		}
	}
	fmt.Println("(*) symmetric about rate/4 with equal errors: a half-band, every other tap zero")
}

// mustProve builds c's graph and checks it on x = 1 and x = -12345.
func mustProve(t *testing.T, c []int64) *mcm.Graph {
	t.Helper()
	g, err := mcm.Build(c)
	if err != nil {
		t.Fatal(err)
	}
	for _, x := range []int64{1, -12345} {
		v, err := g.Eval(x)
		if err != nil {
			t.Fatal(err)
		}
		for k := range c {
			if v[k] != c[k]*x {
				t.Fatalf("coefficient %d = %d: graph gives %d for x = %d", k, c[k], v[k], x)
			}
		}
	}
	if g.Adders() > mcm.CSDAdders(c) {
		t.Fatalf("%d adders, CSD %d", g.Adders(), mcm.CSDAdders(c))
	}
	return g
}

// distinct counts the distinct odd fundamentals above 1: the lower bound.
func distinct(c []int64) int {
	seen := map[int64]bool{}
	for _, x := range c {
		if x < 0 {
			x = -x
		}
		for x != 0 && x&1 == 0 {
			x >>= 1
		}
		if x > 1 {
			seen[x] = true
		}
	}
	return len(seen)
}
