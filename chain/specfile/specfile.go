package specfile

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/BurntSushi/toml"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/sigmadelta"
)

// MaxFileSize is the largest spec file accepted, in bytes (64 KiB). A spec is
// a few hundred bytes (the built-in example, comments and all, is about
// 1 KB), so 64 KiB leaves room for any amount of commentary while keeping
// every file that is accepted quick to decode, also for a sweep, which
// decodes the spec again for each of up to 50 values.
const MaxFileSize = 64 << 10

// sizeText is MaxFileSize in words.
const sizeText = "64 KiB"

// Search limits: the search's own (package optimize).
const (
	MaxStages   = optimize.MaxStagesLimit
	MaxCICOrder = optimize.MaxCICOrder
	MaxCICDelay = optimize.MaxCICDelay
)

// Word limits.
const (
	MinWordBits = 2
	// MaxWordBits is the widest input and output word: the word-length
	// planner (fixed.Plan) takes data words of 2 to 32 bits, and every
	// chain on the front gets a word-length plan.
	MaxWordBits = 32
	// MaxCoefBits is the widest coefficient word: the rounded coefficients
	// are computed in int64 with room for the data path (fixed.MaxBits).
	MaxCoefBits = fixed.MaxBits
)

// Ripple limits. The library (chain.Spec) takes any ripple in (0,
// chain.MaxRippleDB] dB, as the parts of a fractional chain take a share
// of the spec's; a spec file is held above MinRippleDB.
const (
	// MinRippleDB is the smallest ripple a spec may ask for: its
	// deviation, about 6e-11 of the gain, is already within a few hundred
	// times double precision's rounding in a sum of taps
	// (remez.RoundingLevel, 1e-13 to n 1e-14), below which no exchange can
	// level the error (a plan at 1e-12 dB failed every design, measured).
	// It lies far below any data word's step (2^-31 is 4.7e-10).
	MinRippleDB = 1e-9
)

// rippleRange is the ripple's range as messages give it: [1e-9, 10] dB.
func rippleRange() string {
	return fmt.Sprintf("[%s, %s] dB", units.FormatNumber(MinRippleDB, -1), units.FormatNumber(chain.MaxRippleDB, -1))
}

// DefaultMaxStages is search.max_stages when absent: the search's default.
const DefaultMaxStages = optimize.DefaultMaxStages

// Spec is a parsed and validated spec file.
type Spec struct {
	// Chain is the normalised chain spec (defaults filled in).
	Chain chain.Spec
	// Signal is "real" or "complex".
	Signal string
	// Symmetry is true when folded symmetric multiplies are counted once.
	Symmetry bool
	// Clock is the hardware clock in Hz; zero when not given.
	Clock float64
	// CoefAuto is set by words.coefficients = "auto": the word-length planner
	// picks, per stage, the narrowest width that meets the stage's bands.
	// Chain.CoefBits is then zero, so the search prices coefficients at
	// cost.FloatCoefBits, as for floating point.
	CoefAuto bool
	// UnityGain is words.unity_gain: fold 1/(chain DC gain) into the last
	// FIR stage's taps before they are rounded, so that a passband tone
	// leaves at the level it entered (fixed.Settings.UnityGain).
	UnityGain bool
	// Multiplier is hardware.multiplier as written ("18x27"), NativeA and
	// NativeB its operand widths in bits; zero when not given.
	Multiplier       string
	NativeA, NativeB int
	// Limits are the fabric's ([hardware] max_register_bits,
	// max_cic_factor, max_multipliers, max_memory_bits); zero is none.
	Limits optimize.Limits
	// Multiplierless is hardware.multiplierless: every FIR and half-band
	// stage is built as a shared adder graph of its rounded taps, with no
	// multipliers, and the search's cost axis is adders
	// (cost.Settings.Multiplierless). It needs words.coefficients (a width
	// or "auto").
	Multiplierless bool
	// Search limits, with defaults filled in.
	MaxStages int
	Kinds     []chain.Kind
	CICOrders []int
	CICDelays []int
	// CICForms is search.cic_forms: the CIC forms the search tries,
	// ["recursive"] by default (chain.Recursive alone).
	CICForms []chain.CICForm
	// SigmaDelta is the [sigma_delta] table: the noise-shaped converter
	// feeding the chain, nil without one. Its Zeros are relative to
	// input_rate. With it Chain.RejectionMask is the modulator's
	// (sigmadelta.Modulator.Mask), Chain.NoiseShaped is set and
	// Chain.InputBits is its bits.
	SigmaDelta *sigmadelta.Modulator
	// Requirements is search.requirements: "cascade" (the default), where
	// a FIR stage's stopband limit counts what the stages before it
	// remove and the ripple budget is split where it buys most, or
	// "stage", every stage meeting the full rejection on its own bands
	// with the budget split equally (chain.Settings.StageAlone).
	Requirements string
	// SHA256 is the SHA-256 of the spec's text as parsed (the built-in
	// example's text for Example), in lower-case hexadecimal: report.json's
	// spec_sha256, which ties a report to the file that made it.
	SHA256 string
}

// CostSettings returns the pricing settings the spec asks for.
func (s *Spec) CostSettings() cost.Settings {
	return cost.Settings{NoSymmetry: !s.Symmetry, Clock: s.Clock, Multiplierless: s.Multiplierless}
}

// FixedSettings returns the word-length planner's settings the spec asks for.
func (s *Spec) FixedSettings() fixed.Settings {
	fs := fixed.Settings{NoSymmetry: !s.Symmetry, NativeA: s.NativeA, NativeB: s.NativeB, Clock: s.Clock, UnityGain: s.UnityGain, Multiplierless: s.Multiplierless}
	if s.SigmaDelta != nil {
		// Checked when the spec was parsed.
		fs.Shaper, _ = s.SigmaDelta.Shaper()
	}
	return fs
}

// CoefMode is "fixed" when words.coefficients is a width, "auto" when it is
// "auto" and "float" when it is absent.
func (s *Spec) CoefMode() string {
	switch {
	case s.Chain.CoefBits > 0:
		return "fixed"
	case s.CoefAuto:
		return "auto"
	}
	return "float"
}

// SearchSettings returns the optimiser settings the spec asks for; the caller
// adds Jobs and Progress.
func (s *Spec) SearchSettings() optimize.Settings {
	return optimize.Settings{
		MaxStages: s.MaxStages,
		Kinds:     append([]chain.Kind(nil), s.Kinds...),
		CICOrders: append([]int(nil), s.CICOrders...),
		CICDelays: append([]int(nil), s.CICDelays...),
		CICForms:  append([]chain.CICForm(nil), s.CICForms...),
		Limits:    s.Limits,
		Chain:     chain.Settings{StageAlone: s.Requirements == "stage"},
		Cost:      s.CostSettings(),
		Fixed:     s.FixedSettings(),
	}
}

// Error is a problem with a spec file. Line is zero when unknown.
type Error struct {
	File  string
	Line  int
	Key   string // dotted TOML key; empty for a problem with the file itself
	Value string // the value as written; empty when not applicable
	Rule  string
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Key != "" {
		key := units.Clip(e.Key, units.MaxEcho)
		if strings.ContainsFunc(key, func(r rune) bool { return r < ' ' || r == 0x7f }) {
			key = strconv.Quote(key) // a quoted key with a line break in it stays on one line
		}
		b.WriteString(key)
		if e.Value != "" {
			b.WriteString(" = " + e.Value)
		}
		b.WriteString(": ")
	}
	b.WriteString(e.Rule)
	return b.String()
}

// Load reads and parses the spec file at path.
func Load(path string) (*Spec, error) {
	s, _, err := LoadText(path)
	return s, err
}

// LoadText is Load that also returns the file's text, read once and within
// MaxFileSize (the sweep rewrites the text for each value).
func LoadText(path string) (*Spec, []byte, error) {
	fail := func(rule string, args ...any) (*Spec, []byte, error) {
		return nil, nil, &Error{File: path, Rule: fmt.Sprintf(rule, args...)}
	}
	fi, err := os.Stat(path)
	switch {
	case errors.Is(err, os.ErrNotExist):
		return fail("spec file does not exist")
	case err != nil:
		return fail("spec file cannot be read: %v", unwrapPath(err))
	case fi.IsDir():
		return fail("is a folder; want a TOML spec file")
	case fi.Size() > MaxFileSize:
		return fail("spec file is %d bytes, over the %s limit; a spec is a few hundred bytes", fi.Size(), sizeText)
	}
	flag := os.O_RDONLY
	if !fi.Mode().IsRegular() {
		// A named pipe with no writer would block the open itself (and
		// with it Ctrl-C and --timeout): opened without waiting, it reads
		// as empty.
		flag |= syscall.O_NONBLOCK
	}
	f, err := os.OpenFile(path, flag, 0)
	if err != nil {
		return fail("spec file cannot be read: %v", unwrapPath(err))
	}
	defer f.Close()
	// The size can change between Stat and Read (or be unknown for a device);
	// read one byte past the limit to tell.
	data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
	if err != nil {
		return fail("spec file cannot be read: %v", unwrapPath(err))
	}
	if len(data) > MaxFileSize {
		return fail("spec file is over the %s limit; a spec is a few hundred bytes", sizeText)
	}
	s, err := Parse(path, data)
	if err != nil {
		return nil, nil, err
	}
	return s, data, nil
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// key describes one key of the format.
type key struct {
	path    string // dotted
	table   bool   // a table header such as [words]
	example string // a value as a spec writes it, for the messages
}

// known lists every key of the format, in the order of the README, with
// an example value of each (the README's, or one like it).
var known = []key{
	{path: "input_rate", example: `"245.76 MS/s"`}, {path: "output_rate", example: `"1.92 MS/s"`},
	{path: "ratio_tolerance_ppm", example: "50"}, {path: "passband", example: `"600 kHz"`},
	{path: "protected", example: `"900 kHz"`}, {path: "stopband", example: `"1.02 MHz"`},
	{path: "ripple", example: `"0.1 dB"`}, {path: "rejection", example: `"85 dB"`},
	{path: "rejection_mask", example: `[["0 Hz", "90 dB"], ["20 MHz", "70 dB"]]`}, {path: "signal", example: `"complex"`},
	{path: "words", table: true}, {path: "words.input", example: "16"}, {path: "words.output", example: "24"},
	{path: "words.coefficients", example: "18"}, {path: "words.unity_gain", example: "false"},
	{path: "hardware", table: true}, {path: "hardware.clock", example: `"491.52 MHz"`},
	{path: "hardware.multiplier", example: `"18x27"`}, {path: "hardware.max_register_bits", example: "48"},
	{path: "hardware.max_cic_factor", example: "256"}, {path: "hardware.max_multipliers", example: "16"},
	{path: "hardware.max_memory_bits", example: "200000"}, {path: "hardware.multiplierless", example: "false"},
	{path: "cost", table: true}, {path: "cost.symmetry", example: "true"},
	{path: "search", table: true}, {path: "search.max_stages", example: "6"},
	{path: "search.kinds", example: `["cic", "halfband", "fir"]`}, {path: "search.cic_orders", example: "[3, 4, 5]"},
	{path: "search.cic_delays", example: "[1, 2]"}, {path: "search.cic_forms", example: `["recursive"]`},
	{path: "sigma_delta", table: true}, {path: "sigma_delta.order", example: "4"}, {path: "sigma_delta.bits", example: "1"},
	{path: "sigma_delta.snr", example: `"88 dB"`}, {path: "sigma_delta.zeros", example: `"optimal"`},
	{path: "sigma_delta.obg", example: "1.5"},
	{path: "search.requirements", example: `"cascade"`},
}

// exampleOf is a value key (dotted) takes, as a spec writes it, and
// whether the format knows the key; a frequency for a key it does not.
func exampleOf(dotted string) (string, bool) {
	for _, k := range known {
		if k.path == dotted && k.example != "" {
			return k.example, true
		}
	}
	return `"600 kHz"`, false
}

// parser holds one file's data while it is checked.
type parser struct {
	file string
	data []byte
	root map[string]any
}

// reOutOfRange matches the TOML decoder's message for a bare number beyond
// what it holds (a float past 1.8e308, an integer past 2^63 - 1).
var reOutOfRange = regexp.MustCompile(`^(\S+) is out of range for (?:float64|int64)`)

// Parse parses spec text; name is used in error messages. The text is
// measured before it is decoded (MaxFileSize, MaxDepth, MaxItems, and no
// hexadecimal, octal or binary integers), so any text costs little to refuse.
func Parse(name string, data []byte) (*Spec, error) {
	if err := checkRaw(name, data); err != nil {
		return nil, err
	}
	p := &parser{file: name, data: skipBOM(data)}
	md, err := toml.Decode(string(p.data), &p.root)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			if m := reOutOfRange.FindStringSubmatch(pe.Message); m != nil {
				// A bare number the decoder cannot hold: said in the
				// spec's words, with the key it was given for.
				return nil, &Error{File: name, Line: pe.Position.Line, Key: pe.LastKey, Value: units.Clip(m[1], units.MaxEcho),
					Rule: "too large a number for any spec key (rates and frequencies go as text with a unit, e.g. \"1.2 GHz\")"}
			}
			return nil, tomlError(name, p.data, pe.Position.Line, pe.Message)
		}
		return nil, &Error{File: name, Rule: "not valid TOML: " + units.Clip(oneLine(err.Error()), 2*units.MaxEcho)}
	}
	if err := p.checkKeys(md); err != nil {
		return nil, err
	}
	out, err := p.build()
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	out.SHA256 = hex.EncodeToString(sum[:])
	return out, nil
}

func oneLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		return s[:i]
	}
	return s
}

func (p *parser) checkKeys(md toml.MetaData) error {
	isKnown := map[string]key{}
	for _, k := range known {
		isKnown[k.path] = k
	}
	for _, k := range md.Keys() {
		dotted := strings.Join(k, ".")
		if slices.ContainsFunc(k, func(part string) bool { return strings.Contains(part, ".") }) {
			// "words.coefficients" in quotes is one key with a dot in its
			// name, not the key under [words]: it would be ignored.
			rule := "a dot inside quotes is part of the key's name, so this key is unknown"
			if _, ok := isKnown[dotted]; ok {
				rule += fmt.Sprintf("; write %s without quotes", dotted)
			}
			return &Error{File: p.file, Line: p.lineOf(k), Key: shownKey(k), Rule: rule}
		}
		if _, ok := isKnown[dotted]; ok {
			// A scalar where a table belongs (or the reverse) is a type error
			// reported when the value is read.
			continue
		}
		rule := "unknown key"
		if w := whereKey(k); w != "" {
			rule += "; " + w
		} else if s := suggest(dotted); s != "" {
			rule += fmt.Sprintf(" (did you mean %q?)", s)
		} else if len(k) > 1 {
			rule += fmt.Sprintf(" in [%s]", strings.Join(k[:len(k)-1], "."))
		}
		return &Error{File: p.file, Line: p.lineOf(k), Key: shownKey(k), Rule: rule}
	}
	return nil
}

// shownKey is key k as a message names it: its parts joined by dots, a
// part with other than letters, digits, _ and - in quotes ("protected "),
// so that it does not read as the key it is mistaken for.
func shownKey(k []string) string {
	parts := make([]string, len(k))
	for i, s := range k {
		parts[i] = s
		if s == "" || strings.IndexFunc(s, func(r rune) bool {
			return !(r == '_' || r == '-' || r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z')
		}) >= 0 {
			parts[i] = strconv.Quote(s)
		}
	}
	return strings.Join(parts, ".")
}

// whereKey says where a key of the format whose name is k's last part
// belongs, when k puts it elsewhere (clock at the top or under [words]
// for hardware.clock): "clock belongs under [hardware]"; "" when no
// known key has that name or more than one has.
func whereKey(k []string) string {
	name := k[len(k)-1]
	found := ""
	for _, kk := range known {
		parts := strings.Split(kk.path, ".")
		if parts[len(parts)-1] != name || kk.table {
			continue
		}
		if found != "" {
			return ""
		}
		found = kk.path
	}
	if found == "" || found == strings.Join(k, ".") {
		return ""
	}
	if i := strings.LastIndexByte(found, '.'); i >= 0 {
		return fmt.Sprintf("%s belongs under [%s] (%s)", name, found[:i], found)
	}
	return fmt.Sprintf("%s belongs at the top of the file, before the first [table]", name)
}

// suggest returns the known key that differs from k only in case or in the
// separator, or else the one key within two edits (letters inserted,
// deleted, changed or swapped, after that normalisation) of a key of four
// letters or more, if any: a typing slip such as "rejecton".
func suggest(k string) string {
	norm := func(s string) string { return strings.ReplaceAll(strings.ToLower(s), "-", "_") }
	nk := norm(k)
	for _, kk := range known {
		if norm(kk.path) == nk {
			return kk.path
		}
	}
	if len(nk) < 4 || len(nk) > 64 {
		return ""
	}
	best, bestD, ties := "", 3, 0
	for _, kk := range known {
		switch d := editDistance(nk, norm(kk.path)); {
		case d < bestD:
			best, bestD, ties = kk.path, d, 1
		case d == bestD:
			ties++
		}
	}
	if ties != 1 {
		return ""
	}
	return best
}

// editDistance is the optimal-string-alignment distance between a and b:
// insertions, deletions, substitutions and swaps of adjacent bytes, each 1
// (common practice for typing slips).
func editDistance(a, b string) int {
	d := make([][]int, len(a)+1)
	for i := range d {
		d[i] = make([]int, len(b)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(a); i++ {
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(a)][len(b)]
}

// failer makes the TOML decoder stop, with the position of the key it sits on.
type failer struct{}

var errFail = errors.New("position probe")

func (failer) UnmarshalTOML(any) error { return errFail }

// lineOf returns the line of key k in the file, or 0 when unknown. The TOML
// package keeps key positions private but reports them in the errors of an
// Unmarshaler, so decode once more into a type that fails exactly at k.
func (p *parser) lineOf(k toml.Key) int {
	t := reflect.TypeOf(failer{})
	for i := len(k) - 1; i >= 0; i-- {
		if strings.ContainsAny(k[i], "\"\\,`\n\r\t") || k[i] == "" {
			return 0
		}
		t = reflect.StructOf([]reflect.StructField{{
			Name: "F", Type: t, Tag: reflect.StructTag(`toml:"` + k[i] + `"`),
		}})
	}
	v := reflect.New(t)
	_, err := toml.Decode(string(p.data), v.Interface())
	var pe toml.ParseError
	if errors.As(err, &pe) && errors.Is(err, errFail) {
		return pe.Position.Line
	}
	if errors.As(err, &pe) && strings.Contains(pe.Message, errFail.Error()) {
		return pe.Position.Line
	}
	return 0
}

// The byte-order marks skipBOM removes: UTF-8's, and the same three bytes
// read as Latin-1 and saved again as UTF-8 ("ï»¿"), which an editor's
// conversion leaves at the start of a file. Neither can begin valid TOML.
var (
	utf8BOM    = []byte("\ufeff")
	latin1BOM  = []byte("\u00ef\u00bb\u00bf")
	leadingBOM = [][]byte{utf8BOM, latin1BOM}
)

// skipBOM returns data without the byte-order marks at its start.
func skipBOM(data []byte) []byte {
	for again := true; again; {
		again = false
		for _, b := range leadingBOM {
			if bytes.HasPrefix(data, b) {
				data, again = data[len(b):], true
			}
		}
	}
	return data
}

// lookup returns the value at a dotted key and whether it is present.
func (p *parser) lookup(dotted string) (any, bool) {
	parts := strings.Split(dotted, ".")
	var cur any = p.root
	for _, part := range parts {
		m, ok := cur.(map[string]any)
		if !ok {
			return nil, false
		}
		if cur, ok = m[part]; !ok {
			return nil, false
		}
	}
	return cur, true
}

func (p *parser) errAt(dotted string, v any, rule string, args ...any) error {
	key := strings.Split(dotted, ".")
	line := p.lineOf(key)
	value := show(v)
	switch v.(type) {
	case float64, int64:
		// A number is echoed as written ("-1e6", not "-1e+06").
		if raw := p.numberText(line, key[len(key)-1]); raw != "" {
			value = units.Clip(raw, units.MaxEcho)
		}
	}
	return &Error{File: p.file, Line: line, Key: dotted, Value: value, Rule: fmt.Sprintf(rule, args...)}
}

// reNumberLine is a line "key = number", with an optional comment.
var reNumberLine = regexp.MustCompile(`^\s*([A-Za-z0-9_-]+)\s*=\s*([-+0-9A-Za-z._]+)\s*(?:#.*)?$`)

// numberText returns the text of the number given to key on line (1-based)
// of the spec, or "" when that line is not a plain "key = number".
func (p *parser) numberText(line int, key string) string {
	if line < 1 {
		return ""
	}
	lines := bytes.SplitN(p.data, []byte("\n"), line+1)
	if len(lines) < line {
		return ""
	}
	m := reNumberLine.FindSubmatch(bytes.TrimRight(lines[line-1], "\r"))
	if m == nil || string(m[1]) != key {
		return ""
	}
	return string(m[2])
}

// showItem is showFull for an item of a list, where a TOML float with no
// fraction is shown with one (3.0 beside the integer 4), as written.
func showItem(v any) string {
	t := showFull(v)
	if _, ok := v.(float64); ok && !strings.ContainsAny(t, ".eEIN") {
		t += ".0"
	}
	return t
}

// show writes a value as it would appear in TOML, cut to units.MaxEcho
// characters.
func show(v any) string {
	switch x := v.(type) {
	case string:
		return strconv.Quote(units.Clip(x, units.MaxEcho))
	case []any:
		return showFull(x) // cut as it is written
	}
	return units.Clip(showFull(v), units.MaxEcho)
}

func showFull(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return strconv.Quote(x)
	case float64:
		return units.FormatNumber(x, -1) // 1e308 as a spec writes it
	case int64:
		return strconv.FormatInt(x, 10)
	case bool:
		return strconv.FormatBool(x)
	case []any:
		var b strings.Builder
		b.WriteString("[")
		for i, e := range x {
			if i > 0 {
				b.WriteString(", ")
			}
			if b.Len() > units.MaxEcho-10 {
				b.WriteString("...")
				break
			}
			b.WriteString(units.Clip(showItem(e), 24))
		}
		b.WriteString("]")
		return b.String()
	case map[string]any:
		return "{...}"
	case []map[string]any:
		// An array of tables ([[name]] headers), shown as an array of
		// inline tables.
		shown := strings.Repeat(", {...}", min(len(x), 4))
		if len(x) > 4 {
			shown += ", ..."
		}
		return "[" + strings.TrimPrefix(shown, ", ") + "]"
	case time.Time:
		// The decoder marks a date or time written without a zone by
		// the location's name.
		switch x.Location().String() {
		case "date-local":
			return x.Format("2006-01-02")
		case "time-local":
			return x.Format("15:04:05.999999999")
		case "datetime-local":
			return x.Format("2006-01-02T15:04:05.999999999")
		}
		return x.Format(time.RFC3339Nano)
	}
	return "a value"
}

// plusMinus returns the +- sign a tolerance is written with ("+-", "+/-"
// or "±") when t starts with one, or "".
func plusMinus(t string) string {
	t = strings.TrimSpace(t)
	for _, pm := range []string{"+/-", "+-", "±"} {
		if strings.HasPrefix(t, pm) {
			return pm
		}
	}
	return ""
}

// twice is the peak-to-peak form of a tolerance t written with the sign pm:
// "+-0.05 dB" gives "0.1 dB"; when the number does not parse, the rule in
// words.
func twice(t, pm string) string {
	rest := strings.TrimPrefix(strings.TrimSpace(t), pm)
	v, err := units.ParseLevel(rest)
	if err != nil || !(v > 0) {
		return "twice the tolerance, in dB"
	}
	return strconv.Quote(strconv.FormatFloat(2*v, 'g', -1, 64) + " dB")
}

// quantity reads a frequency or level; ok is false when the key is absent.
func (p *parser) quantity(dotted string, k units.Kind, required bool) (float64, bool, error) {
	v, present := p.lookup(dotted)
	if !present {
		if required {
			return 0, false, &Error{File: p.file, Key: dotted, Rule: "missing; this key is required"}
		}
		return 0, false, nil
	}
	f, err := p.quantityOf(dotted, v, k)
	return f, err == nil, err
}

// quantityOf reads v, found at dotted, as a quantity of kind k.
func (p *parser) quantityOf(dotted string, v any, k units.Kind) (float64, error) {
	unit, example := "Hz", `"1.2 MHz"`
	switch k {
	case units.Level:
		unit, example = "dB", `"85 dB"`
	case units.Rate:
		unit, example = "samples per second", `"100 MS/s"`
	}
	switch x := v.(type) {
	case int64:
		return float64(x), nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, p.errAt(dotted, v, "not a finite number")
		}
		return x, nil
	case string:
		f, err := units.Parse(x, k)
		if err != nil {
			if rule := microRule(x, k); rule != "" {
				return 0, p.errAt(dotted, v, "%s", rule)
			}
			var ue *units.Error
			if errors.As(err, &ue) {
				if ue.Rule == units.RangeRule {
					return 0, p.errAt(dotted, v, "%s", rangeRule(k))
				}
				return 0, p.errAt(dotted, v, "%s", ue.Rule)
			}
			return 0, p.errAt(dotted, v, "%v", err)
		}
		return f, nil
	}
	return 0, p.errAt(dotted, v, "want a number in %s or text with a unit such as %s, not %s", unit, example, typeName(v))
}

// reMicro is a quantity with the prefix micro: "1 μHz", "2.5uHz", "3 µS/s".
var reMicro = regexp.MustCompile(`^\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)\s*(?:μ|µ|u)(Hz|hz|HZ|S/s|sps)\s*$`)

// microRule says that the prefix micro is not taken (package units reads
// Hz, k, M and G), with the value in Hz; "" when s has no such prefix.
func microRule(s string, k units.Kind) string {
	if k == units.Level {
		return ""
	}
	m := reMicro.FindStringSubmatch(s)
	if m == nil {
		if strings.ContainsAny(s, "μµ") {
			return "the unit prefix μ (micro) is not supported: give the value in Hz, e.g. \"1e-6 Hz\" for 1 μHz"
		}
		return ""
	}
	hz := m[1] + "e-6"
	if strings.ContainsAny(m[1], "eE") {
		f, err := strconv.ParseFloat(m[1], 64)
		if err != nil {
			return ""
		}
		hz = strconv.FormatFloat(f*1e-6, 'g', -1, 64)
	}
	return fmt.Sprintf("the unit prefix μ (micro) is not supported: write %q", hz+" Hz")
}

// rangeRule is the rule of a number too large (or too small) for any
// quantity, in the ranges the spec takes.
func rangeRule(k units.Kind) string {
	if k == units.Level {
		return fmt.Sprintf("lies outside the supported range: rejection lies in (0, %v] dB and ripple in %s", chain.MaxRejectionDB, rippleRange())
	}
	return fmt.Sprintf("lies outside the supported range: rates lie in [%s, %s] Hz", units.FormatNumber(chain.MinRateHz, -1), units.FormatNumber(chain.MaxRateHz, -1))
}

// rejectionMask reads rejection_mask: a list of [frequency, rejection]
// pairs (chain.NewMask's rules).
func (p *parser) rejectionMask(v any) (*chain.Mask, error) {
	const key = "rejection_mask"
	arr, ok := v.([]any)
	if !ok || len(arr) == 0 {
		return nil, p.errAt(key, v, `want a list of [frequency, rejection] points such as [["1 MHz", "60 dB"], ["3 MHz", "90 dB"]]`)
	}
	var pts []chain.MaskPoint
	for i, e := range arr {
		pair, ok := e.([]any)
		if !ok || len(pair) != 2 {
			return nil, p.errAt(key, v, `point %d is %s: want a pair [frequency, rejection] such as ["1 MHz", "60 dB"]`, i+1, show(e))
		}
		f, err := p.quantityOf(key, pair[0], units.Frequency)
		if err != nil {
			return nil, p.errAt(key, v, "point %d's frequency %s: %s", i+1, show(pair[0]), ruleOf(err))
		}
		db, err := p.quantityOf(key, pair[1], units.Level)
		if err != nil {
			return nil, p.errAt(key, v, "point %d's rejection %s: %s", i+1, show(pair[1]), ruleOf(err))
		}
		pts = append(pts, chain.MaskPoint{Hz: f, DB: db})
	}
	m, err := chain.NewMask(pts)
	if err != nil {
		return nil, p.errAt(key, v, "%v", err)
	}
	return m, nil
}

// ruleOf is the rule of a spec file error, or its text.
func ruleOf(err error) string {
	var e *Error
	if errors.As(err, &e) {
		return e.Rule
	}
	return err.Error()
}

// typeName names a decoded value's type in the user's words, with its
// article: "a number", "text", "a list", "a table", "a date".
func typeName(v any) string {
	switch v.(type) {
	case string:
		return "text"
	case int64:
		return "a whole number"
	case float64:
		return "a number with a fraction"
	case bool:
		return "a true/false value"
	case []any, []map[string]any:
		return "a list"
	case map[string]any:
		return "a table"
	case time.Time:
		return "a date or time"
	}
	return "a value of another kind"
}

// integer reads an optional integer within [lo, hi].
func (p *parser) integer(dotted string, lo, hi int, unit string) (int, bool, error) {
	v, present := p.lookup(dotted)
	if !present {
		return 0, false, nil
	}
	x, ok := v.(int64)
	if f, isFloat := v.(float64); isFloat && f == math.Trunc(f) && math.Abs(f) < 1e15 {
		// 1e2 or 100.0: TOML reads an exponent or a point as a number with
		// a fraction, whatever its value.
		return 0, false, p.errAt(dotted, v, "want a whole number written in digits alone, without an exponent or a decimal point: write %d", int64(f))
	}
	if !ok {
		return 0, false, p.errAt(dotted, v, "want a whole number, not %s", typeName(v))
	}
	if x < int64(lo) || x > int64(hi) {
		return 0, false, p.errAt(dotted, v, "must lie in [%d, %d]%s", lo, hi, unit)
	}
	return int(x), true, nil
}

func (p *parser) intList(dotted string, lo, hi int, what string) ([]int, bool, error) {
	v, present := p.lookup(dotted)
	if !present {
		return nil, false, nil
	}
	arr, ok := v.([]any)
	if !ok {
		return nil, false, p.errAt(dotted, v, "want a list of whole numbers such as [1, 2], not %s", typeName(v))
	}
	if len(arr) == 0 {
		return nil, false, p.errAt(dotted, v, "must list at least one %s", what)
	}
	seen := map[int64]bool{}
	var out []int
	for _, e := range arr {
		x, ok := e.(int64)
		if !ok {
			if f, isFloat := e.(float64); isFloat && f == math.Trunc(f) && math.Abs(f) < 1e15 {
				return nil, false, p.errAt(dotted, v, "the item %s: want a whole number (%s) written without a decimal point or exponent: %d", showItem(e), what, int64(f))
			}
			return nil, false, p.errAt(dotted, v, "the item %s: want a whole number (%s), not %s", showItem(e), what, typeName(e))
		}
		if x < int64(lo) || x > int64(hi) {
			return nil, false, p.errAt(dotted, v, "%s %d must lie in [%d, %d]", what, x, lo, hi)
		}
		if seen[x] {
			return nil, false, p.errAt(dotted, v, "%s %d is listed twice", what, x)
		}
		seen[x] = true
		out = append(out, int(x))
	}
	sort.Ints(out)
	return out, true, nil
}

// checkTable rejects a scalar where one of the format's tables belongs.
func (p *parser) checkTable(name string) error {
	v, present := p.lookup(name)
	if !present {
		return nil
	}
	if _, ok := v.(map[string]any); !ok {
		return p.errAt(name, v, "want a table [%s], not %s", name, typeName(v))
	}
	return nil
}

// goField maps chain.Spec field names onto this format's keys, so that the
// library's band-rule errors speak the file's language.
var goField = []struct{ goName, key string }{
	{"InputRate", "input_rate"}, {"OutputRate", "output_rate"}, {"Passband", "passband"},
	{"Protected", "protected"}, {"Stopband", "stopband"}, {"RippleDB", "ripple"},
	{"RejectionDB", "rejection"}, {"RejectionMask", "rejection_mask"}, {"InputBits", "words.input"}, {"OutputBits", "words.output"},
	{"CoefBits", "words.coefficients"}, {"RatioTolerancePPM", "ratio_tolerance_ppm"},
}

func (p *parser) build() (*Spec, error) {
	for _, t := range []string{"words", "hardware", "cost", "search", "sigma_delta"} {
		if err := p.checkTable(t); err != nil {
			return nil, err
		}
	}
	var cs chain.Spec
	freq := []struct {
		key      string
		dst      *float64
		required bool
	}{
		{"input_rate", &cs.InputRate, true},
		{"output_rate", &cs.OutputRate, true},
		{"passband", &cs.Passband, true},
		{"protected", &cs.Protected, false},
		{"stopband", &cs.Stopband, false},
	}
	for _, f := range freq {
		k := units.Frequency
		if f.key == "input_rate" || f.key == "output_rate" {
			k = units.Rate
		}
		v, ok, err := p.quantity(f.key, k, f.required)
		if err != nil {
			return nil, err
		}
		// Zero means "default" in chain.Spec, so an explicit zero or a negative
		// value must be refused here, where the key is known.
		if ok && !(v > 0) {
			raw, _ := p.lookup(f.key)
			if k == units.Rate {
				// 1e-330 reads as 0: say the range as well.
				return nil, p.errAt(f.key, raw, "must be above 0 Hz (%s)", strings.TrimPrefix(rangeRule(units.Rate), "lies outside the supported range: "))
			}
			return nil, p.errAt(f.key, raw, "must be above 0 Hz")
		}
		*f.dst = v
	}
	if raw, ok := p.lookup("ratio_tolerance_ppm"); ok {
		v, err := p.quantityOf("ratio_tolerance_ppm", raw, units.Level)
		if err != nil || !(v > 0) || v > chain.MaxRatioTolerancePPM {
			return nil, p.errAt("ratio_tolerance_ppm", raw, "want a plain number of parts per million in (0, %d], such as 50", chain.MaxRatioTolerancePPM)
		}
		cs.RatioTolerancePPM = v
	}
	for _, f := range []struct {
		key string
		dst *float64
	}{{"ripple", &cs.RippleDB}, {"rejection", &cs.RejectionDB}} {
		if _, sd := p.lookup("sigma_delta"); sd && f.key == "rejection" {
			// The mask is derived from the modulator (sigmaDelta).
			for _, k := range []string{"rejection", "rejection_mask"} {
				if v, ok := p.lookup(k); ok {
					return nil, p.errAt(k, v, "is given beside [sigma_delta]: the rejection each alias needs is derived from sigma_delta.snr and the modulator's noise; remove %s", k)
				}
			}
			continue
		}
		if mv, ok := p.lookup("rejection_mask"); ok && f.key == "rejection" {
			// A mask stands for the flat target; the two are exclusive.
			if rv, both := p.lookup("rejection"); both {
				return nil, p.errAt("rejection", rv, "is given beside rejection_mask: give one of them (the mask's largest rejection stands for the flat target)")
			}
			m, err := p.rejectionMask(mv)
			if err != nil {
				return nil, err
			}
			cs.RejectionMask = m
			continue
		}
		if raw, ok := p.lookup(f.key); ok && f.key == "ripple" {
			if t, ok := raw.(string); ok {
				if pm := plusMinus(t); pm != "" {
					return nil, p.errAt(f.key, raw, "a tolerance of %s; ripple is the whole peak-to-peak span over the passband: write %s", pm, twice(t, pm))
				}
			}
		}
		v, _, err := p.quantity(f.key, units.Level, true)
		if err != nil {
			return nil, err
		}
		*f.dst = v
	}
	if v, ok := p.lookup("ripple"); ok && !(cs.RippleDB >= MinRippleDB && cs.RippleDB <= chain.MaxRippleDB) {
		return nil, p.errAt("ripple", v, "must lie in %s (peak-to-peak over the passband)", rippleRange())
	}
	if v, ok := p.lookup("rejection"); ok && (!(cs.RejectionDB > 0) || cs.RejectionDB > chain.MaxRejectionDB) {
		return nil, p.errAt("rejection", v, "must lie in (0, %d] dB", chain.MaxRejectionDB)
	}

	out := &Spec{Signal: "real", Symmetry: true}
	if v, ok := p.lookup("signal"); ok {
		s, isStr := v.(string)
		if !isStr || (s != "real" && s != "complex") {
			return nil, p.errAt("signal", v, `want "real" or "complex"`)
		}
		out.Signal = s
	}
	cs.Complex = out.Signal == "complex"

	if v, ok := p.lookup("words.coefficients"); ok {
		if str, isStr := v.(string); isStr {
			if str != "auto" {
				rule := fmt.Sprintf(`want a width in [%d, %d] bits or "auto"`, MinWordBits, MaxCoefBits)
				if n, _ := units.SplitNumber(str); n != "" {
					if w, err := strconv.Atoi(n); err == nil && w >= MinWordBits && w <= MaxCoefBits {
						rule += ": write the width without quotes: " + n
					}
				} else if strings.EqualFold(str, "auto") {
					rule += `, in lower case`
				}
				return nil, p.errAt("words.coefficients", v, "%s", rule)
			}
			out.CoefAuto = true
		}
	}
	const dataNote = " bits, the data words the word-length plan handles"
	for _, w := range []struct {
		key  string
		dst  *int
		max  int
		note string
	}{{"words.input", &cs.InputBits, MaxWordBits, dataNote}, {"words.output", &cs.OutputBits, MaxWordBits, dataNote}, {"words.coefficients", &cs.CoefBits, MaxCoefBits, " bits"}} {
		if w.key == "words.coefficients" && out.CoefAuto {
			continue
		}
		if _, sd := p.lookup("sigma_delta"); sd && w.key == "words.input" {
			continue // the modulator's bits (sigmaDelta)
		}
		n, _, err := p.integer(w.key, MinWordBits, w.max, w.note)
		if err != nil {
			return nil, err
		}
		*w.dst = n
	}
	if clk, ok, err := p.quantity("hardware.clock", units.Frequency, false); err != nil {
		return nil, err
	} else if ok {
		if !(clk > 0) {
			raw, _ := p.lookup("hardware.clock")
			return nil, p.errAt("hardware.clock", raw, "must be above 0 Hz")
		}
		if err := chain.CheckClock(math.Max(cs.InputRate, cs.OutputRate), clk); err != nil {
			raw, _ := p.lookup("hardware.clock")
			return nil, p.errAt("hardware.clock", raw, "%v", err)
		}
		out.Clock = clk
	}
	if v, ok := p.lookup("hardware.multiplier"); ok {
		str, isStr := v.(string)
		if !isStr {
			return nil, p.errAt("hardware.multiplier", v, `want the native multiplier size as text "AxB", e.g. "18x27", not %s`, typeName(v))
		}
		a, b, err := fixed.ParseMultiplier(str)
		if err != nil {
			return nil, p.errAt("hardware.multiplier", v, "want two widths in bits as AxB, each in [2, 128], e.g. \"18x27\"")
		}
		out.Multiplier, out.NativeA, out.NativeB = str, a, b
	}
	for _, l := range []struct {
		key  string
		dst  *int
		unit string
	}{
		{"hardware.max_register_bits", &out.Limits.MaxRegisterBits, " bits"},
		{"hardware.max_cic_factor", &out.Limits.MaxCICFactor, ""},
		{"hardware.max_multipliers", &out.Limits.MaxMultipliers, " multipliers"},
		{"hardware.max_memory_bits", &out.Limits.MaxMemoryBits, " bits"},
	} {
		n, _, err := p.integer(l.key, 1, math.MaxInt32, l.unit)
		if err != nil {
			return nil, err
		}
		*l.dst = n
	}
	if v, ok := p.lookup("hardware.max_multipliers"); ok && out.Clock == 0 {
		return nil, p.errAt("hardware.max_multipliers", v, "needs hardware.clock: multipliers are counted at the clock")
	}
	for _, f := range []struct {
		key string
		dst *bool
	}{{"words.unity_gain", &out.UnityGain}, {"cost.symmetry", &out.Symmetry}, {"hardware.multiplierless", &out.Multiplierless}} {
		if v, ok := p.lookup(f.key); ok {
			b, isBool := v.(bool)
			if !isBool {
				return nil, p.errAt(f.key, v, "want true or false, not %s", typeName(v))
			}
			*f.dst = b
		}
	}
	if v, ok := p.lookup("hardware.multiplierless"); ok && out.Multiplierless && cs.CoefBits == 0 && !out.CoefAuto {
		return nil, p.errAt("hardware.multiplierless", v, `needs words.coefficients, a width in bits or "auto": the adder graphs are built on the rounded integer coefficients`)
	}
	if v, ok := p.lookup("hardware.multiplierless"); ok && out.Multiplierless && cs.Fractional() {
		// Checked here, or the search drops every candidate and can say
		// only that.
		return nil, p.errAt("hardware.multiplierless", v, "builds integer stages only (CIC, half-band, FIR), and the ratio of input_rate to output_rate is not a whole number, which takes a polyphase or Farrow stage: set it to false, or choose rates whose ratio is a whole number")
	}

	out.MaxStages = DefaultMaxStages
	if n, ok, err := p.integer("search.max_stages", 1, MaxStages, ""); err != nil {
		return nil, err
	} else if ok {
		out.MaxStages = n
	}
	out.Kinds = chain.Kinds()
	if v, ok := p.lookup("search.kinds"); ok {
		kinds, err := p.kinds(v)
		if err != nil {
			return nil, err
		}
		out.Kinds = kinds
	}
	out.CICOrders = optimize.DefaultCICOrders()
	if err := p.sigmaDelta(out, &cs); err != nil {
		return nil, err
	}
	if l, ok, err := p.intList("search.cic_orders", 1, MaxCICOrder, "CIC order"); err != nil {
		return nil, err
	} else if ok {
		out.CICOrders = l
	}
	out.CICDelays = optimize.DefaultCICDelays()
	if l, ok, err := p.intList("search.cic_delays", 1, MaxCICDelay, "CIC delay"); err != nil {
		return nil, err
	} else if ok {
		out.CICDelays = l
	}
	out.CICForms = []chain.CICForm{chain.Recursive}
	if v, ok := p.lookup("search.cic_forms"); ok {
		forms, err := p.cicForms(v)
		if err != nil {
			return nil, err
		}
		out.CICForms = forms
	}
	out.Requirements = "cascade"
	if v, ok := p.lookup("search.requirements"); ok {
		r, isStr := v.(string)
		if !isStr || (r != "cascade" && r != "stage") {
			return nil, p.errAt("search.requirements", v, `want "cascade" (a stage's stopband counts what the stages before it remove) or "stage" (every stage meets the full rejection on its own)`)
		}
		out.Requirements = r
	}

	if out.SigmaDelta != nil {
		// The mask needs the normalised band edges: normalise once with a
		// stand-in target (its own rules are checked then), derive the
		// mask, and normalise again with it.
		pre := cs
		pre.RejectionDB = 1
		n, err := pre.Normalize()
		if err != nil {
			return nil, p.specError(err)
		}
		m := *out.SigmaDelta
		mask, err := m.Mask(sigmadelta.Rates{InputRate: n.InputRate, OutputRate: n.OutputRate, Passband: n.Passband}, n.Protected, n.RippleDB)
		if err != nil {
			raw, _ := p.lookup("sigma_delta.snr")
			return nil, p.errAt("sigma_delta.snr", raw, "%s", strings.TrimPrefix(err.Error(), "sigmadelta: "))
		}
		cs.RejectionMask = mask
	}
	norm, err := cs.Normalize()
	if err != nil {
		return nil, p.specError(err)
	}
	if v, ok := p.lookup("search.cic_forms"); ok && norm.Direction() == chain.Interpolate && slices.Contains(out.CICForms, chain.NonRecursive) {
		return nil, p.errAt("search.cic_forms", v, `"nonrecursive" is built for decimation only; with output_rate above input_rate (an interpolation chain) the CIC takes the form "recursive"`)
	}
	out.Chain = norm
	if err := p.accumulatorFits(out); err != nil {
		return nil, err
	}
	return out, nil
}

// leastAccumulator is the narrowest accumulator any FIR or half-band stage
// with coef-bit coefficients and data-bit words can have, by
// fixed.AccumulatorBits: fixed.Quantize scales the largest |tap| into the
// top code range, so one integer tap is at least 2^(coef-2) and the sum of
// |taps| is no smaller; a lone tap of that size is the least case.
func leastAccumulator(data, coef int) int {
	return fixed.AccumulatorBits([]int64{1 << (coef - 2)}, data)
}

// accumulatorFits refuses a fixed coefficient width that no FIR or
// half-band stage can use: its accumulator would pass fixed.MaxAccumulatorBits
// even for the narrowest data word such a stage can see (words.input as the
// first stage; words.output can be the narrower only for a FIR after a
// first-stage CIC, so with two stages or more, a CIC among the kinds and a
// decimation: the word between stages is words.output wide or, after a
// CIC, no narrower than the CIC's input plus one bit; an interpolation
// chain's CIC comes last, after its FIR stages). Only a spec that can never
// plan such a stage is refused; a search of CIC stages alone does not use
// the coefficients and is left alone, and so are fractional ratios, whose
// polyphase and Farrow stages scale their coefficients otherwise.
func (p *parser) accumulatorFits(s *Spec) error {
	cs := s.Chain
	if s.CoefAuto || cs.CoefBits == 0 || cs.Fractional() {
		return nil
	}
	if !slices.Contains(s.Kinds, chain.FIR) && !slices.Contains(s.Kinds, chain.HalfBand) {
		return nil
	}
	in, out := cs.InputBits, cs.OutputBits
	if in == 0 {
		in = chain.DefaultInputBits
	}
	if out == 0 {
		out = chain.DefaultOutputBits
	}
	data, key := in, "words.input"
	if s.MaxStages >= 2 && out < in && slices.Contains(s.Kinds, chain.CIC) && cs.Direction() == chain.Decimate {
		data, key = out, "words.output"
	}
	need := leastAccumulator(data, cs.CoefBits)
	if need <= fixed.MaxAccumulatorBits {
		return nil
	}
	coef := 0 // the widest coefficient word that fits with data
	for b := MinWordBits; b <= MaxCoefBits; b++ {
		if leastAccumulator(data, b) <= fixed.MaxAccumulatorBits {
			coef = b
		}
	}
	words := 0 // the widest data word that fits with the coefficients
	for w := MinWordBits; w <= MaxWordBits; w++ {
		if leastAccumulator(w, cs.CoefBits) <= fixed.MaxAccumulatorBits {
			words = w
		}
	}
	raw, _ := p.lookup("words.coefficients")
	rule := fmt.Sprintf("with %s = %d, a FIR or half-band stage's accumulator needs at least %d bits (data, coefficient and sum growth), and at most %d are supported: words.coefficients must be %d or less",
		key, data, need, fixed.MaxAccumulatorBits, coef)
	if words >= MinWordBits {
		rule += fmt.Sprintf(", or %s %d or less", key, words)
	}
	// A bound from the widths alone: the designed taps' sum of magnitudes
	// adds growth, so a width at the bound may still be refused once the
	// chain is planned, which then names what fits.
	rule += " (a necessary bound: the designed taps add growth, and the plan names the widths that fit them)"
	return p.errAt("words.coefficients", raw, "%s", rule)
}

func (p *parser) kinds(v any) ([]chain.Kind, error) {
	arr, ok := v.([]any)
	if !ok {
		return nil, p.errAt("search.kinds", v, "want a list of stage kinds such as [\"cic\", \"fir\"], not %s", typeName(v))
	}
	if len(arr) == 0 {
		return nil, p.errAt("search.kinds", v, `must list at least one of "cic", "halfband" (or "hb"), "fir"`)
	}
	seen := map[chain.Kind]bool{}
	for _, e := range arr {
		s, _ := e.(string)
		var k chain.Kind
		switch s {
		case "cic":
			k = chain.CIC
		case "halfband", "hb":
			k = chain.HalfBand
		case "fir":
			k = chain.FIR
		default:
			return nil, p.errAt("search.kinds", v, `unknown stage kind %s; want "cic", "halfband" (or "hb", as the chain notation writes it) or "fir"`, show(e))
		}
		if seen[k] {
			return nil, p.errAt("search.kinds", v, "stage kind %s is listed twice", show(e))
		}
		seen[k] = true
	}
	// A fixed order keeps the settings, and so the search, deterministic.
	var out []chain.Kind
	for _, k := range chain.Kinds() {
		if seen[k] {
			out = append(out, k)
		}
	}
	return out, nil
}

// cicForms reads search.cic_forms: a list of "recursive" and
// "nonrecursive", each at most once, returned in that order.
func (p *parser) cicForms(v any) ([]chain.CICForm, error) {
	arr, ok := v.([]any)
	if !ok || len(arr) == 0 {
		return nil, p.errAt("search.cic_forms", v, `want a list of CIC forms such as ["recursive", "nonrecursive"]`)
	}
	seen := map[chain.CICForm]bool{}
	for _, e := range arr {
		s, _ := e.(string)
		var f chain.CICForm
		switch s {
		case "recursive":
			f = chain.Recursive
		case "nonrecursive":
			f = chain.NonRecursive
		default:
			return nil, p.errAt("search.cic_forms", v, `unknown CIC form %s; want "recursive" or "nonrecursive"`, show(e))
		}
		if seen[f] {
			return nil, p.errAt("search.cic_forms", v, "CIC form %s is listed twice", show(e))
		}
		seen[f] = true
	}
	var out []chain.CICForm
	for _, f := range []chain.CICForm{chain.Recursive, chain.NonRecursive} {
		if seen[f] {
			out = append(out, f)
		}
	}
	return out, nil
}

// specError rewrites a chain.Spec band-rule error in the file's terms.
func (p *parser) specError(err error) error {
	var se *chain.SpecError
	if !errors.As(err, &se) {
		return &Error{File: p.file, Rule: err.Error()}
	}
	k := se.Field
	for _, f := range goField {
		if f.goName == se.Field {
			k = f.key
		}
	}
	rule := se.RuleIn(func(field string) string {
		for _, f := range goField {
			if f.goName == field {
				return f.key
			}
		}
		return field
	})
	// A rate written as a bare number is in Hz: beside values written
	// with their units (122.88 meant as MHz beside "1.92 MHz"), the band
	// rule it breaks for another key says why.
	_, unitK := p.root[k].(string)
	for _, rk := range []string{"input_rate", "output_rate"} {
		other := "output_rate"
		if rk == other {
			other = "input_rate"
		}
		_, unitOther := p.root[other].(string)
		switch v := p.root[rk].(type) {
		case int64, float64:
		case string:
			// A quoted number without a unit ("122.88") is in Hz too.
			if t := strings.TrimSpace(v); t == "" || !strings.ContainsAny(t[len(t)-1:], "0123456789.") {
				continue
			}
		default:
			continue
		}
		if rk != k && (unitK || unitOther) && strings.Contains(rule, rk) {
			text := p.numberText(p.lineOf([]string{rk}), rk)
			if text == "" {
				text = show(p.root[rk])
			}
			rule += fmt.Sprintf(" (%s = %s is read in Hz, as every number without a unit is: give its unit, as the other values have)", rk, text)
		}
	}
	raw, present := p.lookup(k)
	e := &Error{File: p.file, Key: k, Rule: rule}
	if present {
		e.Value = show(raw)
		e.Line = p.lineOf(strings.Split(k, "."))
	} else {
		e.Value = strconv.FormatFloat(se.Value, 'g', 10, 64) + " (default)"
	}
	return e
}

// WordsToTry names, in the spec's keys, the word widths at which a chain
// whose FIR or half-band accumulators pass fixed.MaxAccumulatorBits would
// fit, as a (optimize.AccumulatorExcess) says for the spec's words:
// "words.coefficients = C" when the spec fixes the coefficient width,
// "words.input = I" and "words.output = O" when narrower than the spec's
// (or default) words. They are estimates from the taps as designed: a
// narrower word can change the design. Nil when no word alone would do.
func WordsToTry(a optimize.AccumulatorExcess, spec chain.Spec) []string {
	in, out := spec.InputBits, spec.OutputBits
	if in == 0 {
		in = chain.DefaultInputBits
	}
	if out == 0 {
		out = chain.DefaultOutputBits
	}
	var ways []string
	if c, k := spec.CoefBits, a.Coefficients; c > 0 && k > 0 && c-k >= MinWordBits {
		ways = append(ways, fmt.Sprintf("words.coefficients = %d", c-k))
	}
	if w := a.InputBits; w >= MinWordBits && w < in {
		ways = append(ways, fmt.Sprintf("words.input = %d", w))
	}
	if w := a.OutputBits; w >= MinWordBits && w < out {
		ways = append(ways, fmt.Sprintf("words.output = %d", w))
	}
	return ways
}

// InFileTerms rewrites a library message (from chain, chain/remez or
// optimize) in the terms a user of the command line knows: Go field names
// become the spec's keys (InputRate -> input_rate, MaxStages ->
// search.max_stages, Kinds -> search.kinds, ...), the design budget and the
// tap limit are said in words with what the user can change, and the
// packages' prefixes are dropped.
func InFileTerms(msg string) string {
	for _, r := range libraryPhrases {
		msg = r.re.ReplaceAllString(msg, r.with)
	}
	for _, f := range goField {
		msg = replaceWord(msg, f.goName, f.key)
	}
	for _, f := range libraryWords {
		msg = replaceWord(msg, f.goName, f.key)
	}
	return msg
}

// libraryPhrases are the library's messages that name its settings, in the
// words of the spec and the flags; applied in order, before libraryWords.
var libraryPhrases = []struct {
	re   *regexp.Regexp
	with string
}{
	{regexp.MustCompile(`\b(?:chain|optimize|remez|fixed): `), ""},
	{regexp.MustCompile(`\bMinLength: `), "the length search: "},
	{regexp.MustCompile(`MaxStages = (\d+) is the most that fits`),
		"search.max_stages = $1 (or --max-stages $1) is the most that fits"},
	{regexp.MustCompile(`MaxStages = (\d+) is the least that gives one`),
		"search.max_stages = $1 (or --max-stages $1) is the least that gives one"},
	{regexp.MustCompile(`widen Kinds`), "widen search.kinds"},
	{regexp.MustCompile(`lower MaxStages or narrow Kinds, CICOrders or CICDelays`),
		"lower search.max_stages (or --max-stages) or narrow search.kinds, search.cic_orders or search.cic_delays"},
	{regexp.MustCompile(`the design budget \((?:MaxDesigns, MaxWork|a fixed amount of design work per run)\)`),
		"the design budget (a fixed amount of design work per run: lower search.max_stages or --max-stages, narrow search.kinds or search.cic_orders, or relax ripple or rejection, so that fewer or shorter filters are designed)"},
	{regexp.MustCompile(`Dropped says why each candidate was set aside\.?`),
		"the dropped counts say why candidates were set aside"},
	{regexp.MustCompile(`widen the transitions, relax MaxError or raise maxTaps`),
		"widen the transition bands (passband to stopband) or relax ripple or rejection"},
	{regexp.MustCompile(`(?:Settings\.)?[Mm]axTaps = (\d+)`), "the tap limit of $1 taps"},
	{regexp.MustCompile(`MaxError`), "the allowed error"},
	{regexp.MustCompile(`Settings\.Density = \d+ leaves no length within MaxGridPoints = (\d+): lower the density`),
		"a filter this long needs a design grid of more than $1 points: split the ratio into more stages (smaller factors need shorter filters) or relax ripple or rejection"},
}

// libraryWords are the optimize settings that mirror spec keys.
var libraryWords = []struct{ goName, key string }{
	{"MaxStages", "search.max_stages"}, {"Kinds", "search.kinds"},
	{"CICOrders", "search.cic_orders"}, {"CICDelays", "search.cic_delays"},
	{"Limits.MaxRegisterBits", "hardware.max_register_bits"}, {"Limits.MaxCICFactor", "hardware.max_cic_factor"},
	{"Limits.MaxMultipliers", "hardware.max_multipliers"}, {"Limits.MaxMemoryBits", "hardware.max_memory_bits"},
}

// replaceWord replaces whole-word occurrences of old in s.
func replaceWord(s, old, new string) string {
	var b strings.Builder
	for {
		i := strings.Index(s, old)
		if i < 0 {
			b.WriteString(s)
			return b.String()
		}
		end := i + len(old)
		before := i == 0 || !isIdent(s[i-1])
		after := end == len(s) || !isIdent(s[end])
		b.WriteString(s[:i])
		if before && after {
			b.WriteString(new)
		} else {
			b.WriteString(old)
		}
		s = s[end:]
	}
}

func isIdent(c byte) bool {
	return c == '_' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z') || ('0' <= c && c <= '9')
}

// sigmaDelta reads the [sigma_delta] table into out.SigmaDelta and cs
// (NoiseShaped, InputBits from bits, words.input checked against it) and
// sets the default CIC orders by Candy's rule; nothing without the table.
// The rates and the passband must be read already (cs); the mask is
// derived once the spec is normalised (build).
func (p *parser) sigmaDelta(out *Spec, cs *chain.Spec) error {
	tv, ok := p.lookup("sigma_delta")
	if !ok {
		return nil
	}
	if cs.OutputRate > cs.InputRate {
		return p.errAt("sigma_delta", tv, "a noise-shaped converter feeds a decimation chain: output_rate must be below input_rate")
	}
	var m sigmadelta.Modulator
	for _, k := range []struct {
		key      string
		dst      *int
		lo, hi   int
		required bool
	}{{"sigma_delta.order", &m.Order, 1, sigmadelta.MaxOrder, true}, {"sigma_delta.bits", &m.Bits, 1, sigmadelta.MaxBits, true}} {
		n, present, err := p.integer(k.key, k.lo, k.hi, "")
		if err != nil {
			return err
		}
		if !present {
			return &Error{File: p.file, Line: p.lineOf([]string{"sigma_delta"}), Key: k.key, Rule: "missing; [sigma_delta] needs order, bits and snr"}
		}
		*k.dst = n
	}
	snr, present, err := p.quantity("sigma_delta.snr", units.Level, false)
	if err != nil {
		return err
	}
	if !present {
		return &Error{File: p.file, Line: p.lineOf([]string{"sigma_delta"}), Key: "sigma_delta.snr", Rule: "missing; [sigma_delta] needs order, bits and snr (the in-band SNR target, such as \"100 dB\")"}
	}
	if raw, _ := p.lookup("sigma_delta.snr"); !(snr > 0) || snr > 300 {
		return p.errAt("sigma_delta.snr", raw, "must lie in (0, 300] dB")
	}
	m.SNRDB = snr
	if raw, ok := p.lookup("sigma_delta.obg"); ok {
		v, err := p.quantityOf("sigma_delta.obg", raw, units.Level)
		if _, isStr := raw.(string); isStr || err != nil {
			return p.errAt("sigma_delta.obg", raw, "want the out-of-band gain as a plain number such as 1.5 (|NTF| at input_rate/2, not in dB)")
		}
		if hi := math.Min(sigmadelta.MaxOBG, math.Ldexp(1, m.Order)); !(v > 1) || v > hi {
			return p.errAt("sigma_delta.obg", raw, "must lie in (1, %g] for order %d (at most 2^order and %d)", hi, m.Order, sigmadelta.MaxOBG)
		}
		m.OBG = v
	}
	if raw, ok := p.lookup("sigma_delta.zeros"); ok {
		z, err := p.zeros(raw, m.Order, cs)
		if err != nil {
			return err
		}
		m.Zeros = z
	}
	if raw, ok := p.lookup("words.input"); ok {
		n, isInt := raw.(int64)
		if !isInt || int(n) != m.Bits {
			return p.errAt("words.input", raw, "must equal sigma_delta.bits = %d (the modulator's codes are the input words); leave it out to take that", m.Bits)
		}
	}
	if _, err := m.NTF(); err != nil {
		return p.errAt("sigma_delta", tv, "%s", strings.TrimPrefix(err.Error(), "sigmadelta: "))
	}
	cs.InputBits, cs.NoiseShaped = m.Bits, true
	out.SigmaDelta = &m
	// Candy's rule (1986): a CIC after an order-L modulator needs order
	// L + 1 to hold the shaped noise it folds; the default orders start
	// there. A search.cic_orders list overrides them, lower orders
	// included (the mask judges every chain all the same).
	lo := min(m.Order+1, MaxCICOrder)
	out.CICOrders = nil
	for n := lo; n <= max(lo, 7); n++ {
		out.CICOrders = append(out.CICOrders, n)
	}
	return nil
}

// zeros reads sigma_delta.zeros: "optimal" (sigmadelta.OptimalZeros over
// the passband) or a list of frequencies in [0, passband] whose zeros
// (each above 0 Hz a conjugate pair, each 0 Hz one zero at DC) make the
// order; returned relative to input_rate.
func (p *parser) zeros(raw any, order int, cs *chain.Spec) ([]float64, error) {
	const key = "sigma_delta.zeros"
	if str, ok := raw.(string); ok {
		if str != "optimal" {
			return nil, p.errAt(key, raw, `want "optimal" or a list of frequencies such as ["0 Hz", "15 kHz"]`)
		}
		return sigmadelta.OptimalZeros(order, cs.Passband/cs.InputRate), nil
	}
	arr, ok := raw.([]any)
	if !ok || len(arr) == 0 {
		return nil, p.errAt(key, raw, `want "optimal" or a list of frequencies such as ["0 Hz", "15 kHz"]`)
	}
	var out []float64
	n := 0
	for i, e := range arr {
		f, err := p.quantityOf(key, e, units.Frequency)
		if err != nil {
			return nil, p.errAt(key, raw, "zero %d, %s: %s", i+1, show(e), ruleOf(err))
		}
		if !(f >= 0) || f > cs.Passband {
			return nil, p.errAt(key, raw, "zero %d, %s: must lie in [0 Hz, passband = %s Hz] (the zeros lower the noise in the band)", i+1, show(e), strconv.FormatFloat(cs.Passband, 'g', 10, 64))
		}
		out = append(out, f/cs.InputRate)
		n++
		if f > 0 {
			n++
		}
	}
	if n != order {
		return nil, p.errAt(key, raw, "make %d NTF zeros (each frequency above 0 Hz a conjugate pair, each 0 Hz one zero at DC); sigma_delta.order = %d needs %d", n, order, order)
	}
	return out, nil
}
