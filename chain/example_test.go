package chain_test

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

func ExampleParseNotation() {
	plan, err := chain.ParseNotation("cic5m1r16 > hb > fir8 > fir2L")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, p := range plan {
		fmt.Println(p.Kind, p.Factor, p.Variant)
	}
	fmt.Println(chain.Notation(plan))

	_, err = chain.ParseNotation("cic5m1 > hb")
	fmt.Println(err)
	// Output:
	// cic 16 multiband
	// halfband 2 multiband
	// fir 8 multiband
	// fir 2 lowpass
	// cic5m1r16 > hb > fir8 > fir2L
	// chain: notation "cic5m1 > hb": at byte 6: expected "r" and the CIC decimation factor, found " > hb"
}

func ExampleEstimate() {
	// An invented scenario: 61.44 MHz ADC, 240 kHz output, 96 kHz passband.
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3,
		RippleDB: 0.2, RejectionDB: 85}
	plan, _ := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	c, err := chain.Estimate(spec, plan, chain.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range c.Stages {
		if f, ok := s.(chain.FIRStage); ok {
			fmt.Printf("%s by %d: %d taps (estimate)\n", f.Kind(), f.R, f.Length)
		}
	}
	a, _ := chain.Analyze(c, spec)
	fmt.Printf("estimated rejection %.1f dB, ripple %.2f dB\n", a.AliasRejectionDB, a.PassbandRippleDB)
	// Output:
	// halfband by 2: 11 taps (estimate)
	// halfband by 2: 15 taps (estimate)
	// fir by 2: 36 taps (estimate)
	// estimated rejection 85.0 dB, ripple 0.07 dB
}

func ExampleRun() {
	// A 4-tap moving average decimating by 2 (by hand): a DC input comes out
	// at gain 1 once the delay line is full.
	c := &chain.Chain{InputRate: 8, Stages: []chain.Stage{
		chain.FIRStage{R: 2, Taps: []float64{0.25, 0.25, 0.25, 0.25}, Length: 4},
	}, Designed: true}
	fmt.Println(chain.Run(c, []float64{1, 1, 1, 1, 1, 1, 1, 1}))
	// Output: [0.25 0.75 1 1]
}

func ExampleDesign() {
	// The same invented scenario, designed for real and measured.
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 240e3, Passband: 96e3,
		RippleDB: 0.2, RejectionDB: 85}
	plan, _ := chain.ParseNotation("cic5m1r32 > hb > hb > fir2")
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	a, err := chain.Analyze(c, spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("designed:", c.Designed)
	fmt.Println("ripple within budget:", a.PassbandRippleDB <= spec.RippleDB)
	fmt.Println("the last stage corrects the CIC:", c.Stages[3].(chain.FIRStage).CompensatesCIC)
	// Output:
	// designed: true
	// ripple within budget: true
	// the last stage corrects the CIC: true
}

func ExampleStopbandScale() {
	// Two FIR stages share a 0.1 dB ripple budget: each may sit 1 - dp below
	// unity at 0 Hz, and the other may lift an alias by 1 + dp, so each is
	// designed to a stopband limit a little below the 80 dB target.
	dp := chain.RippleToDev(0.05)
	s := chain.StopbandScale(dp, 2, true)
	fmt.Printf("dp %.5f, scale %.5f, design each stage to %.3f dB\n", dp, s, 80-20*math.Log10(s))
	// Output:
	// dp 0.00288, scale 0.99140, design each stage to 80.075 dB
}

func ExamplePruneCIC() {
	// Hogenauer's (1981) example: N = 4, R = 25, M = 1, 16 bits in and out.
	p, err := chain.PruneCIC(4, 1, 25, 16, 16)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("full width", p.FullBits, "guard", p.GuardBits)
	fmt.Println("dropped", p.Dropped)
	fmt.Println("registers", p.RegisterBits)
	// (RM)^N = 8^4 is a power of two: pruned registers need a guard bit
	// above Hogenauer's 26 so that their truncations cannot wrap the output.
	q, err := chain.PruneCIC(4, 1, 8, 14, 18)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("full width", q.FullBits, "guard", q.GuardBits)
	fmt.Println("registers", q.RegisterBits)
	// Output:
	// full width 35 guard 0
	// dropped [1 6 9 13 14 15 16 17 19]
	// registers [34 29 26 22 21 20 19 18]
	// full width 27 guard 1
	// registers [27 27 25 24 23 22 21 20]
}
