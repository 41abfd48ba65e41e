package vectors

import (
	"crypto/sha256"
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// decimationSnapshot is the SHA-256 of every file Generate writes for the
// decimation chains of TestDecimationBytesUnchanged, recorded before the
// package learnt interpolation chains (at commit f6d41d1): their vectors
// and README must stay byte-identical. A deliberate change of chain/fixed's
// plan or of the files' layout changes it; check the new files, then
// record the hash the test prints.
const decimationSnapshot = "01743adca95310d8ababd59ae6bdfc799e6c1d60f806258b835b107e847a45f5"

func TestDecimationBytesUnchanged(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 7))
	h := sha256.New()
	n := 0
	for n < 12 {
		c, words := randomCascade(rng)
		w, err := fixed.Plan(c, words, fixed.Settings{})
		if err != nil {
			continue
		}
		v, err := Generate(c, w, Options{MaxInput: 300, AliasHz: 2e5, Notation: fmt.Sprint("chain ", n)})
		if err != nil {
			continue
		}
		for _, f := range v.Files() {
			fmt.Fprintf(h, "%s %d\n", f.Name, len(f.Data))
			h.Write(f.Data)
		}
		n++
	}
	// And one with the default length, past its settling.
	c := fixed.Cascade{InputRate: 8e6, Passband: 20e3, Complex: true, Stages: []fixed.Stage{
		{CIC: true, N: 3, M: 1, R: 8},
		{R: 2, Taps: []float64{-0.03, 0, 0.28, 0.5, 0.28, 0, -0.03}, HalfBand: true, Bands: []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}},
	}}
	w, err := fixed.Plan(c, fixed.Words{InputBits: 12, OutputBits: 18, CoefBits: 14}, fixed.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	v, err := Generate(c, w, Options{Notation: "cic3m1r8 > hb"})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range v.Files() {
		fmt.Fprintf(h, "%s %d\n", f.Name, len(f.Data))
		h.Write(f.Data)
	}
	if got := fmt.Sprintf("%x", h.Sum(nil)); got != decimationSnapshot {
		t.Errorf("the decimation chains' vector files changed: SHA-256 %s, recorded %s", got, decimationSnapshot)
	}
}
