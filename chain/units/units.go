package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Kind is the dimension of a quantity.
type Kind int

const (
	// Frequency is a frequency in Hz (Hz, kHz, MHz, GHz).
	Frequency Kind = iota
	// Level is a level or ratio in dB.
	Level
	// Rate is a sample rate in samples per second, written with the
	// frequency units or the sample-rate ones of the trade: S/s, kS/s,
	// MS/s, GS/s and sps, ksps, Msps, Gsps (any case of "sps").
	Rate
)

// String returns "frequency", "level" or "sample rate".
func (k Kind) String() string {
	switch k {
	case Level:
		return "level"
	case Rate:
		return "sample rate"
	}
	return "frequency"
}

// Error is a quantity that does not parse. Its message quotes the value and
// states the rule it breaks; callers prefix the field name.
type Error struct {
	Value string // the text as given
	Rule  string // what the value breaks
}

// RangeRule is the rule of a number too large (or too close to zero, not
// zero) for a float64 to hold: in the user's words.
const RangeRule = "out of range: larger than about 1.8e308, or too small to hold"

// Error quotes the value, cut to MaxEcho characters, and states the rule.
func (e *Error) Error() string { return fmt.Sprintf("%q: %s", Clip(e.Value, MaxEcho), e.Rule) }

// ParseFrequency parses a frequency in Hz: "45", "45 Hz", "1.2 MHz", "2.5GHz".
func ParseFrequency(s string) (float64, error) { return Parse(s, Frequency) }

// ParseRate parses a sample rate in samples per second: "100 MS/s",
// "2.4 GSPS", "122.88 MHz", "48000".
func ParseRate(s string) (float64, error) { return Parse(s, Rate) }

// ParseLevel parses a level in dB: "85", "85 dB", "0.1dB".
func ParseLevel(s string) (float64, error) { return Parse(s, Level) }

// Parse parses s as a quantity of kind k and returns it in the base unit
// (Hz or dB). The result is always finite.
func Parse(s string, k Kind) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, &Error{s, "empty; want a number" + unitHint(k)}
	}
	if isPrefixed(t) {
		return 0, &Error{s, "hexadecimal, octal and binary numbers are not accepted; write the number in decimal"}
	}
	// The unit is the trailing run of letters and slashes; the rest is the number.
	num, unit := splitUnit(t)
	if num == "" {
		return 0, &Error{s, "not a number; want a number" + unitHint(k)}
	}
	if !isDecimal(num) {
		// A number followed by more than a unit ("0.2 dB pk-pk", "1 %",
		// "480 kHz flat"): the number is right, what follows it is not.
		// A rest that starts with e or E is a broken exponent ("1e kHz"),
		// which the number's own message names.
		if n, rest := leadingNumber(t); n != "" && rest != "" && !strings.ContainsAny(rest, "0123456789+") && !strings.ContainsAny(rest[:1], ".-eE") {
			if _, rule := unitShift(rest, k); rule != "" {
				return 0, &Error{s, rule}
			}
		}
		return 0, &Error{s, fmt.Sprintf("%q is not a decimal number", Clip(num, MaxEcho))}
	}
	shift, rule := unitShift(unit, k)
	if rule != "" {
		return 0, &Error{s, rule}
	}
	// Shift the decimal exponent rather than multiply, so that "245.76 MHz" is
	// exactly the double nearest 245760000 and rate ratios stay integers.
	if shift != 0 {
		mant, exp := num, 0
		if j := strings.IndexAny(num, "eE"); j >= 0 {
			e, err := strconv.Atoi(num[j+1:])
			if err != nil {
				return 0, &Error{s, RangeRule}
			}
			mant, exp = num[:j], e
		}
		num = mant + "e" + strconv.Itoa(exp+shift)
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, &Error{s, RangeRule}
	}
	return v, nil
}

// CheckFinite reports an error for a NaN or infinite number that came from
// somewhere other than text (a TOML float, say).
func CheckFinite(v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return &Error{strconv.FormatFloat(v, 'g', -1, 64), "not a finite number"}
	}
	return nil
}

func unitHint(k Kind) string {
	switch k {
	case Level:
		return ", optionally followed by dB"
	case Rate:
		return ", optionally followed by S/s, kS/s, MS/s, GS/s or Hz, kHz, MHz, GHz"
	}
	return ", optionally followed by Hz, kHz, MHz or GHz"
}

// rateShift is the power of ten of a sample-rate unit (S/s, kS/s, MS/s,
// GS/s, sps, ksps, Msps, Gsps), and whether u is one.
func rateShift(u string) (int, bool) {
	var body string
	switch {
	case strings.HasSuffix(u, "S/s"):
		body = strings.TrimSuffix(u, "S/s")
	case len(u) >= 3 && strings.EqualFold(u[len(u)-3:], "sps"):
		body = u[:len(u)-3]
	default:
		return 0, false
	}
	switch body {
	case "":
		return 0, true
	case "k", "K":
		return 3, true
	case "M":
		return 6, true
	case "G":
		return 9, true
	}
	return 0, false
}

func isUnitByte(c byte) bool {
	return c == '/' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z')
}

// isDecimal reports whether s is [+-]digits[.digits][(e|E)[+-]digits] with at
// least one digit in the mantissa.
func isDecimal(s string) bool {
	n := decimalPrefix(s)
	return n > 0 && n == len(s)
}

// decimalPrefix is the length of the longest prefix of s that is a
// decimal number as isDecimal takes it (an exponent counts only with its
// digits); 0 when s starts with none.
func decimalPrefix(s string) int {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && isDigit(s[i]) {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && isDigit(s[i]) {
			i++
			digits++
		}
	}
	if digits == 0 {
		return 0
	}
	if j := i; j < len(s) && (s[j] == 'e' || s[j] == 'E') {
		j++
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		if j < len(s) && isDigit(s[j]) {
			for j < len(s) && isDigit(s[j]) {
				j++
			}
			i = j
		}
	}
	return i
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// isPrefixed reports whether s starts, after an optional sign, with 0x, 0o or
// 0b (any case), the way hexadecimal, octal and binary numbers are written.
func isPrefixed(s string) bool {
	s = strings.TrimLeft(s, "+-")
	return len(s) > 2 && s[0] == '0' && strings.ContainsRune("xXoObB", rune(s[1]))
}

// unitShift returns the power of ten to the base unit, or a rule the unit breaks.
func unitShift(u string, k Kind) (int, string) {
	shown := Clip(u, 20)
	if k == Level {
		switch {
		case u == "", strings.EqualFold(u, "dB"):
			return 0, ""
		}
		return 0, fmt.Sprintf("unknown unit %q for a level (want dB or a plain number)", shown)
	}
	if u == "" {
		return 0, ""
	}
	if n, ok := rateShift(u); ok {
		if k == Rate {
			return n, ""
		}
		return 0, fmt.Sprintf("%q is a sample-rate unit, and this is a frequency: write it in Hz, kHz, MHz or GHz", shown)
	}
	if strings.EqualFold(u, "hz") {
		return 0, ""
	}
	if len(u) == 3 && strings.EqualFold(u[1:], "hz") {
		switch u[0] {
		case 'k', 'K':
			return 3, ""
		case 'M':
			return 6, ""
		case 'G', 'g':
			return 9, ""
		case 'm':
			return 0, fmt.Sprintf("unit %q would be millihertz, which stepdown does not take; write MHz for megahertz", u)
		}
	}
	switch u {
	case "k", "K", "M", "m", "G", "g":
		return 0, fmt.Sprintf("bare prefix %q; spell the unit out (%sHz)", u, canonicalPrefix(u))
	}
	if k == Rate {
		return 0, fmt.Sprintf("unknown unit %q for a sample rate (want S/s, kS/s, MS/s, GS/s, sps forms, Hz, kHz, MHz, GHz or a plain number)", shown)
	}
	return 0, fmt.Sprintf("unknown unit %q for a frequency (want Hz, kHz, MHz, GHz or a plain number in Hz)", shown)
}

func canonicalPrefix(u string) string {
	switch u {
	case "k", "K":
		return "k"
	case "G", "g":
		return "G"
	}
	return "M"
}

// FormatNumber writes v as a spec writes numbers: strconv's 'g' form with
// digits significant digits (-1: the fewest that read back as v), its
// exponent without Go's plus sign and leading zeros (1e30, 2.5e-7, not
// 1e+30, 2.5e-07).
func FormatNumber(v float64, digits int) string {
	s := strconv.FormatFloat(v, 'g', digits, 64)
	i := strings.IndexByte(s, 'e')
	if i < 0 {
		return s
	}
	exp, sign := s[i+1:], ""
	if exp[0] == '-' {
		sign = "-"
	}
	return s[:i+1] + sign + strings.TrimLeft(exp[1:], "0")
}

// FormatFrequency writes hz with the largest unit that keeps it at or above 1,
// in the shortest form that parses back to the same value: 1.92e6 -> "1.92 MHz".
func FormatFrequency(hz float64) string {
	a := math.Abs(hz)
	unit, scale := "Hz", 1.0
	switch {
	case a >= 1e9:
		unit, scale = "GHz", 1e9
	case a >= 1e6:
		unit, scale = "MHz", 1e6
	case a >= 1e3:
		unit, scale = "kHz", 1e3
	}
	v := hz / scale
	// Prefer the scaled form only when it round-trips exactly.
	if back, err := ParseFrequency(strconv.FormatFloat(v, 'g', -1, 64) + " " + unit); err != nil || back != hz {
		return strconv.FormatFloat(hz, 'g', -1, 64) + " Hz"
	}
	return strconv.FormatFloat(v, 'g', -1, 64) + " " + unit
}

// FormatComputedFrequency is FormatFrequency of hz held to 12 significant
// digits: for a frequency computed from others (a difference of band
// edges, a step times a count), whose last bits are arithmetic's rounding
// rather than anything the user wrote (1.2 MHz - 1.1 MHz is
// 100000.00000000023 Hz in binary; it is written "100 kHz").
func FormatComputedFrequency(hz float64) string {
	if v, err := strconv.ParseFloat(strconv.FormatFloat(hz, 'g', 12, 64), 64); err == nil {
		hz = v
	}
	return FormatFrequency(hz)
}

// FormatDifference writes hi - lo, a width between two frequencies the
// user gave, to the digits the two leave it: subtracting close numbers
// loses as many digits as their size over the width (0.1000001 - 0.1 is
// 1.0000000000288e-07 in float64, written 100 nHz, not 100.000000003 nHz).
func FormatDifference(hi, lo float64) string {
	d := hi - lo
	if d == 0 || math.IsNaN(d) || math.IsInf(d, 0) {
		return FormatComputedFrequency(d)
	}
	lost := math.Ceil(math.Log10(math.Max(math.Abs(hi), math.Abs(lo)) / math.Abs(d)))
	digits := max(3, 12-int(math.Max(0, lost)))
	if v, err := strconv.ParseFloat(strconv.FormatFloat(d, 'g', digits, 64), 64); err == nil {
		d = v
	}
	return FormatFrequency(d)
}

// ParseRange parses a band "LO:HI" of kind k. A unit written only after HI
// applies to both ends, so "100:200 kHz" is 100 kHz to 200 kHz; "0:1.2 MHz"
// and "600 kHz:1.2 MHz" read as written.
func ParseRange(s string, k Kind) (lo, hi float64, err error) {
	i := strings.IndexByte(s, ':')
	if i < 0 || strings.IndexByte(s[i+1:], ':') >= 0 {
		return 0, 0, &Error{s, "want one band LO:HI, such as 0:600kHz"}
	}
	los, his := strings.TrimSpace(s[:i]), strings.TrimSpace(s[i+1:])
	hi, err = Parse(his, k)
	if err != nil {
		return 0, 0, &Error{s, "upper edge " + err.Error()}
	}
	if _, u := splitUnit(his); u != "" && los != "" {
		if _, lu := splitUnit(los); lu == "" {
			los += " " + u
		}
	}
	lo, err = Parse(los, k)
	if err != nil {
		return 0, 0, &Error{s, "lower edge " + err.Error()}
	}
	return lo, hi, nil
}

// SplitNumber splits s, trimmed, into the decimal number it starts with
// and the rest ("18 bits": "18" and "bits"); "" and the trimmed s when it
// starts with none.
func SplitNumber(s string) (num, rest string) { return leadingNumber(strings.TrimSpace(s)) }

// leadingNumber splits t into the decimal number it starts with and the
// rest, trimmed; "" and t when it starts with none.
func leadingNumber(t string) (num, rest string) {
	n := decimalPrefix(t)
	if n == 0 {
		return "", t
	}
	return t[:n], strings.TrimSpace(t[n:])
}

// splitUnit splits trimmed text into its number and its trailing unit.
func splitUnit(t string) (num, unit string) {
	i := len(t)
	for i > 0 && isUnitByte(t[i-1]) {
		i--
	}
	return strings.TrimSpace(t[:i]), t[i:]
}

// MaxEcho is the longest text, in characters, that an error message repeats
// back: a longer value is cut to its first MaxEcho characters and an
// ellipsis, so that a mistaken paste never floods the terminal.
const MaxEcho = 60

// Clip returns s cut to at most n characters (runes), with "..." in place of
// the rest; s itself when it fits. It never splits a character.
func Clip(s string, n int) string {
	if n < 1 {
		n = 1
	}
	count := 0
	for i := range s {
		if count == n {
			return s[:i] + "..."
		}
		count++
	}
	return s
}

// Count is n and the noun, singular for one: "1 chain", "14 chains".
func Count(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// CountWere is Count with its verb: "1 candidate was", "3 candidates were".
func CountWere(n int, one, many string) string {
	if n == 1 {
		return Count(n, one, many) + " was"
	}
	return Count(n, one, many) + " were"
}
