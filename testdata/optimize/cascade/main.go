// Command cascade measures what the cascade rule of chain's stage
// requirements saves against the stage-alone rule (chain.Settings.StageAlone)
// on invented specs: each spec is planned with both rules by optimize.Plan
// (default search settings) and the recommended chain's multiplies per
// output, its FIR and half-band taps, its measured rejection and ripple
// (chain.Analyze, on its float taps) and the plan's wall time are printed
// side by side; then the least multiplies on each front, the figure the
// rule moves directly. It also designs the spec's own named chains with
// both rules (chain.Design), so that the saving of one chain is seen apart
// from the search's choices.
//
// Usage, from the repository root:
//
//	go run ./testdata/optimize/cascade > testdata/optimize/cascade/cascade.txt
//
// The specs are invented scenarios. Times depend on the machine (which may
// be shared) and are the only figures that vary between runs.
package main

import (
	"context"
	"fmt"
	"math"
	"os"
	"strings"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/optimize"
)

type tcase struct {
	name  string
	spec  chain.Spec
	plans []string // named chains designed with both rules
}

var cases = []tcase{
	{"radar IF 120M>7.5M 60dB", chain.Spec{InputRate: 120e6, OutputRate: 7.5e6, Passband: 2.5e6, Protected: 3e6, RippleDB: 0.1, RejectionDB: 60},
		[]string{"cic4m1r8 > fir2", "cic4m1r4 > hb > fir2"}},
	{"radar IF 120M>7.5M 70dB", chain.Spec{InputRate: 120e6, OutputRate: 7.5e6, Passband: 2.5e6, Protected: 3e6, RippleDB: 0.1, RejectionDB: 70},
		[]string{"cic4m1r8 > fir2", "cic4m1r4 > hb > fir2"}},
	{"radar IF 96M>4M 60dB", chain.Spec{InputRate: 96e6, OutputRate: 4e6, Passband: 1.5e6, Protected: 1.8e6, RippleDB: 0.2, RejectionDB: 60},
		[]string{"cic4m1r12 > fir2", "fir3 > fir4 > fir2"}},
	{"CIC receiver 64M>250k 90dB", chain.Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.2, RejectionDB: 90},
		[]string{"cic5m1r64 > fir4", "cic5m1r32 > hb > fir4", "cic5m1r64 > fir2 > fir2"}},
	{"CIC receiver 122.88M>1.92M 70dB IQ", chain.Spec{InputRate: 122.88e6, OutputRate: 1.92e6, Passband: 0.6e6, Protected: 0.75e6, RippleDB: 0.1, RejectionDB: 70, Complex: true},
		[]string{"cic5m1r16 > fir4", "cic5m1r16 > hb > fir2"}},
	{"narrowband 48M>50k 90dB", chain.Spec{InputRate: 48e6, OutputRate: 50e3, Passband: 18e3, Protected: 22e3, RippleDB: 0.5, RejectionDB: 90},
		[]string{"cic5m1r120 > fir8", "cic5m1r60 > fir4 > fir4"}},
}

type outcome struct {
	notation    string
	mpo, minMPO float64
	taps        int
	rej, ripple float64
	meets       bool
	secs        float64
	designed    int
	front       int
	err         string
}

func plan(sp chain.Spec, alone bool) outcome {
	t0 := time.Now()
	r, err := optimize.Plan(context.Background(), sp, optimize.Settings{Chain: chain.Settings{StageAlone: alone}})
	o := outcome{secs: time.Since(t0).Seconds()}
	if err != nil {
		o.err = err.Error()
		return o
	}
	o.designed, o.front = r.Designed, len(r.Front)
	if r.Recommended < 0 {
		o.err = "no chain"
		return o
	}
	best := r.Front[r.Recommended]
	o.notation = chain.Notation(best.Plan)
	o.mpo = best.Figures.MultipliesPerOutput
	o.minMPO = math.Inf(1)
	for _, c := range r.Front {
		o.minMPO = math.Min(o.minMPO, c.Figures.MultipliesPerOutput)
	}
	o.taps = taps(best.Chain)
	a, err := chain.Analyze(best.Chain, sp)
	if err != nil {
		o.err = err.Error()
		return o
	}
	o.rej, o.ripple, o.meets = a.AliasRejectionDB, a.PassbandRippleDB, a.Meets(sp)
	return o
}

func taps(c *chain.Chain) int {
	n := 0
	for _, s := range c.Stages {
		if f, ok := s.(chain.FIRStage); ok {
			n += f.Length
		}
	}
	return n
}

func stageTaps(c *chain.Chain) string {
	var s []string
	for _, st := range c.Stages {
		if f, ok := st.(chain.FIRStage); ok {
			s = append(s, fmt.Sprint(f.Length))
		}
	}
	return strings.Join(s, "+")
}

func main() {
	fmt.Println("# go run ./testdata/optimize/cascade: the recommended chain of optimize.Plan (default settings) under the")
	fmt.Println("# stage-alone rule and the cascade rule; mpo = multiplies per output (cost.Price), taps = FIR and half-band")
	fmt.Println("# taps, rejection and ripple from chain.Analyze on the float taps, time = the plan's wall time (shared machine);")
	fmt.Println("# min mpo = the least multiplies per output on the front.")
	fmt.Println()
	var sa, sc, ma, mc float64
	for _, tc := range cases {
		a, c := plan(tc.spec, true), plan(tc.spec, false)
		fmt.Printf("%s\n", tc.name)
		for _, x := range []struct {
			rule string
			o    outcome
		}{{"stage", a}, {"cascade", c}} {
			o := x.o
			if o.err != "" {
				fmt.Printf("  %-8s %s\n", x.rule, o.err)
				continue
			}
			fmt.Printf("  %-8s %-32s mpo %6.1f  taps %4d  rejection %6.2f dB  ripple %.4f dB  meets %-5v  time %5.1f s  (designed %d, front %d, min mpo %.1f)\n",
				x.rule, o.notation, o.mpo, o.taps, o.rej, o.ripple, o.meets, o.secs, o.designed, o.front, o.minMPO)
		}
		if a.err == "" && c.err == "" {
			fmt.Printf("  recommended: %+.1f%% multiplies, %+d taps; least on the front: %+.1f%% multiplies\n",
				100*(c.mpo/a.mpo-1), c.taps-a.taps, 100*(c.minMPO/a.minMPO-1))
			sa += a.mpo
			sc += c.mpo
			ma += a.minMPO
			mc += c.minMPO
		}
		for _, n := range tc.plans {
			p, err := chain.ParseNotation(n)
			if err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(1)
			}
			var line []string
			for _, alone := range []bool{true, false} {
				ch, err := chain.Design(tc.spec, p, chain.Settings{StageAlone: alone})
				if err != nil {
					line = append(line, "design fails")
					continue
				}
				an, err := chain.Analyze(ch, tc.spec)
				if err != nil {
					line = append(line, err.Error())
					continue
				}
				line = append(line, fmt.Sprintf("taps %-9s rejection %6.2f dB", stageTaps(ch), an.AliasRejectionDB))
			}
			fmt.Printf("  %-28s stage: %s | cascade: %s\n", n, line[0], line[1])
		}
		fmt.Println()
	}
	fmt.Printf("total multiplies per output of the recommended chains: stage %.1f, cascade %.1f (%+.1f%%); least on each front: stage %.1f, cascade %.1f (%+.1f%%)\n",
		sa, sc, 100*(sc/sa-1), ma, mc, 100*(mc/ma-1))
}
