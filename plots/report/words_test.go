package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// designedFront designs cic3m1r8 > hb > fir2 for real for an invented spec
// (16 MHz to 500 kHz) with the given [words] and [hardware] lines, and returns
// the spec and a one-chain result around it.
func designedFront(t *testing.T, extra string) (*specfile.Spec, *optimize.Result) {
	t.Helper()
	return designed(t, `input_rate = "16 MHz"
output_rate = "500 kHz"
passband = "100 kHz"
ripple = "0.5 dB"
rejection = "70 dB"
`+extra, "cic3m1r8 > hb > fir2")
}

func designed(t *testing.T, text, notation string) (*specfile.Spec, *optimize.Result) {
	t.Helper()
	s, err := specfile.Parse("words.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := chain.ParseNotation(notation)
	if err != nil {
		t.Fatal(err)
	}
	set := s.SearchSettings()
	c, err := chain.Design(s.Chain, plan, set.Chain)
	if err != nil {
		t.Fatal(err)
	}
	f, err := cost.Evaluate(s.Chain, c, set.Cost)
	if err != nil {
		t.Fatal(err)
	}
	return s, &optimize.Result{Candidates: 1, FeasibleAll: 1, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{{Plan: plan, Chain: c, Figures: f}}, Reason: "only one"}
}

func TestWordLengths(t *testing.T) {
	cases := []struct {
		name, extra string
		mode        string
		bits        int // fixed width, 0 for auto
		files       int // coefficient files of the chain
		hardware    bool
	}{
		{"fixed 16 bits", "[words]\ncoefficients = 16\n", "fixed", 16, 6, false},
		{"auto with multiplier", "[words]\ncoefficients = \"auto\"\n[hardware]\nclock = \"64 MHz\"\nmultiplier = \"18x27\"\n", "auto", 0, 6, true},
		{"absent: float files, auto figures", "", "float", 0, 2, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s, res := designedFront(t, tc.extra)
			r, err := New("plan", s, res)
			if err != nil {
				t.Fatal(err)
			}
			if r.Spec.Words.CoefficientsMode != tc.mode {
				t.Errorf("coefficients_mode %q, want %q", r.Spec.Words.CoefficientsMode, tc.mode)
			}
			ch := r.Front[0]
			if ch.ChainReport == nil {
				t.Fatalf("no word lengths: %s", ch.WordLengthsError)
			}
			// A 16-bit ADC word rounded to nearest gives 6.02*16 + 1.76 dB
			// for a full-scale sine (common practice), 1 dB less for the
			// default -1 dBFS tone. Decimating by 32 filters out most of that
			// white error, so the bit-true SNR at the output lies above it,
			// by about 10 log10(32) = 15 dB with the 24-bit output words.
			ideal := 6.02*16 + 1.76 - 1
			if math.Abs(ch.InputSNRDB-ideal) > 0.5 {
				t.Errorf("input_snr_db %.2f, want %.2f +- 0.5", ch.InputSNRDB, ideal)
			}
			if ch.BitTrueSNRDB == nil || ch.BitTrueENOB == nil {
				t.Fatalf("no bit-true SNR: %s", ch.BitTrueSNRNote)
			}
			snr, enob := *ch.BitTrueSNRDB, *ch.BitTrueENOB
			if lo, hi := ch.InputSNRDB+10, ch.InputSNRDB+10*math.Log10(32)+6; !(snr > lo && snr < hi) {
				t.Errorf("bittrue_snr_db %.2f outside (%.2f, %.2f)", snr, lo, hi)
			}
			// ENOB = (SNR - 1.76) / 6.02 (common practice).
			if d := enob - (snr-1.76)/6.02; math.Abs(d) > 1e-9 {
				t.Errorf("bittrue_enob %.4f against SNR %.4f dB", enob, snr)
			}
			if tc.hardware != (ch.ChainReport.HardwareMultipliers != nil) {
				t.Errorf("chain hardware_multipliers %v, want present %v", ch.ChainReport.HardwareMultipliers, tc.hardware)
			}
			cic := ch.Stages[0]
			// Hogenauer (1981): the full CIC register is Bin + ceil(N log2(RM))
			// = 16 + ceil(3 log2 8) = 25 bits.
			if cic.StageReport == nil || cic.AccumulatorBits != 25 {
				t.Errorf("cic accumulator_bits %+v, want 25", cic.StageReport)
			}
			fcs := res.Front[0].Chain.Stages[0].(chain.CICStage)
			if fmt.Sprint(fcs.RegisterBits) != fmt.Sprint(cic.StageReport.RegisterBits) {
				t.Errorf("the chain's CIC registers %v differ from the word-length plan's %v", fcs.RegisterBits, cic.StageReport.RegisterBits)
			}
			for i, st := range ch.Stages[1:] {
				w := st.StageReport
				if w == nil || len(w.CoefficientsInt) != len(st.Coefficients) || w.CoefficientFrac == nil {
					t.Fatalf("stage %d: word lengths %+v", i+2, w)
				}
				if tc.bits > 0 && w.CoefficientBits != tc.bits {
					t.Errorf("stage %d: coefficient_bits %d, want %d", i+2, w.CoefficientBits, tc.bits)
				}
				if tc.bits == 0 && !w.QuantisedMeetsBands {
					t.Errorf("stage %d: auto width %d bits does not meet the bands", i+2, w.CoefficientBits)
				}
				// Every integer fits the width and lies within one code of
				// the float tap (the local search moves a tap to its other
				// rounding at most).
				var sum int64
				for k, v := range w.CoefficientsInt {
					if lim := int64(1)<<(w.CoefficientBits-1) - 1; v > lim || v < -lim {
						t.Errorf("stage %d tap %d = %d does not fit %d bits", i+2, k, v, w.CoefficientBits)
					}
					if d := math.Abs(float64(v) - math.Ldexp(st.Coefficients[k], *w.CoefficientFrac)); d > 1 {
						t.Errorf("stage %d tap %d: integer %d is %.2f codes from the float tap", i+2, k, v, d)
					}
					sum += max(v, -v)
				}
				// Worst-case accumulator (common practice for an FIR that
				// must never overflow): |sum| <= 2^(Bin-1) sum|h_int|, so the
				// smallest signed width b with 2^(b-1) - 1 >= that bound.
				want := bits.Len64(uint64(sum)<<(w.InputBits-1)) + 1
				if w.AccumulatorBits != want {
					t.Errorf("stage %d: accumulator_bits %d, want %d", i+2, w.AccumulatorBits, want)
				}
				if tc.hardware && (w.HardwareMultipliers == nil || *w.HardwareMultipliers < 1) {
					t.Errorf("stage %d: hardware_multipliers %v", i+2, w.HardwareMultipliers)
				}
			}
			// The integer files come from coefficients_int.
			files, err := CoefficientFiles(ch, r.Spec.Words.CoefficientsMode != "float")
			if err != nil {
				t.Fatal(err)
			}
			if len(files) != tc.files {
				t.Fatalf("%d coefficient files, want %d", len(files), tc.files)
			}
			if tc.files == 6 {
				fir := ch.Stages[2].StageReport
				hex, _ := ReadmemH(fir.CoefficientsInt, fir.CoefficientBits)
				if !bytes.Equal(files[5].Data, hex) || !bytes.Equal(files[4].Data, IntCSV(fir.CoefficientsInt, *fir.CoefficientFrac)) {
					t.Error("the fir's integer files do not hold its coefficients_int")
				}
			}
			// The names are in report.json where it says.
			js, err := r.Marshal()
			if err != nil {
				t.Fatal(err)
			}
			var doc struct {
				Front []map[string]any `json:"front"`
			}
			if err := json.Unmarshal(js, &doc); err != nil {
				t.Fatal(err)
			}
			if _, ok := doc.Front[0]["bittrue_snr_db"]; !ok {
				t.Error("report.json chain lacks bittrue_snr_db")
			}
			stages := doc.Front[0]["stages"].([]any)
			fir := stages[2].(map[string]any)
			for _, k := range []string{"coefficient_bits", "coefficients_int", "accumulator_bits", "output_bits", "rounding_points", "multiplier_size"} {
				if _, ok := fir[k]; !ok {
					t.Errorf("report.json fir stage lacks %s", k)
				}
			}
			if strings.Contains(string(js), "coefficient_ints") {
				t.Error("report.json still carries coefficient_ints")
			}
		})
	}
}

// A CIC whose full register is wider than the bit-true run's integers still
// gets its widths and the chain its quantised figures; it has no bit-true
// figures and says why.
func TestWordLengthsWithoutBitTrue(t *testing.T) {
	// Hogenauer (1981): 24 + ceil(10 log2 2048) = 134 bits, beyond the
	// integer model's 127; (RM)^N is a power of two, so one guard bit keeps
	// the truncations from wrapping the output (chain/fixed's doc): 135 bits.
	s, res := designed(t, `input_rate = "122.88 MHz"
output_rate = "30 kHz"
passband = "12 kHz"
ripple = "0.1 dB"
rejection = "100 dB"
[words]
input = 24
coefficients = "auto"
`, "cic10m1r2048 > fir2")
	r, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	ch := r.Front[0]
	if ch.ChainReport == nil || ch.BitTrueReport != nil || ch.BitTrueSNRValid || !(ch.QuantisedRejectionDB > 0) ||
		!strings.Contains(ch.WordLengthsError, "no bit-true run") || !strings.Contains(ch.WordLengthsError, "135 bits") {
		t.Errorf("chain report %+v, error %q", ch.ChainReport, ch.WordLengthsError)
	}
	if w := ch.Stages[0].StageReport; w == nil || w.AccumulatorBits != 135 {
		t.Errorf("cic widths %+v, want a 135-bit register", w)
	}
	if w := ch.Stages[1].StageReport; w == nil || w.CoefficientBits == 0 || len(w.CoefficientsInt) != len(ch.Stages[1].Coefficients) {
		t.Errorf("fir widths %+v", w)
	}
	js, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(js), "bittrue_snr_db") {
		t.Error("report.json has a bit-true SNR for a chain that was not run")
	}
}

// With a fixed coefficient width the search's memory (package cost) and the
// word-length plan's (fixed_memory_bits) are one definition: a CIC comb
// stores M words, a polyphase FIR its n taps' worth of input words, a
// half-band of 4K-1 taps 3K (its even branch 2K, the centre's branch K).
// Complex and real, with and without a half-band, CIC delays 1 and 2.
func TestMemoryOneDefinition(t *testing.T) {
	for _, tc := range []struct {
		signal, notation, clock string
		interp                  bool
	}{
		{"real", "cic3m1r8 > hb > fir2", "", false},
		{"complex", "cic3m2r8 > hb > fir2", "", false},
		{"real", "cic4m1r4 > fir4 > hb", "", false},
		{"complex", "fir4 > hb > hb > fir2", "", false},
		// Lanes: a CIC whose integrators run above the clock has them
		// once per lane, in both counts.
		{"real", "cic3m1r8 > hb > fir2", "5 MHz", false},
		{"complex", "cic4m1r4 > fir4 > hb", "3 MHz", false},
		{"real", "hb > hb > fir8", "5 MHz", false},
		// Interpolation chains, named in the chain's order (DAC side
		// first).
		{"real", "cic3m1r8 > fir2 > hb", "5 MHz", true},
		{"complex", "cic4m1r4 > fir4 > hb", "", true},
		// A polyphase stage stores half its prototype's taps (its
		// symmetry pairs the phases), in both counts.
		{"real", "cic4m1r8 > fir2 > poly3/5", "", false},
		{"complex", "cic4m1r8 > fir2 > poly3/5", "5 MHz", false},
	} {
		in, out := "16 MHz", "500 kHz"
		if tc.interp {
			in, out = out, in
		}
		if strings.Contains(tc.notation, "poly") {
			out = "600 kHz"
		}
		text := `input_rate = "` + in + `"
output_rate = "` + out + `"
passband = "100 kHz"
ripple = "0.5 dB"
rejection = "70 dB"
signal = "` + tc.signal + `"
[words]
coefficients = 16
`
		if tc.clock != "" {
			text += "[hardware]\nclock = \"" + tc.clock + "\"\n"
		}
		s, res := designed(t, text, tc.notation)
		r, err := New("plan", s, res)
		if err != nil {
			t.Fatal(err)
		}
		ch := r.Front[0]
		if ch.ChainReport == nil || ch.FixedMemoryBits != ch.MemoryBits {
			t.Errorf("%s (%s, clock %q): memory_bits %d, fixed_memory_bits %+v (%s)", tc.notation, tc.signal, tc.clock, ch.MemoryBits, ch.ChainReport, ch.WordLengthsError)
		}
	}
}

// The words a word-length error says would fit are planned before they are
// named: for the invented 100 to 3.84 MS/s I/Q chain cic4m1r5 > fir2L >
// farrow48/125 at 30-bit data words and 31 to 33-bit coefficients, the
// accumulators alone would fit at 30 bits, where the Farrow stage's guard
// bits below its output still refuse the plan; every width named plans.
func TestWordsNamedPlan(t *testing.T) {
	s, res := designed(t, `input_rate = "100 MHz"
output_rate = "3.84 MHz"
passband = "1.6 MHz"
protected = "1.9 MHz"
ripple = "0.2 dB"
rejection = "70 dB"
signal = "complex"
[words]
input = 30
output = 30
`, "cic4m1r5 > fir2L > farrow48/125")
	spec, cand, ch := s.Chain, res.Front[0], res.Front[0].Chain
	named := regexp.MustCompile(`words\.(coefficients|output|input) = (\d+)`)
	for _, bits := range []int{31, 32, 33} {
		sp := spec
		sp.CoefBits = bits
		c, err := NewChain(sp, cand, false)
		if err != nil {
			t.Fatal(err)
		}
		AddWordLengths(context.Background(), &c, sp, cand, s.FixedSettings(), false, true)
		ways := named.FindAllStringSubmatch(c.WordLengthsError, -1)
		if len(ways) == 0 {
			t.Fatalf("%d bits: %q names no words", bits, c.WordLengthsError)
		}
		for _, w := range ways {
			try := sp
			v, _ := strconv.Atoi(w[2])
			switch w[1] {
			case "coefficients":
				try.CoefBits = v
			case "output":
				try.OutputBits = v
			case "input":
				try.InputBits = v
			}
			if _, _, err := fixed.PlanChain(try, ch, s.FixedSettings()); err != nil {
				t.Errorf("%d bits: %s named, but: %v", bits, w[0], err)
			}
		}
	}
}

// TestAccumulatorOverLimit checks report.json's accumulator_over_limit
// flags and the chain's over_limits, and the word-length lines that show
// them, against the rule read
// from report.json itself: a FIR or half-band stage whose accumulator_bits
// pass hardware.max_register_bits. The limit sweeps the chain's own
// accumulator widths, so that every case from none to all stages over it
// is met; with coefficients auto the search does not hold the chain to it.
func TestAccumulatorOverLimit(t *testing.T) {
	s, res := designedFront(t, "")
	r, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	var widths []int
	for _, st := range r.Front[0].Stages {
		if st.Kind != "cic" && st.StageReport != nil {
			widths = append(widths, st.AccumulatorBits)
		}
	}
	if len(widths) < 2 {
		t.Fatalf("want two FIR or half-band accumulators, have %v", widths)
	}
	seen := map[int]bool{} // stages over the limit, by count
	for lim := slices.Min(widths) - 1; lim <= slices.Max(widths); lim++ {
		r := reportOf(t, fmt.Sprintf("[hardware]\nmax_register_bits = %d\n", lim))
		var doc struct {
			Spec struct {
				Hardware struct {
					MaxRegisterBits int `json:"max_register_bits"`
				} `json:"hardware"`
			} `json:"spec"`
			Front []struct {
				Over   []string `json:"over_limits"`
				Stages []struct {
					Kind string `json:"kind"`
					Acc  int    `json:"accumulator_bits"`
					Over bool   `json:"accumulator_over_limit"`
				} `json:"stages"`
			} `json:"front"`
		}
		readBack(t, r, &doc)
		if doc.Spec.Hardware.MaxRegisterBits != lim {
			t.Fatalf("limit %d: report.json says max_register_bits %d", lim, doc.Spec.Hardware.MaxRegisterBits)
		}
		var text bytes.Buffer
		WriteWordLengths(&text, r)
		lines := strings.Split(text.String(), "\n")
		n := 0
		for i, st := range doc.Front[0].Stages {
			want := st.Kind != "cic" && st.Acc > lim
			if st.Over != want {
				t.Errorf("limit %d: stage %d (%s, accumulator %d bits) accumulator_over_limit %v, want %v", lim, i+1, st.Kind, st.Acc, st.Over, want)
			}
			if want {
				n++
			}
			prefix := fmt.Sprintf("  %d ", i+1)
			for _, l := range lines {
				if strings.HasPrefix(l, prefix) && strings.Contains(l, "(over the limit)") != want {
					t.Errorf("limit %d: stage %d's line %q, want the mark %v", lim, i+1, l, want)
				}
			}
		}
		seen[n] = true
		if got := slices.Contains(doc.Front[0].Over, "max_register_bits"); got != (n > 0) || len(doc.Front[0].Over) > 1 {
			t.Errorf("limit %d: chain over_limits %q with %d stages over", lim, doc.Front[0].Over, n)
		}
		if note := strings.Contains(text.String(), "Over the fabric's limit"); note != (n > 0) {
			t.Errorf("limit %d: note shown %v with %d stages over:\n%s", lim, note, n, text.String())
		}
	}
	if !seen[0] || !seen[len(widths)] {
		t.Errorf("the limits swept met stage counts %v, want 0 to %d", seen, len(widths))
	}
}

// TestFittingWidth checks the width the accumulator note suggests
// (fittingWidth) by planning the chain again with it fixed: every FIR and
// half-band accumulator must then be within the limit. Invented 16 MHz to
// 500 kHz receivers, rejection and limit drawn from a seeded RNG.
func TestFittingWidth(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 3))
	plans := []string{"cic3m1r8 > hb > fir2", "hb > hb > fir8", "cic4m1r4 > fir8", "fir4 > fir8", "cic5m1r16 > fir2"}
	n := 0
	for range 24 {
		text := fmt.Sprintf("input_rate = \"16 MHz\"\noutput_rate = \"500 kHz\"\npassband = \"100 kHz\"\nripple = \"0.5 dB\"\nrejection = \"%d dB\"\n", 55+rng.IntN(40))
		nt := plans[rng.IntN(len(plans))]
		s, res := designed(t, text, nt)
		r, err := New("plan", s, res)
		if err != nil {
			t.Fatal(err)
		}
		lim := 28 + rng.IntN(16)
		wd := fittingWidth(r.Front[0], lim)
		if wd < specfile.MinWordBits {
			continue
		}
		s2, res2 := designed(t, text+fmt.Sprintf("[words]\ncoefficients = %d\n", wd), nt)
		r2, err := New("plan", s2, res2)
		if err != nil {
			t.Fatal(err)
		}
		if r2.Front[0].ChainReport == nil {
			t.Fatalf("%s, %s: no word lengths at %d bits: %s", nt, text, wd, r2.Front[0].WordLengthsError)
		}
		for i, st := range r2.Front[0].Stages {
			if st.Kind != "cic" && st.StageReport != nil && st.AccumulatorBits > lim {
				t.Errorf("%s: stage %d's accumulator %d bits at the suggested %d-bit coefficients, over the limit %d", nt, i+1, st.AccumulatorBits, wd, lim)
			}
		}
		n++
	}
	if n < 12 {
		t.Errorf("only %d cases had a width to suggest", n)
	}
}

// A multiplierless chain's taps are wired into its adder graphs: no stage
// stores a coefficient, and memory_bits (the front's axis) and
// fixed_memory_bits are its data memory alone, the same figure.
func TestMultiplierlessNoCoefficientMemory(t *testing.T) {
	for _, nt := range []string{"cic3m1r8 > hb > fir2", "hb > hb > fir8"} {
		s, res := designedFront(t, "[words]\ncoefficients = 16\n[hardware]\nmultiplierless = true\n")
		if nt != "cic3m1r8 > hb > fir2" {
			s, res = designed(t, `input_rate = "16 MHz"
output_rate = "500 kHz"
passband = "100 kHz"
ripple = "0.5 dB"
rejection = "70 dB"
[words]
coefficients = 16
[hardware]
multiplierless = true
`, nt)
		}
		r, err := New("plan", s, res)
		if err != nil {
			t.Fatal(err)
		}
		ch := r.Front[0]
		if ch.ChainReport == nil || ch.FixedMemoryBits != ch.MemoryBits {
			t.Errorf("%s: memory_bits %d, fixed_memory_bits %+v", nt, ch.MemoryBits, ch.ChainReport)
		}
		for i, st := range ch.Stages {
			if st.StageReport != nil && st.CoefMemoryBits != 0 {
				t.Errorf("%s: stage %d stores %d coefficient bits", nt, i+1, st.CoefMemoryBits)
			}
		}
	}
}

// TestBuiltOverLimits checks report.json's over_limits against the rule
// read back from report.json: max_memory_bits against fixed_memory_bits,
// max_multipliers against hardware_multipliers (native 18 x 18 blocks at a
// 4 MHz clock), at limits one below, at and one above the chain's own
// figures, with coefficients auto (the search cannot hold them then).
func TestBuiltOverLimits(t *testing.T) {
	const hw = "[hardware]\nclock = \"4 MHz\"\nmultiplier = \"18x18\"\n"
	s, res := designedFront(t, hw)
	r, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Front[0]
	if c.ChainReport == nil || c.HardwareMultipliers == nil || *c.HardwareMultipliers == 0 {
		t.Fatalf("no word lengths or native blocks: %+v", c.ChainReport)
	}
	mem, mul := c.FixedMemoryBits, *c.HardwareMultipliers
	for _, d := range []int{-1, 0, 1} {
		r := reportOf(t, hw+fmt.Sprintf("max_memory_bits = %d\nmax_multipliers = %d\n", mem+d, mul+d))
		var doc struct {
			Front []struct {
				Over []string `json:"over_limits"`
				Mem  int      `json:"fixed_memory_bits"`
				Mul  int      `json:"hardware_multipliers"`
			} `json:"front"`
		}
		readBack(t, r, &doc)
		f := doc.Front[0]
		var want []string
		if f.Mem > mem+d {
			want = append(want, "max_memory_bits")
		}
		if f.Mul > mul+d {
			want = append(want, "max_multipliers")
		}
		if !slices.Equal(f.Over, want) {
			t.Errorf("limits %d bits, %d multipliers: over_limits %q, want %q (fixed_memory_bits %d, hardware_multipliers %d)", mem+d, mul+d, f.Over, want, f.Mem, f.Mul)
		}
		var text bytes.Buffer
		WriteTable(&text, r)
		if shown := strings.Contains(text.String(), "over limits"); shown != (len(want) > 0) {
			t.Errorf("limits %d bits, %d multipliers: table note shown %v:\n%s", mem+d, mul+d, shown, text.String())
		}
	}
}

// reportOf is the report of designedFront's chain with extra spec lines.
func reportOf(t *testing.T, extra string) *Report {
	t.Helper()
	s, res := designedFront(t, extra)
	r, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// readBack decodes r's report.json into doc, as an outside script reads it.
func readBack(t *testing.T, r *Report, doc any) {
	t.Helper()
	b, err := r.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, doc); err != nil {
		t.Fatal(err)
	}
}

// With a fixed coefficient width the search's memory is the chain as
// built (fixed_memory_bits) for fractional chains too: an interpolating
// polyphase stage's partial sums are accumulator-wide, which only the word
// lengths know, and a Farrow chain's coefficients are the spec's width,
// not a stand-in 18 bits (both differed). Invented chains: 6 to 100 MS/s
// I/Q; in CI's long step also 140 to 16.384 MS/s I/Q (a Farrow stage, 5 s).
func TestFractionalMemoryAsBuilt(t *testing.T) {
	specs := []string{`input_rate = "6 MS/s"
output_rate = "100 MS/s"
passband = "2.2 MHz"
protected = "2.5 MHz"
ripple = "0.2 dB"
rejection = "66 dB"
signal = "complex"
[words]
input = 16
output = 14
coefficients = 16
`}
	if os.Getenv("STEPDOWN_LONG") != "" {
		specs = append(specs, `input_rate = "140 MS/s"
output_rate = "16.384 MS/s"
passband = "6 MHz"
protected = "6.5 MHz"
ripple = "0.3 dB"
rejection = "60 dB"
signal = "complex"
[words]
input = 12
output = 16
coefficients = 16
`)
	}
	for _, text := range specs {
		_, res, r := planned(t, text)
		if len(r.Front) == 0 {
			t.Fatalf("no front: %s", res.Reason)
		}
		for _, c := range r.Front {
			if c.ChainReport == nil || c.FixedMemoryBits != c.MemoryBits {
				t.Errorf("%s: memory_bits %d, fixed_memory_bits %+v", c.Notation, c.MemoryBits, c.ChainReport)
			}
		}
	}
}
