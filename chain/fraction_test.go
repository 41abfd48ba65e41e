package chain

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// TestFraction checks the ratio's fraction on worked examples (by hand:
// 100/3.84 = 10000/384 = 625/24; 100 MHz / 48 kHz = 6250/3) and the
// simplest-fraction property against a brute-force search over every
// denominator on seeded random ratios.
func TestFraction(t *testing.T) {
	for _, c := range []struct {
		in, out float64
		ppm     float64
		p, q    int
	}{
		{100e6, 3.84e6, 0, 625, 24},
		{100e6, 48e3, 0, 6250, 3},
		{122.88e6, 3.84e6, 0, 32, 1},
		{245.76e6, 100e6, 0, 1536, 625},
		{100e6, 80e6, 0, 5, 4},
		{100e6, 3.84e6 * (1 + 3e-6), 10, 625, 24},
		{1e9, 1e9 / 3.14159265, 1, 355, 113}, // a classic approximation of pi (289/92 is within 100 ppm)
	} {
		s := Spec{InputRate: c.in, OutputRate: c.out, RatioTolerancePPM: c.ppm}
		p, q := s.Fraction()
		if p != c.p || q != c.q {
			t.Errorf("%g/%g (%g ppm): Fraction = %d/%d, want %d/%d", c.in, c.out, c.ppm, p, q, c.p, c.q)
		}
	}
	// An integer within the tolerance is the ratio, not the nearest
	// integer: 1000.6 at 1000 ppm is 1000 (reviewer's case).
	if s := (Spec{InputRate: 100e6, OutputRate: 100e6 / 1000.6, RatioTolerancePPM: 1000}); s.Decimation() != 1000 || s.RatioString() != "1000" {
		t.Errorf("1000.6 at 1000 ppm: Decimation %d, ratio %s", s.Decimation(), s.RatioString())
	}
	rng := rand.New(rand.NewPCG(14, 1))
	for trial := 0; trial < 300; trial++ {
		x := 1 + rng.Float64()*200
		rel := []float64{1e-9, 1e-6, 1e-4, 1e-3}[trial%4]
		p, q, ok := fractionOf(x, rel)
		// Brute force: the least q with some p within rel.
		bq, bp := 0, 0
		for qq := 1; qq <= 4096 && bq == 0; qq++ {
			for _, pp := range []int{int(x * float64(qq)), int(x*float64(qq)) + 1} {
				if d := float64(pp)/float64(qq) - x; d <= rel*x && -d <= rel*x {
					bq, bp = qq, pp
					break
				}
			}
		}
		if bq == 0 {
			if ok && q <= 4096 {
				t.Fatalf("x=%v rel=%g: fractionOf = %d/%d, brute force finds none up to 4096", x, rel, p, q)
			}
			continue
		}
		if !ok || q != bq || p != bp {
			t.Fatalf("x=%v rel=%g: fractionOf = %d/%d %v, brute force %d/%d", x, rel, p, q, ok, bp, bq)
		}
	}
}

// A fractional stage out of place in a chain of an integer ratio is
// refused with where it may go, in either direction, as for a fractional
// ratio; in place, and just after the CIC, it is designed.
func TestFractionalStageOutOfPlaceIntegerRatio(t *testing.T) {
	rx := Spec{InputRate: 16e6, OutputRate: 1e6, Passband: 300e3, RippleDB: 0.1, RejectionDB: 70, Complex: true}
	tx := rx
	tx.InputRate, tx.OutputRate = rx.OutputRate, rx.InputRate
	cic := StagePlan{Kind: CIC, Factor: 2, CICOrder: 3, CICDelay: 1}
	for _, tc := range []struct {
		spec Spec
		plan []StagePlan
		want string // "" for a chain that designs
	}{
		{rx, []StagePlan{{Kind: Polyphase, Factor: 1, Up: 1, Down: 8}, cic}, "may only end the chain"},
		{tx, []StagePlan{{Kind: Polyphase, Factor: 1, Up: 8, Down: 1}, cic}, "may only begin the chain"},
		{rx, []StagePlan{cic, {Kind: Polyphase, Factor: 1, Up: 1, Down: 8}}, ""},
		{rx, []StagePlan{{Kind: CIC, Factor: 4, CICOrder: 3, CICDelay: 1}, {Kind: Polyphase, Factor: 1, Up: 1, Down: 2}, {Kind: FIR, Factor: 2}}, ""},
	} {
		_, err := Design(tc.spec, tc.plan, Settings{})
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%s: %v", Notation(tc.plan), err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want) || strings.Contains(err.Error(), "Kind =")):
			t.Errorf("%s: error %v, want one saying %q", Notation(tc.plan), err, tc.want)
		}
	}
}
