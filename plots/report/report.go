package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"runtime"
	"slices"
	"strings"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/sigmadelta"
)

// Schema names the report format.
const Schema = "stepdown.report/1"

// Caution is the planning caveat carried by every report.
const Caution = "planning data (each figure measured on the designed taps, or labelled an estimate); confirm by bit-true simulation of the RTL and the team's sign-off before committing hardware"

// Report is report.json.
type Report struct {
	Schema  string `json:"schema"`
	Command string `json:"command"` // "plan" or "check"
	// ToolVersion is the stepdown that made the report (ToolVersion());
	// SpecSHA256 the SHA-256 of the spec's text (specfile.Spec.SHA256).
	// With them a sign-off record can be traced; the report holds no
	// timestamp, so the same spec and tool give the same bytes.
	ToolVersion string  `json:"tool_version"`
	SpecSHA256  string  `json:"spec_sha256"`
	Caution     string  `json:"caution"`
	Partial     bool    `json:"partial"`
	Spec        Spec    `json:"spec"`
	Search      Search  `json:"search"`
	Front       []Chain `json:"front"`
	Recommended int     `json:"recommended"`
	Reason      string  `json:"reason"`
	// For check: the front the named chain was compared with, and the
	// chains of it that beat the named one (an empty list when none does).
	// Absent from a plan's report.
	ComparedWith *Comparison `json:"compared_with,omitempty"`
	BeatenBy     []Beater    `json:"beaten_by,omitzero"`
	// Beats lists the numbers (from 1) of the compared front's chains
	// that the named chain, meeting the spec, beats on every axis: chains
	// that plan did not find it beside. Absent when it beats none.
	Beats []int `json:"beats,omitempty"`
	// Hints, from plan only, name cheaper ways to the channel when the
	// ratio has a prime factor above 7 (optimize.Hints); absent when
	// there are none.
	Hints []Hint `json:"hints,omitempty"`

	// early is the recommended chain's files, started by NewForFiles
	// while the other chains' word lengths were planned; Files collects
	// them.
	early *recommended
}

// Hint is one of plan's cheaper ways to the channel: a nearby output rate
// whose ratio splits well, or the same output rate through a fractional
// stage, with its recommended chain (signal order) and its cost per
// output from real (float) designs.
type Hint struct {
	Text                string  `json:"text"`
	OutputRateHz        float64 `json:"output_rate_hz"`
	Ratio               string  `json:"ratio"`
	Chain               string  `json:"chain"`
	MultipliesPerOutput float64 `json:"multiplies_per_output"`
}

// Spec is the normalised spec. Direction is "decimate" or "interpolate";
// Decimation and Interpolation are D and L, the other one 1, so that the
// rate change is Interpolation/Decimation in both directions. Ratio is the
// ratio of the high rate to the channel rate as a string: "256" for an
// integer spec, "625/24" (reduced, chain.Spec.RatioString) for a
// fractional one, whose Decimation is then 0 (no integer says it).
type Spec struct {
	InputRateHz   float64 `json:"input_rate_hz"`
	OutputRateHz  float64 `json:"output_rate_hz"`
	Direction     string  `json:"direction"`
	Ratio         string  `json:"ratio"`
	Decimation    int     `json:"decimation"`
	Interpolation int     `json:"interpolation"`
	// RatioTolerancePPM is ratio_tolerance_ppm, absent when the spec does
	// not set it.
	RatioTolerancePPM float64 `json:"ratio_tolerance_ppm,omitempty"`
	// RealisedOutputRateHz and RatioErrorPPM, written with
	// ratio_tolerance_ppm, are the output rate the chain's ratio gives
	// and how far it lies from output_rate_hz, in ppm.
	RealisedOutputRateHz float64  `json:"realised_output_rate_hz,omitempty"`
	RatioErrorPPM        *float64 `json:"ratio_error_ppm,omitempty"`
	PassbandHz           float64  `json:"passband_hz"`
	ProtectedHz          float64  `json:"protected_hz"`
	StopbandHz           float64  `json:"stopband_hz"`
	RippleDB             float64  `json:"ripple_db"`
	RejectionDB          float64  `json:"rejection_db"`
	// RejectionMask is rejection_mask's points, [frequency Hz, rejection
	// dB]; absent without one. RejectionDB is then its largest rejection,
	// a chain's rejection_margin_db its worst margin over the mask and
	// worst_alias_hz (worst_image_hz) where that margin is least.
	RejectionMask [][2]float64 `json:"rejection_mask,omitempty"`
	Signal        string       `json:"signal"`
	// SigmaDelta is the [sigma_delta] table, absent without one:
	// RejectionMask is then derived from it.
	SigmaDelta   *SigmaDelta `json:"sigma_delta,omitempty"`
	Words        Words       `json:"words"`
	Hardware     Hardware    `json:"hardware"`
	Cost         Cost        `json:"cost"`
	SearchLimits Limits      `json:"search"`
}

// Words are the word lengths in bits. Coefficients is the width the spec
// fixes, null for "auto" and for floating point; CoefficientsMode says which:
// "fixed", "auto" or "float".
type Words struct {
	Input            int    `json:"input"`
	Output           int    `json:"output"`
	Coefficients     *int   `json:"coefficients"`
	CoefficientsMode string `json:"coefficients_mode"`
	// UnityGain is words.unity_gain: the chain's DC gain folded to unity in
	// its last FIR stage's taps.
	UnityGain bool `json:"unity_gain"`
}

// SigmaDelta is the noise-shaped converter feeding the chain
// (specfile.Spec.SigmaDelta): its order, quantiser bits, in-band SNR
// target, NTF zeros in Hz (absent: all at DC) and out-of-band gain.
type SigmaDelta struct {
	Order   int       `json:"order"`
	Bits    int       `json:"bits"`
	SNRDB   float64   `json:"snr_db"`
	ZerosHz []float64 `json:"zeros_hz,omitempty"`
	OBG     float64   `json:"obg"`
}

// Hardware holds the clock in Hz, null when not given, and the native
// multiplier size as written ("18x27"), absent when not given.
type Hardware struct {
	ClockHz    *float64 `json:"clock_hz"`
	Multiplier string   `json:"multiplier,omitempty"`
	// The fabric's limits, absent when not given.
	MaxRegisterBits int `json:"max_register_bits,omitempty"`
	MaxCICFactor    int `json:"max_cic_factor,omitempty"`
	MaxMultipliers  int `json:"max_multipliers,omitempty"`
	MaxMemoryBits   int `json:"max_memory_bits,omitempty"`
	// Multiplierless is hardware.multiplierless: FIR and half-band stages
	// built as shared adder graphs, the front over adders.
	Multiplierless bool `json:"multiplierless,omitempty"`
}

// Cost holds the pricing settings.
type Cost struct {
	Symmetry bool `json:"symmetry"`
}

// Limits are the search settings.
type Limits struct {
	MaxStages int      `json:"max_stages"`
	Kinds     []string `json:"kinds"`
	CICOrders []int    `json:"cic_orders"`
	CICDelays []int    `json:"cic_delays"`
	// CICForms is search.cic_forms: "recursive" and/or "nonrecursive".
	CICForms []string `json:"cic_forms"`
	// Requirements is search.requirements: "cascade" or "stage".
	Requirements string `json:"requirements"`
}

// Search summarises the search.
type Search struct {
	Candidates int `json:"candidates"`
	Feasible   int `json:"feasible"`
	Designed   int `json:"designed"`
	// LeftUndesigned counts the candidates near the front that the design
	// budget left undesigned (optimize.Result.Unsettled): zero means the
	// front is that of every candidate; otherwise a cheaper chain may be
	// missing from it.
	LeftUndesigned int            `json:"left_undesigned"`
	Dropped        map[string]int `json:"dropped"`
}

// Chain is one chain of the front.
type Chain struct {
	Notation string `json:"notation"`
	Designed bool   `json:"designed"`
	// MeetsTargets is the verdict on what will be built: on the rounded
	// taps (quantised_alias_rejection_db, quantised_passband_ripple_db)
	// when the word lengths are planned with coefficients of a width or
	// "auto", on the float taps otherwise; VerdictBasis says which
	// ("rounded taps" or "float taps"), FloatMeetsTargets is the float
	// design's own verdict.
	MeetsTargets        bool    `json:"meets_targets"`
	VerdictBasis        string  `json:"verdict_basis"`
	FloatMeetsTargets   bool    `json:"float_meets_targets"`
	MultipliesPerOutput float64 `json:"multiplies_per_output"`
	AddsPerOutput       float64 `json:"adds_per_output"`
	MemoryWords         int     `json:"memory_words"`
	MemoryBits          int     `json:"memory_bits"`
	LatencyS            float64 `json:"latency_s"`
	LatencySamples      float64 `json:"latency_samples"`
	MultipliersAtClock  *int    `json:"multipliers_at_clock,omitempty"`
	// ParallelLanes is the most lanes of any stage (with a clock only): a
	// chain whose first stages run above the clock is built that wide.
	ParallelLanes    *int    `json:"parallel_lanes,omitempty"`
	AliasRejectionDB float64 `json:"alias_rejection_db"`
	// RejectionMarginDB is the verdict's rejection over the target: the
	// worse of the rounded taps' and the float design's when VerdictBasis
	// is "rounded taps" and they were judged, the float design's otherwise
	// (Unjudged).
	RejectionMarginDB float64 `json:"rejection_margin_db"`
	WorstAliasHz      float64 `json:"worst_alias_hz"`
	// WorstAliasPath and WorstAliasOutputHz, for a chain with a
	// fractional stage only, are the worst alias's path k (chain.PathGains:
	// 0..L-1 for a polyphase stage, any integer for a Farrow stage) and the
	// frequency in [0, fa] where it lands at the output; an interpolation
	// chain writes worst_image_path and worst_image_channel_hz, the
	// channel frequency whose tone makes the worst image.
	WorstAliasPath     *int     `json:"worst_alias_path,omitempty"`
	WorstAliasOutputHz *float64 `json:"worst_alias_output_hz,omitempty"`
	PassbandRippleDB   float64  `json:"passband_ripple_db"`
	Stages             []Stage  `json:"stages"`

	// The word-length plan and bit-true run of package chain/fixed
	// (bittrue_snr_db, bittrue_enob, quantised_alias_rejection_db, ...),
	// flattened into the chain; nil when it could not be made, and then
	// WordLengthsError says why. Its per-stage figures are in Stages (its own
	// Stages field is hidden by the one above and left nil).
	*fixed.ChainReport
	WordLengthsError string `json:"word_lengths_error,omitempty"`
	// Resources is the bill of fabric resources at the clock (with a clock
	// only; see NewResources).
	Resources *Resources `json:"resources,omitempty"`

	// Multiplierless only (hardware.multiplierless; absent otherwise): the
	// chain's hardware adders, the front's cost axis, and their split
	// over the FIR and half-band stages' adder graphs and tap sums (each
	// the sum over the stages of theirs times the stage's lanes and real
	// filters; Adders adds the CICs'). See Stage's fields and AddAdders.
	Adders            *int `json:"adders,omitempty"`
	CoefficientAdders *int `json:"coefficient_adders,omitempty"`
	StructuralAdders  *int `json:"structural_adders,omitempty"`
	// OverLimits names the [hardware] limits the chain breaks as built, by
	// its word lengths (optimize.BuiltOverLimits): "max_register_bits" (a
	// FIR, half-band or fractional accumulator; Stage.AccumulatorOverLimit
	// marks which), "max_memory_bits" (fixed_memory_bits) and
	// "max_multipliers" (hardware_multipliers, native blocks at the
	// clock). The search holds chains to them only with a fixed coefficient
	// width; absent when the chain breaks none.
	OverLimits []string `json:"over_limits,omitempty"`

	// plan is the word-length plan behind ChainReport (AddWordLengths),
	// kept for the hand-off files; nil without one.
	plan *handoffPlan
	// widths is the word-length plan's widths (AddWordLengths), nil
	// without one.
	widths *fixed.Widths
	// interp: an interpolation chain, whose report.json keys say image
	// and per input sample (see MarshalJSON).
	interp bool
}

// SubStage is one sub-stage of a non-recursive CIC (cost.SubStage): its
// input rate and words, its lanes at the clock (1 without one) in and out,
// its adds per output, its hardware adders (those adds times its output
// lanes) and its delay line's register bits.
type SubStage struct {
	InputRateHz   float64 `json:"input_rate_hz"`
	InputBits     int     `json:"input_bits"`
	OutputBits    int     `json:"output_bits"`
	ParallelLanes int     `json:"parallel_lanes"`
	OutputLanes   int     `json:"output_lanes"`
	AddsPerOutput int     `json:"adds_per_output"`
	Adders        int     `json:"adders"`
	RegisterBits  int     `json:"register_bits"`
}

// Stage is one stage of a chain. Decimation is an integer stage's factor;
// a fractional stage (kind "polyphase" or "farrow", always a decimation
// chain's last) changes the rate by Interpolation/Decimation, L/M, and
// its output rate is its input rate x L/M.
type Stage struct {
	Kind                string  `json:"kind"`
	Decimation          int     `json:"decimation"`
	Interpolation       int     `json:"interpolation,omitempty"`
	InputRateHz         float64 `json:"input_rate_hz"`
	OutputRateHz        float64 `json:"output_rate_hz"`
	MultipliesPerOutput float64 `json:"multiplies_per_output"`
	AddsPerOutput       float64 `json:"adds_per_output"`
	MemoryWords         int     `json:"memory_words"`
	MemoryBits          int     `json:"memory_bits"`
	LatencyS            float64 `json:"latency_s"`
	Multipliers         *int    `json:"multipliers_at_clock,omitempty"`
	// ParallelLanes is how many input samples the stage takes per clock
	// cycle (cost.Lanes), with a clock only: 1 at or below it.
	ParallelLanes *int `json:"parallel_lanes,omitempty"`
	// Multiplierless only: a FIR or half-band stage's CoefficientAdders
	// (its shared adder graph) and StructuralAdders (the adders that sum
	// its taps), for one lane of one real filter; Adders is the stage's
	// hardware adders as built (those times its lanes and real filters,
	// or a CIC's integrators and combs); AddersEstimated marks a count
	// from an estimated length. See AddAdders.
	CoefficientAdders *int `json:"coefficient_adders,omitempty"`
	StructuralAdders  *int `json:"structural_adders,omitempty"`
	Adders            *int `json:"adders,omitempty"`
	AddersEstimated   bool `json:"adders_estimated,omitempty"`
	// AccumulatorOverLimit marks a FIR, half-band or fractional stage
	// whose accumulator_bits pass hardware.max_register_bits
	// (optimize.AccumulatorsOverLimit); absent otherwise. The search holds
	// chains to the limit only with a fixed coefficient width.
	AccumulatorOverLimit bool `json:"accumulator_over_limit,omitempty"`

	// CIC only.
	CICOrder int `json:"cic_order,omitempty"`
	CICDelay int `json:"cic_delay,omitempty"`
	// CICForm is "recursive" (integrators and combs) or "nonrecursive"
	// (log2 R sub-stages (1 + z^-1)^N decimating by 2; chain.NonRecursive).
	CICForm string `json:"cic_form,omitempty"`
	// RegisterBits: a recursive CIC's pruned registers (integrators then
	// combs); a non-recursive CIC's sub-stage output widths.
	RegisterBits []int `json:"register_bits,omitempty"`
	// SubStages: a non-recursive CIC's sub-stages as cost prices them.
	SubStages []SubStage `json:"sub_stages,omitempty"`

	// interp: a stage of an interpolation chain (see MarshalJSON).
	interp bool

	// Half-band, FIR and polyphase. A polyphase stage's Coefficients are
	// its prototype lowpass at Interpolation x its input rate, with unit
	// gain at 0 Hz as the chain holds it (the data path multiplies by L),
	// Taps its length, PhaseTaps ceil(Taps/L), the multiplies per output
	// (in an interpolation chain, held as its transpose, ceil(Taps/M) in
	// signal order, the multiplies per input sample).
	// CompensatesCIC is set on every FIR and half-band stage, and on a
	// polyphase stage only when it compensates the CIC just before it
	// (placed after the CIC; its passband is then 1/|H_cic|).
	Variant        string    `json:"variant,omitempty"` // FIR: "multiband" or "lowpass"
	Taps           int       `json:"taps,omitempty"`
	PhaseTaps      int       `json:"phase_taps,omitempty"`
	Coefficients   []float64 `json:"coefficients,omitempty"`
	CompensatesCIC *bool     `json:"compensates_cic,omitempty"`

	// Farrow only: FarrowCoefficients[i][j] is chain/farrow's Filter.Coef,
	// one row of Taps subfilter taps per power i of mu, lowest first
	// (FarrowDegree+1 rows); FarrowConvention is farrow.Convention, the
	// sentence that says how they make an output.
	FarrowDegree       int         `json:"farrow_degree,omitempty"`
	FarrowCoefficients [][]float64 `json:"farrow_coefficients,omitempty"`
	FarrowConvention   string      `json:"farrow_convention,omitempty"`

	// The stage's word lengths from package chain/fixed (coefficient_bits,
	// coefficient_frac, coefficients_int, accumulator_bits, output_bits,
	// dropped_bits, rounding_points, multiplier_size, hardware_multipliers,
	// ...), flattened into the stage; nil with the chain's. A CIC's pruned
	// register_bits are the chain package's own, shown above (the field
	// above hides fixed's copy; TestWordLengths checks that they agree).
	*fixed.StageReport
}

// Interpolates reports whether c is an interpolation chain.
func (c *Chain) Interpolates() bool { return c.interp }

// reportIndex is the index in c.Stages (signal order) of the chain
// package's stage i of n (chain.Chain.Stages, from the high rate down).
func (c *Chain) reportIndex(i, n int) int {
	if c.interp {
		return n - 1 - i
	}
	return i
}

// Interpolates reports whether the spec is an interpolation spec.
func (s Spec) Interpolates() bool { return s.Direction == chain.Interpolate.String() }

// Side is the channel side the counts and the latency in samples are
// given per: "out" for a decimation chain (per output sample), "in" for an
// interpolation chain (per input sample).
func (s Spec) Side() string {
	if s.Interpolates() {
		return "in"
	}
	return "out"
}

// Unwanted names what the rejection target applies to: "alias" for a
// decimation chain, "image" for an interpolation chain.
func (s Spec) Unwanted() string {
	if s.Interpolates() {
		return "image"
	}
	return "alias"
}

// maskPoints is m's points as [frequency Hz, rejection dB] pairs, nil for
// no mask.
func maskPoints(m *chain.Mask) [][2]float64 {
	if m == nil {
		return nil
	}
	var out [][2]float64
	for _, p := range m.Points() {
		out = append(out, [2]float64{p.Hz, p.DB})
	}
	return out
}

// NewSpec converts a parsed spec file.
func NewSpec(s *specfile.Spec) Spec {
	c := s.Chain
	out := Spec{
		InputRateHz: c.InputRate, OutputRateHz: c.OutputRate,
		Direction: c.Direction().String(), Ratio: c.RatioString(),
		Decimation: c.Decimation(), Interpolation: c.Interpolation(),
		RatioTolerancePPM: c.RatioTolerancePPM,
		RejectionMask:     maskPoints(c.RejectionMask),
		PassbandHz:        c.Passband, ProtectedHz: c.Protected, StopbandHz: c.Stopband,
		RippleDB: c.RippleDB, RejectionDB: c.RejectionDB, Signal: s.Signal,
		Words: Words{Input: c.InputBits, Output: c.OutputBits},
		Cost:  Cost{Symmetry: s.Symmetry},
		SearchLimits: Limits{
			MaxStages:    s.MaxStages,
			CICOrders:    append([]int{}, s.CICOrders...),
			CICDelays:    append([]int{}, s.CICDelays...),
			CICForms:     []string{},
			Requirements: s.Requirements,
		},
	}
	if c.RatioTolerancePPM > 0 {
		out.RealisedOutputRateHz = c.RealisedOutputRate()
		e := (out.RealisedOutputRateHz/c.OutputRate - 1) * 1e6
		out.RatioErrorPPM = &e
	}
	if out.SearchLimits.Requirements == "" {
		// A specfile.Spec built in code: its zero value is the cascade rule.
		out.SearchLimits.Requirements = "cascade"
	}
	for _, f := range s.CICForms {
		out.SearchLimits.CICForms = append(out.SearchLimits.CICForms, f.String())
	}
	if m := s.SigmaDelta; m != nil {
		sd := &SigmaDelta{Order: m.Order, Bits: m.Bits, SNRDB: m.SNRDB, OBG: m.OBG}
		if sd.OBG == 0 {
			sd.OBG = sigmadelta.DefaultOBG
		}
		for _, z := range m.Zeros {
			sd.ZerosHz = append(sd.ZerosHz, z*c.InputRate)
		}
		out.SigmaDelta = sd
	}
	out.Words.CoefficientsMode = s.CoefMode()
	out.Words.UnityGain = s.UnityGain
	if c.CoefBits > 0 {
		b := c.CoefBits
		out.Words.Coefficients = &b
	}
	out.Hardware.Multiplier = s.Multiplier
	l := s.Limits
	out.Hardware.MaxRegisterBits, out.Hardware.MaxCICFactor = l.MaxRegisterBits, l.MaxCICFactor
	out.Hardware.MaxMultipliers, out.Hardware.MaxMemoryBits = l.MaxMultipliers, l.MaxMemoryBits
	out.Hardware.Multiplierless = s.Multiplierless
	if s.Clock > 0 {
		clk := s.Clock
		out.Hardware.ClockHz = &clk
	}
	for _, k := range s.Kinds {
		out.SearchLimits.Kinds = append(out.SearchLimits.Kinds, k.String())
	}
	return out
}

// NewChain converts one evaluated candidate. spec is the normalised chain
// spec; clock tells whether multipliers at a clock are reported.
func NewChain(spec chain.Spec, cand optimize.Candidate, clock bool) (Chain, error) {
	f := cand.Figures
	a := f.Analysis
	out := Chain{
		interp:              spec.Direction() == chain.Interpolate,
		Notation:            spec.Direction().Notation(cand.Plan),
		Designed:            f.Designed,
		MultipliesPerOutput: f.MultipliesPerOutput,
		AddsPerOutput:       f.AddsPerOutput,
		MemoryWords:         f.MemoryWords,
		MemoryBits:          f.MemoryBits,
		LatencyS:            f.LatencyS,
		LatencySamples:      f.LatencySamples,
		AliasRejectionDB:    a.AliasRejectionDB,
		RejectionMarginDB:   a.AliasRejectionDB - spec.RejectionDB,
		WorstAliasHz:        a.WorstAliasHz,
		PassbandRippleDB:    a.PassbandRippleDB,
	}
	if Fractional(cand.Chain) && a.AliasRejectionDB < chain.MaxFigureDB {
		k, y := a.WorstPath, a.WorstOutputHz
		out.WorstAliasPath, out.WorstAliasOutputHz = &k, &y
	}
	out.FloatMeetsTargets = a.Meets(spec)
	out.MeetsTargets, out.VerdictBasis = out.FloatMeetsTargets, "float taps"
	if clock {
		m, l := f.MultipliersAtClock, max(1, f.MaxLanes)
		out.MultipliersAtClock, out.ParallelLanes = &m, &l
	}
	c := cand.Chain
	if c == nil {
		return Chain{}, fmt.Errorf("report: chain %q has no stages", out.Notation)
	}
	// Stages in signal order (the reverse of c.Stages for an
	// interpolation chain), each with the rates its samples enter and
	// leave at.
	for _, i := range c.SignalOrder() {
		st := c.Stages[i]
		in, outRate := c.SignalRates(i)
		s := Stage{
			interp:       out.interp,
			Kind:         st.Kind().String(),
			Decimation:   st.Factor(),
			InputRateHz:  in,
			OutputRateHz: outRate,
		}
		if i < len(f.Stages) {
			sf := f.Stages[i]
			s.MultipliesPerOutput = sf.MultipliesPerOutput
			s.AddsPerOutput = sf.AddsPerOutput
			s.MemoryWords = sf.MemoryWords
			s.MemoryBits = sf.MemoryBits
			s.LatencyS = sf.LatencyS
			if clock {
				m, l := sf.Multipliers, max(1, sf.Lanes)
				s.Multipliers, s.ParallelLanes = &m, &l
			}
			for _, ss := range sf.SubStages {
				s.SubStages = append(s.SubStages, SubStage{InputRateHz: ss.InputRate, InputBits: ss.InputBits, OutputBits: ss.OutputBits,
					ParallelLanes: ss.Lanes, OutputLanes: ss.OutputLanes, AddsPerOutput: ss.AddsPerOutput, Adders: ss.Adders, RegisterBits: ss.RegisterBits})
			}
			if f.Multiplierless {
				s.Adders, s.AddersEstimated = &sf.Adders, sf.AddersEstimated
				if _, fir := st.(chain.FIRStage); fir {
					s.CoefficientAdders, s.StructuralAdders = &sf.CoefficientAdders, &sf.StructuralAdders
				}
			}
		}
		// The cases cover every kind of chain.Kinds (FIR and half-band are
		// chain.FIRStages) and of chain.FractionalKinds.
		switch x := st.(type) {
		case chain.CICStage:
			s.CICOrder, s.CICDelay, s.CICForm = x.N, x.M, x.Form.String()
			s.RegisterBits = append([]int{}, x.RegisterBits...)
		case chain.FIRStage:
			s.Taps = x.Length
			s.Coefficients = append([]float64{}, x.Taps...)
			comp := x.CompensatesCIC
			s.CompensatesCIC = &comp
			if !x.HalfBand {
				s.Variant = x.Variant.String()
			}
		case chain.PolyphaseStage:
			s.Interpolation, s.Decimation = fractionalLM(x.Up, x.Down, out.interp)
			s.Taps, s.PhaseTaps = x.Length, x.PhaseTaps()
			s.Coefficients = append([]float64{}, x.Taps...)
			if x.Req.Droop.R > 0 {
				comp := true
				s.CompensatesCIC = &comp
			}
		case chain.FarrowStage:
			s.Interpolation, s.Decimation = fractionalLM(x.Up, x.Down, out.interp)
			s.Taps, s.FarrowDegree = x.Length, x.Degree
			for _, row := range x.Filter.Coef {
				s.FarrowCoefficients = append(s.FarrowCoefficients, append([]float64{}, row...))
			}
			s.FarrowConvention = farrowConvention(s.Interpolation, s.Decimation, x.Filter.Gain(0), out.interp)
		default:
			return Chain{}, fmt.Errorf("report: chain %q stage %d is a %T; the report takes chain.CICStage, chain.FIRStage, chain.PolyphaseStage and chain.FarrowStage values", out.Notation, i+1, st)
		}
		out.Stages = append(out.Stages, s)
	}
	return out, nil
}

// farrowConvention is farrow.Convention with where this stage's outputs
// (or, transposed in an interpolation chain, its inputs) sit in time and
// its gain at 0 Hz; l and m are its interpolation and decimation in
// signal order.
func farrowConvention(l, m int, dc float64, interp bool) string {
	if interp {
		return farrow.Convention + fmt.Sprintf(" In this interpolation chain the stage runs transposed, with h and tau in samples of its output (the higher rate): its input sample m sits at time t_m = m*%d/%d output samples (m = 0 at output 0), and output n = (%d/%d) * sum_m x[m] h(t_m - n). Its gain at 0 Hz, H(0), is %.9g.", l, m, l, m, dc)
	}
	return farrow.Convention + fmt.Sprintf(" In this chain output m of the stage is at time t = m*%d/%d input samples (m = 0 at x[0]). Its gain at 0 Hz, H(0), is %.9g.", m, l, dc)
}

// fractionalLM is a fractional stage's L and M in signal order: its Up
// and Down, turned round in an interpolation chain, which holds the
// stage as its transpose (chain.Chain).
func fractionalLM(up, down int, interp bool) (l, m int) {
	if interp {
		return down, up
	}
	return up, down
}

// StoppedBeforeWordLengths is the word_lengths_error of a chain whose word
// lengths were not planned because the run was stopped.
const StoppedBeforeWordLengths = "not planned: the run was stopped (--timeout or an interrupt) before the word lengths"

// withoutPackage is a word-length error without the "fixed: " its package
// puts first, and again before each error it wraps ("fixed: stage 3:
// fixed: no coefficient width meets the bands" reads "stage 3: no
// coefficient width meets the bands").
func withoutPackage(err error) string {
	return strings.ReplaceAll(err.Error(), "fixed: ", "")
}

// AddWordLengths runs package chain/fixed's word-length planner and bit-true
// run (fixed.Evaluate) on cand's chain and puts the figures into c, which
// NewChain made from cand. spec is the normalised chain spec the planner
// reads its words from (CoefBits zero: "auto", the narrowest widths with
// which the whole chain meets); withHardware says that a native multiplier
// size and a clock are set in s, so that hardware multipliers are figures.
// rounded says that the verdict is to be judged on the rounded taps (the
// spec gives a coefficient width or "auto"): MeetsTargets then needs both
// the float design and its quantised figures to meet.
//
// When the bit-true run cannot be made (a CIC register wider than its
// integers) the chain still gets its widths and quantised figures, and
// WordLengthsError says why there are no bit-true ones; a chain the planner
// cannot take at all (an estimate has no taps) gets only WordLengthsError,
// and with rounded set it does not meet: nothing says its rounded taps do.
//
// Once ctx is done the planner stops and the chain gets only
// WordLengthsError (and, with rounded set, does not meet).
//
// wordsThatPlan is a, the words an accumulator error says would fit the
// chain's accumulators, each checked by planning the chain's word lengths
// with it: a word that another rule still refuses (a Farrow stage's guard
// bits below its output) is narrowed a bit at a time, at most
// maxWordRetries times, and left out (zero) when none plans.
func wordsThatPlan(ctx context.Context, a optimize.AccumulatorExcess, spec chain.Spec, ch *chain.Chain, s fixed.Settings) optimize.AccumulatorExcess {
	plans := func(sp chain.Spec) bool {
		_, _, err := fixed.PlanChainContext(ctx, sp, ch, s)
		return err == nil
	}
	out := optimize.AccumulatorExcess{}
	if spec.CoefBits > 0 && a.Coefficients > 0 {
		for k := a.Coefficients; k <= a.Coefficients+maxWordRetries && spec.CoefBits-k >= specfile.MinWordBits && ctx.Err() == nil; k++ {
			sp := spec
			sp.CoefBits -= k
			if plans(sp) {
				out.Coefficients = k
				break
			}
		}
	}
	narrow := func(w int, set func(*chain.Spec, int)) int {
		for v := w; v > 0 && v >= w-maxWordRetries && v >= specfile.MinWordBits && ctx.Err() == nil; v-- {
			sp := spec
			set(&sp, v)
			if plans(sp) {
				return v
			}
		}
		return 0
	}
	if a.InputBits > 0 {
		out.InputBits = narrow(a.InputBits, func(sp *chain.Spec, v int) { sp.InputBits = v })
	}
	if a.OutputBits > 0 {
		out.OutputBits = narrow(a.OutputBits, func(sp *chain.Spec, v int) { sp.OutputBits = v })
	}
	return out
}

// maxWordRetries bounds the narrower words wordsThatPlan tries past the
// accumulators' figure.
const maxWordRetries = 8

// A chain with a fractional stage (the last of a decimation chain, the
// first of an interpolation chain) gets its word lengths and bit-true
// figures as any other (package chain/fixed, Fractional stages), but no
// hand-off (NoHandoff), wherever it sits (a polyphase stage may follow
// the CIC).
func AddWordLengths(ctx context.Context, c *Chain, spec chain.Spec, cand optimize.Candidate, s fixed.Settings, withHardware, rounded bool) {
	frac := Fractional(cand.Chain)
	if rounded {
		c.VerdictBasis = "rounded taps"
		c.MeetsTargets = false
	}
	if cand.Chain == nil {
		c.WordLengthsError = "no designed chain"
		return
	}
	if ctx.Err() != nil {
		c.WordLengthsError = StoppedBeforeWordLengths
		return
	}
	res, err := fixed.EvaluateContext(ctx, spec, cand.Chain, s, fixed.Signal{})
	if ctx.Err() != nil {
		c.WordLengthsError = StoppedBeforeWordLengths
		return
	}
	if err != nil {
		c.WordLengthsError = withoutPackage(err)
		if ae := fixed.AsAccumulatorError(err); ae != nil {
			var a optimize.AccumulatorExcess
			a.Add(ae)
			a = wordsThatPlan(ctx, a, spec, cand.Chain, s)
			if ways := specfile.WordsToTry(a, spec); len(ways) > 0 {
				c.WordLengthsError += "; " + strings.Join(ways, " or ") + " would fit (planned with these taps as designed; the rounded taps must still meet the spec)"
			}
		}
		return
	}
	cr := res.Report(withHardware)
	if len(cr.Stages) != len(c.Stages) {
		c.WordLengthsError = fmt.Sprintf("word-length plan has %d stages, the chain %d", len(cr.Stages), len(c.Stages))
		return
	}
	for i := range c.Stages {
		st := cr.Stages[i]
		c.Stages[i].StageReport = &st
	}
	if res.BitTrueErr != nil {
		c.WordLengthsError = "widths planned, no bit-true run: " + cr.BitTrueError
	}
	cr.Stages = nil
	c.ChainReport = &cr
	c.widths = res.Widths
	if cas, _, err := fixed.FromChain(spec, cand.Chain); err == nil && !frac {
		c.plan = &handoffPlan{cascade: cas, widths: res.Widths, worstAliasHz: res.Quantised.WorstAliasHz}
	}
	if rounded {
		c.MeetsTargets = c.FloatMeetsTargets && res.Quantised.Meets(spec)
		// The verdict needs both to meet: the margin is the worse one's.
		c.RejectionMarginDB = math.Min(res.Quantised.AliasRejectionDB, c.AliasRejectionDB) - spec.RejectionDB
	}
}

// markLimits sets c's OverLimits and its stages' AccumulatorOverLimit
// from its word-length plan and the fabric's limits.
func markLimits(c *Chain, l optimize.Limits) {
	if over := optimize.AccumulatorsOverLimit(c.widths, l); len(over) == len(c.Stages) {
		for i, o := range over {
			c.Stages[i].AccumulatorOverLimit = o
		}
	}
	for _, r := range optimize.BuiltOverLimits(c.widths, l) {
		c.OverLimits = append(c.OverLimits, limitKey[r])
	}
}

// limitKey is the [hardware] key of each limit a chain can break as built.
var limitKey = map[optimize.Reason]string{
	optimize.ReasonOverAccumulatorBits:   "max_register_bits",
	optimize.ReasonOverMemory:            "max_memory_bits",
	optimize.ReasonOverNativeMultipliers: "max_multipliers",
}

// OverLimitsText says, in the spec's keys, how c breaks each limit it
// breaks as built (OverLimits), with the figures: "accumulator 54 bits
// (stage 3) over hardware.max_register_bits = 48; ..."; "" when none.
func OverLimitsText(c Chain, hw Hardware) string {
	var parts []string
	for _, k := range c.OverLimits {
		switch k {
		case "max_register_bits":
			var ids []string
			widest := 0
			for i, st := range c.Stages {
				if st.AccumulatorOverLimit && st.StageReport != nil {
					ids = append(ids, fmt.Sprint(i+1))
					widest = max(widest, st.AccumulatorBits)
				}
			}
			which := "stage " + strings.Join(ids, ", ")
			if len(ids) > 1 {
				which = "stages " + strings.Join(ids[:len(ids)-1], ", ") + " and " + ids[len(ids)-1]
			}
			parts = append(parts, fmt.Sprintf("accumulators of up to %d bits (%s) over hardware.max_register_bits = %d", widest, which, hw.MaxRegisterBits))
		case "max_memory_bits":
			parts = append(parts, fmt.Sprintf("%d bits of memory as built over hardware.max_memory_bits = %d", c.FixedMemoryBits, hw.MaxMemoryBits))
		case "max_multipliers":
			n := 0
			if c.ChainReport != nil && c.HardwareMultipliers != nil {
				n = *c.HardwareMultipliers
			}
			parts = append(parts, fmt.Sprintf("%d native multiplier blocks (%s) at the clock over hardware.max_multipliers = %d", n, hw.Multiplier, hw.MaxMultipliers))
		}
	}
	return strings.Join(parts, "; ")
}

// Fractional reports whether c has a fractional stage (a polyphase or
// Farrow stage, chain.Kind.Fractional): at its end, or after its CIC.
func Fractional(c *chain.Chain) bool {
	return c != nil && slices.ContainsFunc(c.Stages, func(s chain.Stage) bool { return s.Kind().Fractional() })
}

// Fractional reports whether the chain has a fractional stage (the last
// of a decimation chain, the first of an interpolation chain, in signal
// order): it then has no word lengths, coefficient integers or hand-off.
func (c *Chain) Fractional() bool {
	for _, s := range c.Stages {
		if s.Kind == chain.Polyphase.String() || s.Kind == chain.Farrow.String() {
			return true
		}
	}
	return false
}

// New builds the report of a search.
func New(command string, s *specfile.Spec, res *optimize.Result) (*Report, error) {
	return NewContext(context.Background(), command, s, res)
}

// NewContext is New whose word-length plans stop once ctx is done: the
// chains not yet planned then say so (AddWordLengths), and the report is
// still made, so that a search stopped by its time limit writes its front.
func NewContext(ctx context.Context, command string, s *specfile.Spec, res *optimize.Result) (*Report, error) {
	return newReport(ctx, command, s, res, false)
}

// NewForFiles is NewContext for a report whose files Files will make: as
// soon as the recommended chain's word lengths are planned (it is planned
// first), its figures, coefficient files and hand-off start being made on
// their own goroutines, beside the other chains' plans, and Files collects
// them. They are made as Files would make them, so the files are the same
// bytes. Once ctx is done they are still made (Files' own ctx stops the
// wait for them).
func NewForFiles(ctx context.Context, command string, s *specfile.Spec, res *optimize.Result) (*Report, error) {
	return newReport(ctx, command, s, res, true)
}

// newReport is NewContext, and NewForFiles when early is set.
func newReport(ctx context.Context, command string, s *specfile.Spec, res *optimize.Result, early bool) (*Report, error) {
	r := &Report{
		Schema:      Schema,
		Command:     command,
		ToolVersion: ToolVersion(),
		SpecSHA256:  s.SHA256,
		Caution:     Caution,
		Partial:     res.Partial,
		Spec:        NewSpec(s),
		Recommended: res.Recommended,
		Reason:      res.Reason,
		Search: Search{
			Candidates:     res.Candidates,
			Feasible:       res.FeasibleAll,
			Designed:       res.Designed,
			LeftUndesigned: res.Unsettled,
			Dropped:        map[string]int{},
		},
		Front: []Chain{},
	}
	if r.Search.Feasible < len(res.Feasible) {
		// Feasible is the cloud, thinned when dense; FeasibleAll counts them all.
		r.Search.Feasible = len(res.Feasible)
	}
	for k, v := range res.Dropped {
		r.Search.Dropped[string(k)] = v
	}
	fs := s.FixedSettings()
	// The front's chains share the spec's input word and test signal: its
	// first bit-true run is generated once (the figures are the same).
	fs.Inputs = new(fixed.InputMemo)
	hw := s.NativeA > 0 && s.Clock > 0
	for _, cand := range res.Front {
		c, err := NewChain(s.Chain, cand, s.Clock > 0)
		if err != nil {
			return nil, err
		}
		r.Front = append(r.Front, c)
	}
	rec := r.Recommended
	if len(r.Front) > 0 && (rec < 0 || rec >= len(r.Front)) {
		return nil, fmt.Errorf("report: recommended index %d outside the front of %d chains", rec, len(r.Front))
	}
	// The word-length plans are independent: they run on every core, each
	// writing only its own chain, so the report is the same whatever the
	// number of cores. The recommended chain's goes first, so that its
	// files (early) start as soon as may be.
	order := make([]int, 0, len(r.Front))
	if len(r.Front) > 0 {
		order = append(order, rec)
	}
	for i := range r.Front {
		if i != rec {
			order = append(order, i)
		}
	}
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < min(runtime.GOMAXPROCS(0), len(r.Front)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				AddWordLengths(ctx, &r.Front[i], s.Chain, res.Front[i], fs, hw, s.CoefMode() != "float")
				if early && i == rec {
					r.early = startRecommended(r, res, s)
				}
			}
		}()
	}
	for _, i := range order {
		next <- i
	}
	close(next)
	wg.Wait()
	if k := r.Recommended; k >= 0 && k < len(r.Front) {
		if c := &r.Front[k]; !c.MeetsTargets && c.Unjudged() && c.WordLengthsError == StoppedBeforeWordLengths {
			// The recommendation stands on the float design alone: say so
			// where a reader of the reason alone would look.
			r.Reason += " Not judged: the run stopped before its taps were rounded and measured, so whether it meets the spec as built is not known."
		}
	}
	paths := 1
	if s.Signal == "complex" {
		paths = 2
	}
	for i := range r.Front {
		if s.Multiplierless {
			if err := AddAdders(&r.Front[i], s); err != nil {
				return nil, err
			}
		}
		r.Front[i].Resources = NewResources(&r.Front[i], s.Clock, s.Chain.ChannelRate(), paths)
		markLimits(&r.Front[i], s.Limits)
	}
	return r, nil
}

// Marshal returns report.json's bytes, indented, with a final newline. It
// fails on any NaN or infinity, naming the field.
func (r *Report) Marshal() ([]byte, error) {
	if path := nonFinite(reflect.ValueOf(r), "report"); path != "" {
		return nil, fmt.Errorf("report: %s is not a finite number", path)
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(r); err != nil {
		return nil, fmt.Errorf("report: %v", err)
	}
	return buf.Bytes(), nil
}

// nonFinite returns the path of the first NaN or infinity inside v, or "".
func nonFinite(v reflect.Value, path string) string {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return ""
		}
		return nonFinite(v.Elem(), path)
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return path
		}
	case reflect.Struct:
		t := v.Type()
		for i := 0; i < v.NumField(); i++ {
			if !t.Field(i).IsExported() {
				continue // not in the JSON
			}
			name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
			sub := path + "." + name
			if t.Field(i).Anonymous {
				sub = path // flattened into this object
			}
			if p := nonFinite(v.Field(i), sub); p != "" {
				return p
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			if p := nonFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i)); p != "" {
				return p
			}
		}
	}
	return ""
}

// Unjudged reports whether the verdict is on the rounded taps but they
// could not be judged (no word-length plan: stopped, or the words could not
// be planned): the figures BuiltFigures gives are then the float design's.
func (c *Chain) Unjudged() bool { return c.VerdictBasis == "rounded taps" && c.ChainReport == nil }

// BuiltFigures returns the alias rejection and passband ripple the verdict
// is judged on: when VerdictBasis is "rounded taps" and they were measured,
// the worse of the float design's and the rounded taps' (the verdict needs
// both to meet; the rounded taps' are nearly always the worse), the float
// design's otherwise. RejectionMarginDB is the first less the target.
func (c *Chain) BuiltFigures() (rejectionDB, rippleDB float64) {
	if c.VerdictBasis == "rounded taps" && !c.Unjudged() {
		return math.Min(c.QuantisedRejectionDB, c.AliasRejectionDB), math.Max(c.QuantisedRippleDB, c.PassbandRippleDB)
	}
	return c.AliasRejectionDB, c.PassbandRippleDB
}

// BitTrueSummary says in a phrase what the bit-true run found: the SNR and
// ENOB when they are meaningful, otherwise why there is no number.
func (c *Chain) BitTrueSummary() string {
	switch {
	case c.ChainReport == nil:
		return "no word-length plan (" + c.WordLengthsError + ")"
	case c.BitTrueReport == nil:
		return "no bit-true run (" + c.BitTrueError + ")"
	case !c.BitTrueSNRValid || c.BitTrueSNRDB == nil || c.BitTrueENOB == nil:
		return "bit-true SNR not meaningful (" + c.BitTrueSNRNote + ")"
	}
	if c.PredictedSNRDB != nil {
		return fmt.Sprintf("the modulator's bitstream through the chain: in-band bit-true SNR %.1f dB, ENOB %.2f bits (predicted from the modulator's noise alone: %.1f dB)", *c.BitTrueSNRDB, *c.BitTrueENOB, *c.PredictedSNRDB)
	}
	word := "the ADC word"
	if c.interp {
		word = "the input word"
	}
	return fmt.Sprintf("data path against the float chain: bit-true SNR %.1f dB, ENOB %.2f bits (%s alone: %.1f dB)", *c.BitTrueSNRDB, *c.BitTrueENOB, word, c.InputSNRDB)
}
