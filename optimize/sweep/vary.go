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
)

// Key is a spec key that can be swept.
type Key struct {
	Name    string   // as typed after --vary
	Path    string   // the dotted key of the spec file
	Aliases []string // other accepted spellings
	Dim     Dim
	// Min and Max bound the key's own domain; MinOpen excludes Min itself.
	Min, Max float64
	MinOpen  bool
}

// Unit returns the key's base unit: "Hz", "dB" or "bits".
func (k Key) Unit() string {
	switch k.Dim {
	case Level:
		return "dB"
	case Bits:
		return "bits"
	}
	return "Hz"
}

// Format writes a value of the key with its unit: "85 dB", "1.92 MHz", "16 bits".
func (k Key) Format(v float64) string {
	switch k.Dim {
	case Level:
		return strconv.FormatFloat(v, 'g', -1, 64) + " dB"
	case Bits:
		return strconv.FormatFloat(v, 'f', 0, 64) + " bits"
	}
	return units.FormatFrequency(v)
}

// Keys lists the keys that can be swept, in the order of the spec format.
var Keys = []Key{
	{Name: "input_rate", Path: "input_rate", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "output_rate", Path: "output_rate", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "passband", Path: "passband", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "protected", Path: "protected", Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "ripple", Path: "ripple", Dim: Level, MinOpen: true, Max: math.Inf(1)},
	{Name: "rejection", Path: "rejection", Dim: Level, MinOpen: true, Max: chain.MaxRejectionDB},
	{Name: "clock", Path: "hardware.clock", Aliases: []string{"hardware.clock"}, Dim: Frequency, MinOpen: true, Max: math.Inf(1)},
	{Name: "coefficient_bits", Path: "words.coefficients", Aliases: []string{"coefficients", "words.coefficients"},
		Dim: Bits, Min: specfile.MinWordBits, Max: specfile.MaxCoefBits},
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

func (e *Error) Error() string {
	if e.Key == "" {
		return fmt.Sprintf("--vary %q: %s", e.Value, e.Rule)
	}
	return fmt.Sprintf("--vary %s=%s: %s", e.Key, e.Value, e.Rule)
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
	if k.Dim != Bits {
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
	if !(step > 0) {
		return fail("STEP %s must be above zero", k.Format(step))
	}
	if from > to {
		return fail("FROM %s is above TO %s; write the range upwards", k.Format(from), k.Format(to))
	}
	if k.Dim == Bits && (step != math.Trunc(step) || from != math.Trunc(from) || to != math.Trunc(to)) {
		return fail("coefficient widths are whole numbers of bits")
	}
	span := (to - from) / step
	if span > MaxValues {
		return fail("gives %.0f values, over the limit of %d (each value is a full search); use a larger STEP or a narrower range", math.Floor(span*(1+1e-9)+1e-9)+1, MaxValues)
	}
	n := int(math.Floor(span*(1+1e-9)+1e-9)) + 1
	if n > MaxValues {
		return fail("gives %d values, over the limit of %d (each value is a full search); use a larger STEP or a narrower range", n, MaxValues)
	}
	out := Vary{Key: k, From: from, To: to, Step: step, Text: rng}
	for i := 0; i < n; i++ {
		v := round12(from + float64(i)*step)
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

func example(k Key) string {
	switch k.Dim {
	case Level:
		if k.Name == "ripple" {
			return "0.1:0.5:0.1"
		}
		return "80 dB:100 dB:5 dB"
	case Bits:
		return "14:20:2"
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
		return units.Parse(s, units.Frequency)
	}
	t := strings.TrimSpace(s)
	for _, suf := range []string{"bits", "bit"} {
		if strings.HasSuffix(t, suf) {
			t = strings.TrimSpace(strings.TrimSuffix(t, suf))
			break
		}
	}
	n, err := strconv.ParseInt(t, 10, 64)
	if err != nil {
		return 0, &units.Error{Value: s, Rule: "want a whole number of bits, such as 16"}
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

// Apply returns spec text with the key set to v: the key is replaced, or
// added (with its table) when the spec leaves it out. Comments and layout
// are not kept; the result is only parsed again.
func Apply(spec []byte, k Key, v float64) ([]byte, error) {
	var root map[string]any
	if _, err := toml.Decode(string(spec), &root); err != nil {
		return nil, fmt.Errorf("sweep: spec text: %v", err)
	}
	if root == nil {
		root = map[string]any{}
	}
	var val any
	switch k.Dim {
	case Level:
		val = v
	case Bits:
		val = int64(v)
	default:
		val = units.FormatFrequency(v)
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
	var buf bytes.Buffer
	if err := toml.NewEncoder(&buf).Encode(root); err != nil {
		return nil, fmt.Errorf("sweep: spec text: %v", err)
	}
	return buf.Bytes(), nil
}

// SpecAt parses the spec with the key set to v. A spec the value makes
// inconsistent returns the parser's *specfile.Error, with the file name
// replaced by the swept key and value so the message reads on its own.
func SpecAt(name string, spec []byte, k Key, v float64) (*specfile.Spec, error) {
	text, err := Apply(spec, k, v)
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
