package sigmadelta

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

// Mask constants.
const (
	// MinMaskDB is the least rejection the mask asks anywhere (a mask's
	// rejections are above 0 dB): where the modulator's noise needs no
	// filtering, 1 dB.
	MinMaskDB = 1
	// maskRatio is the ratio between neighbouring mask points: the points
	// are spaced geometrically from the first alias band to half the
	// modulator rate, where the noise in dB is close to linear in log f.
	maskRatio = 1.1
)

// MaskError says that the SNR target cannot be had from the modulator:
// its own noise in the band is too high even with perfect filtering
// (Needed is zero), or the rejection it would need at some alias is beyond
// chain.MaxRejectionDB (Needed is that rejection, at NeededHz).
type MaskError struct {
	TargetDB     float64 // the SNR asked
	AchievableDB float64 // the SNR with perfect filtering (and the passband ripple's lift)
	Needed       float64 // dB, when beyond chain.MaxRejectionDB
	NeededHz     float64
}

func (e *MaskError) Error() string {
	if e.Needed > 0 {
		return fmt.Sprintf("an SNR of %g dB needs %.4g dB of alias rejection at %.6g Hz, beyond the %d dB the chains are designed to; the modulator alone allows %.2f dB with perfect filtering: lower the target towards that", e.TargetDB, e.Needed, e.NeededHz, chain.MaxRejectionDB, e.AchievableDB)
	}
	return fmt.Sprintf("an SNR of %g dB cannot be had: the modulator's own noise in [0, passband] allows at most %.2f dB (a %d dBFS tone, perfect filtering, the passband ripple's lift); lower the target, or raise the order, the bits or the oversampling ratio", e.TargetDB, e.AchievableDB, ToneDBFS)
}

// Mask turns the SNR target into the rejection each alias needs: a
// chain.Mask over the input band, for a chain at the rates r whose
// protected band edge is protected (at least r.Passband; aliases landing
// in [0, protected] are held to the mask) and whose passband ripple is at
// most rippleDB.
//
// The budget: the noise a ToneDBFS tone may compete with,
// tone power / 10^(SNRDB/10), less the modulator's own noise in
// [0, Passband] lifted by the ripple (10^(rippleDB/10), the most the
// passband can raise it relative to the gain at 0 Hz). What is left is
// shared among the alias bands in proportion to their width: the folded
// noise density may not exceed budget / W anywhere, W the total width of
// the bands that land in [0, Passband]. So the alias of input frequency g
// needs 10 log10(S(g) W / budget) dB, S the modulator's noise density; a
// chain that meets it everywhere folds at most the budget, and its SNR
// (PredictedSNR) is at least the target. The mask's points are spaced by
// the factor maskRatio from the first alias band's edge (OutputRate -
// protected) to half the input rate, and raised by the largest amount the
// straight lines between them fall below that requirement (measured at 32
// points per segment) plus 0.001 dB, so the mask is never below it; no
// point is below MinMaskDB. A target the modulator cannot reach, or one
// that needs more than chain.MaxRejectionDB anywhere, is a *MaskError.
func (m Modulator) Mask(r Rates, protected, rippleDB float64) (*chain.Mask, error) {
	if err := r.check(); err != nil {
		return nil, err
	}
	if !(protected >= r.Passband) || protected > r.OutputRate/2 {
		return nil, fmt.Errorf("sigmadelta: protected = %g Hz: must lie in [Passband, OutputRate/2]", protected)
	}
	if !(rippleDB >= 0) || math.IsInf(rippleDB, 0) {
		return nil, fmt.Errorf("sigmadelta: ripple = %g dB: must be finite and at least 0", rippleDB)
	}
	ntf, err := m.NTF()
	if err != nil {
		return nil, err
	}
	in, err := m.Noise(func(g float64) float64 {
		if g <= r.Passband {
			return 1
		}
		return 0
	}, r)
	if err != nil {
		return nil, err
	}
	a := ToneAmplitude()
	target := a * a / 2 * math.Pow(10, -m.SNRDB/10)
	own := in.InBand * math.Pow(10, rippleDB/10)
	budget := target - own
	if !(budget > 0) {
		return nil, &MaskError{TargetDB: m.SNRDB, AchievableDB: snrDB(own)}
	}
	var w float64
	for k, b := range r.bands() {
		if k > 0 {
			w += b[1] - b[0]
		}
	}
	s := psd(ntf, m.NoiseVariance(), r.InputRate)
	need := func(g float64) float64 {
		return math.Max(MinMaskDB, 10*math.Log10(s(g)*w/budget))
	}
	lo, hi := r.OutputRate-protected, r.InputRate/2
	var gs []float64
	for g := lo; g < hi; g *= maskRatio {
		gs = append(gs, g)
	}
	gs = append(gs, hi)
	vs := make([]float64, len(gs))
	for i, g := range gs {
		vs[i] = need(g)
	}
	short := 0.0
	for i := 1; i < len(gs); i++ {
		for j := 1; j < 32; j++ {
			t := float64(j) / 32
			g := gs[i-1] + t*(gs[i]-gs[i-1])
			short = math.Max(short, need(g)-(vs[i-1]+t*(vs[i]-vs[i-1])))
		}
	}
	pts := make([]chain.MaskPoint, len(gs))
	for i := range gs {
		pts[i] = chain.MaskPoint{Hz: gs[i], DB: vs[i] + short + 0.001}
		if pts[i].DB > chain.MaxRejectionDB {
			return nil, &MaskError{TargetDB: m.SNRDB, AchievableDB: snrDB(own), Needed: pts[i].DB, NeededHz: gs[i]}
		}
	}
	mask, err := chain.NewMask(pts)
	if err != nil {
		return nil, fmt.Errorf("sigmadelta: %w", err)
	}
	return mask, nil
}
