package chain

import (
	"fmt"
	"math"
	"strings"
)

// Spec is what the user asks of the whole chain. Rates and frequencies in Hz,
// ripple peak-to-peak dB, rejection positive dB (docs/design.md §2-§3).
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

// Defaults filled in by Normalize.
const (
	DefaultInputBits  = 16
	DefaultOutputBits = 24
	// MaxRejectionDB bounds the rejection target: beyond it float64
	// coefficients and the design engine's grid stop being meaningful.
	MaxRejectionDB = 150
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

func fmtNum(v float64) string { return fmt.Sprintf("%.10g", v) }

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
	if s.InputRate > MaxRateHz {
		return bad("InputRate", s.InputRate, "must be at most %s Hz (rates from %s to %s Hz are supported)", fmtNum(MaxRateHz), fmtNum(MinRateHz), fmtNum(MaxRateHz))
	}
	if s.OutputRate < MinRateHz {
		return bad("OutputRate", s.OutputRate, "must be at least %s Hz (rates from %s to %s Hz are supported)", fmtNum(MinRateHz), fmtNum(MinRateHz), fmtNum(MaxRateHz))
	}
	if s.OutputRate >= s.InputRate {
		return bad("OutputRate", s.OutputRate, "must be below {InputRate} = %s Hz (the chain decimates)", fmtNum(s.InputRate))
	}
	ratio := s.InputRate / s.OutputRate
	d := math.Round(ratio)
	if math.Abs(ratio-d) > ratioTol*ratio || d < 2 {
		lo, hi := math.Max(2, math.Floor(ratio)), math.Max(2, math.Ceil(ratio))
		if lo == hi {
			hi++
		}
		return bad("OutputRate", s.OutputRate,
			"{InputRate}/{OutputRate} = %s is not an integer ratio; the nearest integer ratios are %s ({OutputRate} %s Hz) and %s ({OutputRate} %s Hz)",
			fmtNum(ratio), fmtNum(lo), fmtNum(s.InputRate/lo), fmtNum(hi), fmtNum(s.InputRate/hi))
	}
	if d > math.MaxInt32 {
		return bad("OutputRate", s.OutputRate, "{InputRate}/{OutputRate} = %s is beyond the supported ratio %d", fmtNum(d), math.MaxInt32)
	}
	fk := s.OutputRate
	if !finite(s.Passband) || s.Passband <= 0 || s.Passband >= fk/2 {
		return bad("Passband", s.Passband, "must lie in (0, {OutputRate}/2 = %s Hz)", fmtNum(fk/2))
	}
	if s.Protected == 0 {
		s.Protected = s.Passband
	}
	if !finite(s.Protected) || s.Protected < s.Passband || s.Protected > fk/2 {
		return bad("Protected", s.Protected, "must lie in [{Passband} = %s Hz, {OutputRate}/2 = %s Hz]", fmtNum(s.Passband), fmtNum(fk/2))
	}
	if s.Stopband == 0 {
		s.Stopband = fk - s.Protected
	}
	if !finite(s.Stopband) || s.Stopband <= s.Passband || s.Stopband > fk-s.Protected {
		return bad("Stopband", s.Stopband, "must lie in ({Passband} = %s Hz, {OutputRate} - {Protected} = %s Hz]", fmtNum(s.Passband), fmtNum(fk-s.Protected))
	}
	if !finite(s.RippleDB) || s.RippleDB <= 0 {
		return bad("RippleDB", s.RippleDB, "must be a finite peak-to-peak ripple above 0 dB")
	}
	if !finite(s.RejectionDB) || s.RejectionDB <= 0 || s.RejectionDB > MaxRejectionDB {
		return bad("RejectionDB", s.RejectionDB, "must lie in (0, %d] dB", MaxRejectionDB)
	}
	if s.InputBits == 0 {
		s.InputBits = DefaultInputBits
	}
	if s.OutputBits == 0 {
		s.OutputBits = DefaultOutputBits
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", s.InputBits}, {"OutputBits", s.OutputBits}, {"CoefBits", s.CoefBits}} {
		if f.name == "CoefBits" && f.v == 0 {
			continue
		}
		if f.v < 2 || f.v > 64 {
			return bad(f.name, float64(f.v), "must lie in [2, 64] bits")
		}
	}
	return s, nil
}

// Decimation returns D = InputRate/OutputRate (of a normalised spec).
func (s Spec) Decimation() int {
	if !(s.OutputRate > 0) || !finite(s.InputRate) {
		return 0
	}
	return int(math.Round(s.InputRate / s.OutputRate))
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
