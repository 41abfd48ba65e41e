package fixed

import (
	"context"
	"encoding/json"
	"flag"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

var updateRunCodes = flag.Bool("update-runcodes", false, "rewrite testdata/fixed/runcodes_case.json (then run testdata/fixed/gen_runcodes.py)")

// runCodesCase is the case RunCodes' float chain is checked on against
// SciPy: the input codes and the float chain's stages as
// testdata/fixed/gen_runcodes.py reads them.
type runCodesCase struct {
	InputBits int             `json:"input_bits"`
	Input     []int64         `json:"input"`
	Stages    []runCodesStage `json:"stages"`
}

type runCodesStage struct {
	CIC   bool      `json:"cic"`
	N     int       `json:"n,omitempty"`
	M     int       `json:"m,omitempty"`
	R     int       `json:"r"`
	Scale float64   `json:"scale,omitempty"` // CIC: its gain scale 2^-(FullBits - InputBits)
	Taps  []float64 `json:"taps,omitempty"`  // FIR: the float taps the run uses
}

// The float half of RunCodes (the chain simulate reports beside the bit-true
// one) agrees with SciPy: testdata/fixed/gen_runcodes.py runs the same
// input through each CIC as N running sums and N combs of delay M
// (numpy.cumsum and differences, Hogenauer's recursive structure, then
// keeping every R-th sample from the first) and each FIR by
// scipy.signal.lfilter then keeping every R-th sample; the outputs agree
// within 1e-12 of full scale on 6000 seeded random codes through
// cic3m1r4 > fir2 (a 21-tap Kaiser lowpass) and a second cascade with M = 2.
func TestRunCodesFloatMatchesSciPy(t *testing.T) {
	cases := []Cascade{
		{InputRate: 1e6, Passband: 10e3, Stages: []Stage{
			{CIC: true, N: 3, M: 1, R: 4},
			{R: 2, Taps: kaiserLowpass(21, 30e3, 250e3, 6), Bands: lowpassBands(10e3, 100e3, 250e3, 10, 10)},
		}},
		{InputRate: 1e6, Passband: 10e3, Stages: []Stage{
			{CIC: true, N: 2, M: 2, R: 5},
			{R: 1, Taps: kaiserLowpass(9, 20e3, 200e3, 5), Bands: lowpassBands(10e3, 90e3, 200e3, 10, 10)},
			{CIC: true, N: 1, M: 1, R: 2},
		}},
	}
	var got []runCodesCase
	rng := rand.New(rand.NewPCG(11, 12))
	for _, c := range cases {
		w, err := Plan(c, Words{InputBits: 12, OutputBits: 20, CoefBits: 16}, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		rc := runCodesCase{InputBits: 12}
		for range 6000 {
			rc.Input = append(rc.Input, int64(rng.IntN(4096))-2048)
		}
		for i, st := range c.Stages {
			sw := w.Stages[i]
			if st.CIC {
				rc.Stages = append(rc.Stages, runCodesStage{CIC: true, N: st.N, M: st.M, R: st.R, Scale: math.Ldexp(1, -(sw.Pruning.FullBits - sw.Pruning.InputBits))})
			} else {
				rc.Stages = append(rc.Stages, runCodesStage{R: st.R, Taps: sw.floatTaps(st)})
			}
		}
		got = append(got, rc)
	}
	casePath := filepath.Join("..", "..", "testdata", "fixed", "runcodes_case.json")
	if *updateRunCodes {
		b, _ := json.MarshalIndent(got, "", " ")
		if err := os.WriteFile(casePath, append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Skip("wrote the case; now run testdata/fixed/gen_runcodes.py")
	}
	var want []runCodesCase
	readJSON(t, casePath, &want)
	if !reflect.DeepEqual(want, got) {
		t.Fatal("testdata/fixed/runcodes_case.json is not this test's case: go test -run TestRunCodesFloatMatchesSciPy -update-runcodes, then run gen_runcodes.py")
	}
	var scipy struct {
		Outputs [][]float64 `json:"outputs"`
	}
	readJSON(t, filepath.Join("..", "..", "testdata", "fixed", "runcodes_scipy.json"), &scipy)
	for k, c := range cases {
		w, _ := Plan(c, Words{InputBits: 12, OutputBits: 20, CoefBits: 16}, Settings{})
		_, fl, err := RunCodes(context.Background(), c, w, got[k].Input)
		if err != nil {
			t.Fatal(err)
		}
		ref := scipy.Outputs[k]
		if len(fl) != len(ref) {
			t.Fatalf("case %d: %d outputs, SciPy %d", k, len(fl), len(ref))
		}
		worst := 0.0
		for i := range fl {
			worst = math.Max(worst, math.Abs(fl[i]-ref[i]))
		}
		if worst > 1e-12 {
			t.Errorf("case %d: the float chain departs from SciPy's by %g of full scale", k, worst)
		}
	}
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}
