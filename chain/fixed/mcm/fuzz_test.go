package mcm

import (
	"encoding/binary"
	"testing"
)

// FuzzBuild feeds Build up to 64 coefficients of any int64 value (the
// bytes, 8 a coefficient, little-endian, shifted right by the first byte
// mod 64 to reach every width): it must return a graph that Eval proves on
// x = 1 and x = -3, or an error, and never panic.
func FuzzBuild(f *testing.F) {
	f.Add([]byte{0, 3, 0, 0, 0, 0, 0, 0, 0})
	f.Add([]byte{40, 45, 0, 0, 0, 0, 0, 0, 0, 7, 0, 0, 0, 0, 0, 0, 0})
	f.Add([]byte{0, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x1f})
	f.Add([]byte{1, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x7f})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) == 0 {
			return
		}
		// Up to 8 coefficients, and words of at most 20 bits unless the
		// draw asks for one past MaxBits (refused at once): Build takes
		// milliseconds then, where a 64-tap stage of 48-bit words takes
		// it about a second, which stalled the fuzzer's minimising into
		// its deadline in CI rather than testing more. Wider words are
		// Build's unit tests' to cover.
		sh := data[0] % 64
		if sh >= 2 {
			sh = max(sh, 44)
		}
		data = data[1:]
		var coefs []int64
		for len(data) >= 8 && len(coefs) < 8 {
			coefs = append(coefs, int64(binary.LittleEndian.Uint64(data))>>sh)
			data = data[8:]
		}
		g, err := Build(coefs)
		if err != nil {
			for _, c := range coefs {
				if width(c) > MaxBits {
					return
				}
			}
			t.Fatalf("%v: %v", coefs, err)
		}
		if g.Adders() > CSDAdders(coefs) {
			t.Fatalf("%v: %d adders, CSD %d", coefs, g.Adders(), CSDAdders(coefs))
		}
		for _, x := range []int64{1, -3} {
			v, err := g.Eval(x)
			if err != nil && x == 1 {
				t.Fatalf("%v: Eval(1): %v", coefs, err)
			}
			if err != nil {
				continue // |c·x| may pass int64 for x = -3
			}
			for k, c := range coefs {
				if v[k] != c*x {
					t.Fatalf("%v: Eval(%d)[%d] = %d, want %d", coefs, x, k, v[k], c*x)
				}
			}
		}
	})
}
