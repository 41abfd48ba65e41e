package chain

import (
	"fmt"
	"math"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Spec is what the user asks of the whole chain. Rates and frequencies in Hz,
// ripple peak-to-peak dB, rejection positive dB (docs/design.md §2-§3).
//
// OutputRate below InputRate makes a decimation chain, above it an
// interpolation chain (Direction). The band edges are on the channel side,
// the lower of the two rates, in both directions.
type Spec struct {
	InputRate   float64 // the rate of the samples entering the chain
	OutputRate  float64 // the rate of the samples it delivers
	Passband    float64 // fp
	Protected   float64 // fa; zero means Passband
	Stopband    float64 // fs; zero means OutputRate - Protected
	RippleDB    float64
	RejectionDB float64
	// RejectionMask, when not nil, asks each alias band for the mask's
	// rejection at its input frequency instead of one flat RejectionDB
	// (see Mask); RejectionDB is then the mask's largest rejection (zero
	// fills it in; another value is refused), the level the figures of
	// the analysis are stated against (Analysis).
	RejectionMask *Mask
	Complex       bool // I/Q: two real filters

	InputBits  int // zero means 16
	OutputBits int // zero means 24
	CoefBits   int // zero means floating-point coefficients
	// NoiseShaped says that the input words are a noise-shaped
	// converter's (a sigma-delta modulator's, package sigmadelta), whose
	// quantisation noise the rejection mask accounts for: InputBits may
	// then be 1. It changes nothing else here. Only a decimation spec
	// takes it.
	NoiseShaped bool
	// RatioTolerancePPM, when above zero, lets the chain's rate ratio
	// differ from InputRate/OutputRate by up to this many parts per
	// million: the ratio is then the fraction with the smallest
	// denominator within the tolerance (Fraction). Zero asks for the ratio
	// of the two rates as written, an integer or a fraction whose
	// denominator is at most MaxFractionDen.
	RatioTolerancePPM float64

	// capGaps marks the spec of a fractional chain's integer stages
	// (IntegerSpec): their multiband FIRs' don't-care bands are held to
	// unit gain (Requirement.GapLimit).
	capGaps bool
	// dcRaised marks the decimation view of a real interpolation spec
	// whose rejection target build has raised for the images of a DC
	// input (dcImagesDoubled), so that the parts it plans on specs of
	// their own are not raised again.
	dcRaised bool

	// raisedDB is how far RejectionRaised has raised the rejection
	// target above the caller's: MaxRejectionDB bounds the caller's
	// target, and the raised one may pass it by up to RaiseHeadroomDB.
	raisedDB float64

	// transposed marks the decimation view of an interpolation spec
	// (DecimationView): its rates are swapped, and Direction still says
	// Interpolate.
	transposed bool
}

// Direction is which way a chain changes the rate.
type Direction int

const (
	// Decimate lowers the rate: OutputRate = InputRate / D.
	Decimate Direction = iota
	// Interpolate raises it: OutputRate = L InputRate.
	Interpolate
)

// String returns "decimate" or "interpolate".
func (d Direction) String() string {
	if d == Interpolate {
		return "interpolate"
	}
	return "decimate"
}

// Direction returns Interpolate when the spec raises the rate (OutputRate
// above InputRate, or a DecimationView of such a spec) and Decimate
// otherwise.
func (s Spec) Direction() Direction {
	if s.transposed || s.OutputRate > s.InputRate {
		return Interpolate
	}
	return Decimate
}

// DecimationView returns the spec the chain package plans, designs and
// measures with: for a decimation spec, s itself; for an interpolation
// spec, its transpose, with InputRate the high rate (the spec's
// OutputRate) and OutputRate the channel rate (the spec's InputRate),
// every other field unchanged and Direction still Interpolate. An
// interpolation chain is the transpose of a decimation chain, stage for
// stage: the same filters, at the same rates, in the opposite order, so
// the same bands, responses, requirements and figures hold for both (see
// the package documentation, Interpolation). A view's view is itself.
func (s Spec) DecimationView() Spec {
	if s.transposed || s.OutputRate <= s.InputRate {
		return s
	}
	s.InputRate, s.OutputRate = s.OutputRate, s.InputRate
	s.transposed = true
	return s
}

// SignalView is the inverse of DecimationView: the spec as the user wrote
// it, InputRate the rate entering the chain.
func (s Spec) SignalView() Spec {
	if !s.transposed {
		return s
	}
	s.InputRate, s.OutputRate = s.OutputRate, s.InputRate
	s.transposed = false
	return s
}

// HighRate returns the higher of the two rates: the ADC's for a decimation
// chain, the DAC's for an interpolation chain.
func (s Spec) HighRate() float64 { return math.Max(s.InputRate, s.OutputRate) }

// ChannelRate returns the lower of the two rates, the channel's, on which
// the band edges are given.
func (s Spec) ChannelRate() float64 { return math.Min(s.InputRate, s.OutputRate) }

// Defaults filled in by Normalize.
const (
	DefaultInputBits  = 16
	DefaultOutputBits = 24
	// MaxRejectionDB bounds the rejection target: beyond it float64
	// coefficients and the design engine's grid stop being meaningful.
	MaxRejectionDB = 150
	// RaiseHeadroomDB is how far past MaxRejectionDB the design target of
	// a spec raised inside the search (RejectionRaised: a real
	// interpolation chain's 6.02 dB for the images of DC, a fractional
	// chain's ripple share, re-designs for a shortfall or for rounding)
	// may go; the engine's figures hold there still.
	RaiseHeadroomDB = 30
	// MaxRippleDB bounds the passband ripple: a passband whose gain may
	// vary by more than 10 dB peak-to-peak is no passband (common
	// practice: front-end specs ask for hundredths of a dB to a few dB),
	// and a budget that large lets an uncorrected CIC's droop pass as
	// flat.
	MaxRippleDB = 10
	// MaxRateHz and MinRateHz bound the input and the output rate. Every
	// result depends on the rates only through their ratios, but float64
	// arithmetic does not: products such as 2 pi f overflow near 1e308 Hz,
	// and the certified cascade analysis measured figures off by several
	// dB (optimistic) from about 1e60 Hz up and 1e-60 Hz down. 1e-30 to
	// 1e30 Hz leaves a wide margin on both sides of every rate in use.
	MaxRateHz = 1e30
	MinRateHz = 1e-30
)

// ratioTol is the relative tolerance within which InputRate/OutputRate counts
// as an integer (rates typed in decimal rarely divide exactly in binary).
const ratioTol = 1e-9

// SpecError is a problem with one field of a Spec.
type SpecError struct {
	Field string
	Value float64
	// Rule is the rule Value breaks. Other fields it names are written in
	// braces, {OutputRate}, so that a caller can say them in its own words
	// (RuleIn); Error writes the Go field names.
	Rule string
}

func (e *SpecError) Error() string {
	return fmt.Sprintf("chain: spec %s = %s: %s", e.Field, fmtNum(e.Value), e.RuleIn(nil))
}

// RuleIn is Rule with each field it names, {Field}, written as name(Field);
// a nil name writes the Go field name.
func (e *SpecError) RuleIn(name func(field string) string) string {
	var b strings.Builder
	r := e.Rule
	for {
		i := strings.IndexByte(r, '{')
		if i < 0 {
			break
		}
		j := strings.IndexByte(r[i:], '}')
		if j < 0 {
			break
		}
		field := r[i+1 : i+j]
		b.WriteString(r[:i])
		if name != nil {
			field = name(field)
		}
		b.WriteString(field)
		r = r[i+j+1:]
	}
	b.WriteString(r)
	return b.String()
}

// fmtNum is v as messages give numbers: up to 10 significant digits, in
// the spec's notation (units.FormatNumber).
func fmtNum(v float64) string { return units.FormatNumber(v, 10) }

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// Normalize returns s with defaults filled in, or an error naming the field,
// the value and the rule it breaks.
func (s Spec) Normalize() (Spec, error) {
	bad := func(field string, v float64, rule string, args ...any) (Spec, error) {
		return Spec{}, &SpecError{Field: field, Value: v, Rule: fmt.Sprintf(rule, args...)}
	}
	if !finite(s.InputRate) || s.InputRate <= 0 {
		return bad("InputRate", s.InputRate, "must be a finite rate above 0 Hz")
	}
	if !finite(s.OutputRate) || s.OutputRate <= 0 {
		return bad("OutputRate", s.OutputRate, "must be a finite rate above 0 Hz")
	}
	for _, r := range []struct {
		field string
		v     float64
	}{{"InputRate", s.InputRate}, {"OutputRate", s.OutputRate}} {
		if r.v > MaxRateHz {
			return bad(r.field, r.v, "must be at most %s Hz (rates from %s to %s Hz are supported)", fmtNum(MaxRateHz), fmtNum(MinRateHz), fmtNum(MaxRateHz))
		}
		if r.v < MinRateHz {
			return bad(r.field, r.v, "must be at least %s Hz (rates from %s to %s Hz are supported)", fmtNum(MinRateHz), fmtNum(MinRateHz), fmtNum(MaxRateHz))
		}
	}
	if s.OutputRate == s.InputRate {
		return bad("OutputRate", s.OutputRate, "must differ from {InputRate} = %s Hz (below it the chain decimates, above it the chain interpolates)", fmtNum(s.InputRate))
	}
	// hi and lo name the high-rate and the channel-side fields: the band
	// rules below are the same in both directions, on the channel side.
	hi, lo := "InputRate", "OutputRate"
	hr, fk := s.InputRate, s.OutputRate
	if s.Direction() == Interpolate && !s.transposed {
		hi, lo = lo, hi
		hr, fk = fk, hr
	}
	if !finite(s.RatioTolerancePPM) || s.RatioTolerancePPM < 0 || s.RatioTolerancePPM > MaxRatioTolerancePPM {
		return bad("RatioTolerancePPM", s.RatioTolerancePPM, "must lie in [0, %s] ppm", fmtNum(MaxRatioTolerancePPM))
	}
	ratio := hr / fk
	d := math.Round(ratio)
	if d > math.MaxInt32 {
		return bad("OutputRate", s.OutputRate, "{%s}/{%s} = %s is beyond the supported ratio %d", hi, lo, fmtNum(d), math.MaxInt32)
	}
	if integer := math.Abs(ratio-d) <= ratioTol*ratio && d >= 2; !integer {
		if _, _, ok := fractionOf(ratio, s.ratioTolerance()); !ok {
			if s.RatioTolerancePPM > 0 {
				return bad("OutputRate", s.OutputRate, "{%s}/{%s} = %s: no fraction with a denominator of at most %d lies within {RatioTolerancePPM} = %s ppm of it; allow more ppm",
					hi, lo, fmtNum(ratio), MaxFractionDen, fmtNum(s.RatioTolerancePPM))
			}
			return bad("OutputRate", s.OutputRate, "{%s}/{%s} = %s is neither an integer nor a fraction with a denominator of at most %d; give {RatioTolerancePPM} to accept a ratio within that many ppm",
				hi, lo, fmtNum(ratio), MaxFractionDen)
		}
	}
	if p, q := s.Fraction(); q >= 1 && (p <= q || (q == 1 && p < 2)) {
		return bad("OutputRate", s.OutputRate, "{%s}/{%s} = %s is taken as the ratio %d/%d: the ratio must be at least 2, or a fraction above 1", hi, lo, fmtNum(ratio), p, q)
	}
	if !finite(s.Passband) || s.Passband <= 0 || s.Passband >= fk/2 {
		return bad("Passband", s.Passband, "must lie in (0, {%s}/2 = %s Hz)", lo, fmtNum(fk/2))
	}
	if s.Protected == 0 {
		s.Protected = s.Passband
	}
	if !finite(s.Protected) || s.Protected < s.Passband || s.Protected > fk/2 {
		return bad("Protected", s.Protected, "must lie in [{Passband} = %s Hz, {%s}/2 = %s Hz]", fmtNum(s.Passband), lo, fmtNum(fk/2))
	}
	if s.Stopband == 0 {
		s.Stopband = fk - s.Protected
	}
	if !finite(s.Stopband) || s.Stopband <= s.Passband || s.Stopband > fk-s.Protected {
		return bad("Stopband", s.Stopband, "must lie in ({Passband} = %s Hz, {%s} - {Protected} = %s Hz]", fmtNum(s.Passband), lo, fmtNum(fk-s.Protected))
	}
	if !finite(s.RippleDB) || s.RippleDB <= 0 || s.RippleDB > MaxRippleDB {
		return bad("RippleDB", s.RippleDB, "must lie in (0, %d] dB (peak-to-peak over the passband)", MaxRippleDB)
	}
	if s.RejectionMask != nil {
		// The mask covers the input band [0, F/2], F the high rate: a
		// point beyond it would set a target no alias is held to.
		if p := s.RejectionMask.Points(); p[len(p)-1].Hz > hr/2 {
			return bad("RejectionMask", p[len(p)-1].Hz, "has a point above half the high rate, %s Hz: the mask covers the band [0, %s Hz] where aliases come from; end it there", fmtNum(hr/2), fmtNum(hr/2))
		}
		if s.RejectionDB != 0 && s.RejectionDB != s.RejectionMask.Max() {
			return bad("RejectionDB", s.RejectionDB, "is set beside {RejectionMask}: give one of them (the mask's largest rejection, %s dB, stands for the flat target)", fmtNum(s.RejectionMask.Max()))
		}
		s.RejectionDB = s.RejectionMask.Max()
	}
	if user := s.RejectionDB - s.raisedDB; !finite(s.RejectionDB) || user <= 0 || user > MaxRejectionDB || s.RejectionDB <= 0 {
		return bad("RejectionDB", user, "must lie in (0, %d] dB", MaxRejectionDB)
	}
	if s.RejectionDB > MaxRejectionDB+RaiseHeadroomDB {
		return bad("RejectionDB", s.RejectionDB-s.raisedDB, "raised by %s dB inside the search to %s dB, past the %d dB the filters are designed to", fmtNum(s.raisedDB), fmtNum(s.RejectionDB), MaxRejectionDB+RaiseHeadroomDB)
	}
	if s.InputBits == 0 {
		s.InputBits = DefaultInputBits
	}
	if s.OutputBits == 0 {
		s.OutputBits = DefaultOutputBits
	}
	if s.NoiseShaped && s.Direction() == Interpolate {
		return bad("OutputRate", s.OutputRate, "a noise-shaped input (NoiseShaped) feeds a decimation chain: {OutputRate} must be below {InputRate}")
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", s.InputBits}, {"OutputBits", s.OutputBits}, {"CoefBits", s.CoefBits}} {
		if f.name == "CoefBits" && f.v == 0 {
			continue
		}
		if f.name == "InputBits" && s.NoiseShaped && f.v == 1 {
			continue // a single-bit modulator's codes
		}
		if f.v < 2 || f.v > 64 {
			return bad(f.name, float64(f.v), "must lie in [2, 64] bits")
		}
	}
	return s, nil
}

// RejectionRaised returns s with its rejection target raised by db dB
// (lowered for a negative db): the flat target, or every point of the
// mask. The search designs a chain again against it when the chain misses
// by a little. The target may pass MaxRejectionDB by up to
// RaiseHeadroomDB (the caller's own is still held to MaxRejectionDB); one
// raised further, or lowered to 0 dB, is left for Normalize to refuse.
func (s Spec) RejectionRaised(db float64) Spec {
	s.raisedDB += db
	if s.RejectionMask == nil {
		s.RejectionDB += db
		return s
	}
	m, err := s.RejectionMask.shifted(db, MaxRejectionDB+RaiseHeadroomDB)
	if err != nil {
		// Beside the mask, a RejectionDB that is not its largest
		// rejection: Normalize refuses the spec.
		s.RejectionDB += db
		return s
	}
	s.RejectionMask, s.RejectionDB = m, m.Max()
	return s
}

// Decimation returns D = InputRate/OutputRate of a normalised decimation
// spec, or of an interpolation spec's DecimationView; 1 for an
// interpolation spec itself, and 0 for a spec whose ratio is not an
// integer (Fraction gives it).
func (s Spec) Decimation() int {
	if !(s.OutputRate > 0) || !finite(s.InputRate) {
		return 0
	}
	if !s.transposed && s.OutputRate > s.InputRate {
		return 1
	}
	p, q := s.Fraction()
	if q > 1 {
		return 0
	}
	if q == 1 && s.RatioTolerancePPM > 0 {
		return p // the integer within the tolerance, not the nearest
	}
	return int(math.Round(s.InputRate / s.OutputRate))
}

// Interpolation returns L = OutputRate/InputRate of a normalised
// interpolation spec, 1 for a decimation spec, and 0 for an
// interpolation spec whose ratio is not an integer (Fraction gives it).
func (s Spec) Interpolation() int {
	if s.Direction() == Decimate {
		return 1
	}
	v := s.DecimationView()
	if !(v.OutputRate > 0) || !finite(v.InputRate) || s.Fractional() {
		return 0
	}
	if p, q := s.Fraction(); q == 1 && s.RatioTolerancePPM > 0 {
		return p
	}
	return int(math.Round(v.InputRate / v.OutputRate))
}

// Ratio returns the rate change, D for a decimation spec and L for an
// interpolation spec: the product of the chain's stage factors.
func (s Spec) Ratio() int {
	if s.Direction() == Interpolate {
		return s.Interpolation()
	}
	return s.Decimation()
}

// RippleToDev converts a peak-to-peak ripple in dB to the linear passband
// deviation dp, inverting ripple_db = 20 log10((1+dp)/(1-dp)) (docs/design.md §2).
func RippleToDev(rippleDB float64) float64 {
	g := math.Pow(10, rippleDB/20)
	return (g - 1) / (g + 1)
}

// DevToRipple is the inverse of RippleToDev.
func DevToRipple(dp float64) float64 { return 20 * math.Log10((1+dp)/(1-dp)) }

// RejectionToDev converts a rejection in positive dB to the linear stopband
// deviation ds = 10^(-dB/20).
func RejectionToDev(rejDB float64) float64 { return math.Pow(10, -rejDB/20) }

// DevToRejection is the inverse of RejectionToDev, -20 log10(ds), bounded
// to [-MaxFigureDB, MaxFigureDB] so that an exact zero (or a NaN) gives
// MaxFigureDB rather than an infinity.
func DevToRejection(ds float64) float64 {
	if !(ds > 0) {
		return MaxFigureDB
	}
	return math.Max(-MaxFigureDB, math.Min(MaxFigureDB, -20*math.Log10(ds)))
}
