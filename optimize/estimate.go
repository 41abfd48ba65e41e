package optimize

import (
	"context"
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/cost"
)

// Reason is why a candidate was dropped. Its value is a stable name, the
// key report.json writes under search.dropped (lower case, words joined by
// underscores; it does not change when the wording does); Text says it in
// words.
type Reason string

// Reasons a candidate is dropped: the keys of Result.Dropped.
const (
	ReasonCICRejection   Reason = "cic_rejection_below_target"
	ReasonCICDroop       Reason = "cic_droop_not_compensated"
	ReasonHalfBandEdges  Reason = "halfband_edges_do_not_fit"
	ReasonShortFIR       Reason = "fir_under_3_taps"
	ReasonDesignFailed   Reason = "design_failed"
	ReasonEvaluateFailed Reason = "evaluation_failed"
	ReasonMissRejection  Reason = "misses_rejection"
	ReasonMissRipple     Reason = "misses_ripple"
	ReasonCICNull        Reason = "cic_null_in_passband"
	ReasonGaveUp         Reason = "stage_failed_in_other_chains"
	ReasonCICBeaten      Reason = "cic_beaten_by_another_order_or_delay"
	ReasonLongFIR        Reason = "fir_over_tap_limit"
	// ReasonMissQuantised: a designed chain that meets the spec in floating
	// point but not with its taps rounded to the coefficient width, even
	// after the re-designs that give its stages the margin rounding needs.
	ReasonMissQuantised Reason = "misses_with_rounded_taps"
	// ReasonWordLengths: fixed.PlanChain could not plan the chain's word
	// lengths, so its rounded taps could not be measured.
	ReasonWordLengths Reason = "word_lengths_not_planned"
	// Chains beyond Settings.Limits.
	ReasonOverRegisterBits Reason = "cic_register_over_limit"
	ReasonOverCICFactor    Reason = "cic_factor_over_limit"
	ReasonOverMultipliers  Reason = "multipliers_over_limit"
	ReasonOverMemory       Reason = "memory_over_limit"
	// ReasonOverAccumulatorBits: a FIR or half-band stage's accumulator
	// (fixed.StageWidths.AccumulatorBits, the exact sum of products of its
	// rounded taps) is wider than Limits.MaxRegisterBits. It is judged
	// where the search plans a chain's rounded taps (a fixed coefficient
	// width), so it counts designed chains only.
	ReasonOverAccumulatorBits Reason = "fir_accumulator_over_limit"
	// ReasonOverNativeMultipliers: with a native multiplier size
	// (fixed.Settings.NativeA x NativeB) and a clock, the chain's native
	// multiplier blocks at the clock (fixed.Widths.HardwareMultipliers,
	// from its word lengths) exceed Limits.MaxMultipliers. Judged where
	// ReasonOverAccumulatorBits is.
	ReasonOverNativeMultipliers Reason = "native_multipliers_over_limit"
	// ReasonNoFractionalSplit counts the rates Fm of a fractional ratio
	// where no fractional stage fits (a polyphase stage needs at most 256
	// phases, a Farrow stage at most 1024 and a lowpass FIR before it at
	// more than twice the band it keeps).
	ReasonNoFractionalSplit Reason = "no_fractional_stage_fits"
	// ReasonFractionalNotBuilt counts the fractional plans that cannot be
	// built as they stand (chain.Estimate refuses them: a polyphase
	// prototype past its tap limit, say); Result.Reason gives the first
	// one's rule when nothing else is left.
	ReasonFractionalNotBuilt Reason = "fractional_plan_cannot_be_built"
)

// reasonText is each Reason in words.
var reasonText = map[Reason]string{
	ReasonCICRejection:          "cic rejection below target",
	ReasonCICDroop:              "cic droop not compensated",
	ReasonHalfBandEdges:         "halfband edges do not fit",
	ReasonShortFIR:              "fir stage under 3 taps",
	ReasonDesignFailed:          "design failed",
	ReasonEvaluateFailed:        "evaluation failed",
	ReasonMissRejection:         "designed chain misses rejection",
	ReasonMissRipple:            "designed chain misses ripple",
	ReasonCICNull:               "cic null in passband",
	ReasonGaveUp:                "a stage failed to design in other chains",
	ReasonCICBeaten:             "cic beaten by another order or delay",
	ReasonLongFIR:               "fir stage over the tap limit",
	ReasonMissQuantised:         "misses the targets with its taps rounded to the coefficient width",
	ReasonWordLengths:           "word lengths could not be planned",
	ReasonOverRegisterBits:      "a cic register wider than hardware.max_register_bits",
	ReasonOverCICFactor:         "a cic factor above hardware.max_cic_factor",
	ReasonOverMultipliers:       "more multipliers at the clock than hardware.max_multipliers",
	ReasonOverMemory:            "more memory than hardware.max_memory_bits",
	ReasonOverAccumulatorBits:   "a fir or half-band accumulator wider than hardware.max_register_bits",
	ReasonOverNativeMultipliers: "more native multiplier blocks (hardware.multiplier) at the clock than hardware.max_multipliers",
	ReasonFractionalNotBuilt:    "fractional plans that cannot be built",
	ReasonNoFractionalSplit:     "rates tried for the fractional stage where no polyphase or farrow stage fits (a polyphase stage has at most 256 phases, a farrow stage at most 1024 and comes after a lowpass FIR, at more than twice the kept band; a ratio whose denominator is larger needs ratio_tolerance_ppm)",
}

// Text is r in words ("cic rejection below target"); a name it does not
// know is returned as it is.
func (r Reason) Text() string {
	if t, ok := reasonText[r]; ok {
		return t
	}
	return string(r)
}

// DroppedText says the counts d in words, in the order of the reasons'
// names, joined by sep: "cic rejection below target: 12, design failed: 1"
// with sep ", "; "no candidates" when d is empty.
func DroppedText(d map[Reason]int, sep string) string {
	if len(d) == 0 {
		return "no candidates"
	}
	keys := make([]Reason, 0, len(d))
	for k := range d {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = fmt.Sprintf("%s: %d", k.Text(), d[k])
	}
	return strings.Join(parts, sep)
}

// Reasons lists every Reason, in a fixed order.
func Reasons() []Reason {
	return []Reason{ReasonCICRejection, ReasonCICDroop, ReasonHalfBandEdges, ReasonShortFIR, ReasonDesignFailed,
		ReasonEvaluateFailed, ReasonMissRejection, ReasonMissRipple, ReasonCICNull, ReasonGaveUp, ReasonCICBeaten,
		ReasonLongFIR, ReasonMissQuantised, ReasonWordLengths,
		ReasonOverRegisterBits, ReasonOverCICFactor, ReasonOverMultipliers, ReasonOverMemory, ReasonOverAccumulatorBits,
		ReasonOverNativeMultipliers, ReasonNoFractionalSplit, ReasonFractionalNotBuilt}
}

type dropCode uint8

const (
	dropNone dropCode = iota
	dropCICRejection
	dropCICDroop
	dropHalfBandEdges
	dropShortFIR
	dropLongFIR
	dropCICNull
	dropCICBeaten
	dropRegisterBits
	dropCICFactor
	dropMultipliers
	dropMemory
)

// defaultMaxTaps is the automatic tap limit's first step. A stage estimated
// longer is dropped before design: a design of a thousand taps or more
// takes a second or more, and such a stage reaches the front only at its
// low-latency end, or when nothing shorter meets the spec (see search).
const defaultMaxTaps = 511

var dropNames = [...]Reason{
	dropCICRejection:  ReasonCICRejection,
	dropCICDroop:      ReasonCICDroop,
	dropHalfBandEdges: ReasonHalfBandEdges,
	dropShortFIR:      ReasonShortFIR,
	dropLongFIR:       ReasonLongFIR,
	dropCICNull:       ReasonCICNull,
	dropCICBeaten:     ReasonCICBeaten,
	dropRegisterBits:  ReasonOverRegisterBits,
	dropCICFactor:     ReasonOverCICFactor,
	dropMultipliers:   ReasonOverMultipliers,
	dropMemory:        ReasonOverMemory,
}

// figs is a candidate's or a stage's position on the three axes of the
// front, plus the tie-breaking rejection margin.
type figs struct {
	// mpo is the cost axis: multiplies per output, or the hardware adders
	// when the chains are priced multiplierless (params.adders).
	mpo, bits, lat float64 // cost axis, memory bits, latency s
	words          float64
	margin         float64 // dB over the rejection target; larger is better
}

// params is the normalised spec and the cost settings the estimator needs.
type params struct {
	f0, fk, fp, fa, fs float64
	dp, ds             float64
	rippleDB, rejDB    float64
	inBits, dataBits   int
	coefBits           int
	// fixedBits is the spec's coefficient width, zero for floating point
	// (coefBits is the width priced, 18 bits then).
	fixedBits      int
	complex, noSym bool
	d              int
	// clock is the fabric clock in Hz (cost.Settings.Clock), 0 for none: a
	// first-stage CIC whose input runs above it is priced lanes wide.
	clock float64
	// lim are the fabric's limits (Settings.Limits).
	lim Limits
	// adders: the chains are priced multiplierless
	// (cost.Settings.Multiplierless) and the cost axis is their adders.
	adders bool
	// interp: the spec interpolates; plans are its DecimationView's (the
	// high rate first), and the words flow the other way: the channel-side
	// stage takes the input word, a CIC the words between stages.
	interp bool
	// mask is the spec's rejection mask (nil for a flat target): a CIC's
	// alias at g is held to mask(g), as chain.Analyze holds it.
	mask *chain.Mask
	// ctx stops the estimate's long loops (a CIC's alias bands: up to
	// R/2 of them); nil never stops.
	ctx context.Context
}

// newParams reads a spec whose defaults are filled in.
func newParams(spec chain.Spec, noSym bool) params {
	p := params{
		f0: spec.InputRate, fk: spec.OutputRate,
		fp: spec.Passband, fa: spec.Protected, fs: spec.Stopband,
		rippleDB: spec.RippleDB, rejDB: spec.RejectionDB,
		inBits: spec.InputBits, dataBits: spec.OutputBits, coefBits: spec.CoefBits,
		fixedBits: spec.CoefBits, complex: spec.Complex, noSym: noSym,
		interp: spec.Direction() == chain.Interpolate,
		mask:   spec.RejectionMask,
	}
	if p.fa == 0 {
		p.fa = p.fp
	}
	if p.fs == 0 {
		p.fs = p.fk - p.fa
	}
	if p.inBits == 0 {
		p.inBits = 16
	}
	if p.dataBits == 0 {
		p.dataBits = 24
	}
	if p.coefBits == 0 {
		p.coefBits = defaultCoefBits
	}
	g := math.Pow(10, p.rippleDB/20)
	p.dp = (g - 1) / (g + 1)
	p.ds = math.Pow(10, -p.rejDB/20)
	p.d = int(math.Round(p.f0 / p.fk))
	return p
}

// defaultCoefBits prices floating-point coefficients in the estimate tier
// (common practice: an 18-bit multiplier port).
const defaultCoefBits = 18

// stageKey is everything a stage's estimate depends on: where it sits in
// the rate ladder (prefix product before it, its factor; whether it is last
// follows from these), what it is, and its share of the ripple budget (dB,
// as float64 bits).
type stageKey struct {
	prefix, factor int32
	kind, variant  int8
	n, m           int8
	inBits         int8 // data width from a CIC feeding it, else 0
	nRipple        int8 // half-band and FIR stages in the chain: sets the stopband scale
	share          uint64
}

// realKey adds what a stage's real design depends on beyond its estimate:
// the factor of the CIC whose droop it corrects (always the first stage).
// The CIC's order and delay are left out on purpose: they move a
// compensator's length by a tap or two, and keying on them would multiply
// the designs needed to learn the band (see the package doc).
type realKey struct {
	stageKey
	comp bool
	cicR int32 // the compensated CIC's factor, else 0
}

// stageVal is a stage's estimate, and its figures at the ends of the range
// its real length is assumed to lie in (see the package doc).
type stageVal struct {
	f, lo, hi figs
	drop      dropCode
	work      float64 // design work, taps squared
	// taps is a FIR or half-band stage's estimated length, which the tap
	// limit is applied to in score (so the cache does not depend on it).
	taps float64
}

// estimator scores candidates from order estimates. It caches each stage's
// figures, so scoring a candidate is a few map look-ups and additions and
// allocates nothing once its stages have been seen. An estimator is not
// safe for concurrent use.
type estimator struct {
	p       params
	tol     float64 // relative error allowed each estimated stage
	maxTaps int     // longest stage estimate kept
	cache   map[stageKey]stageVal
	keys    []realKey
	// beaten and margins cache cicBeaten and cicMargin by factor, order
	// and delay.
	beaten  map[[3]int]bool
	margins map[[3]int]float64
	// cics caches cicStage by factor, order and delay; lastCIC and lastCS
	// are the last one asked for (the walk keeps a plan's first stage while
	// it varies the rest).
	cics    map[[3]int]chain.CICStage
	lastCIC [3]int
	lastCS  chain.CICStage
	// orders and delays are the CIC parameters searched.
	orders, delays []int
	// keepBeaten turns cicBeaten off (for the exhaustive check).
	keepBeaten bool
	// beaters lists, for each beaten CIC, the order and delay of the CICs
	// that beat it.
	beaters map[[3]int][][2]int
	// reinstated holds the plan keys of the chains that beaten-CIC pruning
	// no longer drops, and reinstatedCIC their CICs (see reinstate).
	reinstated    map[string]bool
	reinstatedCIC map[[3]int]bool
	key           []byte // planKey scratch
	// frozen marks a view (see view): its caches are shared and not
	// written.
	frozen bool
}

func newEstimator(p params, tol float64) *estimator {
	if tol == 0 {
		tol = defaultTolerance
	}
	return &estimator{p: p, tol: tol, maxTaps: defaultMaxTaps, cache: make(map[stageKey]stageVal), beaten: map[[3]int]bool{}, beaters: map[[3]int][][2]int{}, reinstated: map[string]bool{}, reinstatedCIC: map[[3]int]bool{}, margins: map[[3]int]float64{}, cics: map[[3]int]chain.CICStage{},
		orders: DefaultCICOrders(), delays: DefaultCICDelays()}
}

// stageVal returns the figures of stage k, from the cache or computed and
// cached (not cached by a view, see view).
func (e *estimator) stageVal(k stageKey) stageVal {
	v, ok := e.cache[k]
	if !ok {
		v = e.stage(k)
		if !e.frozen {
			e.cache[k] = v
		}
	}
	return v
}

// fork returns an estimator for another goroutine: the same settings and
// taken-back chains (read, not written, while a fork is in use), copies
// of e's CIC caches and a stage cache of its own. Its figures are those
// of e.
func (e *estimator) fork() *estimator {
	f := newEstimator(e.p, e.tol)
	f.maxTaps, f.orders, f.delays = e.maxTaps, e.orders, e.delays
	f.keepBeaten = e.keepBeaten
	f.reinstated, f.reinstatedCIC = e.reinstated, e.reinstatedCIC
	f.beaten, f.margins, f.cics = maps.Clone(e.beaten), maps.Clone(e.margins), maps.Clone(e.cics)
	f.beaters = maps.Clone(e.beaters)
	return f
}

// absorb adds to e's caches what its fork f computed that e has not.
// Every cached figure depends on its key alone, so which fork computed
// it does not matter.
func (e *estimator) absorb(f *estimator) {
	absorbMap(e.cache, f.cache)
	absorbMap(e.cics, f.cics)
	absorbMap(e.margins, f.margins)
	absorbMap(e.beaten, f.beaten)
	absorbMap(e.beaters, f.beaters)
}

func absorbMap[K comparable, V any](dst, src map[K]V) {
	for k, v := range src {
		if _, ok := dst[k]; !ok {
			dst[k] = v
		}
	}
}

// view returns an estimator for another goroutine that reads e's caches
// and writes none of them (a figure missing from them is computed and not
// kept), while e is not written either: for a walk after one whose forks
// e absorbed.
func (e *estimator) view() *estimator {
	f := *e
	f.keys, f.key, f.lastCIC, f.lastCS = nil, nil, [3]int{}, chain.CICStage{}
	f.frozen = true
	return &f
}

// keysOf writes the stages' keys into e.keys following chain's rules: the
// ripple budget less any CIC droop that no FIR stage corrects is split
// equally in dB over the half-band and FIR stages; the compensator is the
// last FIR stage after the CIC. It reports a drop when the CIC's droop
// cannot be afforded or its first null falls in the passband.
func (e *estimator) keysOf(plan []chain.StagePlan) dropCode {
	p := &e.p
	e.keys = e.keys[:0]
	nRipple := 0
	for _, st := range plan {
		if st.Kind != chain.CIC {
			nRipple++
		}
	}
	comp := chain.Compensator(plan)
	uncorrected := 0.0
	var cic chain.StagePlan
	if plan[0].Kind == chain.CIC {
		cic = plan[0]
		if p.fp*float64(cic.Factor*cic.CICDelay) >= p.f0 {
			return dropCICNull
		}
		if comp < 0 {
			uncorrected = -20 * math.Log10(cicGain(p.fp, p.f0, cic.Factor, cic.CICOrder, cic.CICDelay))
		}
	}
	share, ok := chain.RippleShare(p.rippleDB, uncorrected, nRipple)
	if !ok {
		return dropCICDroop
	}
	prefix := 1
	for i, st := range plan {
		k := realKey{stageKey: stageKey{
			prefix: int32(prefix), factor: int32(st.Factor),
			kind: int8(st.Kind), variant: int8(st.Variant),
			n: int8(st.CICOrder), m: int8(st.CICDelay),
		}}
		if st.Kind == chain.CIC {
			k.variant = int8(st.CICForm) // a CIC has no variant: its form
		}
		if st.Kind != chain.CIC {
			k.share = math.Float64bits(share)
			k.nRipple = int8(nRipple)
			k.comp = i == comp
			if i == 1 && cic.Kind == chain.CIC && !e.p.interp {
				k.inBits = int8(e.cicStage(cic.Factor, cic.CICOrder, cic.CICDelay).OutputBits)
			}
			if k.comp {
				k.cicR = int32(cic.Factor)
			}
		}
		e.keys = append(e.keys, k)
		prefix *= st.Factor
	}
	return dropNone
}

// score returns the candidate's estimated figures, or the reason to drop it.
// It leaves the stages' real keys in e.keys.
func (e *estimator) score(plan []chain.StagePlan) (figs, dropCode) {
	if d := e.keysOf(plan); d != dropNone {
		return figs{}, d
	}
	var total, lo figs
	var mults float64 // a lower bound of the multipliers at the clock
	total.margin = math.Inf(1)
	for i := range e.keys {
		k := e.keys[i].stageKey
		v := e.stageVal(k)
		if v.drop != dropNone {
			return figs{}, v.drop
		}
		if v.taps > float64(e.maxTaps) {
			return figs{}, dropLongFIR
		}
		total.mpo += v.f.mpo
		total.bits += v.f.bits
		total.words += v.f.words
		total.lat += v.f.lat
		total.margin = math.Min(total.margin, v.f.margin)
		lo.bits += v.lo.bits
		if e.p.clock > 0 && v.lo.mpo > 0 && !e.p.adders {
			// Each stage has its own multipliers: at least its multiplies
			// per second (per final output, times FK) over the clock.
			mults += float64(chain.PerCycle(v.lo.mpo*e.p.fk, e.p.clock))
		}
	}
	// The limits on a whole chain, at the favourable end of its range, so
	// that only chains that cannot fit are dropped here: memory, and a
	// lower bound of the multipliers at the clock.
	if l := e.p.lim.MaxMemoryBits; l > 0 && lo.bits > float64(l) {
		return figs{}, dropMemory
	}
	if l := e.p.lim.MaxMultipliers; l > 0 && mults > float64(l) {
		return figs{}, dropMultipliers
	}
	if st := plan[0]; st.Kind == chain.CIC && st.CICForm == chain.Recursive && !e.keepBeaten && e.cicBeaten(st.Factor, st.CICOrder, st.CICDelay) && !e.isReinstated(plan) {
		return figs{}, dropCICBeaten
	}
	return total, dropNone
}

func (e *estimator) stage(k stageKey) stageVal {
	p := &e.p
	prefix, f := int(k.prefix), int(k.factor)
	rate := p.f0 / float64(prefix)
	out := rate / float64(f)
	last := prefix*f == p.d
	later := float64(p.d / (prefix * f))
	dpi := chain.RippleToDev(math.Float64frombits(k.share))
	// The absolute stopband limit each stage is designed to, as chain sets
	// it, so that the cascade's rejection relative to |H(0)| meets the target.
	ds := p.ds * chain.StopbandScale(dpi, int(k.nRipple), true)
	stop := chain.StopEdge(out, p.fa, p.fs, last)
	cplx := 1.0
	if p.complex {
		cplx = 2
	}
	// The data width a stage stores: the input's for the first stage, the
	// output word after that (a CIC delivers at most the output width; the
	// learnt real figures see its exact width).
	width := float64(p.dataBits)
	if prefix == 1 && !p.interp || last && p.interp {
		width = float64(p.inBits)
	}
	if k.inBits != 0 {
		width = float64(k.inBits)
	}
	var v stageVal
	switch chain.Kind(k.kind) {
	case chain.CIC:
		n, m := int(k.n), int(k.m)
		if chain.CICForm(k.variant) == chain.Recursive {
			if d := e.cicOverLimit(f, n, m); d != dropNone {
				v.drop = d
				return v
			}
		} else if l := p.lim.MaxCICFactor; l > 0 && f > l {
			v.drop = dropCICFactor
			return v
		}
		v.f.margin = e.cicMargin(f, n, m)
		if v.f.margin < 0 {
			v.drop = dropCICRejection
			return v
		}
		v.f.lat = float64(n) * float64(f*m-1) / 2 / rate
		v.work = float64(n * f * m)
		if chain.CICForm(k.variant) == chain.NonRecursive {
			// Priced as cost.Price does: its sub-stages' delay lines and
			// adders at the clock.
			cs, err := chain.NewCICStageForm(chain.NonRecursive, n, m, f, p.inBits, p.dataBits)
			if err != nil {
				v.drop = dropCICRejection // unreachable: the walk tries eligible CICs only
				return v
			}
			if l := p.lim.MaxRegisterBits; l > 0 && cs.Width() > l {
				v.drop = dropRegisterBits
				return v
			}
			_, words, bits, adders := cost.NonRecursiveFigures(cs, p.inBits, p.f0, p.clock)
			v.f.words, v.f.bits = float64(words)*cplx, float64(bits)*cplx
			if p.adders {
				v.f.mpo = float64(adders) * cplx
			}
			v.lo, v.hi = v.f, v.f
			return v
		}
		// Priced as cost.Price does, with chain.PruneCIC's registers.
		lanes := cost.Lanes(e.p.f0, e.p.clock)
		v.f.words = float64(n*lanes+n*m) * cplx
		v.f.bits = float64(cost.CICMemoryBits(e.cicStage(f, n, m), p.inBits, lanes)) * cplx
		v.f.lat = float64(n) * float64(f*m-1) / 2 / rate
		if p.adders {
			v.f.mpo = float64(cost.CICAdders(n, lanes)) * cplx
		}
		// Pruning its registers and measuring its alias bands both grow
		// with N R M.
		v.work = float64(n * f * m)
	case chain.HalfBand:
		edge := chain.HalfBandEdge(p.fp, p.fa, p.fs, p.fk, last)
		hbStop := rate/2 - edge
		if f != 2 || edge >= out/2 {
			v.drop = dropHalfBandEdges
			return v
		}
		dev := math.Min(dpi, ds)
		l := math.Ceil(herrmann(dev, dev, (hbStop-edge)/rate))
		kk := math.Max(1, math.Ceil((l+1)/4))
		v.taps = 4*kk - 1
		hb := func(kk float64) figs { return e.priceFIR(int(4*kk-1), true, later, int(cplx), int(width), rate) }
		v.f = hb(kk)
		v.work = (4*kk - 1) * (4*kk - 1) / 4
		kLo := math.Max(1, math.Floor(kk/(1+2*e.tol))-1)
		v.lo = hb(kLo)
		v.lo.mpo = e.favourable(v.lo.mpo)
		v.hi = hb(math.Ceil(kk*(1+e.tol)) + 1)
		return v
	case chain.FIR:
		l := math.Ceil(herrmann(dpi, ds, (stop-p.fp)/rate))
		if l < 3 {
			v.drop = dropShortFIR
			return v
		}
		v.taps = l
		fir := func(l float64) figs { return e.priceFIR(int(l), false, later, int(cplx), int(width), rate) }
		v.f = fir(l)
		v.work = l * l
		lLo := math.Max(3, math.Floor(l/(1+2*e.tol))-2)
		v.lo = fir(lLo)
		v.lo.mpo = e.favourable(v.lo.mpo)
		v.hi = fir(math.Ceil(l*(1+e.tol)) + 2)
		return v
	}
	v.lo, v.hi = v.f, v.f
	return v
}

// priceFIR is cost.FIRStage's figures for n taps, as the estimate tier
// keeps them: the cost axis is its multiplies per output, or with
// params.adders its hardware adders (cost.EstimateAdders over its lanes).
func (e *estimator) priceFIR(n int, halfBand bool, later float64, cx, width int, rate float64) figs {
	s := cost.Settings{NoSymmetry: e.p.noSym, Multiplierless: e.p.adders, Clock: e.p.clock}
	sf := cost.FIRStage(n, halfBand, s, later, cx, width, e.p.coefBits, rate)
	f := figs{mpo: sf.MultipliesPerOutput, words: float64(sf.MemoryWords), bits: float64(sf.MemoryBits), lat: sf.LatencyS}
	if e.p.adders {
		f.mpo = float64(sf.Adders)
	}
	return f
}

// favourable is the favourable end of an estimated FIR or half-band
// stage's cost axis, given its figure at the short end of its length
// range: the same with multiplies (their count follows the length
// exactly), half of it with adders, whose graph can come out well below
// the estimate of one adder per distinct tap (taps rounded to zero or to a
// power of two cost none).
func (e *estimator) favourable(mpo float64) float64 {
	if e.p.adders {
		return mpo / 2
	}
	return mpo
}

// roundingFloor is q sqrt(n/12), the RMS error of a response whose n taps,
// the largest maxTap, are rounded to bits-bit words: the rounding error of
// each tap is uniform in +-q/2, q = 2^-Frac (Frac as fixed.Quantize picks it
// for the largest tap), common practice. It is an expectation, not a bound:
// a short stage's rounding, which the word-length plan searches, can come
// out far below it, so it only marks a designed chain at risk (atRisk),
// never drops a candidate.
func roundingFloor(n, maxTap float64, bits int) float64 {
	frac := fixed.Quantize([]float64{maxTap}, bits).Frac
	return math.Ldexp(math.Sqrt(n/12), -frac)
}

// herrmann is the Herrmann-Rabiner-Chan (1973) length N = D/df - f df + 1
// (remez.HerrmannD and HerrmannF), unrounded, for a transition df as a
// fraction of the rate, and at least 1.
func herrmann(dp, ds, df float64) float64 {
	n := remez.HerrmannD(dp, ds)/df - remez.HerrmannF(dp, ds)*df + 1
	if n < 1 || math.IsNaN(n) {
		return 1
	}
	return n
}

// cicGain is the unit-DC-gain magnitude of a CIC decimating by r, order
// n, delay m at f Hz for input rate rate: chain.CICStage.Gain, the one
// formula.
func cicGain(f, rate float64, r, n, m int) float64 {
	return chain.CICStage{N: n, M: m, R: r}.Gain(f, rate)
}

// cicRejection is the CIC's rejection in dB over the bands that fold onto
// [0, fa] at its output (docs/design.md §4), read from its exact response: each
// band is sampled and the largest sample refined by golden-section search.
// Bands are visited upward and the walk stops once the response's envelope
// 1/(RM sin(pi f/F))^N falls below the worst gain found, since it only
// decreases. With a rejection mask, a first-stage CIC's alias at f is read
// against mask(f): the rejection is the mask's largest plus the worst
// margin, as chain.Analyze gives it (a CIC later in the chain is still
// read against the flat largest rejection, which is safe).
func cicRejection(p *params, rate float64, r, n, m int, last bool) float64 {
	out := rate / float64(r)
	worst := 0.0
	for k := 1; k <= r/2; k++ {
		if k&255 == 0 && p.ctx != nil && p.ctx.Err() != nil {
			return math.NaN() // stopped: no figure (cicMargin keeps none)
		}
		lo := float64(k)*out - p.fa
		if k == 1 {
			lo = chain.StopEdge(out, p.fa, p.fs, last)
		}
		hi := math.Min(float64(k)*out+p.fa, rate/2)
		if lo >= hi {
			continue
		}
		env := math.Pow(1/(float64(r*m)*math.Sin(math.Pi*lo/rate)), float64(n))
		if env <= worst {
			break
		}
		gain := func(f float64) float64 { return cicGain(f, rate, r, n, m) }
		if p.mask != nil && rate == p.f0 {
			// Weighted as chain.Analyze weighs a mask: the gain times
			// 10^((mask(f) - R)/20), R the mask's largest rejection, at
			// most 1, so the envelope test above still holds.
			gain = func(f float64) float64 {
				return cicGain(f, rate, r, n, m) * math.Pow(10, (p.mask.At(f)-p.rejDB)/20)
			}
		}
		worst = math.Max(worst, bandMax(gain, lo, hi))
	}
	if worst <= 0 {
		return 400
	}
	return math.Min(-20*math.Log10(worst), 400)
}

// bandMax returns the maximum of g over [lo, hi] from a grid of 64 steps and
// a golden-section refinement around the best grid point.
func bandMax(g func(float64) float64, lo, hi float64) float64 {
	const steps = 64
	h := (hi - lo) / steps
	best, bi := -1.0, 0
	for i := 0; i <= steps; i++ {
		if v := g(lo + float64(i)*h); v > best {
			best, bi = v, i
		}
	}
	a := math.Max(lo, lo+float64(bi-1)*h)
	b := math.Min(hi, lo+float64(bi+1)*h)
	_, v := remez.GoldenMax(g, a, b, 40, 0)
	return math.Max(best, v)
}

// cicStage returns chain.NewCICStage for a first-stage CIC of factor r,
// order n and delay m on the spec's words (input inBits, output dataBits,
// as chain.Design builds it), cached: its registers are chain.PruneCIC's,
// the widths the report, package cost and package fixed use.
func (e *estimator) cicStage(r, n, m int) chain.CICStage {
	key := [3]int{r, n, m}
	if key == e.lastCIC {
		return e.lastCS
	}
	cs, ok := e.cics[key]
	if !ok {
		cs = chain.NewCICStage(n, m, r, e.p.inBits, e.p.dataBits)
		if e.p.interp {
			// As chain.Design builds it: the words between stages in,
			// or the input word when the CIC is the whole chain.
			in := e.p.dataBits
			if r == e.p.d {
				in = e.p.inBits
			}
			cs = chain.NewCICInterpolator(n, m, r, in, e.p.dataBits)
		}
		if !e.frozen {
			e.cics[key] = cs
		}
	}
	e.lastCIC, e.lastCS = key, cs
	return cs
}

// cicBeaten reports whether another searched CIC of the same factor meets
// the rejection with no more memory, latency, droop at fp or output width,
// and less of one. The rest of the chain being equal, such a CIC makes the
// whole chain at least as cheap: its figures are exact, and the compensator
// it needs is no longer, since it corrects no more droop (the one
// assumption here). The beaten CIC's chains are dropped unscored.
func (e *estimator) cicBeaten(r, n, m int) bool {
	key := [3]int{r, n, m}
	if b, ok := e.beaten[key]; ok {
		return b
	}
	if e.frozen {
		return e.fork().cicBeaten(r, n, m)
	}
	type cfg struct {
		n, m int
		x    [5]float64
	}
	last := r == e.p.d
	var ok []cfg
	for _, nn := range e.orders {
		for _, mm := range e.delays {
			e.beaten[[3]int{r, nn, mm}] = false
			if e.p.fp*float64(r*mm) >= e.p.f0 {
				continue
			}
			if e.cicMargin(r, nn, mm) < 0 || e.cicOverLimit(r, nn, mm) != dropNone {
				continue
			}
			// Memory and output width as chain.NewCICStage gives them (the
			// figures stage prices), cached per CIC.
			cs := e.cicStage(r, nn, mm)
			w := cs.OutputBits
			if last {
				w = cs.Width()
			}
			bits := float64(cost.CICMemoryBits(cs, e.p.inBits, cost.Lanes(e.p.f0, e.p.clock)))
			lat := float64(nn) * float64(r*mm-1) / 2 / e.p.f0
			droop := -math.Log(cicGain(e.p.fp, e.p.f0, r, nn, mm))
			// With the adders on the cost axis, a beater needs no more of
			// them either (zero for all otherwise).
			adders := 0.0
			if e.p.adders {
				adders = float64(cost.CICAdders(nn, cost.Lanes(e.p.f0, e.p.clock)))
			}
			ok = append(ok, cfg{nn, mm, [5]float64{bits, lat, droop, float64(w), adders}})
		}
	}
	for _, a := range ok {
		beaten := false
		for _, b := range ok {
			le, lt := true, false
			for j := range a.x {
				if b.x[j] > a.x[j] {
					le = false
				}
				if b.x[j] < a.x[j] {
					lt = true
				}
			}
			if le && lt {
				beaten = true
				e.beaters[[3]int{r, a.n, a.m}] = append(e.beaters[[3]int{r, a.n, a.m}], [2]int{b.n, b.m})
			}
		}
		e.beaten[[3]int{r, a.n, a.m}] = beaten
	}
	return e.beaten[key]
}

// reinstate takes back the chains the beaten-CIC rule pruned on the
// strength of failed: for each failed chain starting with a CIC, the same
// chain with each CIC that one beats. Pruning a beaten CIC assumes the
// chain with its beater and the same later stages stands; when that chain
// failed to design or missed the spec, the beaten CIC's may not. It reports
// whether any chain was taken back.
func (e *estimator) reinstate(failed [][]chain.StagePlan, front []Candidate) bool {
	if e.keepBeaten {
		return false
	}
	fs := make([]figs, len(front))
	for i := range front {
		fs[i] = candFigs(&front[i])
	}
	added := false
	for _, pl := range failed {
		b := pl[0]
		if b.Kind != chain.CIC {
			continue
		}
		for _, n := range e.orders {
			for _, m := range e.delays {
				if !e.cicBeaten(b.Factor, n, m) {
					continue
				}
				by := false
				for _, nm := range e.beaters[[3]int{b.Factor, n, m}] {
					by = by || nm == [2]int{b.CICOrder, b.CICDelay}
				}
				if !by {
					continue
				}
				x := clonePlan(pl)
				x[0].CICOrder, x[0].CICDelay = n, m
				if !e.mayJoin(x, fs) {
					continue
				}
				if k := planKey(x); !e.reinstated[k] {
					e.reinstated[k] = true
					e.reinstatedCIC[[3]int{b.Factor, n, m}] = true
					added = true
				}
			}
		}
	}
	return added
}

// mayJoin reports whether plan, feasible and at the favourable end of its
// range on every stage, is dominated by none of the designed chains fs
// (whose figures are real): only then can it be on the front.
func (e *estimator) mayJoin(plan []chain.StagePlan, fs []figs) bool {
	if e.keysOf(plan) != dropNone {
		return false
	}
	var lo figs
	for i := range e.keys {
		k := e.keys[i].stageKey
		v := e.stageVal(k)
		if v.drop != dropNone || v.taps > float64(e.maxTaps) {
			return false
		}
		lo.addAxes(v.lo, 1)
	}
	lo.margin = math.Inf(1)
	for i := range fs {
		if dominates(&fs[i], &lo) {
			return false
		}
	}
	return true
}

// isReinstated reports whether plan was taken back by reinstate, without
// allocating.
func (e *estimator) isReinstated(plan []chain.StagePlan) bool {
	if len(e.reinstated) == 0 {
		return false
	}
	e.key = appendPlanKey(e.key[:0], plan)
	return e.reinstated[string(e.key)]
}

// skipCIC returns the reason to drop every candidate that starts with the
// CIC st whatever follows it, or dropNone.
func (e *estimator) skipCIC(st chain.StagePlan) dropCode {
	if st.CICForm == chain.NonRecursive {
		// Its widest register is its full width Bin + N log2 R.
		if l := e.p.lim.MaxCICFactor; l > 0 && st.Factor > l {
			return dropCICFactor
		}
		if l := e.p.lim.MaxRegisterBits; l > 0 && chain.CICRegisterWidth(st.CICOrder, 1, st.Factor, e.p.inBits) > l {
			return dropRegisterBits
		}
	} else if d := e.cicOverLimit(st.Factor, st.CICOrder, st.CICDelay); d != dropNone {
		return d
	}
	if e.p.fp*float64(st.Factor*st.CICDelay) >= e.p.f0 {
		return dropCICNull
	}
	if e.cicMargin(st.Factor, st.CICOrder, st.CICDelay) < 0 {
		return dropCICRejection
	}
	if st.CICForm == chain.Recursive && !e.keepBeaten && e.cicBeaten(st.Factor, st.CICOrder, st.CICDelay) && !e.reinstatedCIC[[3]int{st.Factor, st.CICOrder, st.CICDelay}] {
		return dropCICBeaten
	}
	return dropNone
}

// cicOverLimit is the limit a first-stage CIC of factor r, order n and
// delay m breaks (its factor, or its widest pruned register), or dropNone.
func (e *estimator) cicOverLimit(r, n, m int) dropCode {
	if l := e.p.lim.MaxCICFactor; l > 0 && r > l {
		return dropCICFactor
	}
	if l := e.p.lim.MaxRegisterBits; l > 0 && slices.Max(e.cicStage(r, n, m).RegisterBits) > l {
		return dropRegisterBits
	}
	return dropNone
}

// cicMargin is the cached rejection margin of a first-stage CIC, dB.
func (e *estimator) cicMargin(r, n, m int) float64 {
	k := [3]int{r, n, m}
	if v, ok := e.margins[k]; ok {
		return v
	}
	v := cicRejection(&e.p, e.p.f0, r, n, m, r == e.p.d) - e.p.rejDB
	if !e.frozen && !math.IsNaN(v) {
		e.margins[k] = v
	}
	return v
}

// work is the design work of a plan in taps squared, the order of a
// Parks-McClellan design's cost: the sum over its stages of their
// estimated lengths squared (a half-band counts its length over 2), plus
// N R M for a CIC (its register pruning and the measurement of its many
// alias bands cost that much).
func (e *estimator) work(plan []chain.StagePlan) float64 {
	if _, d := e.score(plan); d != dropNone {
		return 0
	}
	w := 0.0
	for _, k := range e.keys {
		w += e.cache[k.stageKey].work
	}
	return w
}

// needTaps is the tap limit the candidate last scored (its keys in e.keys)
// would need to be kept: its longest FIR or half-band stage estimate, or
// +Inf when something other than the limit drops it.
func (e *estimator) needTaps(plan []chain.StagePlan) float64 {
	need := 0.0
	for i := range e.keys {
		k := e.keys[i].stageKey
		v := e.stageVal(k)
		if v.drop != dropNone {
			return math.Inf(1)
		}
		need = math.Max(need, v.taps)
	}
	if st := plan[0]; st.Kind == chain.CIC && st.CICForm == chain.Recursive && !e.keepBeaten && e.cicBeaten(st.Factor, st.CICOrder, st.CICDelay) && !e.isReinstated(plan) {
		return math.Inf(1)
	}
	return need
}
