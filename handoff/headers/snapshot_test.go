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
// it; check the new files, then record the hash the test prints.
const decimationSnapshot = "3fbf367ce406d9c0d6845225110a89f20ec428657dd081fffdb3547c8e0ec403"

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
