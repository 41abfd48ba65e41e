package remez

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestSweep designs random realistic lowpass, highpass, bandpass and
// bandstop specifications at the Herrmann length for 40-100 dB: none may
// give non-finite taps, and all must converge to equiripple (weighted
// deviations equal to 1 %).
func TestSweep(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 120 {
		nb := 2 + rng.IntN(2)
		tr := 0.01 + 0.05*rng.Float64()
		var bands []Band
		f := 0.0
		for b := range nb {
			w := 0.05 + 0.3*rng.Float64()/float64(nb)
			hi := math.Min(f+w, 0.5)
			if b == nb-1 {
				hi = 0.5
			}
			bands = append(bands, Band{Lo: f, Hi: hi, Gain: float64((b + trial) % 2), Weight: math.Pow(10, 2*rng.Float64())})
			f = hi + tr
			if f >= 0.49 {
				break
			}
		}
		if len(bands) < 2 || bands[len(bands)-1].Hi <= bands[len(bands)-1].Lo {
			continue
		}
		ds := math.Pow(10, -(40+60*rng.Float64())/20)
		n := HerrmannLength(math.Min(10*ds, 0.1), ds, tr, 1)
		if bands[len(bands)-1].Gain != 0 && n%2 == 0 {
			n++ // a gain at rate/2 needs type I
		}
		if rng.IntN(2) == 0 && bands[len(bands)-1].Gain == 0 {
			n += 1 - n%2 // odd or even both fine here; vary parity
		}
		res, err := Design(n, 1, bands, Settings{})
		if res != nil {
			for _, v := range res.Taps {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("n=%d: non-finite tap", n)
				}
			}
		}
		if err != nil {
			t.Errorf("trial %d n=%d bands %+v: %v", trial, n, bands, err)
			continue
		}
		for b := range bands {
			if r := res.Deviations[b] * bands[b].Weight / res.Delta; math.Abs(r-1) > 0.01 {
				t.Errorf("trial %d n=%d band %d: weighted deviation / delta = %.4f", trial, n, b, r)
			}
		}
	}
}
