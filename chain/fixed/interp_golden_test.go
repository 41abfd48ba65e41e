package fixed

import (
	"context"
	"math"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// interpGolden is testdata/interp_golden.json, written by
// testdata/gen_interp_golden.py.
type interpGolden struct {
	SciPy string `json:"scipy"`
	Cases []struct {
		Name       string  `json:"name"`
		InputBits  int     `json:"input_bits"`
		OutputBits int     `json:"output_bits"`
		DataBits   int     `json:"data_bits"`
		CoefBits   int     `json:"coef_bits"`
		Input      []int64 `json:"input"`
		Stages     []struct {
			Kind       string  `json:"kind"` // "fir", "halfband" or "cic"
			L          int     `json:"l"`
			Frac       int     `json:"frac"`
			Ints       []int64 `json:"ints"`
			N          int     `json:"n"`
			M          int     `json:"m"`
			InputBits  int     `json:"input_bits"`
			OutputBits int     `json:"output_bits"`
			FullBits   int     `json:"full_bits"`
			Shift      int     `json:"shift"`
		} `json:"stages"`
		Outputs [][]int64 `json:"outputs"`
		Float   []float64 `json:"float_output"`
	} `json:"cases"`
}

// The integer model of interpolating stages matches SciPy bit for bit:
// testdata/gen_interp_golden.py runs invented FIR, half-band and CIC
// interpolators and one cascade of the three by scipy.signal.upfirdn with
// integer taps (a CIC as its equivalent integer FIR, N boxcars of RM ones)
// on seeded random codes with full-scale runs, and applies the contract's
// shift, rounding, truncation and saturation rules in Python, from the
// rules as the package doc states them. Plan must also give the script's
// coefficients, shifts and widths (the CIC's from Hogenauer's
// interpolator growth, computed there independently). RunCodes gives the
// same codes, and its float chain the script's upfirdn with the float taps
// (times 2^floor(log2 L)) and the CIC's scaled boxcars, within 1e-12 of
// full scale.
func TestInterpolationGoldenSciPy(t *testing.T) {
	var g interpGolden
	readJSON(t, filepath.Join("testdata", "interp_golden.json"), &g)
	if g.SciPy == "" || len(g.Cases) == 0 {
		t.Fatal("interp_golden.json carries no SciPy version or cases")
	}
	rng := rand.New(rand.NewPCG(4, 4))
	for _, gc := range g.Cases {
		c := Cascade{InputRate: 1e6, Interpolate: true, Passband: 1e3}
		for _, gs := range gc.Stages {
			st := Stage{R: gs.L, Interpolate: true}
			switch gs.Kind {
			case "cic":
				st.CIC, st.N, st.M = true, gs.N, gs.M
			default:
				st.HalfBand = gs.Kind == "halfband"
				for _, v := range gs.Ints {
					st.Taps = append(st.Taps, math.Ldexp(float64(v), -gs.Frac))
				}
				// A band every rounding meets: the taps are the
				// script's codes exactly, and no search moves them.
				st.Bands = []remez.Band{{Lo: 0, Hi: 1, Gain: 1, MaxError: 10}}
			}
			c.Stages = append(c.Stages, st)
		}
		w, err := Plan(c, Words{InputBits: gc.InputBits, OutputBits: gc.OutputBits, DataBits: gc.DataBits, CoefBits: gc.CoefBits}, Settings{})
		if err != nil {
			t.Fatalf("%s: %v", gc.Name, err)
		}
		for k, gs := range gc.Stages {
			sw := w.Stages[k]
			if sw.InputBits != gs.InputBits || sw.OutputBits != gs.OutputBits || sw.OutputShift != gs.Shift {
				t.Errorf("%s stage %d: input %d, output %d bits, shift %d; script %d, %d, %d", gc.Name, k+1, sw.InputBits, sw.OutputBits, sw.OutputShift, gs.InputBits, gs.OutputBits, gs.Shift)
			}
			if gs.Kind == "cic" {
				if sw.CICInterp == nil || sw.CICInterp.FullBits() != gs.FullBits {
					t.Errorf("%s stage %d: CIC plan %+v, script's last integrator %d bits", gc.Name, k+1, sw.CICInterp, gs.FullBits)
				}
				continue
			}
			if sw.Coefficients.Frac != gs.Frac || !equalInts(sw.Coefficients.Ints, gs.Ints) {
				t.Errorf("%s stage %d: coefficients (Frac %d) are not the script's (Frac %d)", gc.Name, k+1, sw.Coefficients.Frac, gs.Frac)
			}
		}
		m, err := NewModel(c, w)
		if err != nil {
			t.Fatalf("%s: %v", gc.Name, err)
		}
		got := make([][]int64, len(c.Stages))
		for n := 0; n < len(gc.Input); {
			k := min(len(gc.Input)-n, 1+rng.IntN(40))
			out, err := m.Run(gc.Input[n : n+k])
			if err != nil {
				t.Fatal(err)
			}
			for i := range out {
				got[i] = append(got[i], out[i]...)
			}
			n += k
		}
		for i, want := range gc.Outputs {
			if len(got[i]) != len(want) {
				t.Fatalf("%s stage %d: %d outputs, SciPy %d", gc.Name, i+1, len(got[i]), len(want))
			}
			for j := range want {
				if got[i][j] != want[j] {
					t.Fatalf("%s stage %d output %d: model %d, SciPy %d", gc.Name, i+1, j, got[i][j], want[j])
				}
			}
		}
		codes, fl, err := RunCodes(context.Background(), c, w, gc.Input)
		if err != nil {
			t.Fatalf("%s: %v", gc.Name, err)
		}
		if err := sameCodes(codes, gc.Outputs[len(gc.Outputs)-1]); err != nil {
			t.Errorf("%s: RunCodes: %v", gc.Name, err)
		}
		if len(fl) != len(gc.Float) {
			t.Fatalf("%s: %d float outputs, SciPy %d", gc.Name, len(fl), len(gc.Float))
		}
		for j := range fl {
			if math.Abs(fl[j]-gc.Float[j]) > 1e-12 {
				t.Fatalf("%s: float output %d = %.17g, SciPy %.17g", gc.Name, j, fl[j], gc.Float[j])
			}
		}
	}
}

func equalInts(a, b []int64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
