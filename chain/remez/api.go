package remez

import "fmt"

// The types of the public API. The estimators are in estimate.go, response
// evaluation in response.go and the engine in design.go.

// Band is one band of a weighted minimax design. Frequencies are in Hz.
type Band struct {
	Lo, Hi float64 // band edges in Hz, 0 <= Lo < Hi <= rate/2

	// Gain is the desired amplitude when GainFunc is nil.
	Gain float64
	// GainFunc, when not nil, gives the desired amplitude at f Hz
	// (a CIC compensator uses 1/|H_cic(f)|).
	GainFunc func(f float64) float64

	// Weight is the error weight when WeightFunc is nil. Zero means 1.
	Weight float64
	// WeightFunc, when not nil, gives the error weight at f Hz.
	WeightFunc func(f float64) float64

	// MaxError is used only by MinLength: the band is met when
	// |A(f)-D(f)| * w(f) <= MaxError, where w is WeightFunc (1 when nil).
	MaxError float64
}

// Settings tunes a design. The zero value is the documented default.
type Settings struct {
	// Density is the grid density: grid points per expected extremum.
	// Zero means 16, the 1973 program's convention.
	Density int
	// MaxIterations bounds the exchange. Zero means 100.
	MaxIterations int
	// GridOnly keeps the reference on the grid points, placed as the 1973
	// program placed them, instead of moving each extremum to its local
	// vertex. It solves the discrete problem that implementations following
	// that program solve, for comparison with them; the default (false)
	// solves the continuous problem more closely. Reported deviations are
	// measured with local refinement either way.
	GridOnly bool
}

// Check reports settings no design accepts: a negative Density or
// MaxIterations.
func (s Settings) Check() error {
	if s.Density < 0 {
		return fmt.Errorf("remez: Settings.Density = %d: must be at least 1 (0 means 16)", s.Density)
	}
	if s.MaxIterations < 0 {
		return fmt.Errorf("remez: Settings.MaxIterations = %d: must be at least 1 (0 means 100)", s.MaxIterations)
	}
	return nil
}

// Result is a designed filter.
type Result struct {
	Taps []float64 // impulse response, length n, symmetric
	// Deviations are, per band, max |A(f)-D(f)| of the taps, evaluated at
	// the design's extrema (reference, last grid pass's candidates, band
	// edges), not on a dense scan: on 40 seeded lowpass and multiband
	// designs (up to 866 taps) they read up to 1.7e-4 (relative) below an
	// independent dense scan with every peak refined. A caller that needs a figure never below the
	// truth measures the taps itself (chain/fixed's Deviations does; the
	// design command takes the worse of the two).
	Deviations []float64
	Delta      float64 // the levelled weighted deviation of the final reference
	// Iterations counts the exchange iterations of the final design
	// (grid and local steps; the shorter seed designs are not counted).
	Iterations int
	// Converged reports that the largest error, extrema refined, is within
	// 1e-5 of Delta (or that the reference is the exchange's fixed point).
	Converged bool
}
