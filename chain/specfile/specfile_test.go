package specfile

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"

	"github.com/stepdown-dsp/stepdown/chain"
)

const minimal = `input_rate  = "245.76 MHz"
output_rate = "1.92 MHz"
passband    = "600 kHz"
ripple      = "0.1 dB"
rejection   = "85 dB"
`

// The full example spec; every figure is checked against the text.
const full = `input_rate  = "245.76 MHz"   # required
output_rate = "1.92 MHz"     # required; the ratio must be an integer
passband    = "600 kHz"      # required: flat band edge
protected   = "900 kHz"      # optional, default = passband: alias-free band edge
stopband    = "1.02 MHz"     # optional, default = output_rate - protected
ripple      = "0.1 dB"       # required, peak-to-peak over the passband
rejection   = "85 dB"        # required, alias rejection into the protected band
signal      = "complex"      # "real" (default) or "complex"
[words]                      # optional
input = 16
output = 24
coefficients = 18            # absent: floating-point coefficients
[hardware]                   # optional
clock = "491.52 MHz"
[cost]
symmetry = true              # default true: count folded symmetric multiplies
[search]
max_stages = 6
kinds = ["cic", "halfband", "fir"]
cic_orders = [1, 2, 3, 4, 5, 6, 7]
cic_delays = [1, 2]
`

func TestParseFull(t *testing.T) {
	s, err := Parse("full.toml", []byte(full))
	if err != nil {
		t.Fatal(err)
	}
	c := s.Chain
	// Exact: the values are decimal literals scaled by SI prefixes.
	if c.InputRate != 245.76e6 || c.OutputRate != 1.92e6 || c.Passband != 600e3 ||
		c.Protected != 900e3 || c.Stopband != 1.02e6 || c.RippleDB != 0.1 || c.RejectionDB != 85 {
		t.Errorf("chain spec = %+v", c)
	}
	if !c.Complex || c.InputBits != 16 || c.OutputBits != 24 || c.CoefBits != 18 {
		t.Errorf("signal/words = %+v", c)
	}
	if c.Decimation() != 128 {
		t.Errorf("decimation = %d, want 128", c.Decimation())
	}
	if s.Clock != 491.52e6 || !s.Symmetry || s.MaxStages != 6 || len(s.Kinds) != 3 ||
		len(s.CICOrders) != 7 || len(s.CICDelays) != 2 {
		t.Errorf("settings = %+v", s)
	}
	cs := s.CostSettings()
	if cs.NoSymmetry || cs.Clock != 491.52e6 {
		t.Errorf("cost settings = %+v", cs)
	}
	os := s.SearchSettings()
	if os.MaxStages != 6 || len(os.Kinds) != 3 || os.Cost != cs {
		t.Errorf("search settings = %+v", os)
	}
}

func TestParseDefaults(t *testing.T) {
	s, err := Parse("min.toml", []byte(minimal))
	if err != nil {
		t.Fatal(err)
	}
	c := s.Chain
	// docs/design.md §3: protected defaults to passband, stopband to output_rate - protected.
	if c.Protected != 600e3 || c.Stopband != 1.92e6-600e3 || c.Complex {
		t.Errorf("defaults = %+v", c)
	}
	if s.Signal != "real" || !s.Symmetry || s.Clock != 0 || s.MaxStages != DefaultMaxStages ||
		len(s.Kinds) != 3 || len(s.CICOrders) != 7 || len(s.CICDelays) != 2 {
		t.Errorf("defaults = %+v", s)
	}
	// Plain numbers are base units.
	plain := strings.NewReplacer(`"245.76 MHz"`, "245760000", `"1.92 MHz"`, "1.92e6", `"600 kHz"`, "600000", `"0.1 dB"`, "0.1", `"85 dB"`, "85").Replace(minimal)
	p, err := Parse("plain.toml", []byte(plain))
	if err != nil {
		t.Fatal(err)
	}
	if p.Chain != s.Chain {
		t.Errorf("plain numbers give %+v, want %+v", p.Chain, s.Chain)
	}
}

func TestExample(t *testing.T) {
	s, err := Example()
	if err != nil {
		t.Fatal(err)
	}
	if s.Chain.Decimation() != 64 {
		t.Errorf("example decimation = %d, want 64", s.Chain.Decimation())
	}
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "specs", "example.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if string(b) != ExampleText {
		t.Error("testdata/specs/example.toml differs from ExampleText; keep them identical")
	}
}

func TestParseErrors(t *testing.T) {
	for _, tc := range []struct {
		name, edit string // edit: a line appended to, or replacing a key of, the minimal spec
		want       []string
	}{
		{"unknown key", "colour = 3", []string{":6:", "colour", "unknown key"}},
		{"unknown table key", "[search]\nmax_stage = 3", []string{":7:", "search.max_stage", "unknown key"}},
		{"case", "Signal = \"real\"", []string{":6:", "Signal", "did you mean \"signal\""}},
		{"unknown table", "[extra]\nx = 1", []string{":6:", "extra", "unknown key"}},
		{"unknown dotted key", "words.inptu = 3", []string{":6:", "words.inptu", "unknown key"}},
		{"unknown quoted key", "\"odd key\" = 3", []string{":6:", "odd key", "unknown key"}},
		{"order with a fraction", "[search]\ncic_orders = [3.0, 4]", []string{"search.cic_orders = [3.0, 4]: the item 3.0: want a whole number (CIC order) written without a decimal point or exponent: 3"}},
		{"rate without a unit", "output_rate = 1.92", []string{"passband", "output_rate/2 = 0.96 Hz", "output_rate = 1.92 is read in Hz, as every number without a unit is: give its unit, as the other values have"}},
		{"quoted rate without a unit", "output_rate = \"1.92\"", []string{"passband", "output_rate/2 = 0.96 Hz", "output_rate = \"1.92\" is read in Hz, as every number without a unit is: give its unit, as the other values have"}},
		{"key with a space", "\"protected \" = \"600 kHz\"", []string{":6:", `"protected ": unknown key (did you mean "protected"?)`}},
		{"key under the wrong table", "[words]\nclock = \"245.76 MHz\"", []string{":7:", "words.clock: unknown key; clock belongs under [hardware] (hardware.clock)"}},
		{"key outside its table", "max_stages = 3", []string{":6:", "max_stages: unknown key; max_stages belongs under [search] (search.max_stages)"}},
		{"top key under a table", "[search]\nsignal = \"complex\"", []string{":7:", "search.signal: unknown key; signal belongs at the top of the file"}},
		{"quoted dotted key", "\"words.coefficients\" = 12", []string{`"words.coefficients": a dot inside quotes is part of the key's name, so this key is unknown; write words.coefficients without quotes`}},
		{"quoted width out of range", "[words]\ncoefficients = \"99\"", []string{`words.coefficients = "99": want a width in [2, 40] bits or "auto"`}},
		{"quoted width", "[words]\ncoefficients = \"16\"", []string{"words.coefficients", "write the width without quotes: 16"}},
		{"unknown key in inline table", "cost = {symmetry = true, fold = 2}", []string{":6:", "cost.fold", "unknown key"}},
		{"not toml", "input_rate = = 3", []string{"input_rate", "one = between a key and its value"}},
		{"not toml, no rewrite", "passband = \"a\\q\"", []string{"not valid TOML", "invalid escape"}},
		{"rate unit", `input_rate = "245.76 XHz"`, []string{"input_rate", `"245.76 XHz"`, "unknown unit"}},
		{"rate nan", `input_rate = nan`, []string{"input_rate", "not a finite number"}},
		{"band edge in S/s", `passband = "300 kS/s"`, []string{"passband", "sample-rate unit", "kHz"}},
		{"limit zero", "[hardware]\nmax_register_bits = 0", []string{"hardware.max_register_bits", "must lie in [1, "}},
		{"limit text", "[hardware]\nmax_memory_bits = \"lots\"", []string{"hardware.max_memory_bits", "whole number"}},
		{"multipliers without clock", "[hardware]\nmax_multipliers = 4", []string{"hardware.max_multipliers", "needs hardware.clock"}},
		{"multiplierless text", "[hardware]\nmultiplierless = \"yes\"", []string{"hardware.multiplierless", "want true or false"}},
		{"multiplierless number", "[hardware]\nmultiplierless = 1", []string{"hardware.multiplierless", "want true or false"}},
		{"multiplierless float", "[hardware]\nmultiplierless = true", []string{"hardware.multiplierless", "needs words.coefficients", `"auto"`}},
		{"ripple +-", `ripple = "+-0.05 dB"`, []string{"ripple", "peak-to-peak", `write "0.1 dB"`}},
		{"ripple ±", `ripple = "±0.25dB"`, []string{"ripple", "peak-to-peak", `write "0.5 dB"`}},
		{"ripple +/-", `ripple = "+/-x"`, []string{"ripple", "twice the tolerance"}},
		{"rate inf", `input_rate = inf`, []string{"input_rate", "not a finite number"}},
		{"rate zero", `input_rate = 0`, []string{"input_rate", "above 0 Hz"}},
		{"rate negative", `input_rate = "-1 MHz"`, []string{"input_rate", "above 0 Hz"}},
		{"rate text", `input_rate = "fast"`, []string{"input_rate", "not a number"}},
		{"rate bool", `input_rate = true`, []string{"input_rate", "not a true/false value"}},
		{"rate date", `input_rate = 1979-05-27`, []string{"input_rate = 1979-05-27", "not a date or time"}},
		{"rate list", `input_rate = [1, 2]`, []string{"input_rate = [1, 2]", "not a list"}},
		{"rate table", `input_rate = {a = 1}`, []string{"input_rate", "unknown key"}},
		{"rate hex", `input_rate = 0x5DC0000`, []string{":1:", "input_rate = 0x5DC0000", "hexadecimal", "decimal", "98304000"}},
		{"rate octal", `input_rate = 0o777`, []string{"input_rate", "octal"}},
		{"rate binary", `input_rate = 0b1010`, []string{"input_rate", "binary"}},
		{"rate hex text", `input_rate = "0x5DC0000 Hz"`, []string{"input_rate", "hexadecimal", "decimal"}},
		{"rate long text", `input_rate = "` + strings.Repeat("9", 5000) + `x"`, []string{"input_rate", `"999999999`, `..."`}},
		{"ripple huge", `ripple = "1.7e308 dB"`, []string{"ripple", "[1e-9, 10] dB"}},
		{"ripple 11 dB", `ripple = "11 dB"`, []string{"ripple", "[1e-9, 10] dB"}},
		{"rate float overflow", `input_rate = 1.8e308`, []string{":1:", "input_rate = 1.8e308", "too large a number", `"1.2 GHz"`}},
		{"rate int overflow", `input_rate = 18446744073709551616`, []string{"input_rate = 18446744073709551616", "too large a number"}},
		{"rate many digits", `input_rate = ` + strings.Repeat("4", 60000), []string{"input_rate = 4444", "...", "too large a number"}},
		{"word float overflow", "[words]\ninput = 1e400", []string{"words.input = 1e400", "too large a number"}},
		{"word hex", "[words]\ninput = 0x10", []string{":7:", "words.input = 0x10", "hexadecimal", "(0x10 is 16)"}},
		{"word list", "[words]\ninput = [14]", []string{"words.input = [14]", "want a whole number, not a list"}},
		{"ratio 1", `output_rate = "245.76 MHz"`, []string{"output_rate"}},
		{"ratio tolerance", "ratio_tolerance_ppm = 5000", []string{"ratio_tolerance_ppm", "(0, 1000]"}},
		{"ratio tolerance text", `ratio_tolerance_ppm = "a lot"`, []string{"ratio_tolerance_ppm", "parts per million"}},
		{"passband high", `passband = "1 MHz"`, []string{"passband"}},
		{"ripple zero", `ripple = 0`, []string{"ripple", "[1e-9, 10] dB"}},
		{"ripple at rounding level", `ripple = "1e-300 dB"`, []string{"ripple", "[1e-9, 10] dB"}},
		{"array of tables", "[[search]]\nmax_stages = 3", []string{"search = [{...}]", "want a table [search]"}},
		{"rate in a list", `input_rate = ["98.304 MHz"]`, []string{`input_rate = ["98.304 MHz"]`, "not a list"}},
		{"rate underflowing to 0", `output_rate = 1e-330`, []string{"output_rate = 1e-330", "above 0 Hz", "[1e-30, 1e30] Hz"}},
		{"ripple negative", `ripple = "-0.1 dB"`, []string{"ripple", "[1e-9, 10] dB"}},
		{"rejection zero", `rejection = 0`, []string{"rejection", "(0, 150]"}},
		{"rejection high", `rejection = "151 dB"`, []string{"rejection", "(0, 150]"}},
		{"missing", "", []string{"input_rate", "missing"}},
		{"signal", `signal = "iq"`, []string{"signal", `"real" or "complex"`}},
		{"word low", "[words]\ninput = 1", []string{"words.input", "[2, 32]"}},
		{"word high", "[words]\noutput = 33", []string{"words.output", "[2, 32]"}},
		{"word 64", "[words]\ninput = 64", []string{"words.input", "[2, 32]"}},
		{"coefficient word high", "[words]\ncoefficients = 41", []string{"words.coefficients", "[2, 40]"}},
		{"word type", "[words]\noutput = \"24\"", []string{"words.output", "whole number", "not text"}},
		{"coefficient word text", "[words]\ncoefficients = \"automatic\"", []string{"words.coefficients", `"automatic"`, `[2, 40] bits or "auto"`}},
		{"coefficient word float", "[words]\ncoefficients = 18.5", []string{"words.coefficients", "whole number", "not a number with a fraction"}},
		{"multiplier bad", "[hardware]\nmultiplier = \"18 by 27\"", []string{"hardware.multiplier", `"18 by 27"`, "AxB"}},
		{"multiplier too wide", "[hardware]\nmultiplier = \"18x200\"", []string{"hardware.multiplier", "[2, 128]"}},
		{"multiplier number", "[hardware]\nmultiplier = 18", []string{"hardware.multiplier", "as text", "not a whole number"}},
		{"words scalar", "words = 3", []string{"words", "table"}},
		{"clock", "[hardware]\nclock = \"0 Hz\"", []string{"hardware.clock", "above 0"}},
		// 245.76 MHz / 65536 = 3.75 kHz (arithmetic): below it a stage at
		// the input rate would take more than chain.MaxLanes samples a
		// cycle, and the counts made from the lanes would overflow.
		{"clock tiny", "[hardware]\nclock = \"1e-30 Hz\"", []string{"hardware.clock", `"1e-30 Hz"`, "more than 65536 samples a clock cycle", "at least 3.75 kHz"}},
		{"clock just low", "[hardware]\nclock = \"3.7499 kHz\"", []string{"hardware.clock", "at least 3.75 kHz"}},
		{"symmetry", "[cost]\nsymmetry = 1", []string{"cost.symmetry", "true or false"}},
		{"stages low", "[search]\nmax_stages = 0", []string{"search.max_stages", "[1, 12]"}},
		{"stages high", "[search]\nmax_stages = 13", []string{"search.max_stages", "[1, 12]"}},
		{"kinds empty", "[search]\nkinds = []", []string{"search.kinds", "at least one"}},
		{"kinds text", "[search]\nkinds = \"fir\"", []string{"search.kinds", "want a list of stage kinds", "not text"}},
		{"orders long", "[search]\ncic_orders = [" + strings.Repeat("\"x\", ", 100) + "3]", []string{`search.cic_orders = ["x", "x",`, `, ...]`, `the item "x"`, "not text"}},
		{"kinds unknown", "[search]\nkinds = [\"cic\", \"iir\"]", []string{"search.kinds", `"iir"`}},
		{"kinds twice", "[search]\nkinds = [\"fir\", \"fir\"]", []string{"search.kinds", "twice"}},
		{"order high", "[search]\ncic_orders = [3, 11]", []string{"search.cic_orders", "11", "[1, 10]"}},
		{"order zero", "[search]\ncic_orders = [0]", []string{"search.cic_orders", "[1, 10]"}},
		{"delay high", "[search]\ncic_delays = [5]", []string{"search.cic_delays", "[1, 4]"}},
		{"delays empty", "[search]\ncic_delays = []", []string{"search.cic_delays", "at least one"}},
		{"forms unknown", "[search]\ncic_forms = [\"recursive\", \"polyphase\"]", []string{"search.cic_forms", `"polyphase"`, `"nonrecursive"`}},
		{"forms twice", "[search]\ncic_forms = [\"nonrecursive\", \"nonrecursive\"]", []string{"search.cic_forms", "twice"}},
		{"forms empty", "[search]\ncic_forms = []", []string{"search.cic_forms", "want a list"}},
		{"requirements unknown", "[search]\nrequirements = \"chain\"", []string{"search.requirements", `"chain"`, `"cascade"`, `"stage"`}},
		{"requirements bool", "[search]\nrequirements = true", []string{"search.requirements", `"cascade"`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := minimal
			if tc.name == "missing" {
				text = strings.Replace(minimal, `input_rate  = "245.76 MHz"`+"\n", "", 1)
			} else if k, _, ok := strings.Cut(tc.edit, " = "); ok && strings.Contains(minimal, k+" ") && !strings.Contains(tc.edit, "\n") {
				var lines []string
				for _, l := range strings.Split(minimal, "\n") {
					if strings.HasPrefix(l, k+" ") {
						l = tc.edit
					}
					lines = append(lines, l)
				}
				text = strings.Join(lines, "\n")
			} else {
				text += tc.edit + "\n"
			}
			_, err := Parse("spec.toml", []byte(text))
			if err == nil {
				t.Fatalf("no error for\n%s", text)
			}
			msg := err.Error()
			if strings.Contains(msg, "\n") {
				t.Errorf("multi-line error %q", msg)
			}
			if !strings.HasPrefix(msg, "spec.toml") {
				t.Errorf("error %q does not name the file", msg)
			}
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("error %q lacks %q", msg, w)
				}
			}
		})
	}
}

func TestParseWordsAndMultiplier(t *testing.T) {
	for _, tc := range []struct {
		name, extra string
		mode        string
		bits        int
		a, b        int
	}{
		{"absent", "", "float", 0, 0, 0},
		{"width", "[words]\ncoefficients = 20\n", "fixed", 20, 0, 0},
		{"auto", "[words]\ncoefficients = \"auto\"\n[hardware]\nmultiplier = \"18x27\"\n", "auto", 0, 18, 27},
		{"multiplier spaced", "[hardware]\nmultiplier = \"25 x 18\"\n", "float", 0, 25, 18},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Parse("spec.toml", []byte(minimal+tc.extra))
			if err != nil {
				t.Fatal(err)
			}
			if s.CoefMode() != tc.mode || s.Chain.CoefBits != tc.bits || s.NativeA != tc.a || s.NativeB != tc.b {
				t.Errorf("mode %q bits %d multiplier %dx%d, want %q %d %dx%d", s.CoefMode(), s.Chain.CoefBits, s.NativeA, s.NativeB, tc.mode, tc.bits, tc.a, tc.b)
			}
			fs := s.FixedSettings()
			if fs.NativeA != tc.a || fs.NativeB != tc.b || fs.Clock != s.Clock || fs.NoSymmetry == s.Symmetry {
				t.Errorf("fixed settings %+v", fs)
			}
		})
	}
}

func TestLoadErrors(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.toml")
	if err := os.WriteFile(big, []byte(minimal+"#"+strings.Repeat("x", MaxFileSize)+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	good := filepath.Join(dir, "good.toml")
	if err := os.WriteFile(good, []byte(minimal), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ path, want string }{
		{filepath.Join(dir, "absent.toml"), "does not exist"},
		{dir, "is a folder"},
		{big, "64 KiB"},
	} {
		_, err := Load(tc.path)
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), tc.path) {
			t.Errorf("Load(%q) = %v, want an error naming the path and %q", tc.path, err, tc.want)
		}
	}
	if _, err := Load(good); err != nil {
		t.Errorf("Load(good) = %v", err)
	}
}

// FuzzParseSpec checks that no file content panics the parser, that every
// error is one line, that an accepted spec is normalised (its band rules
// hold), and that the raw check never lets through text that decodes deeper
// than MaxDepth: the raw check is what keeps every input, the fuzzer's too,
// cheap to parse.
func FuzzParseSpec(f *testing.F) {
	f.Add(minimal)
	f.Add(full)
	f.Add(ExampleText)
	f.Add("input_rate = 1e400")
	f.Add("[search]\nkinds = [1, 2]")
	for _, tc := range pathological() {
		if len(tc.text) <= 4096 {
			f.Add(tc.text)
		}
	}
	f.Fuzz(func(t *testing.T, text string) {
		if checkRaw("fuzz.toml", []byte(text)) == nil {
			var root map[string]any
			if _, err := toml.Decode(text, &root); err == nil {
				if d := decodedDepth(root, -1); d > MaxDepth {
					t.Fatalf("raw check passed text that decodes to depth %d", d)
				}
			}
		}
		s, err := Parse("fuzz.toml", []byte(text))
		if err != nil {
			if s != nil {
				t.Fatal("spec and error both returned")
			}
			if msg := err.Error(); strings.Contains(msg, "\n") {
				t.Fatalf("multi-line error %q", msg)
			}
			return
		}
		c := s.Chain
		if _, err := c.Normalize(); err != nil {
			t.Fatalf("accepted spec does not normalise again: %v", err)
		}
		if num, den := c.Fraction(); num <= den || den < 1 || (den == 1 && c.Ratio() < 2) || s.MaxStages < 1 || s.MaxStages > MaxStages || len(s.Kinds) == 0 {
			t.Fatalf("accepted spec out of rule: %+v", s)
		}
		var _ chain.Spec = c
	})
}

func BenchmarkParse(b *testing.B) {
	for _, tc := range []struct{ name, text string }{{"minimal", minimal}, {"full", full}} {
		b.Run(tc.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := Parse("bench.toml", []byte(tc.text)); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// A typing slip in a key names the key meant (one of at most two edits away,
// unique); a key far from every known one gets no guess.
func TestSuggestKey(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"rejecton", "rejection"},
		{"passbnad", "passband"}, // a swap
		{"words.cofficients", "words.coefficients"},
		{"Search.Max-Stages", "search.max_stages"}, // case and separator
		{"input_rte", "input_rate"},
		{"bandwidth", ""},
		{"rate", ""}, // two edits from several keys, or none: no guess
		{"xyz", ""},
	} {
		if got := suggest(tc.in); got != tc.want {
			t.Errorf("suggest(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	// Edit distances (optimal string alignment), by hand.
	for _, tc := range []struct {
		a, b string
		d    int
	}{{"", "abc", 3}, {"abc", "abc", 0}, {"abc", "acb", 1}, {"kitten", "sitting", 3}, {"ca", "abc", 3}} {
		if got := editDistance(tc.a, tc.b); got != tc.d {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.d)
		}
	}
}

// The trade's names: sample-rate units for the rates, "hb" for half-bands
// in search.kinds (the chain notation's name).
func TestParseTradeNames(t *testing.T) {
	text := "input_rate = \"245.76 MS/s\"\noutput_rate = \"1.92 Msps\"\npassband = \"600 kHz\"\nripple = 0.1\nrejection = 80\n[search]\nkinds = [\"cic\", \"hb\", \"fir\"]\n"
	s, err := Parse("t.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if s.Chain.InputRate != 245.76e6 || s.Chain.OutputRate != 1.92e6 {
		t.Errorf("rates = %v, %v; want 245.76e6 and 1.92e6", s.Chain.InputRate, s.Chain.OutputRate)
	}
	if len(s.Kinds) != 3 || s.Kinds[1] != chain.HalfBand {
		t.Errorf("kinds = %v; want cic, halfband, fir", s.Kinds)
	}
}

// hardware.multiplierless reaches the pricing, with a coefficient width
// or "auto", and is off by default.
func TestParseMultiplierless(t *testing.T) {
	base := "input_rate = \"122.88 MHz\"\noutput_rate = \"1.92 MHz\"\npassband = \"600 kHz\"\nripple = 0.1\nrejection = 80\n"
	for _, tc := range []struct {
		words string
		want  bool
	}{
		{"[words]\ncoefficients = 16\n[hardware]\nmultiplierless = true\n", true},
		{"[words]\ncoefficients = \"auto\"\n[hardware]\nmultiplierless = true\n", true},
		{"[words]\ncoefficients = 16\n[hardware]\nmultiplierless = false\n", false},
		{"", false},
	} {
		s, err := Parse("t.toml", []byte(base+tc.words))
		if err != nil {
			t.Fatalf("%q: %v", tc.words, err)
		}
		if s.Multiplierless != tc.want || s.SearchSettings().Cost.Multiplierless != tc.want {
			t.Errorf("%q: multiplierless %v, search %v; want %v", tc.words, s.Multiplierless, s.SearchSettings().Cost.Multiplierless, tc.want)
		}
	}
}

// The fabric's limits reach the search settings.
func TestParseLimits(t *testing.T) {
	text := "input_rate = \"122.88 MHz\"\noutput_rate = \"1.92 MHz\"\npassband = \"600 kHz\"\nripple = 0.1\nrejection = 80\n" +
		"[hardware]\nclock = \"245.76 MHz\"\nmax_register_bits = 48\nmax_cic_factor = 32\nmax_multipliers = 8\nmax_memory_bits = 20000\n"
	s, err := Parse("t.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	got := s.SearchSettings().Limits
	if got.MaxRegisterBits != 48 || got.MaxCICFactor != 32 || got.MaxMultipliers != 8 || got.MaxMemoryBits != 20000 {
		t.Errorf("limits = %+v", got)
	}
}

// TestParseRequirements: search.requirements is "cascade" by default, and
// "stage" sets chain.Settings.StageAlone in the search settings.
func TestParseRequirements(t *testing.T) {
	for _, tc := range []struct {
		text, want string
		alone      bool
	}{
		{minimal, "cascade", false},
		{minimal + "\n[search]\nrequirements = \"cascade\"\n", "cascade", false},
		{minimal + "\n[search]\nrequirements = \"stage\"\n", "stage", true},
	} {
		s, err := Parse("req.toml", []byte(tc.text))
		if err != nil {
			t.Fatal(err)
		}
		if s.Requirements != tc.want || s.SearchSettings().Chain.StageAlone != tc.alone {
			t.Errorf("requirements %q, StageAlone %v; want %q, %v", s.Requirements, s.SearchSettings().Chain.StageAlone, tc.want, tc.alone)
		}
	}
}

// A file with carriage returns alone for line ends (old Mac files) is told
// to save with LF or CRLF.
func TestOldMacLineEnds(t *testing.T) {
	_, err := Parse("spec.toml", []byte("input_rate = \"100 MHz\"\routput_rate = \"1 MHz\"\r"))
	want := "spec.toml:1: a carriage return with no line feed after it (old Mac line ends): save the file with LF or CRLF line ends"
	if err == nil || err.Error() != want {
		t.Errorf("got %v, want %q", err, want)
	}
}

// The TOML slips a spec's author makes most are said in the spec's words,
// on the line of the slip (the decoder reports an unclosed header on the
// next line); any other decoder message passes through after "not valid
// TOML".
func TestTOMLSlips(t *testing.T) {
	head := "input_rate = \"100 MHz\"\noutput_rate = \"1 MHz\"\n"
	for _, tc := range []struct {
		line3, want string
	}{
		{`passband = 300kHz`, `spec.toml:3: passband = 300kHz: a value with a unit goes in quotes: passband = "300kHz"`},
		{`rejection = 80 dB # stop`, `spec.toml:3: rejection = 80 dB: a value with a unit goes in quotes: rejection = "80 dB"`},
		{`passband = "300 kHz" "x"`, `spec.toml:3: passband: only a comment (# ...) may follow a value or a [table] header on its line`},
		{`passband`, `spec.toml:3: a key with no value: write key = value`},
		{`passband = `, `spec.toml:3: passband: nothing after =: give the value, e.g. passband = "600 kHz"`},
		{`= "300 kHz"`, `spec.toml:3: a value with no key before its =`},
		{`pass band = "3"`, `spec.toml:3: a key is one word`},
		{`[words`, `spec.toml:3: a table header such as [words] must end with ] on its line`},
		{`[[words]`, `spec.toml:3: a table header such as [words] must end with ] on its line`},
		{`passband = "300 kHz`, `spec.toml:3: passband: a quoted value must end with its closing quote on the same line`},
		{`passband == "3"`, `spec.toml:3: passband: one = between a key and its value`},
		{`signal = complex`, `spec.toml:3: signal = complex: words go in quotes: signal = "complex"`},
		{`ripple = .1`, `spec.toml:3: ripple: a number starts with a digit: write 0.1, not .1`},
		// The decoder's own words for these named a TOML rule and a byte.
		{"[words]\ninput = 014", `spec.toml:4: words.input: a number has no leading zeros: write 14`},
		{"[words]\ninput = -007", `spec.toml:4: words.input: a number has no leading zeros: write -7`},
		{"[words]\ninput = 00_5", `spec.toml:4: words.input: a number has no leading zeros: write 5`},
		{"[words]\ninput = +01", `spec.toml:4: words.input: a number has no leading zeros: write 1`},
		{"[words]\ninput = 00", `spec.toml:4: words.input: a number has no leading zeros: write 0`},
		{"ripple = 01.5", `spec.toml:3: ripple: a number has no leading zeros: write 1.5`},
		{"ripple = 01e2", `spec.toml:3: ripple: a number has no leading zeros: write 100`},
		{"ripple = \"0.2\r dB\"", `spec.toml:3: a carriage return (code 0x0d) with no line feed after it, in the text: remove it`},
		{"ripple = \"0.1 dB\"\x01", `spec.toml:3: a control character (code 0x01) in the text: remove it`},
		{`output_rate = "2 MHz"`, `spec.toml:3: output_rate: given twice; give each key once`},
		{`ripple = 0.1.2`, `spec.toml:3: not valid TOML: `},
		{`search.kinds = ["cic", "fir"`, `spec.toml:3: search.kinds: the list is not closed: end it with ]`},
		{`search.kinds = ["cic" "fir"]`, `spec.toml:3: search.kinds: items of a list are separated by commas: [a, b]`},
		{"rejection_mask = [\n  [1e6, 60]\n  [2e6, 80]\n]", `spec.toml:4: rejection_mask: items of a list are separated by commas: end this line with one`},
		{"[search]\nkinds = [\n  \"cic\" # the first\n\n  \"fir\"\n]", `spec.toml:5: search.kinds: items of a list are separated by commas: end this line with one`},
		{"rejection_mask = [\n  [1e6, 60],\n  [2e6, 80]\n", `spec.toml:3: rejection_mask: the list is not closed: end it with ]`},
		{`words = { input = 16, output = 24`, `spec.toml:3: words: an inline table { ... } must end with } on its line`},
		{`words = { input = 16 output = 24 }`, `spec.toml:3: words: entries of an inline table are separated by commas`},
		{"[search]\ncic_orders = [\n  3,\n  4,\n[words]\ninput = 16", `spec.toml:4: search.cic_orders: the list is not closed: end it with ]`},
		{"[search]\ncic_orders = [3, 4\ncic_delays = [1, 2]", `spec.toml:4: search.cic_orders: the list is not closed: end it with ]`},
		{"rejection_mask = [\n  [\"0 Hz\", \"90 dB\"],\n  [\"20 MHz\", \"70 dB\"],\nsignal = \"complex\"", `spec.toml:3: rejection_mask: the list is not closed: end it with ]`},
		{"[search]\nkinds = [cic, fir]", `spec.toml:4: search.kinds = cic: words go in quotes, in a list too: ["cic", ...]`},
		{"words = { input = 16, output = 24 }\n[search]\nkinds = [{a = 1 b = 2}]", `spec.toml:5: search.kinds: entries of an inline table are separated by commas`},
		{"[hardware]\nclock = 491.52 MHz", `spec.toml:4: hardware.clock = 491.52 MHz: a value with a unit goes in quotes: clock = "491.52 MHz"`},
		{"[search] # the search\nkinds = [\"cic\", # a comment with ] and [\n  \"fir\"\nmax_stages = 3", `spec.toml:4: search.kinds: the list is not closed: end it with ]`},
		// The example suits the key, written as its line writes it.
		{"[words]\ncoefficients = ", `spec.toml:4: words.coefficients: nothing after =: give the value, e.g. coefficients = 18`},
		{"[search]\nrequirements = cascade", `spec.toml:4: search.requirements = cascade: words go in quotes: requirements = "cascade"`},
		// A bare word is told what the key takes.
		{"[cost]\nsymmetry = True", `spec.toml:4: cost.symmetry = True: true and false are written in lower case, without quotes: symmetry = true`},
		{"[words]\nunity_gain = yes", `spec.toml:4: words.unity_gain = yes: a switch is true or false, in lower case, without quotes`},
		{`passband = null`, `spec.toml:3: passband = null: a value cannot be left empty: give one, such as passband = "600 kHz"`},
		{`signal = Complex`, `spec.toml:3: signal = Complex: words go in quotes, in lower case: signal = "complex"`},
		{`signal = iq`, `spec.toml:3: signal = iq: want "real" or "complex", in quotes`},
		{"[words]\ninput = sixteen", `spec.toml:4: words.input = sixteen: want a value such as input = 16`},
		{"[search]\nmax_stages = False", `spec.toml:4: search.max_stages = False: want a value such as max_stages = 6`},
		{"[words]\ncoefficients = auto", `spec.toml:4: words.coefficients = auto: words go in quotes: coefficients = "auto"`},
		{`"pass band" = 300 kHz`, `spec.toml:3: "pass band" = 300 kHz: a value with a unit goes in quotes: "pass band" = "300 kHz"`},
		// Keys in quotes (TOML allows them) are named without the quotes.
		{"[search]\n\"kinds\" = [\"cic\", \"fir\"\nmax_stages = 3", `spec.toml:4: search.kinds: the list is not closed: end it with ]`},
		{`"passband" = 300 kHz`, `spec.toml:3: passband = 300 kHz: a value with a unit goes in quotes: passband = "300 kHz"`},
		{"[\"hardware\"]\n'clock' = 491.52 MHz", `spec.toml:4: hardware.clock = 491.52 MHz: a value with a unit goes in quotes: clock = "491.52 MHz"`},
		{"[search]\n\"kinds\" = [cic, fir]", `spec.toml:4: search.kinds = cic: words go in quotes, in a list too: ["cic", ...]`},
	} {
		_, err := Parse("spec.toml", []byte(head+tc.line3+"\nrejection = \"80 dB\"\n"))
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to start %q", tc.line3, err, tc.want)
		}
	}
}

// A spec whose numbers all go without units means Hz throughout: a band
// rule it breaks is not blamed on a rate's missing unit.
func TestBareRatesNoUnitHint(t *testing.T) {
	_, err := Parse("spec.toml", []byte("input_rate = 48000\noutput_rate = 1000\npassband = 600\nripple = 0.1\nrejection = 60\n"))
	if err == nil || err.Error() != "spec.toml:3: passband = 600: must lie in (0, output_rate/2 = 500 Hz)" {
		t.Errorf("error %v", err)
	}
}

// A multiplierless spec whose ratio is not a whole number is refused where
// it is read, naming the key: the search would drop every candidate (only
// integer stages are built as adder graphs) and could say only that.
func TestMultiplierlessFractionalRefused(t *testing.T) {
	text := strings.Replace(minimal, `"1.92 MHz"`, `"1.6 MHz"`, 1) + "[words]\ncoefficients = 16\n[hardware]\nmultiplierless = true\n"
	_, err := Parse("spec.toml", []byte(text))
	if err == nil {
		t.Fatal("no error")
	}
	for _, w := range []string{"spec.toml:9:", "hardware.multiplierless = true", "integer stages only", "not a whole number"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("error %q lacks %q", err, w)
		}
	}
	if _, err := Parse("spec.toml", []byte(minimal+"[words]\ncoefficients = 16\n[hardware]\nmultiplierless = true\n")); err != nil {
		t.Errorf("a whole-number ratio: %v", err)
	}
}
