package headers

import (
	"crypto/sha256"
	"fmt"
	"testing"
)

// decimationSnapshot is the SHA-256 of the files the package writes for
// the decimation chains of the tool tests (testChains), recorded before it
// learnt interpolation chains (at commit f6d41d1): they must stay
// byte-identical (TestGolden holds the example's files to their bytes
// too). A deliberate change of chain/fixed's plan or of the layout changes
// it; check the new files, then record the hash the test prints. Last
// recorded when the random chains' FIR bands were put in Hz at each
// stage's rate (they had been fractions of the input rate, past the later
// stages' Nyquist rates, which chain/fixed now refuses): one chain's
// 6-bit rounding moved two taps.
const decimationSnapshot = "6f996607e93f9fd77941e6579a4380dfa287ebd8475e558f95035da990b7f1bf"

func TestDecimationBytesUnchanged(t *testing.T) {
	h := sha256.New()
	for _, p := range testChains(numRandom) {
		fs, err := Files(p.cas, p.w, p.opts)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range fs {
			fmt.Fprintf(h, "%s %d\n", f.Name, len(f.Data))
			h.Write(f.Data)
		}
	}
	if got := fmt.Sprintf("%x", h.Sum(nil)); got != decimationSnapshot {
		t.Errorf("the decimation chains' files changed: SHA-256 %s, recorded %s", got, decimationSnapshot)
	}
}
