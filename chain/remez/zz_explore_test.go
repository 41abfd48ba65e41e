package remez

import (
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"testing"
	"time"
)

func TestZZExplore(t *testing.T) {
	cnt, _ := strconv.Atoi(os.Getenv("ZZN"))
	seed, _ := strconv.Atoi(os.Getenv("ZZSEED"))
	rng := rand.New(rand.NewPCG(uint64(seed), 7))
	var tot time.Duration
	for trial := range cnt {
		rate := []float64{800e3, 1.6e6, 3.2e6, 48e3, 10e6, 122.88e6, 3e6}[rng.IntN(7)]
		d := 2 + rng.IntN(60)
		fi := rate / float64(d)
		u := rng.Float64()
		var fa float64
		switch rng.IntN(3) {
		case 0:
			fa = fi / 2 * (1 - math.Pow(10, -1-4*rng.Float64())) // narrow gaps
		case 1:
			fa = fi / 2 * (0.1 + 0.9*u)
		default:
			fa = fi / 2 / float64(1+rng.IntN(8)) * (0.5 + 0.5*u)
		}
		fp := fa * (0.2 + 0.8*rng.Float64())
		if rng.IntN(3) == 0 {
			fp = fa
		}
		dp := math.Pow(10, -1.3-1.7*rng.Float64())
		ds := math.Pow(10, -(40+60*rng.Float64())/20)
		bands := aliasBands(rate, d, fp, fa, dp, ds)
		if len(bands) < 2 || bands[1].Lo <= fp {
			continue
		}
		if e := HerrmannLength(dp, ds, bands[1].Lo-fp, rate); e > 1800 || e < 5 {
			continue
		}
		t0 := time.Now()
		res, m, err := minLength(rate, bands, 0, 2000, Settings{})
		el := time.Since(t0)
		tot += el
		n := 0
		if res != nil {
			n = len(res.Taps)
		}
		bad := err != nil || (res != nil && !res.Converged) || el > 2*time.Second
		if bad || testing.Verbose() {
			t.Logf("trial %d rate=%g d=%d fp=%.6g fa=%.6g dp=%.3g ds=%.3g nb=%d: n=%d designs=%d %v err=%v", trial, rate, d, fp, fa, dp, ds, len(bands), n, m.designs, el, err)
		}
		if bad {
			t.Errorf("trial %d bad", trial)
		}
	}
	t.Logf("total %v", tot)
}
