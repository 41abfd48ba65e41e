package fixed_test

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

func ExampleQuantize() {
	// A 7-tap half-band: centre 1/2, zeros at even offsets.
	taps := []float64{-0.0625, 0, 0.5625 / 2, 0.5, 0.5625 / 2, 0, -0.0625}
	c := fixed.Quantize(taps, 10)
	fmt.Println(c.Bits, c.Frac, c.Ints)
	// Output: 10 9 [-32 0 144 256 144 0 -32]
}

func ExampleMinCoefBits() {
	// A 15-tap windowed-sinc lowpass at 1 MHz (cutoff 125 kHz, Hann window),
	// held to 2e-2 in [0, 20 kHz] and 1e-2 in [300, 500 kHz].
	n := 15
	taps := make([]float64, n)
	sum := 0.0
	for k := range taps {
		t := float64(k - n/2)
		v := 0.25
		if t != 0 {
			v = math.Sin(math.Pi*0.25*t) / (math.Pi * t)
		}
		taps[k] = v * (0.5 + 0.5*math.Cos(2*math.Pi*t/float64(n+1)))
		sum += taps[k]
	}
	for k := range taps {
		taps[k] /= sum
	}
	for k := 0; k < n/2; k++ {
		taps[n-1-k] = taps[k]
	}
	bands := []remez.Band{
		{Lo: 0, Hi: 20e3, Gain: 1, MaxError: 2e-2},
		{Lo: 300e3, Hi: 500e3, MaxError: 1e-2},
	}
	c, dev, err := fixed.MinCoefBits(taps, 1e6, bands, fixed.QuantSettings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d bits, deviations %.4f %.4f\n", c.Bits, dev[0], dev[1])
	// Output: 7 bits, deviations 0.0126 0.0081
}

func ExamplePlan() {
	// An invented front end: 12.8 MHz, CIC N=4 R=8, then an FIR by 2 whose
	// taps come from elsewhere (here a short hand-made half-band).
	hb := []float64{-0.0625, 0, 0.28125, 0.5, 0.28125, 0, -0.0625}
	c := fixed.Cascade{InputRate: 12.8e6, Passband: 50e3, Stages: []fixed.Stage{
		{CIC: true, N: 4, M: 1, R: 8},
		{R: 2, Taps: hb, HalfBand: true, Bands: []remez.Band{
			{Lo: 0, Hi: 50e3, Gain: 1, MaxError: 0.01}, {Lo: 750e3, Hi: 800e3, MaxError: 0.01}}},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 14, OutputBits: 18}, fixed.Settings{NativeA: 18, NativeB: 27, Clock: 100e6})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, s := range w.Stages {
		fmt.Printf("stage %d: in %d, coef %d, acc %d, out %d\n", i+1, s.InputBits, s.Coefficients.Bits, s.AccumulatorBits, s.OutputBits)
	}
	// (RM)^N = 8^4 is a power of two: the pruned registers need one guard
	// bit above Hogenauer's 26 so that their truncations cannot wrap.
	fmt.Println("CIC registers", w.Stages[0].Pruning.RegisterBits, "guard", w.Stages[0].Pruning.GuardBits)
	// Output:
	// stage 1: in 14, coef 0, acc 27, out 18
	// stage 2: in 18, coef 3, acc 20, out 18
	// CIC registers [27 27 25 24 23 22 21 20] guard 1
}

func ExampleBitTrue() {
	hb := []float64{-0.0625, 0, 0.28125, 0.5, 0.28125, 0, -0.0625}
	c := fixed.Cascade{InputRate: 12.8e6, Passband: 50e3, Stages: []fixed.Stage{
		{CIC: true, N: 4, M: 1, R: 8},
		{R: 2, Taps: hb, HalfBand: true, Bands: []remez.Band{
			{Lo: 0, Hi: 50e3, Gain: 1, MaxError: 0.01}, {Lo: 750e3, Hi: 800e3, MaxError: 0.01}}},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 14, OutputBits: 18}, fixed.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	r, err := fixed.BitTrue(c, w, fixed.Signal{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("alias within 1 dB: %v\n", r.AliasValid && math.Abs(r.AliasRejectionDB-r.AliasResponseDB) < 1)
	// Output: alias within 1 dB: true
}

func ExampleEvaluate() {
	spec := chain.Spec{InputRate: 64e6, OutputRate: 1e6, Passband: 200e3, RippleDB: 0.1, RejectionDB: 80}
	plan, err := chain.ParseNotation("cic4m1r16 > hb > fir2")
	if err != nil {
		fmt.Println(err)
		return
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := fixed.Evaluate(spec, c, fixed.Settings{NativeA: 18, NativeB: 27, Clock: 200e6}, fixed.Signal{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, s := range res.Widths.Stages {
		fmt.Println(i+1, s.Coefficients.Bits, s.AccumulatorBits, s.OutputBits)
	}
	fmt.Printf("bit-true SNR %.1f dB\n", res.BitTrue.SNRDB)
	// Output:
	// 1 0 33 24
	// 2 13 37 24
	// 3 12 37 24
	// bit-true SNR 116.1 dB
}
