package fixed

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The exported Model is the bit-true run's integer chain: on the same codes,
// run in blocks of irregular sizes, it gives the integer outputs that the
// bit-true run scales to fractions of full scale, sample for sample. (The
// vectors package checks it against a re-implementation of the data path
// that shares no code with this package.)
func TestModelIsBitTrueIntegerChain(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 14, OutputBits: 20}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 9))
	x := make([]float64, 30000)
	for i := range x {
		x[i] = 0.95 * (2*rng.Float64() - 1)
	}
	yi, _ := newChainState(c, w).run(x)
	codes := make([]int64, len(x))
	ADC(codes, x, w.InputBits)
	m, err := NewModel(c, w)
	if err != nil {
		t.Fatal(err)
	}
	var got []int64
	for n := 0; n < len(codes); {
		k := min(len(codes)-n, 1+rng.IntN(2500))
		out, err := m.Run(codes[n : n+k])
		if err != nil {
			t.Fatal(err)
		}
		got = append(got, out[len(out)-1]...)
		n += k
	}
	if len(got) != len(yi) {
		t.Fatalf("model gave %d outputs, bit-true run %d", len(got), len(yi))
	}
	scale := math.Ldexp(1, w.OutputBits-1)
	for i := range got {
		if float64(got[i]) != yi[i]*scale {
			t.Fatalf("output %d: model %d, bit-true run %v", i, got[i], yi[i]*scale)
		}
	}
	if _, err := m.Run([]int64{1 << 13}); err == nil {
		t.Error("a code outside the 14-bit input word was accepted")
	}
}
