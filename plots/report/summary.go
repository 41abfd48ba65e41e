package report

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/cost"
)

// The terminal summary of a plan or check, as the command line prints it,
// for any program that wants the same text.

// WriteComparison writes, for a check's report, which chains of the
// compared front beat the checked one and by how much, or its rank on it
// (nothing without a comparison).
func WriteComparison(w io.Writer, rep *Report) {
	cw := rep.ComparedWith
	if cw == nil {
		return
	}
	switch {
	case len(rep.BeatenBy) > 0:
		fmt.Fprintf(w, "  Against %s (%s on its front), it is beaten:\n", cw.Source, units.Count(len(cw.Front), "chain", "chains"))
		for _, b := range rep.BeatenBy {
			fmt.Fprintf(w, "    %s\n", b.Text())
		}
	case cw.OnFront:
		fmt.Fprintf(w, "  It is #%d on the front of %s (%s).\n", cw.Rank, cw.Source, units.Count(len(cw.Front), "chain", "chains"))
	case len(cw.Front) == 0:
		fmt.Fprintf(w, "  %s found no chain that meets the spec.\n", capitalise(cw.Source))
	case !rep.Front[0].MeetsTargets:
		meet, first := cw.Meeting()
		if meet == 0 {
			if len(cw.Front) == 1 {
				fmt.Fprintf(w, "  The one chain on the front of %s does not meet the spec as judged there either.\n", cw.Source)
				break
			}
			fmt.Fprintf(w, "  None of the %d chains on the front of %s meets the spec as judged there either.\n", len(cw.Front), cw.Source)
			break
		}
		f := cw.Front[first]
		verb := "meet"
		if meet == 1 {
			verb = "meets"
		}
		fmt.Fprintf(w, "  The front of %s has %s that %s the spec, the first #%d %s (%s mult/%s, %d memory bits, %s).\n",
			cw.Source, units.Count(meet, "chain", "chains"), verb, first+1, f.Notation, TrimFloat(f.MultipliesPerOutput, 1), rep.Spec.Side(), f.MemoryBits, Seconds(f.LatencyS))
	default:
		// It meets, and nothing there beats it: it belongs on that
		// front, which lacks it (the plan's search did not find it, or
		// its settings did not search it), unless a chain there ties it
		// on every axis.
		c := rep.Front[0]
		var ties []string
		for k, f := range cw.Front {
			if f.MultipliesPerOutput == c.MultipliesPerOutput && f.MemoryBits == c.MemoryBits && f.LatencyS == c.LatencyS {
				ties = append(ties, fmt.Sprintf("#%d %s", k+1, f.Notation))
			}
		}
		if len(ties) > 0 {
			fmt.Fprintf(w, "  No chain on the front of %s (%s) beats it on every axis, and %s ties it on every axis there.\n", cw.Source, units.Count(len(cw.Front), "chain", "chains"), strings.Join(ties, " and "))
		} else {
			fmt.Fprintf(w, "  No chain on the front of %s (%s) beats it on every axis: it belongs on that front, which lacks it.\n", cw.Source, units.Count(len(cw.Front), "chain", "chains"))
		}
		if len(rep.Beats) > 0 {
			var names []string
			for _, k := range rep.Beats {
				names = append(names, fmt.Sprintf("#%d %s", k, cw.Front[k-1].Notation))
			}
			fmt.Fprintf(w, "  It beats %s there on every axis.\n", strings.Join(names, " and "))
		}
	}
}

// WriteWordLengths writes the word-length plan of the recommended (or
// checked) chain: the bit-true figures and each stage's widths.
func WriteWordLengths(w io.Writer, rep *Report) {
	ch := rep.Front[rep.Recommended]
	coef := map[string]string{"fixed": "coefficients as set", "auto": "coefficients auto", "float": "coefficients auto, for information: the files stay floating point"}[rep.Spec.Words.CoefficientsMode]
	if ch.ChainReport == nil {
		if e := ch.WordLengthsError; strings.HasPrefix(e, "not planned") {
			fmt.Fprintf(w, "\nword lengths: %s\n", e)
		} else {
			fmt.Fprintf(w, "\nword lengths: not planned (%s)\n", e)
		}
		return
	}
	gain := "DC gain " + GainText(ch.DCGainDB)
	if ch.GainCorrection != 1 && ch.GainCorrection != 0 {
		gain += fmt.Sprintf(" (correction x%.6g folded into the last FIR)", ch.GainCorrection)
	}
	if ch.DCGainNote != "" {
		gain += " (" + ch.DCGainNote + ")"
	} else if (ch.GainCorrection == 1 || ch.GainCorrection == 0) && math.Abs(ch.DCGainDB) >= 0.5 {
		// A CIC's gain (R M)^N is brought to the power of two below it
		// by its output shift, an interpolating FIR's L to
		// 2^floor(log2 L): say so, and how to undo it where a FIR can.
		if hasTaps(&ch) {
			gain += " (stage gains rounded to powers of two by shifts; words.unity_gain = true folds the rest into the last FIR)"
		} else {
			gain += " (stage gains rounded to powers of two by shifts; with no FIR stage, nothing folds the rest)"
		}
	}
	// A chain of CICs alone has no taps to round: its figures are as built.
	built := "rounded taps"
	if !hasTaps(&ch) {
		built = "as built"
	}
	fmt.Fprintf(w, "\nword lengths (%s): %s; %s: %s rejection %.2f dB, ripple %s; %s\n",
		coef, ch.BitTrueSummary(), built, rep.Spec.Unwanted(), ch.QuantisedRejectionDB, RippleText(ch.QuantisedRippleDB), gain)
	// The kind column is 8 wide, wider when a kind's name is longer
	// (polyphase).
	kw := 8
	for _, st := range ch.Stages {
		kw = max(kw, len(st.Kind))
	}
	for i, st := range ch.Stages {
		sr := st.StageReport
		if sr == nil {
			continue
		}
		var b strings.Builder
		fmt.Fprintf(&b, "  %d %-*s in %d bits", i+1, kw, st.Kind, sr.InputBits)
		switch {
		case st.Kind == "cic" && st.CICForm == "nonrecursive":
			// Its RegisterBits are the sub-stages' widths, Bin + N i.
			subs := make([]string, len(sr.RegisterBits))
			for j, v := range sr.RegisterBits {
				subs[j] = fmt.Sprint(v)
			}
			fmt.Fprintf(&b, ", sub-stages %s bits", strings.Join(subs, ", "))
		case st.Kind == "cic" && rep.Spec.Interpolates():
			// An interpolator's registers, unpruned: the combs', then
			// the integrators'.
			n := len(sr.RegisterBits) / 2
			fmt.Fprintf(&b, ", combs %d..%d bits, integrators %d..%d bits", sr.RegisterBits[0], sr.RegisterBits[n-1], sr.RegisterBits[n], sr.RegisterBits[2*n-1])
		case st.Kind == "cic":
			// The registers from the first integrator's to the last comb's
			// (the full width, before the first truncation, is the
			// accumulator_bits of report.json).
			fmt.Fprintf(&b, ", registers %d..%d bits", sr.RegisterBits[0], sr.RegisterBits[len(sr.RegisterBits)-1])
		case st.Kind == chain.Farrow.String():
			// Its branches, mu word and Horner register (package
			// chain/fixed, Fractional stages).
			fmt.Fprintf(&b, ", coefficients %d bits (%d rows), branch accumulators %d bits%s, mu %d bits, Horner register %d bits, multiplier %s",
				sr.CoefficientBits, sr.CoefficientRows, sr.AccumulatorBits, overMark(st), sr.MuBits, sr.HornerBits, sr.MultiplierSize)
			if !sr.QuantisedMeetsBands {
				b.WriteString(stageMissNote)
			}
		case rep.Spec.Hardware.Multiplierless:
			fmt.Fprintf(&b, ", coefficients %d bits, accumulator %d bits%s, an adder graph", sr.CoefficientBits, sr.AccumulatorBits, overMark(st))
			if st.CoefficientAdders != nil && st.StructuralAdders != nil {
				fmt.Fprintf(&b, " of %d adders and %d tap adders (one lane, one real filter)", *st.CoefficientAdders, *st.StructuralAdders)
			}
			if !sr.QuantisedMeetsBands {
				b.WriteString(stageMissNote)
			}
		default:
			fmt.Fprintf(&b, ", coefficients %d bits, accumulator %d bits%s, multiplier %s", sr.CoefficientBits, sr.AccumulatorBits, overMark(st), sr.MultiplierSize)
			if sr.HardwareMultipliers != nil {
				fmt.Fprintf(&b, " (%d hardware at %s)", *sr.HardwareMultipliers, rep.Spec.Hardware.Multiplier)
			}
			if !sr.QuantisedMeetsBands {
				b.WriteString(stageMissNote)
			}
		}
		fmt.Fprintf(&b, ", out %d bits", sr.OutputBits)
		fmt.Fprintln(w, b.String())
		// Where a full-scale passband tone drives this output past its
		// largest code (package chain/fixed, Headroom), the terminal says
		// so too.
		for _, p := range sr.RoundingPoints {
			if h, ok := strings.CutPrefix(p, "headroom: "); ok {
				fmt.Fprintf(w, "    headroom: %s\n", h)
			}
		}
	}
	if len(ch.OverLimits) > 0 {
		n := 0
		var within []string // front chains whose word lengths keep every limit
		for k, c := range rep.Front {
			switch {
			case len(c.OverLimits) > 0:
				n++
			case c.ChainReport != nil && len(within) < 3:
				within = append(within, fmt.Sprintf("#%d %s", k+1, c.Notation))
			}
		}
		fmt.Fprintf(w, "  Over the fabric's limits as built: %s", OverLimitsText(ch, rep.Spec.Hardware))
		if len(rep.Front) > 1 {
			fmt.Fprintf(w, " (%d of the %d front chains break a limit: over_limits in report.json)", n, len(rep.Front))
		}
		if len(within) > 0 {
			fmt.Fprintf(w, "; within them: %s", strings.Join(within, ", "))
		}
		fmt.Fprint(w, ".")
		if rep.Spec.Words.CoefficientsMode != "fixed" {
			fmt.Fprint(w, " Without a fixed coefficient width the search cannot hold accumulators, memory as built or native multiplier blocks to the limits; a fixed words.coefficients width has it drop the chains that break them")
			if c := fittingWidth(ch, rep.Spec.Hardware.MaxRegisterBits); slices.Contains(ch.OverLimits, "max_register_bits") && c >= specfile.MinWordBits {
				fmt.Fprintf(w, " (this chain's accumulators would fit up to about %d bits, an estimate: an accumulator grows about a bit per coefficient bit)", c)
			}
			fmt.Fprint(w, ".")
		}
		fmt.Fprintln(w)
	}
}

// fittingWidth is the widest coefficient width at which every FIR,
// half-band and fractional stage of ch would keep its accumulator within
// limit, were each accumulator to keep its present excess over the
// stage's coefficient bits: limit less the largest such excess. An
// estimate (the excess moves by a bit with the rounded taps' sum); 0
// without word lengths.
func fittingWidth(ch Chain, limit int) int {
	excess := -1
	for _, st := range ch.Stages {
		if sr := st.StageReport; sr != nil && st.Kind != "cic" && sr.CoefficientBits > 0 {
			excess = max(excess, sr.AccumulatorBits-sr.CoefficientBits)
		}
	}
	if excess < 0 {
		return 0
	}
	return limit - excess
}

// overMark is " (over the limit)" for a stage whose accumulator passes
// hardware.max_register_bits, else "".
func overMark(st Stage) string {
	if st.AccumulatorOverLimit {
		return " (over the limit)"
	}
	return ""
}

// WriteTable writes the front as the command line's table: one row per
// chain with its figures and verdict, and the notes its columns need.
func WriteTable(w io.Writer, rep *Report) {
	clock := rep.Spec.Hardware.ClockHz != nil
	side := rep.Spec.Side()
	head := []string{"", "#", "chain", "mult/" + side, "adds/" + side, "memory bits", "latency", "rejection", "ripple", "figures"}
	rounded := len(rep.Front) > 0 && rep.Front[0].VerdictBasis == "rounded taps"
	if rounded {
		head[7], head[8] = "rejection*", "ripple*"
	}
	// Multiplierless: the cost axis is the chains' hardware adders, and
	// there are no multipliers.
	adders := rep.Spec.Hardware.Multiplierless
	if adders {
		head[3] = "adders"
	}
	clock = clock && !adders
	if clock {
		head = append(head[:6], append([]string{"multipliers"}, head[6:]...)...)
	}
	// A lanes column when some chain's first stages run above the clock.
	lanes := false
	for _, ch := range rep.Front {
		lanes = lanes || (ch.ParallelLanes != nil && *ch.ParallelLanes > 1)
	}
	if lanes {
		// Before latency: after memory bits, and after multipliers when
		// that column is there, as the rows have it.
		at := 6
		if clock {
			at = 7
		}
		head = append(head[:at], append([]string{"lanes"}, head[at:]...)...)
	}
	rows := [][]string{head}
	unjudged := 0     // chains whose rounded taps could not be judged
	var over []string // chains over the fabric's limits as built, in words
	for i, ch := range rep.Front {
		mark := ""
		if i == rep.Recommended {
			mark = "*"
		}
		kind := "estimated"
		if ch.Designed {
			kind = "designed"
		}
		switch {
		case !ch.MeetsTargets && rep.Partial && ch.Unjudged() && ch.WordLengthsError == StoppedBeforeWordLengths:
			// Stopped before its word lengths: its rounded taps are not judged.
			kind += ", not judged (stopped)"
			unjudged++
		case !ch.MeetsTargets && ch.Unjudged():
			// Its rounded taps could not be judged (their word lengths
			// could not be planned): the figures are the float design's.
			kind += ", misses spec (float figures: rounded taps not judged)"
			unjudged++
		case !ch.MeetsTargets:
			kind += ", misses spec"
		}
		if len(ch.OverLimits) > 0 {
			kind += ", over limits"
			over = append(over, fmt.Sprintf("#%d %s", i+1, OverLimitsText(ch, rep.Spec.Hardware)))
		}
		rej, rip := ch.BuiltFigures()
		axis := TrimFloat(ch.MultipliesPerOutput, 1)
		if adders {
			axis = "-"
			if ch.Adders != nil {
				axis = fmt.Sprint(*ch.Adders)
			}
		}
		row := []string{mark, fmt.Sprint(i + 1), ch.Notation,
			axis, TrimFloat(ch.AddsPerOutput, 1), fmt.Sprint(ch.MemoryBits)}
		if clock {
			m := 0
			if ch.MultipliersAtClock != nil {
				m = *ch.MultipliersAtClock
			}
			row = append(row, fmt.Sprint(m))
		}
		if lanes {
			row = append(row, fmt.Sprint(*ch.ParallelLanes))
		}
		row = append(row,
			fmt.Sprintf("%s (%.1f %s)", Seconds(ch.LatencyS), ch.LatencySamples, side),
			fmt.Sprintf("%.2f dB", rej),
			RippleText(rip),
			kind)
		rows = append(rows, row)
	}
	WriteAligned(w, "", rows, func(i int) bool { return i >= 3 && i < len(head)-1 })
	if rounded {
		what := "rounded to the automatic widths"
		if c := rep.Spec.Words.Coefficients; c != nil {
			what = fmt.Sprintf("rounded to %d bits", *c)
		}
		if unjudged == len(rep.Front) {
			fmt.Fprintf(w, "* the float design's figures: its taps %s, as they will be built, were not judged (see the word lengths)", what)
		} else {
			fmt.Fprintf(w, "* the worse of the float design and its taps %s, as they will be built: the verdict needs both to meet", what)
			if unjudged > 0 {
				fmt.Fprintf(w, " (the float design's where the rounded taps were not judged)")
			}
		}
		if rep.Spec.Words.CoefficientsMode == "auto" && !rep.Spec.Hardware.Multiplierless {
			fmt.Fprintf(w, "; memory counts %d-bit coefficient words, report.json's fixed_memory_bits the chosen widths", cost.FloatCoefBits)
		}
		fmt.Fprintln(w)
	}
	if !rounded && rep.Spec.Words.CoefficientsMode != "fixed" && !adders && len(rep.Front) > 0 {
		// Floating-point taps have no width: the memory column stands
		// them at the cost model's, which the chosen widths differ from.
		fmt.Fprintf(w, "memory bits count %d-bit coefficient words (the taps have no fixed width); report.json's fixed_memory_bits counts the widths the word lengths chose\n", cost.FloatCoefBits)
	}
	if len(over) > 0 {
		fmt.Fprintf(w, "over limits: as built, by the word lengths planned for each, %s", strings.Join(over, "; "))
		if rep.Spec.Words.CoefficientsMode != "fixed" {
			fmt.Fprint(w, " (without a fixed coefficient width the search cannot hold these: a fixed words.coefficients width has it drop such chains)")
		}
		fmt.Fprintln(w)
	}
	if adders {
		fmt.Fprintf(w, "adders: multiplierless, each FIR and half-band stage a shared adder graph of its rounded taps plus one adder per nonzero tap after the first, times its lanes and real filters, and each CIC's integrators and combs (the hardware, the front's cost axis; adds/%s counts the tap sums and the CICs only)", side)
		fmt.Fprintln(w)
	}
	if lanes && rep.Spec.Interpolates() {
		fmt.Fprintf(w, "lanes: the output (%s) runs above the %s clock, so the last stages deliver that many samples per clock cycle, built as parallel lanes; a CIC's integrators are counted once per lane in its memory (an estimate of the structure: the vendor's tools decide)\n",
			units.FormatFrequency(rep.Spec.OutputRateHz), units.FormatFrequency(*rep.Spec.Hardware.ClockHz))
	} else if lanes {
		fmt.Fprintf(w, "lanes: the input (%s) runs above the %s clock, so the first stages take that many samples per clock cycle, built as parallel lanes; a CIC's integrators are counted once per lane in its memory (an estimate of the structure: the vendor's tools decide)\n",
			units.FormatFrequency(rep.Spec.InputRateHz), units.FormatFrequency(*rep.Spec.Hardware.ClockHz))
	}
}

// RippleText writes a ripple figure; the analysis caps an unbounded one (a
// null of the response inside the passband) at chain.MaxFigureDB, which
// is no figure the hardware shows: it is written "null in passband".
func RippleText(db float64) string {
	if db >= chain.MaxFigureDB {
		return "null in passband"
	}
	return fmt.Sprintf("%.4f dB", db)
}

// GainText writes a gain in dB to two decimals, a gain that rounds to
// zero as 0.00 dB whatever its sign (not -0.00 dB).
func GainText(db float64) string {
	t := fmt.Sprintf("%.2f dB", db)
	if t == "-0.00 dB" {
		return "0.00 dB"
	}
	return t
}

// TrimFloat writes v without decimals when it is whole, else with prec.
func TrimFloat(v float64, prec int) string {
	if v == math.Trunc(v) {
		return fmt.Sprintf("%.0f", v)
	}
	return fmt.Sprintf("%.*f", prec, v)
}

// Seconds writes a time in s, ms, us or ns, to three digits.
func Seconds(s float64) string {
	switch {
	case s >= 1:
		return fmt.Sprintf("%.3g s", s)
	case s >= 1e-3:
		return fmt.Sprintf("%.3g ms", s*1e3)
	case s >= 1e-6:
		return fmt.Sprintf("%.3g us", s*1e6)
	}
	return fmt.Sprintf("%.3g ns", s*1e9)
}

// capitalise upper-cases s's first letter.
func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// WriteAligned writes rows as a table after indent: columns two spaces
// apart, each as wide as its widest cell, right-aligned where right says
// so. A row shorter than the first (the header) ends in a cell that takes
// no width and runs to the end of the line, such as a detail.
func WriteAligned(w io.Writer, indent string, rows [][]string, right func(col int) bool) {
	if len(rows) == 0 {
		return
	}
	full := len(rows[0])
	widths := make([]int, full)
	for _, r := range rows {
		n := len(r)
		if n < full {
			n--
		}
		for i, c := range r[:max(0, n)] {
			widths[i] = max(widths[i], len(c))
		}
	}
	for _, r := range rows {
		var b strings.Builder
		for i, c := range r {
			if i > 0 {
				b.WriteString("  ")
			}
			switch {
			case len(r) < full && i == len(r)-1:
				b.WriteString(c)
			case right(i):
				fmt.Fprintf(&b, "%*s", widths[i], c)
			default:
				fmt.Fprintf(&b, "%-*s", widths[i], c)
			}
		}
		fmt.Fprintln(w, indent+strings.TrimRight(b.String(), " "))
	}
}

// stageMissNote follows a stage whose rounded taps miss the bands it was
// designed to: those bands are the stage's share of the budget, not the
// verdict, which is the whole chain's figures (a one-stage chain's too:
// its stage's bands need not be the chain's).
const stageMissNote = ", rounded taps miss the bands this stage was designed to (the verdict is the whole chain's figures above)"

// hasTaps reports whether ch has a stage with taps (any but a CIC).
func hasTaps(ch *Chain) bool {
	for _, st := range ch.Stages {
		if st.Kind != "cic" {
			return true
		}
	}
	return false
}
