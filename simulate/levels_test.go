package simulate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/signalio"
)

// tone returns n codes of a b-bit word holding a sine of amplitude a (a
// fraction of full scale) at f cycles per sample.
func tone(n, b int, a, f float64) []int64 {
	x := make([]int64, n)
	fs := math.Ldexp(1, b-1)
	for i := range x {
		x[i] = int64(math.Round(a * fs * math.Sin(2*math.Pi*f*float64(i))))
	}
	return x
}

// A tone reads its level in a band that holds it, wherever it falls
// between bins (the band sums its window's lobe: the scalloping that a
// single bin shows is gone), and nothing far from it; white noise reads its
// power times the fraction of the band it covers. The expected levels are
// the definitions: 20 log10(a) dBFS for a sine of amplitude a, and
// 10 log10(2 sigma^2) for noise of variance sigma^2 (full scale's sine has
// power 1/2).
func TestBandLevels(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	for trial := 0; trial < 20; trial++ {
		a := math.Pow(10, -(1+40*rng.Float64())/20)
		f := 0.05 + 0.4*rng.Float64()
		sig := &signalio.Signal{RateHz: 1, Bits: 24, Samples: [][]int64{tone(1<<15, 24, a, f)}}
		sp, err := signalio.Welch(sig, signalio.WelchOptions{Segment: 2048})
		if err != nil {
			t.Fatal(err)
		}
		in := BandDBFS(sp, func(g float64) bool { return math.Abs(g-f) < 0.01 })
		if want := 20 * math.Log10(a); math.Abs(in-want) > 0.02 {
			t.Errorf("tone of %.2f dBFS at %.4f: band reads %.3f dBFS", want, f, in)
		}
		if out := BandDBFS(sp, func(g float64) bool { return math.Abs(g-f) > 0.05 }); out > 20*math.Log10(a)-90 {
			t.Errorf("tone at %.4f leaks %.1f dBFS far from it", f, out)
		}
	}
	// White Gaussian noise of sigma = 0.01 of full scale.
	const sigma = 0.01
	x := make([]int64, 1<<16)
	for i := range x {
		x[i] = int64(math.Round(rng.NormFloat64() * sigma * (1 << 23)))
	}
	sp, err := signalio.Welch(&signalio.Signal{RateHz: 1, Bits: 24, Samples: [][]int64{x}}, signalio.WelchOptions{})
	if err != nil {
		t.Fatal(err)
	}
	all := BandDBFS(sp, func(float64) bool { return true })
	quarter := BandDBFS(sp, func(g float64) bool { return g < 0.125 })
	want := 10 * math.Log10(2*sigma*sigma)
	if math.Abs(all-want) > 0.2 || math.Abs(quarter-(want-10*math.Log10(4))) > 0.3 {
		t.Errorf("noise: whole band %.2f dBFS (want %.2f), a quarter %.2f (want %.2f)", all, want, quarter, want-6.02)
	}
}

// InAlias is membership of the bands [k F_out - fa, k F_out + fa], k != 0,
// listed one by one: 20 000 seeded random frequencies over both halves of
// an I/Q spectrum.
func TestInAliasMatchesBandList(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for trial := 0; trial < 50; trial++ {
		out := 1 + 10*rng.Float64()
		b := Bands{OutputRateHz: out, ProtectedHz: out * (0.05 + 0.4*rng.Float64())}
		in := out * float64(2+rng.IntN(30))
		for i := 0; i < 400; i++ {
			f := (rng.Float64() - 0.5) * in
			listed := false
			for k := -40; k <= 40; k++ {
				if k != 0 && f >= float64(k)*out-b.ProtectedHz && f <= float64(k)*out+b.ProtectedHz {
					listed = true
				}
			}
			if b.InAlias(f) != listed {
				t.Fatalf("f = %g, output %g, fa %g: InAlias %v, band list %v", f, out, b.ProtectedHz, b.InAlias(f), listed)
			}
		}
	}
}

// A 12.5 to 10 MS/s I/Q chain (poly4/5 alone, fa = 3 MHz) has no input
// alias band within its input's +-6.25 MHz: nothing there folds onto
// [-3, 3] MHz at 10 MS/s without passing the prototype's stopband. The
// images a fractional stage makes of every input frequency are not counted
// (they made every input frequency an alias band).
func TestInAliasFractional(t *testing.T) {
	b := Bands{PassbandHz: 3e6, ProtectedHz: 3e6, OutputRateHz: 10e6}
	for f := -6.25e6; f <= 6.25e6; f += 1e3 {
		if b.InAlias(f) {
			t.Fatalf("f = %g Hz counted as an alias band", f)
		}
	}
	// Through 100 to 3.84 MS/s, the bands of 3.84 MHz multiples, as for an
	// integer ratio.
	b = Bands{PassbandHz: 1e6, ProtectedHz: 1.2e6, OutputRateHz: 3.84e6}
	for _, tc := range []struct {
		f    float64
		want bool
	}{{0, false}, {1.2e6, false}, {2.64e6, true}, {3.84e6, true}, {5.04e6, true}, {5.05e6, false}, {-7.68e6, true}, {-6.47e6, false}} {
		if got := b.InAlias(tc.f); got != tc.want {
			t.Errorf("f = %g Hz: InAlias %v, want %v", tc.f, got, tc.want)
		}
	}
}
