package fixed

import (
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// fracGcd is Euclid's algorithm.
func fracGcd(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// randomFracChain designs a seeded invented decimation chain that ends in
// a fractional stage: farrow picks a Farrow stage after a lowpass FIR,
// otherwise a polyphase stage after up to one FIR (or none). Words are
// drawn too. It returns nil when the draw cannot be designed.
func randomFracChain(rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain) {
	for range 50 {
		var up, down, dint int
		if farrowStage {
			dint = 2 + rng.IntN(4)
			up = 2 + rng.IntN(30)
			down = int(float64(up) * (2.2 + 2.8*rng.Float64()))
		} else {
			up = 2 + rng.IntN(14)
			down = up/2 + 1 + rng.IntN(2*up)
			dint = 1 + rng.IntN(5)
		}
		if g := fracGcd(up, down); g != 1 {
			up, down = up/g, down/g
		}
		if down == up || up < 2 || dint*down <= up {
			continue
		}
		num, den := dint*down, up
		if g := fracGcd(num, den); g != 1 {
			num, den = num/g, den/g
		}
		fm := 1 / float64(dint)
		fk := fm * float64(up) / float64(down)
		lo := math.Min(fm, fk)
		fp := lo * (0.05 + 0.25*rng.Float64())
		fa := fp + (lo/2-fp)*0.5*rng.Float64()
		spec := chain.Spec{InputRate: 1, OutputRate: float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 35*rng.Float64(),
			InputBits: 8 + rng.IntN(10), OutputBits: 12 + rng.IntN(12)}
		if _, err := spec.Normalize(); err != nil {
			continue
		}
		if p, q := spec.Fraction(); p != num || q != den {
			continue
		}
		var plan []chain.StagePlan
		if dint > 1 {
			plan = append(plan, chain.StagePlan{Kind: chain.FIR, Factor: dint, Variant: chain.Lowpass})
		}
		kind := chain.Polyphase
		if farrowStage {
			kind = chain.Farrow
		}
		plan = append(plan, chain.StagePlan{Kind: kind, Factor: 1, Up: up, Down: down})
		c, err := chain.Design(spec, plan, chain.Settings{MaxTaps: 300})
		if err != nil {
			continue
		}
		return spec, c
	}
	return chain.Spec{}, nil
}

func TestFractionalEvaluateSmoke(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 100))
	for _, fa := range []bool{false, true} {
		spec, c := randomFracChain(rng, fa)
		if c == nil {
			t.Fatal("no chain")
		}
		res, err := Evaluate(spec, c, Settings{}, Signal{})
		if err != nil {
			t.Fatal(err)
		}
		if res.BitTrueErr != nil {
			t.Fatal(res.BitTrueErr)
		}
		fl, _ := chain.Analyze(c, spec)
		last := res.Widths.Stages[len(res.Widths.Stages)-1]
		t.Logf("%s: float %.2f dB, quantised %.2f dB, bit-true %.2f dB (resp %.2f) SNR %.1f valid %v %s, coef %d mu %d acc %d horner %d points %q",
			chain.Notation(c.Plan), fl.AliasRejectionDB, res.Quantised.AliasRejectionDB, res.BitTrue.AliasRejectionDB, res.BitTrue.AliasResponseDB,
			res.BitTrue.SNRDB, res.BitTrue.SNRValid, res.BitTrue.SNRNote, last.Coefficients.Bits, last.MuBits, last.AccumulatorBits, last.HornerBits, last.Points)
	}
	_ = os.Getenv
}
