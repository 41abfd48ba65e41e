package chain

// This file fixes the public API of the chain package so that cost, optimize
// and the command line can be written against it in parallel. The package's
// owner fills in the bodies and may add to it; signatures change only by
// agreement (tell the coordinator).

import (
	"errors"

	"stepdown/chain/remez"
)

// Kind is a stage's kind.
type Kind int

// Stage kinds.
const (
	CIC Kind = iota + 1
	HalfBand
	FIR
)

// String returns "cic", "halfband" or "fir".
func (k Kind) String() string {
	switch k {
	case CIC:
		return "cic"
	case HalfBand:
		return "halfband"
	case FIR:
		return "fir"
	}
	return "unknown"
}

// Spec is what the user asks of the whole chain. Rates and frequencies in Hz,
// ripple peak-to-peak dB, rejection positive dB (DESIGN §2-§3).
type Spec struct {
	InputRate   float64 // F0
	OutputRate  float64 // FK
	Passband    float64 // fp
	Protected   float64 // fa; zero means Passband
	Stopband    float64 // fs; zero means OutputRate - Protected
	RippleDB    float64
	RejectionDB float64
	Complex     bool // I/Q: two real filters

	InputBits  int // zero means 16
	OutputBits int // zero means 24
	CoefBits   int // zero means floating-point coefficients
}

// Normalize returns s with defaults filled in, or an error naming the field,
// the value and the rule it breaks.
func (s Spec) Normalize() (Spec, error) { return s, errors.New("chain: not implemented yet") }

// Decimation returns D = InputRate/OutputRate (of a normalised spec).
func (s Spec) Decimation() int { return 0 }

// Variant is the band layout of an FIR stage.
type Variant int

const (
	// Multiband attenuates only the bands that alias onto [0, fa]; the rest is don't-care.
	Multiband Variant = iota
	// Lowpass has one stopband from Fi - fa to F(i-1)/2.
	Lowpass
)

// StagePlan describes one stage before it is designed.
type StagePlan struct {
	Kind     Kind
	Factor   int
	CICOrder int     // CIC only: N
	CICDelay int     // CIC only: M
	Variant  Variant // FIR only
}

// Notation returns the chain's compact notation, accepted back by ParseNotation.
func Notation(plan []StagePlan) string { return "" }

// ParseNotation parses a chain's notation. Errors give the byte position.
func ParseNotation(s string) ([]StagePlan, error) {
	return nil, errors.New("chain: not implemented yet")
}

// Stage is one decimating stage.
type Stage interface {
	Kind() Kind
	Factor() int
	// Gain returns |H(f)| at f Hz for the stage's input rate rate.
	Gain(f, rate float64) float64
}

// CICStage is a CIC decimator of order N, differential delay M, factor R.
type CICStage struct {
	N, M, R int
	// RegisterBits is the width of each of the 2N registers (integrators then
	// combs) after Hogenauer's pruning for the spec's output width.
	RegisterBits []int
}

// FIRStage is a polyphase FIR decimator, half-band when HalfBand is set.
type FIRStage struct {
	R        int
	Taps     []float64 // nil when only estimated
	Length   int       // number of taps (estimated or len(Taps))
	HalfBand bool
	Variant  Variant
	// CompensatesCIC is set on the stage whose passband corrects a CIC's droop.
	CompensatesCIC bool
}

// Chain is a cascade of stages from InputRate.
type Chain struct {
	InputRate float64
	Complex   bool
	Plan      []StagePlan
	Stages    []Stage
	// Designed is true when every FIR stage has coefficients from a real design;
	// false when lengths are estimates.
	Designed bool
}

// Settings tunes how stages are designed. The zero value is the default.
type Settings struct {
	Remez remez.Settings
}

// Estimate returns the chain with FIR lengths from order estimates (no design).
func Estimate(spec Spec, plan []StagePlan, s Settings) (*Chain, error) {
	return nil, errors.New("chain: not implemented yet")
}

// Design designs every stage for real.
func Design(spec Spec, plan []StagePlan, s Settings) (*Chain, error) {
	return nil, errors.New("chain: not implemented yet")
}

// Analysis is the truth of a designed cascade (DESIGN §7).
type Analysis struct {
	AliasRejectionDB float64 // positive dB
	WorstAliasHz     float64 // input frequency of the worst alias
	PassbandRippleDB float64 // peak-to-peak dB over [0, fp]
}

// Analyze measures a designed chain against spec.
func Analyze(c *Chain, spec Spec) (Analysis, error) {
	return Analysis{}, errors.New("chain: not implemented yet")
}
