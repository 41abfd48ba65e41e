package remez_test

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// A lowpass at 48 kHz: passband to 8 kHz, stopband from 10 kHz, with the
// stopband weighted ten times the passband.
func ExampleDesign() {
	bands := []remez.Band{
		{Lo: 0, Hi: 8000, Gain: 1, Weight: 1},
		{Lo: 10000, Hi: 24000, Gain: 0, Weight: 10},
	}
	res, err := remez.Design(61, 48000, bands, remez.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	dp, ds := res.Deviations[0], res.Deviations[1]
	fmt.Printf("%d taps, converged %v\n", len(res.Taps), res.Converged)
	fmt.Printf("ripple %.3f dB, stopband %.1f dB\n", 20*math.Log10((1+dp)/(1-dp)), -20*math.Log10(ds))
	// Output:
	// 61 taps, converged true
	// ripple 0.192 dB, stopband 59.1 dB
}

// The shortest filter meeting 0.1 dB ripple (dp = 0.0058) and 80 dB.
func ExampleMinLength() {
	bands := []remez.Band{
		{Lo: 0, Hi: 0.2e6, Gain: 1, MaxError: 0.0058},
		{Lo: 0.25e6, Hi: 0.5e6, Gain: 0, MaxError: 1e-4},
	}
	res, err := remez.MinLength(1e6, bands, 1, 0, remez.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d taps (Herrmann estimate %d)\n", len(res.Taps), remez.HerrmannLength(0.0058, 1e-4, 0.05e6, 1e6))
	// Output:
	// 71 taps (Herrmann estimate 67)
}

func ExampleHalfBand() {
	res, err := remez.HalfBand(3, 0.2, 1, remez.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.5f\n", res.Taps)
	fmt.Printf("deviation %.4f (%.2f dB)\n", res.Deviations[0], -20*math.Log10(res.Deviations[0]))
	// Output:
	// [0.05374 0.00000 -0.09151 0.00000 0.31321 0.50000 0.31321 0.00000 -0.09151 0.00000 0.05374]
	// deviation 0.0509 (25.87 dB)
}

func ExampleMinHalfBand() {
	// A half-band at 100 MHz passing 20 MHz with 90 dB (dev 3.16e-5).
	res, err := remez.MinHalfBand(20e6, 100e6, 3.16e-5, remez.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d taps, k = %d\n", len(res.Taps), (len(res.Taps)+1)/4)
	// Output:
	// 55 taps, k = 14
}

func ExampleHerrmannLength() {
	// 0.1737 dB ripple (dp = 0.01) and 60 dB (ds = 0.001) with a 5 Hz
	// transition at 10 kHz.
	fmt.Println(remez.HerrmannLength(0.01, 0.001, 5, 10000))
	fmt.Println(remez.KaiserLength(0.01, 0.001, 5, 10000))
	fmt.Println(remez.BellangerLength(0.01, 0.001, 5, 10000))
	// Output:
	// 5084
	// 5070
	// 5334
}

func ExampleSpectrum() {
	h := []float64{0.25, 0.5, 0.25}
	sp := remez.NewSpectrum(5) // 0, rate/8, rate/4, 3 rate/8, rate/2
	mag := sp.Magnitude(make([]float64, 5), h)
	fmt.Printf("%.4f\n", mag)
	// Output:
	// [1.0000 0.8536 0.5000 0.1464 0.0000]
}

func ExampleAmplitude() {
	h := []float64{-0.1, 0.6, 0.6, -0.1}
	fmt.Printf("%.4f %.4f\n", remez.Amplitude(h, 0, 1000), remez.Magnitude(h, 250, 1000))
	// Output:
	// 1.0000 0.9899
}
