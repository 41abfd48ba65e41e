package sweep

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
)

// MaxValues is the most values one sweep runs: each value is a full search.
const MaxValues = 50

// Dim is the dimension of a sweepable key.
type Dim int

const (
	Frequency Dim = iota // Hz
	Level                // dB
	Bits                 // whole bits
	Count                // a whole number: a ratio or a count, in Key.Word
)

// Key is a spec key that can be swept.
type Key struct {
	Name    string   // as typed after --vary
	Path    string   // the dotted key of the spec file
	Aliases []string // other accepted spellings
	Dim     Dim
	// Word is the unit of a Count key, plural ("stages"); empty for a
	// plain number (the decimation ratio).
	Word string
	// Rate is set for the sample rates (input_rate, output_rate), which
	// also take the sample-rate units (MS/s, Msps).
	Rate bool
	// Decimation is set for the decimation ratio D: the value is not
	// written to the spec itself, Path (output_rate) is set to
	// input_rate / D.
	Decimation bool
	// Interpolation is set for the interpolation ratio L: Path
	// (output_rate) is set to input_rate L, as for Decimation.
	Interpolation bool
	// Min and Max bound the key's own domain; MinOpen excludes Min itself.
	Min, Max float64
	MinOpen  bool
	// Whole names the key's values in the rule "... are whole numbers"
	// of Bits and Count keys ("coefficient widths").
	Whole string
}

// Unit returns the key's base unit: "Hz", "dB", "bits", a Count key's
// Word ("stages"), or "" for the decimation ratio.
func (k Key) Unit() string {
	switch k.Dim {
	case Level:
		return "dB"
	case Bits:
		return "bits"
	case Count:
		return k.Word
	}
	return "Hz"
}

// Format writes a value of the key with its unit: "85 dB", "1.92 MHz",
// "16 bits", "3 stages", "64" (a decimation ratio).
func (k Key) Format(v float64) string {
	switch k.Dim {
	case Level:
		return units.FormatNumber(v, -1) + " dB"
	case Bits:
		if v == 1 {
			return "1 bit"
		}
		return strconv.FormatFloat(v, 'f', 0, 64) + " bits"
	case Count:
		n := strconv.FormatFloat(v, 'f', 0, 64)
		switch {
		case k.Word == "":
			return n
		case v == 1:
			return n + " " + strings.TrimSuffix(k.Word, "s")
		}
		return n + " " + k.Word
	}
	return units.FormatFrequency(v)
}

// Keys lists the keys that can be swept, in the order of the spec format.
var Keys = []Key{
	{Name: "input_rate", Path: "input_rate", Dim: Frequency, Rate: true, MinOpen: true, Max: math.Inf(1)},
	{Name: "output_rate", Path: "output_rate", Dim: Frequency, Rate: true, MinOpen: true, Max: math.Inf(1)},
	{Name: "decimation", Path: "output_rate", Dim: Count, Decimation: true, Min: 2, Max: math.MaxInt32,
		Whole: "decimation ratios (input_rate / output_rate)"},
	{Name: "interpolation", Path: "output_rate", Dim: Count, Interpolation: true, Min: 2, Max: math.MaxInt32,
		Whole: "interpolation ratios (output_rate / input_rate)"},
	{Name: "passband", Path: "passband", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "protected", Path: "protected", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "stopband", Path: "stopband", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "ripple", Path: "ripple", Dim: Level, Min: specfile.MinRippleDB, Max: chain.MaxRippleDB},
	{Name: "rejection", Path: "rejection", Dim: Level, MinOpen: true, Max: chain.MaxRejectionDB},
	{Name: "snr", Path: "sigma_delta.snr", Aliases: []string{"sigma_delta.snr"}, Dim: Level, MinOpen: true, Max: 300},
	{Name: "clock", Path: "hardware.clock", Aliases: []string{"hardware.clock"}, Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "input_bits", Path: "words.input", Aliases: []string{"words.input"},
		Dim: Bits, Min: specfile.MinWordBits, Max: specfile.MaxWordBits, Whole: "input word widths"},
	{Name: "output_bits", Path: "words.output", Aliases: []string{"words.output"},
		Dim: Bits, Min: specfile.MinWordBits, Max: specfile.MaxWordBits, Whole: "output word widths"},
	{Name: "coefficient_bits", Path: "words.coefficients", Aliases: []string{"coefficients", "words.coefficients"},
		Dim: Bits, Min: specfile.MinWordBits, Max: specfile.MaxCoefBits, Whole: "coefficient widths"},
	{Name: "max_stages", Path: "search.max_stages", Aliases: []string{"search.max_stages"},
		Dim: Count, Word: "stages", Min: 1, Max: specfile.MaxStages, Whole: "stage counts"},
}

// LookupKey returns the sweepable key named name (or one of its aliases).
func LookupKey(name string) (Key, bool) {
	for _, k := range Keys {
		if k.Name == name {
			return k, true
		}
		for _, a := range k.Aliases {
			if a == name {
				return k, true
			}
		}
	}
	return Key{}, false
}

func keyNames() string {
	var s []string
	for _, k := range Keys {
		s = append(s, k.Name)
	}
	return strings.Join(s[:len(s)-1], ", ") + " or " + s[len(s)-1]
}

// Error is a --vary argument that cannot be swept.
type Error struct {
	Key   string // the key as typed; empty when there is none
	Value string // the range as typed
	Rule  string
}

// Error repeats the key and the range cut to units.MaxEcho characters each.
func (e *Error) Error() string {
	v := units.Clip(e.Value, units.MaxEcho)
	if e.Key == "" {
		return fmt.Sprintf("--vary %q: %s", v, e.Rule)
	}
	return fmt.Sprintf("--vary %s=%s: %s", units.Clip(e.Key, units.MaxEcho), v, e.Rule)
}

// Vary is a parsed --vary argument.
type Vary struct {
	Key            Key
	From, To, Step float64 // in the key's base unit
	Text           string  // the range as typed, after the '='
	Values         []float64
}

// ParseVary parses "KEY=FROM:TO:STEP" (see the package documentation).
func ParseVary(arg string) (Vary, error) {
	eq := strings.IndexByte(arg, '=')
	if eq < 0 {
		return Vary{}, &Error{Value: arg, Rule: "want KEY=FROM:TO:STEP, such as rejection=80:100:5 (keys: " + keyNames() + ")"}
	}
	name, rng := strings.TrimSpace(arg[:eq]), strings.TrimSpace(arg[eq+1:])
	fail := func(rule string, args ...any) (Vary, error) {
		return Vary{}, &Error{Key: name, Value: rng, Rule: fmt.Sprintf(rule, args...)}
	}
	k, ok := LookupKey(name)
	if !ok {
		return fail("unknown key %q; want one of %s", name, keyNames())
	}
	parts := strings.Split(rng, ":")
	if len(parts) != 3 {
		return fail("want FROM:TO:STEP, three values separated by colons, such as %s", example(k))
	}
	// A unit after STEP alone applies to the other parts.
	if k.Dim == Frequency || k.Dim == Level {
		if _, err := parsePart(parts[2], k); err == nil && trailingUnit(parts[2]) != "" {
			u := trailingUnit(parts[2])
			for i := 0; i < 2; i++ {
				if p := strings.TrimSpace(parts[i]); p != "" && trailingUnit(p) == "" {
					parts[i] = p + " " + u
				}
			}
		}
	}
	var vals [3]float64
	for i, what := range []string{"FROM", "TO", "STEP"} {
		v, err := parsePart(parts[i], k)
		if err != nil {
			return fail("%s %s", what, err.Error())
		}
		vals[i] = v
	}
	from, to, step := vals[0], vals[1], vals[2]
	if step < 0 {
		lo, hi, st := strings.TrimSpace(parts[0]), strings.TrimSpace(parts[1]), strings.TrimPrefix(strings.TrimSpace(parts[2]), "-")
		if from > to {
			lo, hi = hi, lo
		}
		return fail("STEP %s must be above zero; FROM and TO give the direction: write %s:%s:%s upwards or %s:%s:%s downwards",
			k.Format(step), lo, hi, st, hi, lo, st)
	}
	if !(step > 0) {
		return fail("STEP %s must be above zero", k.Format(step))
	}
	if (k.Dim == Bits || k.Dim == Count) && (step != math.Trunc(step) || from != math.Trunc(from) || to != math.Trunc(to)) {
		if k.Dim == Bits {
			return fail("%s are whole numbers of bits", k.Whole)
		}
		return fail("%s are whole numbers", k.Whole)
	}
	// dir is +1 for an upward range, -1 for a downward one.
	dir := 1.0
	if from > to {
		dir = -1
	}
	// An end outside the key's own domain is named before the count: it
	// is the slip (rejection=80:10000:1 meant 100).
	for i, v := range []float64{from, to} {
		if rule := k.domain(v); rule != "" {
			return fail("%s %s %s", [2]string{"FROM", "TO"}[i], k.Format(v), rule)
		}
	}
	span := math.Abs(to-from) / step
	if span > MaxValues {
		count := fmt.Sprintf("%.0f", math.Floor(span*(1+1e-9)+1e-9)+1)
		if span >= 1e6 {
			count = "over a million"
		}
		return fail("gives %s values, over the limit of %d (each value is a full search); use a larger STEP or a narrower range", count, MaxValues)
	}
	n := int(math.Floor(span*(1+1e-9)+1e-9)) + 1
	if n > MaxValues {
		return fail("gives %d values, over the limit of %d (each value is a full search); use a larger STEP or a narrower range", n, MaxValues)
	}
	out := Vary{Key: k, From: from, To: to, Step: step, Text: rng}
	for i := 0; i < n; i++ {
		v := round12(from + dir*float64(i)*step)
		if i == n-1 && math.Abs(v-to) <= 1e-9*math.Max(math.Abs(to), step) {
			v = to
		}
		if rule := k.domain(v); rule != "" {
			return fail("value %s %s", k.Format(v), rule)
		}
		out.Values = append(out.Values, v)
	}
	return out, nil
}

// Descending reports whether the range runs downwards (FROM above TO).
func (v Vary) Descending() bool { return v.From > v.To }

func example(k Key) string {
	switch k.Dim {
	case Level:
		if k.Name == "ripple" {
			return "0.1:0.5:0.1"
		}
		return "80 dB:100 dB:5 dB"
	case Bits:
		return "14:20:2"
	case Count:
		if k.Decimation || k.Interpolation {
			return "16:64:8"
		}
		return "2:6:1"
	}
	return "1.92 MHz:3.84 MHz:640 kHz"
}

// domain returns the rule v breaks in the key's own domain, or "".
func (k Key) domain(v float64) string {
	switch {
	case k.MinOpen && !(v > k.Min):
		return fmt.Sprintf("must be above %s", k.Format(k.Min))
	case !k.MinOpen && v < k.Min:
		return fmt.Sprintf("must be at least %s", k.Format(k.Min))
	case v > k.Max:
		return fmt.Sprintf("must be at most %s", k.Format(k.Max))
	}
	return ""
}

func trailingUnit(s string) string {
	s = strings.TrimSpace(s)
	i := len(s)
	for i > 0 && (s[i-1] == '/' || ('a' <= s[i-1] && s[i-1] <= 'z') || ('A' <= s[i-1] && s[i-1] <= 'Z')) {
		i--
	}
	return s[i:]
}

func parsePart(s string, k Key) (float64, error) {
	switch k.Dim {
	case Level:
		return units.Parse(s, units.Level)
	case Frequency:
		if k.Rate {
			return units.Parse(s, units.Rate)
		}
		return units.Parse(s, units.Frequency)
	}
	t := strings.TrimSpace(s)
	words, rule := []string{"bits", "bit"}, "want a whole number of bits, such as 16"
	if k.Dim == Count {
		words, rule = nil, "want a whole number, such as 8"
		if k.Word != "" {
			words = []string{k.Word, strings.TrimSuffix(k.Word, "s")}
			rule = "want a whole number of " + k.Word + ", such as 4"
		}
	}
	for _, suf := range words {
		if strings.HasSuffix(t, suf) {
			t = strings.TrimSpace(strings.TrimSuffix(t, suf))
			break
		}
	}
	n, err := strconv.ParseInt(t, 10, 64)
	if err != nil || n < -1<<53 || n > 1<<53 {
		return 0, &units.Error{Value: s, Rule: rule}
	}
	return float64(n), nil
}

// round12 rounds v to 12 significant digits.
func round12(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// Setting is one swept key at one value.
type Setting struct {
	Key   Key
	Value float64
}

// Apply returns spec text with the key set to v: the key is replaced, or
// added (with its table) when the spec leaves it out. Comments and layout
// are not kept; the result is only parsed again.
func Apply(spec []byte, k Key, v float64) ([]byte, error) {
	return ApplyAll(spec, Setting{k, v})
}

// ApplyAll is Apply for several keys at once (the cell of a grid). The
// decimation ratio is applied last, so that output_rate = input_rate / D
// uses the input rate the other settings give. Keys the settings do not
// name are left as the spec writes them, or absent: a default that depends
// on a swept key (protected, stopband) is worked out again from the new
// values when the text is parsed.
func ApplyAll(spec []byte, sets ...Setting) ([]byte, error) {
	var root map[string]any
	if _, err := toml.Decode(string(spec), &root); err != nil {
		return nil, fmt.Errorf("sweep: spec text: %v", err)
	}
	if root == nil {
		root = map[string]any{}
	}
	ordered := make([]Setting, 0, len(sets))
	for _, st := range sets {
		if !st.Key.Decimation && !st.Key.Interpolation {
			ordered = append(ordered, st)
		}
	}
	for _, st := range sets {
		if st.Key.Decimation || st.Key.Interpolation {
			ordered = append(ordered, st)
		}
	}
	for _, st := range ordered {
		k, v := st.Key, st.Value
		var val any
		switch k.Dim {
		case Level:
			val = v
		case Bits, Count:
			val = int64(v)
		default:
			val = units.FormatFrequency(v)
		}
		if k.Decimation || k.Interpolation {
			in, err := inputRate(root, k.Name)
			if err != nil {
				return nil, err
			}
			val = units.FormatFrequency(in / v)
			if k.Interpolation {
				val = units.FormatFrequency(in * v)
			}
		}
		if k.Path == "rejection" {
			if mask, ok := root["rejection_mask"]; ok {
				// A mask is swept whole: every point moves by the same
				// dB, so that its largest rejection is v.
				shifted, err := shiftMask(mask, v)
				if err != nil {
					return nil, err
				}
				root["rejection_mask"] = shifted
				continue
			}
		}
		path := strings.Split(k.Path, ".")
		m := root
		for _, p := range path[:len(path)-1] {
			sub, ok := m[p].(map[string]any)
			if !ok {
				if _, present := m[p]; present {
					return nil, fmt.Errorf("sweep: spec key %s is not a table", p)
				}
				sub = map[string]any{}
				m[p] = sub
			}
			m = sub
		}
		m[path[len(path)-1]] = val
	}
	var buf bytes.Buffer
	if err := toml.NewEncoder(&buf).Encode(root); err != nil {
		return nil, fmt.Errorf("sweep: spec text: %v", err)
	}
	return buf.Bytes(), nil
}

// inputRate reads input_rate from decoded spec text, for the ratio key
// (decimation or interpolation) name.
func inputRate(root map[string]any, name string) (float64, error) {
	var (
		in  float64
		err error
	)
	switch x := root["input_rate"].(type) {
	case string:
		in, err = units.Parse(x, units.Rate)
	case int64:
		in = float64(x)
	case float64:
		in, err = x, units.CheckFinite(x)
	default:
		return 0, fmt.Errorf("sweep: %s: the spec's input_rate is %s, not a rate", name, showAny(root["input_rate"]))
	}
	if err != nil || !(in > 0) {
		return 0, fmt.Errorf("sweep: %s: the spec's input_rate %s is not a rate above 0 Hz", name, showAny(root["input_rate"]))
	}
	return in, nil
}

func showAny(v any) string {
	if v == nil {
		return "missing"
	}
	return units.Clip(fmt.Sprint(v), units.MaxEcho)
}

// SpecAt parses the spec with the key set to v. A spec the value makes
// inconsistent returns the parser's *specfile.Error, with the file name
// replaced by the swept key and value so the message reads on its own.
func SpecAt(name string, spec []byte, k Key, v float64) (*specfile.Spec, error) {
	return SpecWith(name, spec, Setting{k, v})
}

// SpecWith is SpecAt for several keys at once (ApplyAll).
func SpecWith(name string, spec []byte, sets ...Setting) (*specfile.Spec, error) {
	text, err := ApplyAll(spec, sets...)
	if err != nil {
		return nil, err
	}
	s, err := specfile.Parse(name, text)
	if err != nil {
		var se *specfile.Error
		if errors.As(err, &se) {
			c := *se
			c.Line = 0 // lines of the rewritten text mean nothing to the user
			return nil, &c
		}
		return nil, err
	}
	return s, nil
}

// shiftMask returns the decoded rejection_mask points with every
// rejection moved by the same amount, so that the largest is top dB. A
// mask it cannot read is left to the spec's parser to refuse, unchanged.
func shiftMask(v any, top float64) (any, error) {
	arr, ok := v.([]any)
	if !ok {
		return v, nil
	}
	level := func(x any) (float64, bool) {
		switch y := x.(type) {
		case int64:
			return float64(y), true
		case float64:
			return y, true
		case string:
			f, err := units.Parse(y, units.Level)
			return f, err == nil
		}
		return 0, false
	}
	best := math.Inf(-1)
	for _, e := range arr {
		pair, ok := e.([]any)
		if !ok || len(pair) != 2 {
			return v, nil
		}
		db, ok := level(pair[1])
		if !ok {
			return v, nil
		}
		best = math.Max(best, db)
	}
	out := make([]any, len(arr))
	for i, e := range arr {
		pair := e.([]any)
		db, _ := level(pair[1])
		out[i] = []any{pair[0], db + top - best}
	}
	return out, nil
}
