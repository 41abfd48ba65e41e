package chain

import (
	"encoding/json"
	"math"
	"os"
	"slices"
	"testing"
)

// goldenInterp is chain/testdata/interp/upfirdn.json.
type goldenInterp struct {
	SciPy  string `json:"scipy"`
	Chains []struct {
		Name   string `json:"name"`
		Stages []struct {
			Kind   string    `json:"kind"`
			Factor int       `json:"factor"`
			Taps   []float64 `json:"taps"`
			N      int       `json:"N"`
			M      int       `json:"M"`
		} `json:"stages"`
		Signals []struct {
			Name string    `json:"name"`
			X    []float64 `json:"x"`
			Y    []float64 `json:"y"`
		} `json:"signals"`
	} `json:"chains"`
}

// TestRunInterpolationSciPy holds Run on interpolation chains to SciPy's
// scipy.signal.upfirdn, stage by stage (chain/testdata/interp/gen_upfirdn.py,
// SciPy version recorded in the file): FIR and half-band stages designed in
// the script with remez and firwin, CIC interpolators as their equivalent
// FIR (N boxcars of length R M, times R/(RM)^N), and a chain of all three.
// Every output sample must match to 1e-9 of the input's peak: the FIR
// arithmetic differs from SciPy's only in the order of its sums (about 1e-16),
// and the CIC's integer run quantises its input to at least 31 bits below its
// peak (2^-31 ~ 5e-10 of it, times the DC gain, through taps that sum to the
// DC gain in every phase); cic7m2r64 grows 43 bits and runs as its FIR.
func TestRunInterpolationSciPy(t *testing.T) {
	b, err := os.ReadFile("testdata/interp/upfirdn.json")
	if err != nil {
		t.Fatal(err)
	}
	var g goldenInterp
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	if len(g.Chains) == 0 {
		t.Fatal("no chains in upfirdn.json")
	}
	for _, gc := range g.Chains {
		// Stages are held from the high rate down: the signal order reversed.
		c := &Chain{Direction: Interpolate, Designed: true}
		l := 1
		for _, s := range gc.Stages {
			var st Stage
			switch s.Kind {
			case "cic":
				st = NewCICInterpolator(s.N, s.M, s.Factor, 16, 24)
			case "fir", "halfband":
				st = FIRStage{R: s.Factor, Taps: s.Taps, Length: len(s.Taps), HalfBand: s.Kind == "halfband"}
			default:
				t.Fatalf("%s: stage kind %q", gc.Name, s.Kind)
			}
			c.Stages = append(c.Stages, st)
			l *= s.Factor
		}
		slices.Reverse(c.Stages)
		c.Plan = planOf(c)
		c.InputRate = 1e3 * float64(l)
		for _, sig := range gc.Signals {
			y := Run(c, sig.X)
			if len(y) != len(sig.Y) || len(y) != len(sig.X)*l {
				t.Errorf("%s, %s: %d samples, SciPy %d, want %d x %d", gc.Name, sig.Name, len(y), len(sig.Y), len(sig.X), l)
				continue
			}
			peak := 0.0
			for _, v := range sig.X {
				peak = math.Max(peak, math.Abs(v))
			}
			worst, at := 0.0, 0
			for m := range y {
				if d := math.Abs(y[m] - sig.Y[m]); d > worst {
					worst, at = d, m
				}
			}
			if worst > 1e-9*peak {
				t.Errorf("%s, %s: sample %d: Run %.17g, SciPy %.17g (off by %.3g of the input's peak)", gc.Name, sig.Name, at, y[at], sig.Y[at], worst/peak)
			}
			t.Logf("%s, %s: %d samples, worst difference %.3g of the input's peak", gc.Name, sig.Name, len(y), worst/peak)
			// RunComplex runs the same real filters on each part.
			xc := make([]complex128, len(sig.X))
			for n, v := range sig.X {
				xc[n] = complex(v, -0.5*v)
			}
			yc := RunComplex(c, xc)
			for m := range yc {
				if real(yc[m]) != y[m] || math.Abs(imag(yc[m])+0.5*y[m]) > 1e-9*peak {
					t.Errorf("%s, %s: RunComplex sample %d = %v, Run %g", gc.Name, sig.Name, m, yc[m], y[m])
					break
				}
			}
		}
	}
}
