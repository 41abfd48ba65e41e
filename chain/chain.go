package chain

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Kind is a stage's kind. The set of kinds is closed: Kinds lists every one,
// and only this package's stage types implement Stage.
type Kind int

// Stage kinds. A CIC is a CICStage; a half-band and a FIR are both FIRStages,
// told apart by FIRStage.HalfBand.
const (
	CIC Kind = iota + 1
	HalfBand
	FIR
	// Polyphase and Farrow are the fractional stage kinds
	// (FractionalKinds): a PolyphaseStage and a FarrowStage.
	Polyphase
	Farrow
)

// kinds is the one list of stage kinds; the package documentation (Stage
// kinds) says what else adding one involves.
var kinds = [...]Kind{CIC, HalfBand, FIR}

// Kinds returns every integer stage kind, in the order of their constants.
func Kinds() []Kind { return append([]Kind(nil), kinds[:]...) }

// FractionalKinds returns the fractional stage kinds, Polyphase and
// Farrow: at most one ends a chain whose ratio is a fraction (package
// documentation, Fractional stages).
func FractionalKinds() []Kind { return []Kind{Polyphase, Farrow} }

// Fractional says whether k is a fractional stage kind.
func (k Kind) Fractional() bool { return k == Polyphase || k == Farrow }

// String returns "cic", "halfband", "fir", "polyphase" or "farrow".
func (k Kind) String() string {
	switch k {
	case CIC:
		return "cic"
	case HalfBand:
		return "halfband"
	case FIR:
		return "fir"
	case Polyphase:
		return "polyphase"
	case Farrow:
		return "farrow"
	}
	return "unknown"
}

// Variant is the band layout of an FIR stage.
type Variant int

const (
	// Multiband attenuates only the bands that alias onto [0, fa]; the rest is don't-care.
	Multiband Variant = iota
	// Lowpass has one stopband from Fi - fa to F(i-1)/2.
	Lowpass
)

// String returns "multiband" or "lowpass".
func (v Variant) String() string {
	if v == Lowpass {
		return "lowpass"
	}
	return "multiband"
}

// StagePlan describes one stage before it is designed.
type StagePlan struct {
	Kind     Kind
	Factor   int
	CICOrder int     // CIC only: N
	CICDelay int     // CIC only: M
	CICForm  CICForm // CIC only: recursive (the zero value) or non-recursive
	Variant  Variant // FIR only
	// Up and Down are a fractional stage's rate change: its output rate is
	// its input rate times Up/Down (Polyphase and Farrow only, whose
	// Factor is 1).
	Up, Down int
}

// Stage is one decimating stage: a CICStage or a FIRStage. The interface is
// sealed (its unexported method isStage), so no other package can add a kind
// that the analysis, the pricing or the fixed-point planner would not know.
type Stage interface {
	// Kind returns the stage's kind, one of Kinds.
	Kind() Kind
	Factor() int
	// Gain returns |H(f)| at f Hz for the stage's input rate rate.
	Gain(f, rate float64) float64
	isStage()
}

// Chain is a cascade of stages from InputRate.
//
// An interpolation chain (Direction Interpolate) is held as its transpose,
// the decimation chain with the same filters at the same rates: Plan and
// Stages run from the high rate down, InputRate is the high rate (the
// DAC's), and the signal passes the stages from the last to the first, each
// raising the rate by its factor (SignalOrder). Every figure of the
// frequency domain (requirements, designs, Gain, Analyze) and every price
// is the transpose's; see the package documentation, Interpolation.
type Chain struct {
	// InputRate is the rate at Stages[0]'s high-rate side: the input rate
	// of a decimation chain, the output rate of an interpolation chain.
	InputRate float64
	Complex   bool
	// Direction is Decimate (the zero value) or Interpolate.
	Direction Direction
	Plan      []StagePlan
	// Stages holds CICStage and FIRStage values (not pointers), from the
	// high rate down: in signal order for a decimation chain, in the
	// opposite order for an interpolation chain.
	Stages []Stage
	// Designed is true when every FIR stage has coefficients from a real design;
	// false when lengths are estimates.
	Designed bool
}

// Settings tunes how stages are designed. The zero value is the default.
type Settings struct {
	// Remez is handed to the design engine; its zero value is the engine's
	// default (grid density 16, 100 iterations).
	Remez remez.Settings
	// MaxTaps bounds every FIR and half-band stage's length. Zero means no
	// bound beyond the engine's own (65535 taps). A stage that needs more
	// fails with an error naming the bound, and remez.MinLength never
	// designs a length above it, so a caller with a tap limit does not pay
	// for designs that would exceed it. A negative value is an error.
	MaxTaps int
	// Memo, when not nil, remembers every FIR and half-band stage Design
	// designs and hands a stage met again its remembered design (see
	// StageMemo): the same result, without designing it again.
	Memo *StageMemo
	// StageAlone selects the stage-alone rule for the requirements: every
	// stage meets the full rejection on its own bands, whatever the stages
	// before it remove, and the ripple budget is split equally. The zero
	// value, false, is the cascade rule: a FIR stage's stopband limit is
	// relaxed by the earlier stages' attenuation at the same input
	// frequencies, and the ripple budget is split where it buys most
	// (package doc, Cascade requirements). Estimate uses the stage-alone
	// rule's limits under either.
	StageAlone bool
}

// Check reports settings Design refuses: MaxTaps negative or below 3
// (other than 0), and Remez settings no design accepts.
func (s Settings) Check() error {
	if s.MaxTaps < 0 || (s.MaxTaps > 0 && s.MaxTaps < 3) {
		return fmt.Errorf("chain: Settings.MaxTaps = %d: must be 0 (no bound) or at least 3", s.MaxTaps)
	}
	if err := s.Remez.Check(); err != nil {
		// "chain: Settings.Remez.Density = -1: ...", not a stutter of
		// package prefixes.
		return errors.New("chain: Settings.Remez." + strings.TrimPrefix(err.Error(), "remez: Settings."))
	}
	return nil
}

// SignalOrder returns the indexes of Stages in the order the signal passes
// them: 0, 1, ... for a decimation chain, the reverse for an interpolation
// chain.
func (c *Chain) SignalOrder() []int {
	idx := make([]int, len(c.Stages))
	for i := range idx {
		idx[i] = i
		if c.Direction == Interpolate {
			idx[i] = len(idx) - 1 - i
		}
	}
	return idx
}

// Lanes is how many samples a stage whose high rate (the rate its taps or
// integrators run at) is rate Hz must take per cycle of a clock of clock
// Hz: PerCycle(rate, clock), and 1 without a clock (0) or at or below it.
// Such a stage is built as that many parallel lanes (a polyphase
// decomposition of the same filter; a CIC's integrators once per lane):
// common practice, a planning estimate of the structure. Package cost
// prices lanes and package fixed counts a CIC's registers by this one rule.
func Lanes(rate, clock float64) int {
	if !(clock > 0) || !(rate > clock) {
		return 1
	}
	return PerCycle(rate, clock)
}

// PerCycle is how many of a thing done rate times a second a clock of
// clock Hz must do in each of its cycles: ceil(rate/clock), 0 for no rate.
// A rate that is a whole multiple of the clock up to the rounding of the
// arithmetic that made it (within 1e-9 of a cycle's worth) counts as that
// multiple. It is
// the one rule for Lanes, cost's time-shared multipliers and fixed's
// native multiplier blocks at the clock; clock must be above 0, and at
// least the highest rate over MaxLanes (CheckClock, which the spec file,
// optimize, cost.Price and fixed.Plan apply), which keeps every count made
// from it far inside an int. A quotient past 2^53 (a caller that skipped
// the check) counts as 2^53 rather than wrapping negative.
func PerCycle(rate, clock float64) int {
	if !(rate > 0) {
		return 0
	}
	q := math.Ceil(rate/clock - 1e-9)
	if !(q < 1<<53) {
		return 1 << 53
	}
	return int(q)
}

// MaxLanes is the most samples a stage may take in each cycle of the
// fabric's clock (Lanes): far beyond any fabric, and small enough that the
// multipliers, adders and registers counted from it stay exact integers.
const MaxLanes = 1 << 16

// CheckClock refuses a clock of clock Hz (zero: none) under which a stage
// running at rate Hz, a chain's highest, would take more than MaxLanes
// samples a cycle. The error says the least clock that would do.
func CheckClock(rate, clock float64) error {
	if clock == 0 || !(rate > 0) {
		return nil
	}
	if !(clock > 0) || math.IsInf(clock, 0) {
		return errors.New("must be a finite rate above 0 Hz")
	}
	if PerCycle(rate, clock) > MaxLanes {
		least := rate / MaxLanes
		return fmt.Errorf("a stage at %s would take more than %d samples a clock cycle; the clock must be at least %s", units.FormatFrequency(rate), MaxLanes, units.FormatFrequency(least))
	}
	return nil
}

// SignalRates returns the rate of the samples entering and leaving
// Stages[i] in signal order: (Rates()[i], Rates()[i+1]) for a decimation
// chain, the other way round for an interpolation chain.
func (c *Chain) SignalRates(i int) (in, out float64) {
	r := c.Rates()
	if c.Direction == Interpolate {
		return r[i+1], r[i]
	}
	return r[i], r[i+1]
}

// Ratio returns the product of the stages' factors: the decimation D or
// the interpolation L.
func (c *Chain) Ratio() int { return c.Decimation() }

// Decimation returns the product of the stages' factors (for an
// interpolation chain, the decimation of its transpose, L; for a chain
// that ends in a fractional stage, the integer stages' D, Fraction giving
// the whole ratio).
func (c *Chain) Decimation() int {
	d := 1
	for _, s := range c.Stages {
		d *= s.Factor()
	}
	return d
}

// OutputRate returns the rate after the last of Stages: the channel rate
// (the output rate of a decimation chain, the input rate of an
// interpolation chain).
func (c *Chain) OutputRate() float64 {
	up, down := c.fraction()
	return c.InputRate * float64(up) / float64(down)
}

// fraction returns the chain's output rate over its input rate as up/down
// (not reduced): 1/D for an integer chain.
func (c *Chain) fraction() (up, down int) {
	up, down = 1, 1
	for _, s := range c.Stages {
		u, d := stageRatio(s)
		up, down = up*u, down*d
	}
	return up, down
}

// Fraction returns the chain's ratio, the high rate over the channel rate,
// as a reduced fraction num/den: (D, 1) for an integer chain (Spec.Fraction).
func (c *Chain) Fraction() (num, den int) {
	up, down := c.fraction()
	g := gcd(up, down)
	return down / g, up / g
}

// Rates returns the rate at the high-rate side of each of Stages followed
// by the channel rate: F0, F1, ..., FK.
func (c *Chain) Rates() []float64 {
	r := make([]float64, len(c.Stages)+1)
	r[0] = c.InputRate
	up, down := 1, 1
	for i, s := range c.Stages {
		u, d := stageRatio(s)
		up, down = up*u, down*d
		r[i+1] = c.InputRate * float64(up) / float64(down)
	}
	return r
}

// Gain returns the cascade's gain |H(g)| = prod_i |H_i(g)| at input
// frequency g Hz, each stage evaluated relative to its own input rate
// (docs/design.md §7).
func (c *Chain) Gain(g float64) float64 {
	p := 1.0
	rate := c.InputRate
	for _, s := range c.Stages {
		p *= s.Gain(g, rate)
		u, d := stageRatio(s)
		rate = rate * float64(u) / float64(d)
	}
	return p
}

// GainDB returns 20 log10 of Gain, floored at -MaxFigureDB.
func (c *Chain) GainDB(g float64) float64 { return toDB(c.Gain(g)) }

// MaxFigureDB bounds every dB figure the package returns, so that an exact
// null never turns into an infinity.
const MaxFigureDB = 300

func toDB(v float64) float64 {
	if !(v > 0) {
		return -MaxFigureDB
	}
	db := 20 * math.Log10(v)
	if db < -MaxFigureDB {
		return -MaxFigureDB
	}
	if db > MaxFigureDB {
		return MaxFigureDB
	}
	return db
}
