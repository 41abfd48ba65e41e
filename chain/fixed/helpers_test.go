package fixed

import (
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/internal/testfilters"
)

// kaiserLowpass returns an n-tap Kaiser-windowed lowpass with cutoff fc Hz
// at rate Hz and DC gain 1: a design independent of the remez engine
// (internal/testfilters).
func kaiserLowpass(n int, fc, rate, beta float64) []float64 {
	return testfilters.KaiserLowpass(n, fc/rate, beta)
}

// kaiserHalfBand returns a 4K-1 tap windowed half-band: centre 1/2, every
// other tap exactly zero (internal/testfilters).
func kaiserHalfBand(k int, beta float64) []float64 { return testfilters.KaiserHalfBand(k, beta) }

func lowpassBands(fp, fs, rate, dp, ds float64) []remez.Band {
	return []remez.Band{
		{Lo: 0, Hi: fp, Gain: 1, MaxError: dp},
		{Lo: fs, Hi: rate / 2, Gain: 0, MaxError: ds},
	}
}
