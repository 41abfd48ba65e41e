package optimize

import (
	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/cost"
)

// The search space's defaults, which Settings' zero values stand for, and
// its limits: the one place they are written (the spec file takes them
// from here).
const (
	DefaultMaxStages = 6  // Settings.MaxStages zero
	MaxStagesLimit   = 12 // the most stages a search may allow
	MaxCICOrder      = 10 // the highest CIC order a search may list
	MaxCICDelay      = 4  // the longest CIC differential delay a search may list
)

// Limits are what the fabric can build; a zero field is no limit. Chains
// that break one are dropped (ReasonOverRegisterBits, ReasonOverCICFactor,
// ReasonOverMultipliers, ReasonOverMemory, ReasonOverAccumulatorBits), so
// the front holds only chains within them.
type Limits struct {
	// MaxRegisterBits is the widest register a CIC may need (its pruned
	// integrator and comb registers, chain.PruneCIC): an accumulator's
	// width in the fabric, such as 48. With a fixed coefficient width it
	// bounds FIR and half-band accumulators too (the exact sum of products
	// of the rounded taps, fixed.StageWidths.AccumulatorBits), judged when
	// the search plans a designed chain's rounded taps.
	MaxRegisterBits int
	// MaxCICFactor is the largest decimation a CIC stage may take.
	MaxCICFactor int
	// MaxMultipliers bounds a chain's hardware multipliers at the clock
	// (cost.Figures.MultipliersAtClock); it needs Cost.Clock. With a
	// native multiplier size (Fixed.NativeA x NativeB) and a fixed
	// coefficient width it bounds the native blocks the chain's word
	// lengths need at the clock too (BuiltOverLimits).
	MaxMultipliers int
	// MaxMemoryBits bounds a chain's memory (cost.Figures.MemoryBits).
	MaxMemoryBits int
}

// DefaultCICOrders are the CIC orders a search tries when Settings.CICOrders
// is nil: 1 to 7.
func DefaultCICOrders() []int { return []int{1, 2, 3, 4, 5, 6, 7} }

// DefaultCICDelays are the CIC differential delays a search tries when
// Settings.CICDelays is nil: 1 and 2.
func DefaultCICDelays() []int { return []int{1, 2} }

// Settings bounds and steers the search. The zero value is the default.
type Settings struct {
	MaxStages int          // zero means DefaultMaxStages; at most MaxStagesLimit
	Kinds     []chain.Kind // nil means every kind (chain.Kinds)
	CICOrders []int        // nil means DefaultCICOrders; each 1..MaxCICOrder
	CICDelays []int        // nil means DefaultCICDelays; each 1..MaxCICDelay
	// CICForms are the CIC forms tried; nil means chain.Recursive alone.
	// chain.NonRecursive is tried for every CIC it can build (M = 1 and a
	// power-of-two factor), as a chain of its own ("cic<N>m1r<R>nr").
	CICForms []chain.CICForm
	Jobs     int // parallel designs; zero means runtime.GOMAXPROCS(0); at most 4 per CPU run at once

	// Limits are the fabric's; the zero value sets none.
	Limits Limits

	// Rule picks the recommendation; the zero value is Knee.
	Rule Rule
	// Weights for the WeightedCost rule: multiplies, memory bits, latency.
	// Zero values mean 1 each, applied to figures normalised by the front's best.
	WeightMultiplies, WeightMemory, WeightLatency float64

	// Progress, when not nil, is called as designs finish (done of total);
	// calls come from one goroutine at a time.
	Progress func(done, total int)
	// Scoring, when not nil, is called as the estimate tier walks the
	// candidates: every 4096 candidates and at the end of each walk, with
	// the candidates walked (or skipped whole under a CIC that cannot
	// serve) of total, which counts both walks of a pass (each candidate
	// twice). A search that runs again (see Design tier) starts again
	// from zero. Calls come from the calling goroutine.
	Scoring func(done, total int64)

	Chain chain.Settings // how stages are designed (Plan adds a chain.StageMemo when Memo is nil)
	Cost  cost.Settings  // how chains are priced
	// Fixed is how a chain's word lengths are planned and its taps rounded
	// (fixed.PlanChain) when the spec fixes the coefficient width
	// (chain.Spec.CoefBits > 0): the search then keeps only chains whose
	// rounded taps meet the spec, so it should be the settings the report
	// plans the word lengths with. Its zero value is package fixed's
	// default. Unused when CoefBits is 0.
	Fixed fixed.Settings

	// Tolerance is the width of the band of near-front estimates that is
	// designed for real, as a fraction: a candidate is designed unless some
	// estimated front point beats it by more than this on every axis. Zero
	// means 0.15.
	Tolerance float64
	// MaxDesigns caps the number of chains designed for real near the
	// front. Zero means 600 (a design takes 5 ms to 5 s); a budget of
	// design work also applies (see the package doc). Result.Unsettled says
	// whether they cut the search short. The front's CIC siblings, designed
	// last, come beyond both (package doc, CIC siblings).
	MaxDesigns int
	// MaxWork is the budget of design work, in the units of the package
	// doc (estimated taps squared). Zero means 4e7.
	MaxWork float64
	// MaxTaps is the longest FIR or half-band stage, by its estimate, that
	// the search designs; longer ones are dropped. Zero means automatic:
	// the search runs with a limit of 511 taps (longer designs take a
	// second or more each) and, when that leaves no chain on the front
	// because the limit dropped some, runs again with the limit raised to
	// 1023, 2047, ... taps (skipping steps that keep no more candidates),
	// up to 16383, the longest the design engine is tested at. The designs
	// of every run count against MaxDesigns and MaxWork. Result.MaxTaps is
	// the limit the search ended with. A positive MaxTaps is used as given.
	MaxTaps int
	// Exhaustive designs every feasible candidate instead of the band (slow;
	// it exists to check the two-tier search). MaxDesigns does not apply.
	Exhaustive bool

	// floatOnly turns off everything the search does for a fixed
	// coefficient width (the measurement on rounded taps and the
	// re-designs for it): the search of floating-point
	// designs only, which the package's tests compare against.
	floatOnly bool
	// noSiblings skips the design of the front's CIC siblings (see the
	// package doc, CIC siblings): the fractional search's integer
	// sub-searches, whose fronts only seed its plans, set it.
	noSiblings bool
}

// Rule is a recommendation rule.
type Rule int

const (
	// Knee picks the chain at the knee of the front.
	Knee Rule = iota
	// WeightedCost picks the least weighted cost.
	WeightedCost
)

// Candidate is one evaluated chain.
type Candidate struct {
	Plan  []chain.StagePlan
	Chain *chain.Chain // nil for the estimated cloud in Result.Feasible
	// Figures.Designed says whether it came from a real design
	Figures cost.Figures
	// MarginDB is the alias-rejection margin over the target, dB: of the
	// taps rounded to the spec's coefficient width when it is fixed
	// (Quantised), of the floating-point design otherwise.
	MarginDB float64
	// Quantised is the chain measured with its taps rounded to the spec's
	// coefficient width (fixed.PlanChain with Settings.Fixed); zero when the
	// width is not fixed (CoefBits 0) or wider than fixed.MaxBits, and in
	// Result.Feasible.
	Quantised chain.Analysis

	// raised is how far the rejection target was raised for the chain's
	// design, dB, and cut how far the ripple was tightened (see
	// realDesigner.analyze); redesigns counts the re-designs for rounding.
	raised, cut float64
	redesigns   int
	// first is, for a chain that met only after re-designs for rounding,
	// its figures as first designed (the float design's); zero otherwise.
	first cost.Figures
	// evaluated: Figures.Analysis is measured (cost.Evaluate); survived:
	// Quantised is measured and meets the spec (realDesigner.survive).
	evaluated, survived bool
	// acc is, for a chain dropped under ReasonWordLengths for an
	// accumulator wider than fixed.MaxAccumulatorBits, the plan's error
	// (Result.AccumulatorExcess); nil otherwise.
	acc *fixed.AccumulatorError
	// blame marks, in a chain dropped for missing with rounded taps, the
	// stages whose rounded taps miss their own bands, and hopeless those
	// whose rounding error alone exceeds their stopband limit.
	blame, hopeless []bool
}

// Result is the outcome of a search.
type Result struct {
	Candidates int // enumerated
	// Feasible is the cloud of feasible candidates with estimated figures
	// (multiplies, memory and latency as cost.Price gives them for
	// chain.Estimate's lengths; no adders, no analysis beyond the CIC's
	// exact rejection), thinned deterministically to at most CloudSize (see
	// the package doc).
	Feasible    []Candidate
	FeasibleAll int            // how many were feasible before thinning
	Designed    int            // how many were designed for real (a representative designed in part, then whole, counts once; see the package doc)
	Dropped     map[Reason]int // how many candidates each reason dropped
	Front       []Candidate    // the final non-dominated set, all designed, sorted by multiplies
	Recommended int            // index into Front; -1 when Front is empty
	Reason      string         // one or two sentences on why
	Partial     bool           // stopped early by ctx; Front is the best so far
	// Unsettled counts the candidates near the front that the design cap
	// left undecided; zero means the front is that of every candidate.
	Unsettled int
	// MaxTaps is the tap limit of the search that gave Front (see
	// Settings.MaxTaps).
	MaxTaps int
	// NeededCoefBits is set when Front is empty because the chains that
	// met the spec in floating point all missed it with their taps rounded
	// to the spec's coefficient width: the least width, up to 32 bits, at
	// which one of the cheapest of them meets (Reason names it). Zero
	// otherwise, or when none meets up to 32 bits.
	NeededCoefBits int
	// Closest is, when Front is empty and designed chains missed the
	// rejection or the ripple in floating point (ReasonMissRejection,
	// ReasonMissRipple), the one that came closest, as last designed
	// (after any re-design) and measured: its Figures.Analysis says by how
	// much it missed (Shortfall). Nil otherwise.
	Closest *Candidate
	// AccumulatorExcess is, for the chains dropped under
	// ReasonWordLengths because a FIR or half-band accumulator would pass
	// fixed.MaxAccumulatorBits (63), how many bits the closest must lose
	// from which word.
	AccumulatorExcess AccumulatorExcess
}

// AccumulatorExcess says, over the chains dropped because an accumulator
// would pass fixed.MaxAccumulatorBits, what would fit the closest, as
// planned with its taps as designed (zero: no chain was dropped so, or
// none would fit that way). Each bit off the coefficient word takes one
// off every FIR and half-band accumulator, each bit off a stage's data
// word one off its own: Coefficients is the fewest coefficient bits that
// must go for a chain to fit; InputBits the widest input word
// (chain.Spec.InputBits) at which a chain whose first stage alone passes
// would fit; OutputBits the widest word between stages (chain.Spec.
// OutputBits sets it; a CIC's output may be narrower) at which a chain
// whose later stages alone pass would fit.
type AccumulatorExcess struct {
	Coefficients, InputBits, OutputBits int
}

// Least is Coefficients: the fewest bits, and it helps every chain.
func (a AccumulatorExcess) Least() int { return a.Coefficients }

// Add counts the accumulator error of a chain: the fewest coefficient bits
// over the errors added, and the widest input and between-stage words that
// fit.
func (a *AccumulatorExcess) Add(e *fixed.AccumulatorError) {
	if x := e.Excess(); x > 0 && (a.Coefficients == 0 || x < a.Coefficients) {
		a.Coefficients = x
	}
	if e.LaterExcess == 0 && e.InputFits > 0 {
		a.InputBits = max(a.InputBits, e.InputFits)
	}
	if e.FirstExcess == 0 && e.BetweenFits > 0 {
		a.OutputBits = max(a.OutputBits, e.BetweenFits)
	}
}

// CloudSize is the most candidates Result.Feasible holds.
const CloudSize = 4000
