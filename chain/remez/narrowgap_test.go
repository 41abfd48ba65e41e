package remez

import (
	"context"
	"errors"
	"math"
	"os"
	"testing"
)

// aliasBands returns the bands of a decimating stage as docs/design.md §4
// lays them out: the passband [0, fp] and the bands [k Fi - fa, k Fi + fa],
// k = 1 .. floor(D/2), that fold onto [0, fa] at the output rate
// Fi = rate/D, clipped to [0, rate/2] and merged where they overlap. With fa
// close to Fi/2 the don't-care gaps between stopbands are Fi - 2 fa wide.
func aliasBands(rate float64, d int, fp, fa, dp, ds float64) []Band {
	fi := rate / float64(d)
	bands := []Band{{Lo: 0, Hi: fp, Gain: 1, MaxError: dp, Weight: 1 / dp}}
	for k := 1; k <= d/2; k++ {
		lo, hi := float64(k)*fi-fa, math.Min(float64(k)*fi+fa, rate/2)
		if lo >= hi {
			continue
		}
		if last := &bands[len(bands)-1]; len(bands) > 1 && lo <= last.Hi {
			last.Hi = hi
			continue
		}
		bands = append(bands, Band{Lo: lo, Hi: hi, MaxError: ds, Weight: 1 / ds})
	}
	return bands
}

// TestNarrowGaps: multiband stages whose stopbands are separated by narrow
// don't-care gaps (a few hundred Hz at hundreds of kHz, down to 1 Hz) are
// legitimate specifications. MinLength must return a length that meets them,
// measured independently of the engine, after a handful of designs, and
// must not be misled by the gaps into designing thousands of taps (the
// first report: 800 kHz, gaps of 600 Hz, the search went to 65 535 taps).
func TestNarrowGaps(t *testing.T) {
	for _, tc := range []struct {
		name   string
		bands  []Band
		rate   float64
		maxLen int // a generous bound on the answer, from the Herrmann-Rabiner-Chan estimate of the pass-stop transition
	}{
		{"report-577Hz", []Band{
			{Lo: 0, Hi: 18.8e3, Gain: 1, MaxError: 0.0204},
			{Lo: 50.3e3, Hi: 149.7e3, MaxError: 1.15e-3},
			{Lo: 150.3e3, Hi: 249.7e3, MaxError: 1.15e-3},
			{Lo: 250.3e3, Hi: 349.7e3, MaxError: 1.15e-3},
			{Lo: 350.3e3, Hi: 400e3, MaxError: 1.15e-3},
		}, 800e3, 0},
		{"report-shifted", []Band{
			{Lo: 0, Hi: 18.8e3, Gain: 1, MaxError: 0.0204},
			{Lo: 50.2885e3, Hi: 149.7115e3, MaxError: 1.15e-3},
			{Lo: 150.2885e3, Hi: 249.7115e3, MaxError: 1.15e-3},
			{Lo: 250.2885e3, Hi: 349.7115e3, MaxError: 1.15e-3},
			{Lo: 350.2885e3, Hi: 400e3, MaxError: 1.15e-3},
		}, 800e3, 0},
		{"8x-1Hz-gaps", aliasBands(800e3, 8, 18.8e3, 49.9995e3, 0.0204, 1.15e-3), 800e3, 0},
		{"8x-100dB", aliasBands(800e3, 8, 18.8e3, 49.7e3, 0.01, 1e-5), 800e3, 0},
		{"16x-200Hz", aliasBands(1.6e6, 16, 30e3, 49.9e3, 0.005, 3e-5), 1.6e6, 0},
		{"30x-gaps", aliasBands(3e6, 30, 20e3, 49.95e3, 0.01, 1e-4), 3e6, 0},
		{"5x-odd", aliasBands(500e3, 5, 20e3, 49.8e3, 0.01, 1e-4), 500e3, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			bands := tc.bands
			for i := range bands {
				bands[i].Weight = 1 / bands[i].MaxError
			}
			tr := bands[1].Lo - bands[0].Hi
			est := HerrmannLength(bands[0].MaxError, bands[1].MaxError, tr, tc.rate)
			res, search, err := minLength(context.Background(), tc.rate, bands, 0, 0, Settings{})
			if err != nil {
				t.Fatalf("%v", err)
			}
			n := len(res.Taps)
			t.Logf("%d bands: %d taps after %d designs (Herrmann-Rabiner-Chan for the pass-stop transition: %d)", len(bands), n, len(search.ratio), est)
			// Stopbands only shrink the free region, never below what the
			// single pass-stop transition needs; the gaps add freedom, so the
			// answer stays near the lowpass estimate ("off by a few taps",
			// docs/design.md §6; 30 % allowed for the multiband shape).
			if n > est*13/10+4 {
				t.Errorf("%d taps, far beyond the estimate %d", n, est)
			}
			if d := len(search.ratio); d > 12 {
				t.Errorf("%d designs for one search", d)
			}
			if !meetsAll(res.Taps, tc.rate, bands) {
				t.Errorf("%d taps do not meet the bands", n)
			}
			if !res.Converged {
				t.Errorf("%d taps: not converged", n)
			}
		})
	}
}

// TestNarrowGapDesigns: Design on narrow-gap bands at lengths from the
// answer up to far beyond it (where the optimum is met to rounding level)
// returns, converged and equiripple where double precision allows, and
// otherwise with a descriptive error, never a hang.
func TestNarrowGapDesigns(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("3 s: STEPDOWN_LONG (CI's long step)")
	}
	bands := aliasBands(800e3, 8, 18.8e3, 49.7e3, 0.0204, 1.15e-3)
	for _, n := range []int{31, 66, 67, 101, 160, 251} {
		res, err := Design(n, 800e3, bands, Settings{})
		if err != nil {
			t.Errorf("n=%d: %v", n, err)
			continue
		}
		checkEquiripple(t, "narrow-gap", res, 800e3, bands, 32)
	}
	for _, n := range []int{601, 2001, 4235} {
		res, err := Design(n, 800e3, bands, Settings{})
		if err == nil {
			continue
		}
		if !errors.Is(err, ErrNotConverged) && !errors.Is(err, errRounding) {
			t.Errorf("n=%d: unexpected error %v", n, err)
		}
		if res == nil {
			t.Errorf("n=%d: no best result", n)
		}
	}
}

// TestSearchFromFarAbove: a length search started thousands of taps above
// the answer (where designs are met to rounding level and their taps are
// unusable, as with the first report's estimate of 4 235 taps) must come
// down to the answer within the design bound, not climb to maxTaps.
func TestSearchFromFarAbove(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("a length search from thousands of taps above the answer: about 10 s; set STEPDOWN_LONG=1 (CI's long step)")
	}
	bands := aliasBands(800e3, 8, 18.8e3, 49.7e3, 0.0204, 1.15e-3)
	for i := range bands {
		bands[i].Weight = 0
	}
	wb := append([]Band(nil), bands...)
	for i := range wb {
		wb[i].Weight = 1 / wb[i].MaxError
	}
	m := &lengthSearch{rate: 800e3, bands: bands, wb: wb, maxTaps: 65535, cache: map[int]*Result{}, ratio: map[int]float64{}, lax: map[int]bool{}}
	n, err := m.search(4235, 1)
	if err != nil {
		t.Fatal(err)
	}
	// TestNarrowGaps finds 68 taps with parity 0 for the same bands; the
	// shortest odd length is 67 or 69.
	if n != 67 && n != 69 {
		t.Errorf("%d taps, want 67 or 69", n)
	}
	if m.designs > maxDesigns {
		t.Errorf("%d designs", m.designs)
	}
	t.Logf("%d taps after %d designs", n, m.designs)
}

// TestGridMinimum: without GridOnly every band gets at least minBandPoints
// grid points and the grid holds at least Density points per reference
// point in total, however narrow the bands and coarse the density.
func TestGridMinimum(t *testing.T) {
	for _, tc := range []struct {
		n       int
		bands   []Band
		density int
	}{
		{101, []Band{{Lo: 0, Hi: 0.001, Gain: 1}, {Lo: 0.4, Hi: 0.401}}, 1},
		{4, []Band{{Lo: 0, Hi: 12.5e3 / 0.8e6, Gain: 1}}, 16}, // half-band k = 2 at 1.6 MHz
		{41, aliasBands(1, 20, 0.001, 0.0249, 0.01, 1e-4), 16},
	} {
		e, err := newEngine(tc.n, 1, tc.bands, Settings{Density: tc.density})
		if err != nil {
			t.Fatalf("n=%d: %v", tc.n, err)
		}
		for b := range tc.bands {
			if c := e.bstart[b+1] - e.bstart[b]; c < minBandPoints {
				t.Errorf("n=%d band %d: %d grid points", tc.n, b, c)
			}
		}
		if len(e.grid) < tc.density*(e.r+1)-tc.density {
			t.Errorf("n=%d: %d grid points for %d reference points at density %d", tc.n, len(e.grid), e.r+1, tc.density)
		}
	}
}

// TestSeededStartRecovers: two lengths found by the randomized sweep of
// chain-like multiband stages. At 1085 taps (21 bands) the reference scaled
// from the coarse design had the wrong structure and the exchange broke
// down in two iterations; at 2375 taps (18 bands) the local steps stalled on
// evaluation noise 1e-4 above delta for all 100 iterations. Both must now
// converge to equiripple.
func TestSeededStartRecovers(t *testing.T) {
	for _, tc := range []struct {
		n              int
		rate           float64
		d              int
		fp, fa, dp, ds float64
	}{
		{1085, 1.6e6, 40, 16910.7809178744, 19304.349348409, 0.009209702603935435, 0.0007819686545978663},
		{2375, 3e6, 34, 40926.85452778635, 40926.85452778635, 0.00267673315371937, 8.735633864033865e-05},
	} {
		bands := aliasBands(tc.rate, tc.d, tc.fp, tc.fa, tc.dp, tc.ds)
		res, err := Design(tc.n, tc.rate, bands, Settings{})
		if err != nil {
			t.Errorf("n=%d: %v", tc.n, err)
			continue
		}
		checkEquiripple(t, "seeded", res, tc.rate, bands, 16)
		t.Logf("n=%d, %d bands: %d iterations", tc.n, len(bands), res.Iterations)
	}
}

// TestMaxIterationsBound: a long multiband design with a small iteration
// budget stops within it, over the seeded start and the restart together,
// and returns its best filter with an error wrapping ErrNotConverged.
func TestMaxIterationsBound(t *testing.T) {
	bands := aliasBands(1.6e6, 40, 16910.7809178744, 19304.349348409, 0.009209702603935435, 0.0007819686545978663)
	for _, it := range []int{1, 3, 6} {
		res, err := Design(1085, 1.6e6, bands, Settings{MaxIterations: it})
		t.Logf("MaxIterations %d: %v", it, err)
		if err == nil {
			continue // converged within the budget
		}
		if !errors.Is(err, ErrNotConverged) {
			t.Errorf("MaxIterations %d: error %v does not wrap ErrNotConverged", it, err)
		}
		if res == nil {
			t.Errorf("MaxIterations %d: no best result", it)
			continue
		}
		if res.Iterations > it {
			t.Errorf("MaxIterations %d: %d iterations", it, res.Iterations)
		}
		for _, v := range res.Taps {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("MaxIterations %d: non-finite tap", it)
			}
		}
	}
}
