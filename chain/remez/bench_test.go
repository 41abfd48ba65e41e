package remez

import (
	"fmt"
	"testing"
)

// shrinking is the benchmark specification: rate 1, passband 0-0.2,
// stopband from 0.2+3/n to 0.5, weights 1:10 (its optimum stays near
// 66.5 dB for every n). testdata/remez/bench_compare.py times the same
// designs in SciPy.
func shrinking(n int) []Band {
	return []Band{{Lo: 0, Hi: 0.2, Gain: 1, Weight: 1}, {Lo: 0.2 + 3/float64(n), Hi: 0.5, Gain: 0, Weight: 10}}
}

func BenchmarkDesign(b *testing.B) {
	for _, n := range []int{255, 1023, 2047, 4095, 16383} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			bands := shrinking(n)
			var res *Result
			for b.Loop() {
				var err error
				res, err = Design(n, 1, bands, Settings{})
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(dB(res.Deviations[1]), "stop-dB")
			b.ReportMetric(rippleDB(res.Deviations[0]), "ripple-dB")
			b.ReportMetric(float64(res.Iterations), "iter")
		})
	}
}

func BenchmarkMagnitude(b *testing.B) {
	h := make([]float64, 4095)
	for i := range h {
		h[i] = 1 / float64(i+1)
	}
	b.Run("direct", func(b *testing.B) {
		for b.Loop() {
			Magnitude(h, 0.1234, 1)
		}
	})
	b.Run("amplitude", func(b *testing.B) {
		for b.Loop() {
			Amplitude(h, 0.1234, 1)
		}
	})
	b.Run("grid8193", func(b *testing.B) {
		sp := NewSpectrum(8193)
		dst := make([]float64, 8193)
		for b.Loop() {
			sp.Magnitude(dst, h)
		}
	})
}

// BenchmarkMinLength searches the shortest filter for the 10 kHz example
// of Crochiere and Rabiner (1975; docs/design.md §11) (pass 0-45 Hz within 0.01, stop 50 Hz-5 kHz within
// 0.001; Herrmann estimate 5 084 taps).
func BenchmarkMinLength(b *testing.B) {
	bands := []Band{
		{Lo: 0, Hi: 45, Gain: 1, MaxError: 0.01},
		{Lo: 50, Hi: 5000, Gain: 0, MaxError: 0.001},
	}
	var res *Result
	for b.Loop() {
		var err error
		res, err = MinLength(10000, bands, 1, 0, Settings{})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(res.Taps)), "taps")
}

// BenchmarkNarrowGaps times the first report (800 kHz, passband 0-18.8 kHz,
// four stopbands with 600 Hz gaps; it ran 74 s before the gaps stopped
// counting as transitions) and the half-band of the second (12.5 kHz at
// 1.6 MHz, 90 dB, which failed at the default density).
func BenchmarkNarrowGaps(b *testing.B) {
	bands := []Band{
		{Lo: 0, Hi: 18.8e3, Gain: 1, MaxError: 0.0204},
		{Lo: 50.3e3, Hi: 149.7e3, MaxError: 1.15e-3},
		{Lo: 150.3e3, Hi: 249.7e3, MaxError: 1.15e-3},
		{Lo: 250.3e3, Hi: 349.7e3, MaxError: 1.15e-3},
		{Lo: 350.3e3, Hi: 400e3, MaxError: 1.15e-3},
	}
	b.Run("MinLength", func(b *testing.B) {
		for b.Loop() {
			if _, err := MinLength(800e3, bands, 0, 0, Settings{}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("MinHalfBand", func(b *testing.B) {
		for b.Loop() {
			if _, err := MinHalfBand(12.5e3, 1.6e6, 3.16e-5, Settings{}); err != nil {
				b.Fatal(err)
			}
		}
	})
}
