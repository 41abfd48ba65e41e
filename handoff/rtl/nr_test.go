package rtl_test

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff/rtl"
)

// nrChain returns a cascade whose first stage is a non-recursive CIC of
// order n and factor 2^k, followed by up to two random half-bands or FIRs,
// real or complex, with random words (the input narrow enough that the
// last sub-stage, Bin + n k bits, fits the integer model's 63).
func nrChain(rng *rand.Rand, n, k int) (fixed.Cascade, *fixed.Widths, string, error) {
	c := fixed.Cascade{InputRate: 1e6, Complex: rng.IntN(2) == 0}
	r := 1 << k
	c.Stages = []fixed.Stage{{CIC: true, N: n, M: 1, R: r, NonRecursive: true}}
	desc := []string{fmt.Sprintf("cic%dm1r%dnr", n, r)}
	rate := c.InputRate / float64(r)
	for range rng.IntN(3) {
		if rng.IntN(2) == 0 {
			c.Stages = append(c.Stages, fixed.Stage{R: 2, HalfBand: true, Taps: kaiserHalfBand(2+rng.IntN(4), 6+4*rng.Float64()), Bands: looseBands(rate)})
			desc = append(desc, fmt.Sprintf("hb%d", len(c.Stages[len(c.Stages)-1].Taps)))
		} else {
			st := fixed.Stage{R: 1 + rng.IntN(2), Taps: kaiserLowpass(3+rng.IntN(20), 0.1+0.2*rng.Float64(), 4+6*rng.Float64()), Bands: looseBands(rate)}
			c.Stages = append(c.Stages, st)
			desc = append(desc, fmt.Sprintf("fir%dr%d", len(st.Taps), st.R))
		}
		rate /= float64(c.Stages[len(c.Stages)-1].R)
	}
	c.Passband = 0.1 * rate
	in := 2 + rng.IntN(min(30, 62-n*k))
	words := fixed.Words{InputBits: in, OutputBits: 2 + rng.IntN(31), DataBits: 2 + rng.IntN(31), CoefBits: 4 + rng.IntN(17)}
	name := fmt.Sprintf("%s complex=%v words=%+v", strings.Join(desc, ">"), c.Complex, words)
	w, err := fixed.Plan(c, words, fixed.Settings{})
	return c, w, name, err
}

// The non-recursive CIC is written as its own structure (sub-stages of
// (1 + z^-1)^N decimating by 2, no integrator) and runs bit-exact against
// fixed.Model, whose non-recursive model is checked in package fixed
// against direct convolution with the CIC's taps in math/big. The default
// run takes four orders and factors (order 1, R = 2; order 6, R = 256 with
// a 60-bit last sub-stage; ...); STEPDOWN_RTL=1 takes every order 1..6
// with every R = 2..256, each with random words and later stages.
func TestNonRecursiveCICBitExact(t *testing.T) {
	needIverilog(t)
	type nk struct{ n, k int }
	cases := []nk{{1, 1}, {6, 8}, {3, 3}, {4, 5}}
	maxIn := 2000
	if long() {
		maxIn = 20000
		cases = nil
		for n := 1; n <= 6; n++ {
			for k := 1; k <= 8; k++ {
				cases = append(cases, nk{n, k})
			}
		}
	}
	rng := rand.New(rand.NewPCG(15, 3))
	for i, tc := range cases {
		var (
			c    fixed.Cascade
			w    *fixed.Widths
			name string
			err  error
		)
		for try := 0; ; try++ {
			c, w, name, err = nrChain(rng, tc.n, tc.k)
			if err == nil {
				_, err = fixed.NewModel(c, w)
			}
			if err == nil {
				break
			}
			if try > 20 {
				t.Fatalf("order %d, R = %d: the planner refused 20 draws; last: %s: %v", tc.n, 1<<tc.k, name, err)
			}
		}
		if tc.n == 6 && tc.k == 8 && w.Stages[0].SubStageBits[7] < 56 {
			// Make the widest case wide: redraw its input word at 12 bits.
			c.Complex = true
			w, err = fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 24, CoefBits: 16}, fixed.Settings{})
			if err != nil {
				t.Fatal(err)
			}
			name = fmt.Sprintf("cic6m1r256nr, 12-bit input, complex, %d stages", len(c.Stages))
		}
		model, err := rtl.Model(c, w, rtl.Options{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		// The structure: sub-stages, their binomial taps, no integrator.
		m := string(model)
		for _, want := range []string{"non-recursive CIC decimator", fmt.Sprintf("sub%d_i_d%d", tc.k, tc.n), "wire v1 = v0 & ~odd1;"} {
			if !strings.Contains(m, want) {
				t.Errorf("%s: the model lacks %q", name, want)
			}
		}
		if strings.Contains(m, "integ1_") {
			t.Errorf("%s: the model has an integrator", name)
		}
		seed := uint64(100 + i)
		t.Run(fmt.Sprintf("N%dR%d", tc.n, 1<<tc.k), func(t *testing.T) {
			t.Parallel()
			t.Logf("%s (sub-stages %v bits): %s", name, w.Stages[0].SubStageBits, passes(t, c, w, seed, maxIn))
		})
	}
}

// A plan whose form differs from the cascade's stage, or whose sub-stage
// widths are not Bin + N i, is refused, saying so.
func TestNonRecursiveErrors(t *testing.T) {
	c := fixed.Cascade{InputRate: 1e6, Passband: 1e3, Stages: []fixed.Stage{{CIC: true, N: 3, M: 1, R: 8, NonRecursive: true}}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 16}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := rtl.Model(c, w, rtl.Options{}); err != nil {
		t.Fatal(err)
	}
	rec := c
	rec.Stages = []fixed.Stage{{CIC: true, N: 3, M: 1, R: 8}}
	if _, err := rtl.Model(rec, w, rtl.Options{}); err == nil || !strings.Contains(err.Error(), "the widths plan a non-recursive CIC, the cascade's stage is recursive") {
		t.Errorf("form mismatch: err = %v", err)
	}
	bad := *w
	bad.Stages = []fixed.StageWidths{w.Stages[0]}
	bad.Stages[0].SubStageBits = []int{15, 18, 20}
	if _, err := rtl.Model(c, &bad, rtl.Options{}); err == nil || !strings.Contains(err.Error(), "sub-stage 3 is 20 bits; order 3 on a 12-bit input makes it 21") {
		t.Errorf("sub-stage width: err = %v", err)
	}
}
