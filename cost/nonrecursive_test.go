package cost

import (
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// TestNonRecursiveAdds: the polyphase count, hand-worked from the
// binomials' canonical signed digit forms (3 = 4 - 1, 5 = 4 + 1, 6 = 8 - 2,
// 10 = 8 + 2, 15 = 16 - 1, 20 = 16 + 4: one add each; 2 and 4 none).
func TestNonRecursiveAdds(t *testing.T) {
	for n, want := range map[int]int{1: 1, 2: 2, 3: 4, 4: 5, 5: 7, 6: 9} {
		if got := NonRecursiveAdds(n); got != want {
			t.Errorf("N = %d: %d adds, want %d", n, got, want)
		}
	}
}

// TestNonRecursivePrice prices a CIC in both forms on an invented
// 2.4 GS/s input with a 400 MHz clock and checks the non-recursive
// figures worked by hand: sub-stages at 2.4, 1.2, 0.6, 0.3 GS/s with 6, 3,
// 2, 1 input lanes and 3, 2, 1, 1 output lanes, 12-, 16-, 20-, 24-bit
// inputs; 5 adds per sub-stage output (N = 4).
func TestNonRecursivePrice(t *testing.T) {
	spec := chain.Spec{InputRate: 2.4e9, OutputRate: 150e6, Passband: 30e6, RippleDB: 0.1, RejectionDB: 60, InputBits: 12, OutputBits: 24}
	nr, err := chain.NewCICStageForm(chain.NonRecursive, 4, 1, 16, 12, 24)
	if err != nil {
		t.Fatal(err)
	}
	rec := chain.NewCICStage(4, 1, 16, 12, 24)
	price := func(st chain.CICStage, ml bool) Figures {
		f, err := Price(spec, &chain.Chain{InputRate: spec.InputRate, Stages: []chain.Stage{st}}, Settings{Clock: 400e6, Multiplierless: ml})
		if err != nil {
			t.Fatal(err)
		}
		return f
	}
	f := price(nr, true)
	sf := f.Stages[0]
	if sf.CICForm != chain.NonRecursive || len(sf.SubStages) != 4 {
		t.Fatalf("form %v, %d sub-stages", sf.CICForm, len(sf.SubStages))
	}
	wantLanes, wantOut, wantIn := []int{6, 3, 2, 1}, []int{3, 2, 1, 1}, []int{12, 16, 20, 24}
	for i, s := range sf.SubStages {
		if s.Lanes != wantLanes[i] || s.OutputLanes != wantOut[i] || s.InputBits != wantIn[i] || s.OutputBits != wantIn[i]+4 || s.AddsPerOutput != 5 {
			t.Errorf("sub-stage %d: %+v", i+1, s)
		}
	}
	// 5 (3+2+1+1) = 35 adders; 4 (12+16+20+24) = 288 delay-line bits in
	// 16 words; 5 (8+4+2+1) = 75 adds per output.
	if sf.Adders != 35 || sf.MemoryBits != 288 || sf.MemoryWords != 16 || sf.AddsPerOutput != 75 || sf.Lanes != 6 {
		t.Errorf("adders %d, memory %d bits in %d words, adds %g, lanes %d", sf.Adders, sf.MemoryBits, sf.MemoryWords, sf.AddsPerOutput, sf.Lanes)
	}
	// The recursive form: 4 integrators per lane and 4 combs, 28 bits full
	// width; its memory with 6 lanes is above the non-recursive 288.
	r := price(rec, true).Stages[0]
	if r.Adders != 4*6+4 || r.MemoryBits <= 288 || r.LatencyS != sf.LatencyS {
		t.Errorf("recursive: adders %d, memory %d bits, latency %g (non-recursive %g)", r.Adders, r.MemoryBits, r.LatencyS, sf.LatencyS)
	}
	t.Logf("2.4 GS/s, 400 MHz, N = 4, R = 16, 12-bit input: recursive %d bits, %d adders; non-recursive %d bits, %d adders", r.MemoryBits, r.Adders, sf.MemoryBits, sf.Adders)
	// Without a clock the recursive form needs fewer bits: 4 integrators
	// at most 28 bits and 4 combs, against the same 288.
	f0, err := Price(spec, &chain.Chain{InputRate: spec.InputRate, Stages: []chain.Stage{rec}}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if f0.MemoryBits >= 288 {
		t.Errorf("recursive without a clock: %d bits", f0.MemoryBits)
	}
}
