package fixed

import "testing"

func TestCICDataMemory(t *testing.T) {
	// A CIC stores one word per integrator and, per comb of differential
	// delay M (y[n] = x[n] - x[n-M]), its M past inputs (arithmetic), each
	// as wide as the register: N = 3, M = 2, R = 8 on 12 bits (gain 16^3 =
	// 2^12, full width 24, no pruning at a 24-bit output).
	w, err := Plan(Cascade{InputRate: 1e6, Passband: 1e3, Stages: []Stage{{CIC: true, N: 3, M: 2, R: 8}}}, Words{InputBits: 12, OutputBits: 24}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := w.Stages[0].DataMemoryBits, 3*24+3*2*24; got != want {
		t.Errorf("data memory %d bits, want %d (registers %v)", got, want, w.Stages[0].Pruning.RegisterBits)
	}
}
