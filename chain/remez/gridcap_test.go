package remez

import (
	"context"
	"errors"
	"testing"
)

// A long design at a high density would lay tens of millions of grid points
// (about 9 GB at 65535 taps and density 1024): it is refused before any is
// laid, naming the density that fits.
func TestGridTooLarge(t *testing.T) {
	bands := []Band{{Lo: 0, Hi: 0.2, Gain: 1, MaxError: 0.01}, {Lo: 0.21, Hi: 0.5, MaxError: 1e-4}}
	_, err := Design(65535, 1, bands, Settings{Density: 1024})
	if !errors.Is(err, ErrGridTooLarge) {
		t.Fatalf("Design(65535 taps, density 1024): err = %v, want ErrGridTooLarge", err)
	}
	d := MaxDensity(65535, 1, bands)
	// The grid holds about d r points (r = 32768) plus one a band:
	// d = floor(2^21 / 32768) = 64, less one for the band edges.
	if d < 62 || d > 64 {
		t.Errorf("MaxDensity(65535) = %d, want about 64", d)
	}
	nb := []nband{{lo: 0, hi: 0.2}, {lo: 0.21, hi: 0.5}}
	if g := gridPoints(65535, nb, d, false); g > MaxGridPoints {
		t.Errorf("at MaxDensity %d the grid has %.0f points, over %d", d, g, MaxGridPoints)
	}
	if g := gridPoints(65535, nb, d+1, false); g <= MaxGridPoints {
		t.Errorf("at MaxDensity+1 = %d the grid has %.0f points, within %d", d+1, g, MaxGridPoints)
	}
	// MinLength at that density searches only the lengths whose grid
	// fits: the grid holds about density x r points (r = n/2), so up to
	// about 2 x 2^21 / 1024 = 4096 taps.
	_, m, err := minLength(context.Background(), 1, []Band{{Lo: 0, Hi: 0.1, Gain: 1, MaxError: 1e-2}, {Lo: 0.2, Hi: 0.5, MaxError: 1e-3}}, 1, 0, Settings{Density: 1024})
	if err != nil {
		t.Fatal(err)
	}
	if !m.gridCap || m.maxTaps < 4050 || m.maxTaps > 4096 {
		t.Errorf("MinLength at density 1024: search bound %d taps (lowered %v), want about 4090, lowered", m.maxTaps, m.gridCap)
	}
}
