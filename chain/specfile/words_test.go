package specfile

import (
	"fmt"
	"strings"
	"testing"
)

// wordsSpec is an invented receiver (48 MHz to 1.5 MHz) with the given
// [words] and [search] lines.
func wordsSpec(words, search string) string {
	return `input_rate = "48 MHz"
output_rate = "1.5 MHz"
passband = "500 kHz"
ripple = "0.5 dB"
rejection = "60 dB"
[words]
` + words + "\n[search]\n" + search + "\n"
}

// A coefficient width no FIR or half-band stage can use with the spec's
// data words is refused at once, naming the keys and the widths that work;
// what some stage could still plan is accepted.
func TestAccumulatorWords(t *testing.T) {
	cases := []struct {
		name, words, search string
		frags               []string // nil: accepted
	}{
		{"32-bit input, 40-bit coefficients, 32-bit output", "input = 32\noutput = 32\ncoefficients = 40", "",
			[]string{"spec.toml:9: words.coefficients = 40:", "with words.input = 32,", "at most 63 are supported", "words.coefficients must be 33 or less, or words.input 25 or less (a necessary bound"}},
		{"one stage: the input word alone", "input = 32\ncoefficients = 40", "max_stages = 1",
			[]string{"words.coefficients = 40", "with words.input = 32,", "words.coefficients must be 33 or less, or words.input 25 or less"}},
		{"narrower output binds", "input = 32\noutput = 30\ncoefficients = 40", "",
			[]string{"with words.output = 30,", "words.coefficients must be 35 or less, or words.output 25 or less"}},
		{"the widest that fits", "input = 32\noutput = 32\ncoefficients = 33", "", nil},
		{"a 24-bit word between stages may fit", "input = 32\ncoefficients = 40", "", nil},
		{"a 16-bit output fits", "input = 32\noutput = 16\ncoefficients = 40", "", nil},
		{"25-bit words fit 40-bit coefficients", "input = 25\noutput = 25\ncoefficients = 40", "", nil},
		{"auto widths are chosen to fit", "input = 32\noutput = 32\ncoefficients = \"auto\"", "", nil},
		{"floating-point coefficients", "input = 32\noutput = 32", "", nil},
		{"CIC stages alone use no coefficients", "input = 32\noutput = 32\ncoefficients = 40", `kinds = ["cic"]`, nil},
		{"a half-band needs them", "input = 32\noutput = 32\ncoefficients = 40", `kinds = ["cic", "hb"]`,
			[]string{"words.coefficients = 40", "words.coefficients must be 33 or less"}},
		// Without a CIC the first stage is a FIR or half-band, fed by the
		// input word, whatever the word between stages.
		{"no CIC: the input word binds", "input = 32\noutput = 24\ncoefficients = 40", `kinds = ["fir", "hb"]`,
			[]string{"with words.input = 32,", "needs at least 70 bits", "words.coefficients must be 33 or less, or words.input 25 or less"}},
		{"no CIC, input word fits", "input = 24\noutput = 24\ncoefficients = 40", `kinds = ["fir", "hb"]`, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse("spec.toml", []byte(wordsSpec(c.words, c.search)))
			if c.frags == nil {
				if err != nil {
					t.Fatalf("refused: %v", err)
				}
				return
			}
			if err == nil {
				t.Fatal("accepted")
			}
			msg := err.Error()
			if strings.Contains(msg, "\n") || strings.Contains(msg, "CoefBits") || strings.Contains(msg, "InputBits") || strings.Contains(msg, "fixed:") {
				t.Errorf("not one line in the spec's words: %q", msg)
			}
			for _, f := range c.frags {
				if !strings.Contains(msg, f) {
					t.Errorf("%q lacks %q", msg, f)
				}
			}
		})
	}
}

// An interpolation chain's CIC comes last, after its FIR stages, so its
// first stage is a FIR or half-band fed by the input word: a narrower
// output word does not save it (an invented 1 MHz to 64 MHz transmitter).
func TestAccumulatorWordsInterpolation(t *testing.T) {
	spec := func(words string) string {
		return "input_rate = \"1 MHz\"\noutput_rate = \"64 MHz\"\npassband = \"300 kHz\"\nripple = \"0.5 dB\"\nrejection = \"60 dB\"\n[words]\n" + words + "\n"
	}
	_, err := Parse("spec.toml", []byte(spec("input = 32\noutput = 24\ncoefficients = 40")))
	if err == nil || !strings.Contains(err.Error(), "with words.input = 32,") {
		t.Errorf("32-bit input, 40-bit coefficients: %v, want a refusal naming words.input", err)
	}
	if _, err := Parse("spec.toml", []byte(spec("input = 24\noutput = 32\ncoefficients = 40"))); err != nil {
		t.Errorf("24-bit input: %v, want it accepted", err)
	}
}

// The bound is the product's width by hand: a tap of 2^(coef-2) times the
// most negative data word -2^(data-1) is -2^(data+coef-3), which needs
// data+coef-2 bits in two's complement; fixed.AccumulatorBits agrees for
// every width the spec allows, and the named widths are the edges: the
// widest coefficient (or data) word parses, one more bit is refused.
func TestLeastAccumulatorByHand(t *testing.T) {
	for data := MinWordBits; data <= MaxWordBits; data++ {
		for coef := MinWordBits; coef <= MaxCoefBits; coef++ {
			want := data + coef - 2 // past 64 bits too: the message says the need
			if got := leastAccumulator(data, coef); got != want {
				t.Fatalf("data %d, coefficients %d: %d bits, by hand %d", data, coef, got, want)
			}
		}
	}
	for _, in := range []int{26, 30, 32} {
		edge := 65 - in // data + coef - 2 <= 63
		for coef, ok := range map[int]bool{edge: true, edge + 1: false} {
			if coef > MaxCoefBits {
				continue
			}
			_, err := Parse("spec.toml", []byte(wordsSpec(fmt.Sprintf("input = %d\noutput = 32\ncoefficients = %d", in, coef), "")))
			if (err == nil) != ok {
				t.Errorf("input %d, coefficients %d: err %v, want accepted %v", in, coef, err, ok)
			}
		}
	}
}

// Values written in ways the spec does not take are refused in the user's
// own text and words, on one line: whole numbers with an exponent, the
// prefix micro, numbers beyond any range; a leading byte-order mark is
// skipped.
func TestValueWording(t *testing.T) {
	base := `input_rate = "48 MHz"
output_rate = "1.5 MHz"
passband = "500 kHz"
ripple = "0.5 dB"
rejection = "60 dB"
`
	cases := []struct {
		name, text string
		frags      []string // nil: accepted
	}{
		{"whole number with an exponent", base + "[words]\ninput = 1e2\n",
			[]string{"spec.toml:7: words.input = 1e2:", "without an exponent or a decimal point: write 100"}},
		{"whole number with a point", base + "[words]\ninput = 16.0 # ADC\n",
			[]string{"words.input = 16.0:", "write 16"}},
		{"a fraction stays a fraction", base + "[words]\ninput = 16.5\n",
			[]string{"words.input = 16.5:", "want a whole number, not a number with a fraction"}},
		{"negative rate echoed as written", strings.Replace(base, `"48 MHz"`, "-1e6", 1),
			[]string{"spec.toml:1: input_rate = -1e6:", "above 0 Hz"}},
		{"micro, Greek mu", strings.Replace(base, `"500 kHz"`, `"1 μHz"`, 1),
			[]string{`passband = "1 μHz"`, `the unit prefix μ (micro) is not supported: write "1e-6 Hz"`}},
		{"micro, micro sign and exponent", strings.Replace(base, `"500 kHz"`, `"2.5e3 µHz"`, 1),
			[]string{`the unit prefix μ (micro) is not supported: write "0.0025 Hz"`}},
		{"micro, u", strings.Replace(base, `"500 kHz"`, `"1 uHz"`, 1),
			[]string{`passband = "1 uHz"`, `write "1e-6 Hz"`}},
		{"micro alone", strings.Replace(base, `"500 kHz"`, `"1 μ"`, 1),
			[]string{`the unit prefix μ (micro) is not supported`}},
		{"60 000 digits", strings.Replace(base, `"48 MHz"`, `"`+strings.Repeat("9", 60000)+`"`, 1),
			[]string{`input_rate = "` + strings.Repeat("9", 60) + `..."`, "lies outside the supported range: rates lie in [1e-30, 1e30] Hz"}},
		{"level beyond range", strings.Replace(base, `"60 dB"`, `"1e999 dB"`, 1),
			[]string{"lies outside the supported range: rejection lies in (0, 150] dB"}},
		{"byte-order mark", "\ufeff" + base, nil},
		{"byte-order mark saved as Latin-1 text", "\u00ef\u00bb\u00bf" + base, nil},
		{"two byte-order marks", "\ufeff\ufeff" + base, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := Parse("spec.toml", []byte(c.text))
			if c.frags == nil {
				if err != nil {
					t.Fatalf("refused: %v", err)
				}
				if s.Chain.InputRate != 48e6 {
					t.Errorf("input_rate %v", s.Chain.InputRate)
				}
				return
			}
			if err == nil {
				t.Fatal("accepted")
			}
			msg := err.Error()
			if strings.Contains(msg, "\n") || len(msg) > 400 || strings.Contains(msg, "64-bit float") || strings.Contains(msg, "e+") {
				t.Errorf("not one short line in the user's words: %q", msg)
			}
			for _, f := range c.frags {
				if !strings.Contains(msg, f) {
					t.Errorf("%q lacks %q", msg, f)
				}
			}
		})
	}
}
