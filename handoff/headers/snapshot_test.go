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
// recorded when the gain-correction rounding point, which the headers
// quote, came to name the spec key words.unity_gain instead of the Go
// field UnityGain (no other byte moved: with the old wording the old hash
// holds).
const decimationSnapshot = "86340ac61e81e80d197021f4ea42eba82813562a6ec75e09505b4f72077337a4"

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
