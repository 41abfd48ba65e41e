package rtl_test

import (
	"crypto/sha256"
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/handoff/rtl"
)

// decimationSnapshot is the SHA-256 of the models and testbenches the
// package writes for the decimation chains of TestDecimationBytesUnchanged,
// recorded before it learnt interpolation chains (at commit f6d41d1, then
// again once the cascade rule changed the designed chain's taps, with the
// writer before the interpolation change giving the same hash): they must
// stay byte-identical. A deliberate change of chain/fixed's plan or
// of the files' layout changes it; check the new files, then record the
// hash the test prints.
const decimationSnapshot = "cde96458e963e86f8a408fe4e8b59f2d33b5669a58bcf785453c27f9afeff50e"

func TestDecimationBytesUnchanged(t *testing.T) {
	h := sha256.New()
	add := func(name string, b []byte, err error) {
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		fmt.Fprintf(h, "%s %d\n", name, len(b))
		h.Write(b)
	}
	c, w := smallChain(t)
	for _, o := range []rtl.Options{{}, {Prefix: "rx", MaxIdle: -1}, {MaxIdle: 9}} {
		m, err := rtl.Model(c, w, o)
		add("small model", m, err)
		tb, err := rtl.Testbench(c, w, o, []string{"a", "b.c"})
		add("small testbench", tb, err)
	}
	dc, dw := designed(t, designedCase{"cic4m1r8 > hb > fir2", 0.2, true, 14, 18})
	m, err := rtl.Model(dc, dw, rtl.Options{})
	add("designed model", m, err)
	tb, err := rtl.Testbench(dc, dw, rtl.Options{}, signals)
	add("designed testbench", tb, err)
	rng := rand.New(rand.NewPCG(31, 8))
	for n := 0; n < 20; {
		c, w, name, err := randomChain(rng, 512)
		if err != nil {
			continue
		}
		m, err := rtl.Model(c, w, rtl.Options{})
		if err != nil {
			continue // beyond the writer's limits
		}
		add(name, m, nil)
		tb, err := rtl.Testbench(c, w, rtl.Options{}, signals)
		add(name, tb, err)
		n++
	}
	for k := 1; k <= 4; k++ {
		c, w, name, err := nrChain(rng, k, k+1)
		if err != nil {
			t.Fatal(err)
		}
		m, err := rtl.Model(c, w, rtl.Options{})
		add(name, m, err)
		tb, err := rtl.Testbench(c, w, rtl.Options{}, signals)
		add(name, tb, err)
	}
	if got := fmt.Sprintf("%x", h.Sum(nil)); got != decimationSnapshot {
		t.Errorf("the decimation chains' models or testbenches changed: SHA-256 %s, recorded %s", got, decimationSnapshot)
	}
}
