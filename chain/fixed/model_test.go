package fixed

import (
	"context"
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

// RunCodes gives the Model's codes, and a float chain within a few output
// LSBs of them plus the rounding of the taps.
func TestRunCodesAgreesWithModel(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 12, OutputBits: 20}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(5, 5))
	x := make([]int64, 70000) // more than two blocks
	for i := range x {
		x[i] = int64(rng.IntN(4096)) - 2048
	}
	m, _ := NewModel(c, w)
	want, err := m.Run(x)
	if err != nil {
		t.Fatal(err)
	}
	codes, fl, err := RunCodes(context.Background(), c, w, x)
	if err != nil {
		t.Fatal(err)
	}
	last := want[len(want)-1]
	if len(codes) != len(last) || len(fl) != len(last) {
		t.Fatalf("%d codes, %d floats, model %d", len(codes), len(fl), len(last))
	}
	worst := 0.0
	for i := range codes {
		if codes[i] != last[i] {
			t.Fatalf("output %d: %d, model %d", i, codes[i], last[i])
		}
		worst = math.Max(worst, math.Abs(fl[i]-math.Ldexp(float64(codes[i]), -19)))
	}
	// Full-scale noise through taps rounded to about 16 bits: the float
	// chain stays within 1e-3 of full scale of the integer one.
	if worst > 1e-3 {
		t.Errorf("float chain departs from the integer one by %g of full scale", worst)
	}
}
