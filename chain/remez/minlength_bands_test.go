package remez

import (
	"errors"
	"testing"
)

// MinLength starts no lower than the least length with a coefficient for
// every band (2 nb - 1 taps, odd), and refuses with ErrTooManyBands when
// that is over maxTaps.
func TestMinLengthBandCountFloor(t *testing.T) {
	var bands []Band
	bands = append(bands, Band{Lo: 0, Hi: 0.05, Gain: 1, MaxError: 0.01})
	for i := range 30 {
		lo := 0.08 + 0.014*float64(i)
		bands = append(bands, Band{Lo: lo, Hi: lo + 0.007, MaxError: 0.001})
	}
	if _, err := MinLength(1, bands, 1, 59, Settings{}); !errors.Is(err, ErrTooManyBands) {
		t.Errorf("31 bands within 59 taps: %v, want ErrTooManyBands", err)
	}
	res, err := MinLength(1, bands, 1, 401, Settings{})
	if err != nil {
		t.Fatalf("31 bands within 401 taps: %v", err)
	}
	if len(res.Taps) < 61 {
		t.Errorf("31 bands designed with %d taps, fewer than 61", len(res.Taps))
	}
}

// A 169-tap design over a passband and seven narrow stopbands with
// unconstrained gaps converges and meets its targets (a review found it
// refused as met to rounding level by a seed design's stale deviation):
// invented band edges, weights as the command line sets them (stopbands
// weighted dp/ds), deviations checked against the targets. Built with
// fused multiply-adds (GOAMD64=v3) its seed designs break down and the
// even spread it falls back to levels to rounding level (see
// TestBandShareStart): the equal share of points a band converges.
func TestNarrowStopBandsDesign(t *testing.T) {
	dp, ds := 2.5957e-4, 1.7425e-7 // 0.0045 dB peak-to-peak, 135.18 dB
	r, err := Design(169, 1, narrowStopBands(dp, ds), Settings{})
	if err != nil {
		t.Fatalf("169 taps: %v", err)
	}
	if !r.Converged {
		t.Fatal("169 taps: not converged")
	}
	// Measured apart from the engine (denseDev).
	for i, d := range denseDev(r.Taps, 1, narrowStopBands(dp, ds)) {
		lim := ds
		if i == 0 {
			lim = dp
		}
		if d > lim || d < 1e-12 {
			t.Errorf("band %d: deviation %.3g, want within (1e-12, %.3g]", i, d, lim)
		}
	}
}

// narrowStopBands is TestNarrowStopBandsDesign's passband and seven narrow
// stopbands (rate 1), the stopbands weighted dp/ds.
func narrowStopBands(dp, ds float64) []Band {
	b := []Band{{Lo: 0, Hi: 0.02420443059544735, Gain: 1, Weight: 1}}
	for _, e := range [][2]float64{{0.076278899116529394, 0.096972866706350733}, {0.15333506339473871, 0.16569946784394346}, {0.21432410080662059, 0.22380391101212105}, {0.27100887526953826, 0.29646378233571724}, {0.33444006179324542, 0.34992200399432988}, {0.40006205707136383, 0.41292916084137316}, {0.46834918113479646, 0.47967385287128095}} {
		b = append(b, Band{Lo: e[0], Hi: e[1], Weight: dp / ds})
	}
	return b
}
