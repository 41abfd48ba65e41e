package plots

import "math"

// AliasShading returns the input-frequency bands to shade on a figure of a
// chain from inHz to outHz with protected band [0, faHz]: the bands
// [k outHz - faHz, k outHz + faHz], k >= 1, that fold onto the protected
// band, clipped to inHz/2 (docs/design.md §7). The first 64 bands are
// returned as they are; later ones closer than a 4096th of the axis to the
// previous band join it (they would share a pixel anyway), so a chain with
// millions of bands hands a figure a few thousand.
//
// The gap between neighbouring bands is the same for every k, outHz -
// 2 faHz: where it is well under that 4096th, every band after the 64th
// joins the 64th, and the joined band is made in one step (a ratio of 2^30
// has half a billion bands); otherwise there are at most 8192 bands.
func AliasShading(inHz, outHz, faHz float64) [][2]float64 {
	var bands [][2]float64
	if !(outHz > 0) || !(inHz > outHz) || !(faHz > 0) {
		return nil
	}
	minGap := inHz / 2 / 4096
	for k := 1; float64(k)*outHz-faHz < inHz/2; k++ {
		lo, hi := float64(k)*outHz-faHz, math.Min(float64(k)*outHz+faHz, inHz/2)
		if n := len(bands); k > 64 && n > 0 && lo-bands[n-1][1] < minGap {
			if outHz-2*faHz < minGap/2 {
				// Every later band joins too (the rounding of k outHz, a
				// few ulps of inHz, cannot carry the gap past minGap):
				// the last band's upper edge ends the joined band.
				// A step or two corrects the quotient's rounding; past
				// 2^53 bands a step no longer changes last, so the
				// steps are bounded.
				last := math.Floor((inHz/2 + faHz) / outHz)
				for i := 0; i < 4 && last*outHz-faHz >= inHz/2; i++ {
					last--
				}
				for i := 0; i < 4 && (last+1)*outHz-faHz < inHz/2; i++ {
					last++
				}
				bands[n-1][1] = math.Max(hi, math.Min(last*outHz+faHz, inHz/2))
				return bands
			}
			bands[n-1][1] = hi
			continue
		}
		bands = append(bands, [2]float64{lo, hi})
	}
	return bands
}
