package remez

import (
	"math"
	"testing"
)

// TestWeightFunc: with a weight that rises across the stopband (a sloped
// stopband, common practice for decimators whose later stages attenuate
// more at high frequencies) the weighted error must still be equiripple
// and level with the passband's.
func TestWeightFunc(t *testing.T) {
	rate := 1000.0
	wf := func(f float64) float64 { return 10 * (1 + 4*(f-150)/350) } // 10 at 150 Hz to 50 at 500 Hz
	bands := []Band{
		{Lo: 0, Hi: 100, Gain: 1, Weight: 1},
		{Lo: 150, Hi: 500, Gain: 0, WeightFunc: wf},
	}
	for _, n := range []int{41, 42, 121} {
		res, err := Design(n, rate, bands, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		// Weighted error on a fine grid with refinement, measured here.
		var peaks []float64
		maxw := 0.0
		m := 40 * n
		fn := func(f float64) float64 { return math.Abs(Amplitude(res.Taps, f, rate)) * wf(f) }
		prev2, prev := fn(150), fn(150+350.0/float64(m))
		maxw = math.Max(prev2, prev)
		for k := 2; k <= m; k++ {
			f := 150 + 350*float64(k)/float64(m)
			v := fn(f)
			maxw = math.Max(maxw, v)
			if prev >= prev2 && prev >= v && k < m {
				step := 350 / float64(m)
				x := refineMax(fn, f-2*step, f-step, f, prev2, prev, v)
				pk := fn(x)
				maxw = math.Max(maxw, pk)
				peaks = append(peaks, pk)
			}
			prev2, prev = prev, v
		}
		if r := maxw / res.Delta; math.Abs(r-1) > 0.01 {
			t.Errorf("n=%d: weighted stopband deviation %.6g is %.4f of delta", n, maxw, r)
		}
		for _, p := range peaks {
			if p < 0.99*maxw {
				t.Errorf("n=%d: weighted stopband not equiripple: peak %.6g of %.6g", n, p, maxw)
				break
			}
		}
		if r := res.Deviations[0] / res.Delta; math.Abs(r-1) > 0.01 {
			t.Errorf("n=%d: passband deviation %.6g is %.4f of delta", n, res.Deviations[0], r)
		}
	}
}

// TestDeepWeightFuncLax: far beyond 200 dB the error is at rounding level;
// the design must say so rather than fail to converge silently.
func TestDeepWeightFuncLax(t *testing.T) {
	wf := func(f float64) float64 { return 10 * (1 + 4*(f-150)/350) }
	bands := []Band{{Lo: 0, Hi: 100, Gain: 1, Weight: 1}, {Lo: 150, Hi: 500, WeightFunc: wf}}
	res, err := Design(301, 1000, bands, Settings{})
	if err == nil {
		t.Fatalf("no error; deviations %v", res.Deviations)
	}
	if res != nil {
		for _, v := range res.Taps {
			if math.IsNaN(v) {
				t.Fatal("NaN tap")
			}
		}
	}
	t.Log(err)
}

// TestGainFuncEquiripple: a CIC compensator (desired 1/|H_cic(f)|, order
// 5, R M = 16, docs/design.md §4) designed directly is equiripple in its
// passband, measured here on the taps.
func TestGainFuncEquiripple(t *testing.T) {
	rate := 1.0
	cic := func(f float64) float64 {
		const n, rm = 5, 16.0
		x := math.Pi * f / rm
		if x == 0 {
			return 1
		}
		return math.Pow(math.Sin(rm*x)/(rm*math.Sin(x)), n)
	}
	des := func(f float64) float64 { return 1 / cic(f) }
	bands := []Band{
		{Lo: 0, Hi: 0.2, GainFunc: des, Weight: 1},
		{Lo: 0.28, Hi: 0.5, Gain: 0, Weight: 10},
	}
	res, err := Design(63, rate, bands, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	fn := func(f float64) float64 { return math.Abs(Amplitude(res.Taps, f, rate) - des(f)) }
	m := 20000
	step := 0.2 / float64(m)
	maxv, minPeak := 0.0, math.Inf(1)
	v0, v1 := fn(0), fn(step)
	for k := 2; k <= m; k++ {
		v2 := fn(step * float64(k))
		if v1 >= v0 && v1 >= v2 {
			x := refineMax(fn, step*float64(k-2), step*float64(k-1), step*float64(k), v0, v1, v2)
			pk := fn(x)
			maxv = math.Max(maxv, pk)
			if k-1 > 1 && k-1 < m-1 {
				minPeak = math.Min(minPeak, pk)
			}
		}
		maxv = math.Max(maxv, v2)
		v0, v1 = v1, v2
	}
	if math.Abs(maxv/res.Delta-1) > 0.01 || minPeak < 0.99*maxv {
		t.Errorf("passband max %.6g, smallest peak %.6g, delta %.6g", maxv, minPeak, res.Delta)
	}
	if math.Abs(res.Deviations[0]-maxv) > 1e-6*maxv {
		t.Errorf("reported passband deviation %.9g, measured %.9g", res.Deviations[0], maxv)
	}
}
