package units

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// The expected values are SI prefix definitions (kilo 1e3, mega 1e6, giga 1e9);
// they are exact, so the tolerance is zero: "245.76 MHz" must be the double
// nearest 245760000, or integer rate ratios would break.
func TestParseFrequency(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
	}{
		{"45", 45},
		{"45 Hz", 45},
		{"45Hz", 45},
		{" 45 hz ", 45},
		{"45 HZ", 45},
		{"1.2 MHz", 1.2e6},
		{"1.2MHz", 1.2e6},
		{"1.2 MHZ", 1.2e6},
		{"600 kHz", 600e3},
		{"600 KHz", 600e3},
		{"600 khz", 600e3},
		{"2.5 GHz", 2.5e9},
		{"2.5 ghz", 2.5e9},
		{"245.76 MHz", 245760000},
		{"122.88 MHz", 122880000},
		{"1.92 MHz", 1920000},
		{"491.52 MHz", 491520000},
		{"1e6", 1e6},
		{"1e3 kHz", 1e6},
		{"1.5E-3 MHz", 1500},
		{".5 kHz", 500},
		{"5. kHz", 5000},
		{"+3", 3},
		{"-3 kHz", -3000},
		{"0", 0},
	} {
		got, err := ParseFrequency(tc.in)
		if err != nil {
			t.Errorf("ParseFrequency(%q): unexpected error %v", tc.in, err)
			continue
		}
		if got != tc.want {
			t.Errorf("ParseFrequency(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
}

func TestParseLevel(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
	}{
		{"85", 85},
		{"85 dB", 85},
		{"85dB", 85},
		{"0.1 dB", 0.1},
		{"0.1 db", 0.1},
		{"0.1 DB", 0.1},
		{"-3 dB", -3},
	} {
		got, err := ParseLevel(tc.in)
		if err != nil {
			t.Errorf("ParseLevel(%q): unexpected error %v", tc.in, err)
			continue
		}
		if got != tc.want {
			t.Errorf("ParseLevel(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
}

func TestParseErrors(t *testing.T) {
	for _, tc := range []struct {
		in   string
		kind Kind
		rule string // a fragment the message must contain
	}{
		{"", Frequency, "empty"},
		{"   ", Frequency, "empty"},
		{"abc", Frequency, "not a number"},
		{"NaN", Frequency, "not a number"},
		{"nan", Level, "not a number"},
		{"Inf", Frequency, "not a number"},
		{"+Inf", Frequency, "not a decimal number"},
		{"-infinity", Level, "not a decimal number"},
		{"0x10", Frequency, "hexadecimal, octal and binary numbers are not accepted"},
		{"0XFF", Frequency, "hexadecimal"},
		{"0x10 MHz", Frequency, "write the number in decimal"},
		{"-0x10", Level, "hexadecimal"},
		{"0b101", Frequency, "hexadecimal, octal and binary"},
		{"0o17 dB", Level, "hexadecimal, octal and binary"},
		{strings.Repeat("9", 1000) + "!", Frequency, `"` + strings.Repeat("9", 60) + `..."`},
		{"1 " + strings.Repeat("x", 1000), Frequency, `unknown unit "` + strings.Repeat("x", 20) + `..."`},
		{"1_000", Frequency, "not a decimal number"},
		{"1.2.3", Frequency, "not a decimal number"},
		{"1e", Frequency, "unknown unit"},
		{"1e kHz", Frequency, `"1e" is not a decimal number`},
		{"1e+ Hz", Frequency, "not a decimal number"},
		{"1e400", Frequency, "out of range"},
		{"1e300 GHz", Frequency, "out of range"},
		{"1e99999999999999999999 Hz", Frequency, "out of range"},
		{"1.2 XHz", Frequency, "unknown unit \"XHz\""},
		{"1.2 M", Frequency, "bare prefix"},
		{"45k", Frequency, "bare prefix"},
		{"1.2 mHz", Frequency, "millihertz"},
		{"1.2 mhz", Frequency, "millihertz"},
		{"1.2 THz", Frequency, "unknown unit"},
		{"45 dB", Frequency, "unknown unit \"dB\""},
		{"45 Hz", Level, "unknown unit \"Hz\""},
		{"45 dBc", Level, "unknown unit"},
		{"1 2", Frequency, "not a decimal number"},
		// A number followed by more than its unit: the rest is named.
		{"0.2 dB pk-pk", Level, `unknown unit "dB pk-pk"`},
		{"480 kHz flat", Frequency, `unknown unit "kHz flat"`},
		{"1 %", Level, `unknown unit "%"`},
		{"4x80 kHz", Frequency, `"4x80" is not a decimal number`},
	} {
		_, err := Parse(tc.in, tc.kind)
		if err == nil {
			t.Errorf("Parse(%q, %v): no error", tc.in, tc.kind)
			continue
		}
		var ue *Error
		if !errors.As(err, &ue) || ue.Value != tc.in {
			t.Errorf("Parse(%q, %v): error %v does not carry the value", tc.in, tc.kind, err)
		}
		if !strings.Contains(err.Error(), tc.rule) || strings.Contains(err.Error(), "\n") {
			t.Errorf("Parse(%q, %v): error %q, want one line containing %q", tc.in, tc.kind, err, tc.rule)
		}
	}
}

func TestClip(t *testing.T) {
	for _, tc := range []struct {
		in   string
		n    int
		want string
	}{
		{"", 5, ""},
		{"abc", 3, "abc"},
		{"abcd", 3, "abc..."},
		{"héllo wörld", 7, "héllo w..."}, // cut by characters, never inside one
		{"日本語テキスト", 3, "日本語..."},
		{"x", 0, "x"},
		{"xy", 0, "x..."},
	} {
		if got := Clip(tc.in, tc.n); got != tc.want {
			t.Errorf("Clip(%q, %d) = %q, want %q", tc.in, tc.n, got, tc.want)
		}
	}
}

func TestCheckFinite(t *testing.T) {
	if CheckFinite(1) != nil {
		t.Error("CheckFinite(1): unexpected error")
	}
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		if CheckFinite(v) == nil {
			t.Errorf("CheckFinite(%v): no error", v)
		}
	}
}

func TestFormatFrequency(t *testing.T) {
	for _, tc := range []struct {
		in   float64
		want string
	}{
		{45, "45 Hz"},
		{600e3, "600 kHz"},
		{1.92e6, "1.92 MHz"},
		{245.76e6, "245.76 MHz"},
		{2.5e9, "2.5 GHz"},
		{0, "0 Hz"},
	} {
		if got := FormatFrequency(tc.in); got != tc.want {
			t.Errorf("FormatFrequency(%v) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// FuzzParseQuantity checks that no text panics the parser, that every accepted
// value is finite, and that formatting a parsed frequency parses back to the
// same value.
func FuzzParseQuantity(f *testing.F) {
	for _, s := range []string{"45", "45 Hz", "1.2 MHz", "0.1 dB", "85 dB", "1e300 GHz", "mHz", "-0", ".5e-3kHz"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		for _, k := range []Kind{Frequency, Level} {
			v, err := Parse(s, k)
			if err != nil {
				if strings.Contains(err.Error(), "\n") {
					t.Fatalf("Parse(%q): multi-line error %q", s, err)
				}
				// The value is echoed cut to MaxEcho characters (each
				// at most 10 bytes once quoted), the unit to 20.
				if len(err.Error()) > 12*(MaxEcho+20)+200 {
					t.Fatalf("Parse(%q): error of %d bytes", s, len(err.Error()))
				}
				continue
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("Parse(%q, %v) = %v, not finite", s, k, v)
			}
			if k == Frequency {
				back, err := ParseFrequency(FormatFrequency(v))
				if err != nil || back != v {
					t.Fatalf("FormatFrequency(%v) = %q parses back to %v, %v", v, FormatFrequency(v), back, err)
				}
			}
		}
	})
}

func ExampleParseFrequency() {
	hz, err := ParseFrequency("245.76 MHz")
	if err != nil {
		panic(err)
	}
	fmt.Println(hz, FormatFrequency(hz))
	// Output: 2.4576e+08 245.76 MHz
}

func TestParseRange(t *testing.T) {
	for _, tc := range []struct {
		in     string
		lo, hi float64
		bad    bool
	}{
		{in: "0:600kHz", lo: 0, hi: 600e3},
		{in: "100:200 kHz", lo: 100e3, hi: 200e3},
		{in: "100 Hz:200 kHz", lo: 100, hi: 200e3},
		{in: "600 kHz:1.2 MHz", lo: 600e3, hi: 1.2e6},
		{in: "1000:2000", lo: 1000, hi: 2000},
		{in: " 0 : 45 ", lo: 0, hi: 45},
		{in: "45", bad: true},
		{in: "1:2:3", bad: true},
		{in: ":45", bad: true},
		{in: "0:", bad: true},
		{in: "0:45 XHz", bad: true},
	} {
		lo, hi, err := ParseRange(tc.in, Frequency)
		if tc.bad {
			if err == nil {
				t.Errorf("ParseRange(%q): no error", tc.in)
			}
			continue
		}
		if err != nil || lo != tc.lo || hi != tc.hi {
			t.Errorf("ParseRange(%q) = %v, %v, %v; want %v, %v", tc.in, lo, hi, err, tc.lo, tc.hi)
		}
	}
}

func BenchmarkParseFrequency(b *testing.B) {
	for _, s := range []string{"45", "245.76 MHz", "1.5E-3 MHz"} {
		b.Run(s, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := ParseFrequency(s); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// Sample rates take the trade's units as well as Hz (SI prefixes, exact as
// above); a band edge written in a sample-rate unit is refused with the
// reason.
func TestParseRate(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
	}{
		{"100 MS/s", 100e6},
		{"100MS/s", 100e6},
		{"2.4 GS/s", 2.4e9},
		{"48 kS/s", 48e3},
		{"48 KS/s", 48e3},
		{"1000 S/s", 1000},
		{"122.88 Msps", 122880000},
		{"122.88 MSPS", 122880000},
		{"3 Gsps", 3e9},
		{"96 ksps", 96e3},
		{"500 sps", 500},
		{"245.76 MHz", 245760000},
		{"48000", 48000},
	} {
		got, err := ParseRate(tc.in)
		if err != nil {
			t.Errorf("ParseRate(%q): unexpected error %v", tc.in, err)
			continue
		}
		if got != tc.want {
			t.Errorf("ParseRate(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
	for _, tc := range []struct {
		in, frag string
	}{
		{"100 ms/s", "unknown unit"},
		{"100 MS", "unknown unit"},
		{"100 mS/s", "unknown unit"},
		{"100 TS/s", "unknown unit"},
	} {
		if _, err := ParseRate(tc.in); err == nil || !strings.Contains(err.Error(), tc.frag) {
			t.Errorf("ParseRate(%q) = %v, want an error with %q", tc.in, err, tc.frag)
		}
	}
	for _, in := range []string{"300 kS/s", "1 Msps"} {
		if _, err := ParseFrequency(in); err == nil || !strings.Contains(err.Error(), "sample-rate unit") {
			t.Errorf("ParseFrequency(%q) = %v, want the sample-rate unit refused", in, err)
		}
	}
}

// FormatNumber writes exponents as a spec does, and what it writes reads
// back (strconv.ParseFloat) as the value, on a table and on seeded random
// values over the whole float64 range.
func TestFormatNumber(t *testing.T) {
	for _, tc := range []struct {
		v      float64
		digits int
		want   string
	}{
		{1e30, -1, "1e30"}, {1e308, -1, "1e308"}, {1e-9, -1, "1e-9"}, {2.5e-7, -1, "2.5e-7"},
		{1e-30, 10, "1e-30"}, {1e30, 10, "1e30"}, {122.88e6, -1, "1.2288e8"}, {0.1, -1, "0.1"},
		{-3e-5, -1, "-3e-5"}, {0, -1, "0"}, {1e100, -1, "1e100"}, {12345, 10, "12345"},
	} {
		if got := FormatNumber(tc.v, tc.digits); got != tc.want {
			t.Errorf("FormatNumber(%v, %d) = %q, want %q", tc.v, tc.digits, got, tc.want)
		}
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 10000 {
		v := math.Float64frombits(rng.Uint64())
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		s := FormatNumber(v, -1)
		back, err := strconv.ParseFloat(s, 64)
		if err != nil || back != v || strings.Contains(s, "e+") || strings.Contains(s, "e-0") {
			t.Fatalf("FormatNumber(%v) = %q: reads back as %v (%v)", v, s, back, err)
		}
	}
}

// A computed frequency reads as the decimal it stands for; one given
// exactly is unchanged.
func TestFormatComputedFrequency(t *testing.T) {
	for _, tc := range []struct {
		hz   float64
		want string
	}{
		{1.2e6 - 1.1e6, "100 kHz"},
		{math.Ceil(50.75/0.1) * 0.1, "50.8 Hz"},
		{245.76e6, "245.76 MHz"},
		{1.92e6, "1.92 MHz"},
		{0.5, "0.5 Hz"},
		{123456.789, "123.456789 kHz"},
	} {
		if got := FormatComputedFrequency(tc.hz); got != tc.want {
			t.Errorf("FormatComputedFrequency(%v) = %q, want %q", tc.hz, got, tc.want)
		}
	}
}

// Count and CountWere agree the noun, and the verb, with the number.
func TestCount(t *testing.T) {
	for _, c := range []struct {
		n          int
		want, were string
	}{{0, "0 chains", "0 chains were"}, {1, "1 chain", "1 chain was"}, {2, "2 chains", "2 chains were"}, {14, "14 chains", "14 chains were"}} {
		if got := Count(c.n, "chain", "chains"); got != c.want {
			t.Errorf("Count(%d) = %q, want %q", c.n, got, c.want)
		}
		if got := CountWere(c.n, "chain", "chains"); got != c.were {
			t.Errorf("CountWere(%d) = %q, want %q", c.n, got, c.were)
		}
	}
}

// decimalPrefix and isDecimal against a regular expression of the same
// grammar, on seeded random strings over the characters numbers use: the
// prefix is the longest the expression matches whole.
func TestDecimalPrefixRegexp(t *testing.T) {
	re := regexp.MustCompile(`^[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?$`)
	rng := rand.New(rand.NewPCG(5, 7))
	const alphabet = "0123456789.eE+- kHz"
	for trial := 0; trial < 20000; trial++ {
		b := make([]byte, rng.IntN(9))
		for i := range b {
			b[i] = alphabet[rng.IntN(len(alphabet))]
		}
		s := string(b)
		want := 0
		for n := 1; n <= len(s); n++ {
			if re.MatchString(s[:n]) {
				want = n
			}
		}
		if got := decimalPrefix(s); got != want {
			t.Fatalf("decimalPrefix(%q) = %d, want %d", s, got, want)
		}
		if got := isDecimal(s); got != re.MatchString(s) {
			t.Fatalf("isDecimal(%q) = %v", s, got)
		}
	}
}

// FormatDifference keeps only the digits a width between two given
// frequencies has (worked by hand: 0.1000001 - 0.1 is 1.0000000000288e-07
// in float64, of which six digits are noise).
func TestFormatDifference(t *testing.T) {
	for _, tc := range []struct {
		hi, lo float64
		want   string
	}{
		{0.1000001, 0.1, "1e-07 Hz"},
		{100.001, 100, "0.001 Hz"},
		{20e3, 10e3, "10 kHz"},
		{1e9 + 1, 1e9, "1 Hz"},
		{250e3, 0, "250 kHz"},
	} {
		if got := FormatDifference(tc.hi, tc.lo); got != tc.want {
			t.Errorf("FormatDifference(%v, %v) = %q, want %q", tc.hi, tc.lo, got, tc.want)
		}
	}
}
