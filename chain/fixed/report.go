package fixed

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// StageReport is one stage's fixed-point figures, with the names report.json
// uses for them. Zero-width fields are left out for a CIC.
type StageReport struct {
	InputBits int `json:"input_bits"`
	// FIR and half-band: the coefficient width and scale, the quantised
	// coefficients as integers (full impulse response: tap k = ints[k] / 2^frac),
	// how many taps the local search moved off plain rounding (both members
	// of a symmetric pair counted), and whether the quantised response meets
	// the stage's bands.
	CoefficientBits      int     `json:"coefficient_bits,omitempty"`
	CoefficientFrac      *int    `json:"coefficient_frac,omitempty"`
	CoefficientsInt      []int64 `json:"coefficients_int,omitempty"`
	CoefficientsAdjusted int     `json:"coefficients_adjusted,omitempty"`
	QuantisedMeetsBands  bool    `json:"quantised_meets_bands"`
	// A fractional stage (package doc, Fractional stages): a polyphase
	// stage's coefficients_int are its prototype times L; a Farrow stage's
	// are its coefficient_rows rows one after the other (row p multiplies
	// mu^p), all at the one scale coefficient_frac, its mu an unsigned
	// word of mu_bits, its Horner register horner_bits wide. Both state
	// the smallest and largest DC gain of one output phase; dc_gain_db is
	// their mean over the L phases.
	CoefficientRows  int      `json:"coefficient_rows,omitempty"`
	MuBits           int      `json:"mu_bits,omitempty"`
	HornerBits       int      `json:"horner_bits,omitempty"`
	PhaseDCGainMinDB *float64 `json:"phase_dc_gain_min_db,omitempty"`
	PhaseDCGainMaxDB *float64 `json:"phase_dc_gain_max_db,omitempty"`

	AccumulatorBits int `json:"accumulator_bits"`
	OutputBits      int `json:"output_bits"`
	// DCGainDB is the stage's gain at 0 Hz from input full scale to output
	// full scale through the planned data path (StageWidths.Gain in dB): a
	// CIC's (RM)^N / 2^(FullBits - Bin), an FIR's sum of quantised taps.
	DCGainDB float64 `json:"dc_gain_db"`
	// GainCorrection is the factor Settings.UnityGain folded into this
	// stage's taps before quantisation; absent on every other stage.
	GainCorrection float64 `json:"gain_correction,omitempty"`
	// CIC: pruned register widths (integrators then combs) and the LSBs each
	// drops, the output's last. A non-recursive CIC: its sub-stages' output
	// widths, and one entry, the LSBs its output drops. A CIC interpolator:
	// its register widths in signal order (combs then integrators, none
	// pruned: 2N zeros dropped) and the output's truncation last.
	RegisterBits []int `json:"register_bits,omitempty"`
	DroppedBits  []int `json:"dropped_bits,omitempty"`
	// RoundingPoints states every rounding, truncation and saturation point.
	RoundingPoints []string `json:"rounding_points"`

	MultiplierSize      string `json:"multiplier_size,omitempty"` // "a x b" bits
	MultipliesPerSample int    `json:"multiplies_per_stage_output,omitempty"`
	CoefMemoryBits      int    `json:"coefficient_memory_bits"`
	DataMemoryBits      int    `json:"data_memory_bits"`
	NativePerProduct    int    `json:"native_multipliers_per_product,omitempty"`
	HardwareMultipliers *int   `json:"hardware_multipliers,omitempty"`
}

// ChainReport is a chain's fixed-point figures for report.json. The
// quantised figures, the DC gain and the widths need no bit-true run and are
// always there; the bit-true figures (BitTrueReport) are absent when the run
// could not be made, and BitTrueError then says why.
type ChainReport struct {
	QuantisedRejectionDB float64 `json:"quantised_alias_rejection_db"` // worst over the alias bands, rounded taps
	QuantisedRippleDB    float64 `json:"quantised_passband_ripple_db"` // peak-to-peak over [0, fp], rounded taps
	// DCGainDB is the chain's gain at 0 Hz from input full scale to output
	// full scale, the product of the stages' (Widths.DCGain in dB).
	DCGainDB float64 `json:"dc_gain_db"`
	// GainCorrection is the factor Settings.UnityGain folded into one
	// stage's taps (that stage's gain_correction), 1 when none.
	GainCorrection float64 `json:"gain_correction"`
	// DCGainNote says why a requested correction (Settings.UnityGain) was
	// not applied: the chain has no FIR or half-band stage to fold it into.
	DCGainNote          string `json:"dc_gain_note,omitempty"`
	FixedMemoryBits     int    `json:"fixed_memory_bits"`
	HardwareMultipliers *int   `json:"hardware_multipliers,omitempty"`

	// BitTrueSNRValid says whether bittrue_snr_db and bittrue_enob are
	// meaningful; BitTrueSNRNote says why not ("" when they are; see
	// BitTrueResult.SNRValid). Both are there with or without a run.
	BitTrueSNRValid bool   `json:"bittrue_snr_valid"`
	BitTrueSNRNote  string `json:"bittrue_snr_note"`
	// BitTrueError says why there is no bit-true run (Result.BitTrueErr).
	BitTrueError string `json:"bittrue_error,omitempty"`
	*BitTrueReport

	Stages []StageReport `json:"stages"`
}

// BitTrueReport is the bit-true run's figures (BitTrueResult), flattened
// into ChainReport when the run was made.
type BitTrueReport struct {
	// BitTrueSNRDB and BitTrueENOB are null when they are not meaningful
	// (ChainReport.BitTrueSNRValid false; BitTrueSNRNote says why).
	BitTrueSNRDB *float64 `json:"bittrue_snr_db"`
	BitTrueENOB  *float64 `json:"bittrue_enob"`
	// PredictedSNRDB is, for a chain fed by a noise-shaped converter
	// (Signal.Shaper), the SNR its model predicts for the rounded taps
	// (BitTrueResult.PredictedSNRDB), beside the bit-true figure; absent
	// otherwise.
	PredictedSNRDB          *float64 `json:"predicted_snr_db,omitempty"`
	BitTrueMatchDB          float64  `json:"bittrue_match_db"`
	BitTrueOffsetLSB        float64  `json:"bittrue_offset_lsb"`
	InputSNRDB              float64  `json:"input_snr_db"`
	BitTrueAliasHz          float64  `json:"bittrue_alias_hz"`
	BitTrueAliasRejectionDB float64  `json:"bittrue_alias_rejection_db"`
	AliasResponseDB         float64  `json:"quantised_alias_response_db"` // at bittrue_alias_hz
	BitTrueAliasValid       bool     `json:"bittrue_alias_valid"`
	TestSignal              string   `json:"bittrue_test_signal"`
	// BitTrueOutputLevels is each test tone's level at the integer output,
	// dBFS (BitTrueResult.OutputLevels).
	BitTrueOutputLevels []float64 `json:"bittrue_output_levels_dbfs,omitempty"`
}

// Report flattens r for report.json. withHardware says whether a native
// multiplier size and a clock were given (so that 0 multipliers is a figure).
// When r.BitTrueErr is set the bit-true figures are left out and
// ChainReport.BitTrueError says why; everything else is reported as usual.
func (r *Result) Report(withHardware bool) ChainReport {
	out := ChainReport{
		QuantisedRejectionDB: r.Quantised.AliasRejectionDB,
		QuantisedRippleDB:    r.Quantised.PassbandRippleDB,
		FixedMemoryBits:      r.Widths.MemoryBits,
		DCGainDB:             gainDB(r.Widths.DCGain),
		GainCorrection:       r.Widths.GainCorrection,
	}
	if r.UnityGainAsked && r.Widths.CorrectedStage < 0 {
		out.DCGainNote = "unity_gain asked, but the chain has no FIR or half-band stage to fold the correction into"
	}
	if r.BitTrueErr != nil {
		out.BitTrueError = strings.TrimPrefix(r.BitTrueErr.Error(), "fixed: ")
		out.BitTrueSNRNote = "no bit-true run: " + out.BitTrueError
	} else {
		bt := r.BitTrue
		var sig []string
		for _, t := range bt.Tones {
			sig = append(sig, fmt.Sprintf("%s Hz at %s dBFS", fmtG(t.Freq), fmtG(t.Level)))
		}
		out.BitTrueSNRValid, out.BitTrueSNRNote = bt.SNRValid, bt.SNRNote
		out.BitTrueReport = &BitTrueReport{
			BitTrueMatchDB:      bt.MatchDB,
			BitTrueOutputLevels: append([]float64(nil), bt.OutputLevels...),
			BitTrueOffsetLSB:    bt.OutputOffset, InputSNRDB: bt.InputSNRDB,
			BitTrueAliasHz: bt.AliasHz, BitTrueAliasRejectionDB: bt.AliasRejectionDB,
			AliasResponseDB: bt.AliasResponseDB, BitTrueAliasValid: bt.AliasValid,
			TestSignal: fmt.Sprintf("%s; white Gaussian noise %s dBFS RMS; %d output samples",
				strings.Join(sig, ", "), fmtG(bt.NoiseDBFS), bt.Samples),
		}
		if bt.Shaped != "" {
			p := bt.PredictedSNRDB
			out.BitTrueReport.PredictedSNRDB = &p
			out.BitTrueReport.TestSignal = fmt.Sprintf("%s (input word dBFS) through a simulated %s; SNR over [0, passband] at the output; %d output samples",
				strings.Join(sig, ", "), bt.Shaped, bt.Samples)
		}
		if bt.SNRValid {
			snr, enob := bt.SNRDB, bt.ENOB
			out.BitTrueSNRDB, out.BitTrueENOB = &snr, &enob
		}
	}
	if withHardware {
		m := r.Widths.HardwareMultipliers
		out.HardwareMultipliers = &m
	}
	for _, sw := range r.Widths.Stages {
		s := StageReport{
			InputBits: sw.InputBits, QuantisedMeetsBands: sw.MeetsBands,
			AccumulatorBits: sw.AccumulatorBits, OutputBits: sw.OutputBits, DCGainDB: gainDB(sw.Gain),
			RoundingPoints: append([]string{}, sw.Points...),
			CoefMemoryBits: sw.CoefMemoryBits, DataMemoryBits: sw.DataMemoryBits,
		}
		if p := sw.CICInterp; sw.CIC && p != nil {
			// Nothing dropped inside; the output's truncation last.
			s.RegisterBits = append([]int{}, p.RegisterBits...)
			s.DroppedBits = make([]int, 2*p.N+1)
			s.DroppedBits[2*p.N] = sw.OutputShift
		} else if sw.CIC {
			s.RegisterBits = append([]int{}, sw.Pruning.RegisterBits...)
			s.DroppedBits = append([]int{}, sw.Pruning.Dropped...)
			if sw.NonRecursive {
				s.RegisterBits = append([]int{}, sw.SubStageBits...)
				s.DroppedBits = []int{sw.OutputShift}
			}
		} else {
			f := sw.Coefficients.Frac
			s.CoefficientBits, s.CoefficientFrac = sw.Coefficients.Bits, &f
			s.CoefficientsInt = append([]int64{}, sw.Coefficients.Ints...)
			s.CoefficientsAdjusted = sw.Coefficients.Adjusted
			s.MultiplierSize = fmt.Sprintf("%d x %d", sw.MultiplierA, sw.MultiplierB)
			s.MultipliesPerSample = sw.MultipliesPerSample
			s.NativePerProduct = sw.NativePerProduct
			if withHardware {
				m := sw.HardwareMultipliers
				s.HardwareMultipliers = &m
			}
		}
		if sw.Up > 0 {
			lo, hi := gainDB(sw.PhaseGainMin), gainDB(sw.PhaseGainMax)
			s.PhaseDCGainMinDB, s.PhaseDCGainMaxDB = &lo, &hi
			if sw.Farrow {
				s.CoefficientRows, s.MuBits, s.HornerBits = sw.FarrowRows, sw.MuBits, sw.HornerBits
			}
		}
		if sw.GainCorrection != 0 && sw.GainCorrection != 1 {
			s.GainCorrection = sw.GainCorrection
		}
		out.Stages = append(out.Stages, s)
	}
	return out
}

// gainDB is 20 log10 |g|, bounded to [-300, 300] dB so that no figure is infinite.
func gainDB(g float64) float64 { return -posDB(math.Abs(g)) }

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }

// ParseMultiplier reads a native multiplier size "AxB" (also "A x B" or
// "A*B"), e.g. "18x27", into its two operand widths in bits.
func ParseMultiplier(s string) (a, b int, err error) {
	t := strings.ToLower(strings.ReplaceAll(s, " ", ""))
	t = strings.ReplaceAll(t, "*", "x")
	p := strings.Split(t, "x")
	if len(p) == 2 {
		a, err1 := strconv.Atoi(p[0])
		b, err2 := strconv.Atoi(p[1])
		if err1 == nil && err2 == nil && a >= 2 && b >= 2 && a <= 128 && b <= 128 {
			return a, b, nil
		}
	}
	return 0, 0, fmt.Errorf("fixed: multiplier %q: want two widths in bits as AxB, each in [2, 128], e.g. 18x27", s)
}
