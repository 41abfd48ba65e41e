package chain

import (
	"math"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// FIRStage is a polyphase FIR decimator, half-band when HalfBand is set.
type FIRStage struct {
	R        int
	Taps     []float64 // nil when only estimated
	Length   int       // number of taps (estimated or len(Taps))
	HalfBand bool
	Variant  Variant
	// CompensatesCIC is set on the stage whose passband corrects a CIC's droop.
	CompensatesCIC bool

	// Req is what the stage was designed (or estimated) to meet.
	Req Requirement
}

// Kind returns HalfBand or FIR.
func (s FIRStage) Kind() Kind {
	if s.HalfBand {
		return HalfBand
	}
	return FIR
}

func (FIRStage) isStage() {}

// Factor returns R.
func (s FIRStage) Factor() int { return s.R }

// Gain returns |H(f)| for input rate rate. A stage without taps (an estimate)
// returns its idealised response: the deviation Req.Ds on its stopbands and 1
// everywhere else, so that cascades of estimates stay meaningful.
func (s FIRStage) Gain(f, rate float64) float64 {
	if s.Taps == nil {
		x := foldFreq(f, rate)
		for _, b := range s.Req.Stopbands {
			if x >= b.Lo && x <= b.Hi {
				return s.Req.Ds
			}
		}
		return 1
	}
	return firGain(s.Taps, f, rate)
}

// foldFreq maps f to [0, rate/2] using the periodicity and symmetry of a real
// filter's magnitude.
func foldFreq(f, rate float64) float64 {
	x := math.Mod(math.Abs(f), rate)
	if x > rate/2 {
		x = rate - x
	}
	return x
}

// firGain evaluates |H(f)| directly (remez.Magnitude), after folding f so
// that the phase rotation starts from a small angle.
func firGain(h []float64, f, rate float64) float64 {
	return remez.Magnitude(h, foldFreq(f, rate), rate)
}
