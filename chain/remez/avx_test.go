package remez

import (
	"math"
	"testing"
)

// TestVectorKernel checks the vector kernel against the scalar formula.
func TestVectorKernel(t *testing.T) {
	if !haveAVX2 {
		t.Skip("no AVX2")
	}
	for _, n := range []int{16, 32, 48, 1024} {
		xr := make([]float64, n)
		mu := make([]float64, n)
		c := make([]float64, n)
		for i := range xr {
			xr[i] = math.Cos(math.Pi * (float64(i) + 0.5) / float64(n))
			mu[i] = float64(i%2*2-1) * (1 + 0.1*float64(i%5))
			c[i] = math.Sin(float64(i))
		}
		for _, x := range []float64{0.1234, -0.9, 0.99999} {
			num, den := baryAVX2(x, &xr[0], &mu[0], &c[0], n)
			var wn, wd float64
			for k := range xr {
				tk := mu[k] / (x - xr[k])
				wn += tk * c[k]
				wd += tk
			}
			if math.Abs(num-wn) > 1e-9*math.Abs(wn)+1e-12 || math.Abs(den-wd) > 1e-9*math.Abs(wd)+1e-12 {
				t.Errorf("n=%d x=%v: (%v, %v), want (%v, %v)", n, x, num, den, wn, wd)
			}
		}
	}
}
