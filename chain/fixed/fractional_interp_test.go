package fixed

import (
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// randomFracInterpChain designs the transpose of a seeded random
// fractional decimation chain (randomFracChain): the same plan on the
// spec with its rates swapped, an interpolation chain that begins with
// the fractional stage. It returns nil when the draw cannot be designed.
func randomFracInterpChain(rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain) {
	for range 20 {
		down, c := randomFracChain(rng, farrowStage)
		if c == nil {
			continue
		}
		up := down
		up.InputRate, up.OutputRate = down.OutputRate, down.InputRate
		ci, err := chain.Design(up, c.Plan, chain.Settings{MaxTaps: 300})
		if err != nil || ci.Direction != chain.Interpolate {
			continue
		}
		return up, ci
	}
	return chain.Spec{}, nil
}

func TestFracInterpSmoke(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 99))
	for i := range 6 {
		spec, c := randomFracInterpChain(rng, i%2 == 1)
		if c == nil {
			t.Fatal("no chain")
		}
		res, err := Evaluate(spec, c, Settings{}, Signal{})
		if err != nil {
			t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
		}
		fa, _ := chain.Analyze(c, spec)
		t.Logf("%s: float %.2f dB, quantised %.2f dB, bt err %v", chain.Notation(c.Plan), fa.AliasRejectionDB, res.Quantised.AliasRejectionDB, res.BitTrueErr)
		bt := res.BitTrue
		t.Logf("  SNR %.2f valid %v %q; image %g->%g bit-true %.2f resp %.2f valid %v noise %.1f; gain %.4f", bt.SNRDB, bt.SNRValid, bt.SNRNote, bt.AliasOutHz, bt.AliasHz, bt.AliasRejectionDB, bt.AliasResponseDB, bt.AliasValid, bt.AliasNoiseDB, res.Widths.DCGain)
		for _, sw := range res.Widths.Stages {
			t.Logf("  %v", sw.Points)
		}
	}
}
