package fixed

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/bits"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

type refFilter struct {
	Name      string
	Rate      float64
	Bands     []float64
	Taps      []float64
	Freqs     []float64
	Quantised []struct {
		Bits int
		Frac int
		Ints []int64
		Mag  []float64
	}
}

func loadRef(t *testing.T) []refFilter {
	t.Helper()
	b, err := os.ReadFile("../../testdata/fixed/reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var r struct {
		Scipy   string
		Filters []refFilter
	}
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	if r.Scipy == "" || len(r.Filters) == 0 {
		t.Fatal("reference.json carries no SciPy version or filters")
	}
	return r.Filters
}

func TestQuantizeAgainstSciPy(t *testing.T) {
	// testdata/fixed/gen_reference.py: scipy.signal.remez taps, quantised by
	// the documented convention in Python, |H| by scipy.signal.freqz.
	for _, f := range loadRef(t) {
		for _, q := range f.Quantised {
			c := Quantize(f.Taps, q.Bits)
			if c.Frac != q.Frac {
				t.Errorf("%s %d bits: Frac = %d, SciPy script %d", f.Name, q.Bits, c.Frac, q.Frac)
			}
			for k := range q.Ints {
				if c.Ints[k] != q.Ints[k] {
					t.Errorf("%s %d bits: tap %d = %d, SciPy script %d", f.Name, q.Bits, k, c.Ints[k], q.Ints[k])
					break
				}
			}
			h := c.Float()
			for i, fr := range f.Freqs {
				got := remez.Magnitude(h, fr, f.Rate)
				if math.Abs(got-q.Mag[i]) > 1e-12 {
					t.Errorf("%s %d bits: |H(%g)| = %.15g, freqz %.15g", f.Name, q.Bits, fr, got, q.Mag[i])
				}
			}
		}
	}
}

func TestRoundingNoise(t *testing.T) {
	// Rounding to a step q adds error of variance q^2/12 (common practice),
	// for a signal busy enough that the error is uniform. Seeded RNG.
	rng := rand.New(rand.NewPCG(7, 7))
	for _, bits := range []int{6, 10, 16} {
		const n = 200000
		x := make([]float64, n)
		for i := range x {
			x[i] = 0.9 * (2*rng.Float64() - 1)
		}
		codes := make([]int64, n)
		if c := ADC(codes, x, bits); c != 0 {
			t.Fatalf("%d bits: %d samples clipped", bits, c)
		}
		q := math.Ldexp(1, -(bits - 1))
		var s, s2 float64
		for i, v := range x {
			e := float64(codes[i])*q - v
			s += e
			s2 += e * e
		}
		mean, v := s/n, s2/n
		want := q * q / 12
		if math.Abs(v/want-1) > 0.02 || math.Abs(mean) > 0.01*q {
			t.Errorf("%d bits: error variance %g (mean %g), want q^2/12 = %g within 2%%", bits, v, mean, want)
		}
	}
}

func TestADCRule(t *testing.T) {
	// SNR of a full-scale sine quantised to B bits is 6.02 B + 1.76 dB
	// (common practice). The sine's frequency is incommensurate with the rate.
	for _, b := range []int{8, 12, 16} {
		const n = 1 << 16
		x := make([]float64, n)
		a := 1 - math.Ldexp(1, -(b-1)) // full scale, not clipping
		for i := range x {
			x[i] = a * math.Sin(2*math.Pi*0.1234567*float64(i)+0.3)
		}
		codes := make([]int64, n)
		ADC(codes, x, b)
		q := make([]float64, n)
		for i, c := range codes {
			q[i] = math.Ldexp(float64(c), -(b - 1))
		}
		got := snrDB(x, q)
		want := 6.02*float64(b) + 1.76
		if math.Abs(got-want) > 0.25 {
			t.Errorf("%d bits: SNR %.2f dB, want %.2f +- 0.25", b, got, want)
		}
	}
}

// checkMinimal asserts that c meets bands (re-measured at a finer density)
// and that one bit fewer fails even after the local search.
func checkMinimal(t *testing.T, name string, taps []float64, rate float64, bands []remez.Band, s QuantSettings, c Coefficients) {
	t.Helper()
	dev := Deviations(c.Float(), rate, bands, 64)
	for i, b := range bands {
		if dev[i] > b.MaxError*(1+1e-9) {
			t.Errorf("%s: %d bits, band %d error %g > MaxError %g", name, c.Bits, i, dev[i], b.MaxError)
		}
	}
	if c.Bits > 2 {
		if _, d, ok := TryWidth(taps, rate, bands, c.Bits-1, s); ok {
			t.Errorf("%s: %d bits also meets the bands (%v): not minimal", name, c.Bits-1, d)
		}
	}
}

func TestMinCoefBitsSciPy(t *testing.T) {
	// Bands from the SciPy design's own edges, tolerances 1.5 and 4 times the
	// float deviations (testdata/fixed/reference.json).
	for _, f := range loadRef(t) {
		for _, slack := range []float64{1.5, 4} {
			bands := []remez.Band{
				{Lo: f.Bands[0], Hi: f.Bands[1], Gain: 1},
				{Lo: f.Bands[2], Hi: f.Bands[3], Gain: 0},
			}
			fd := Deviations(f.Taps, f.Rate, bands, 0)
			for i := range bands {
				bands[i].MaxError = slack * fd[i]
			}
			c, _, err := MinCoefBits(f.Taps, f.Rate, bands, QuantSettings{})
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("%s slack %g: %d bits, %d taps moved by the search", f.Name, slack, c.Bits, c.Adjusted)
			checkMinimal(t, f.Name, f.Taps, f.Rate, bands, QuantSettings{}, c)
		}
	}
}

func TestMinCoefBitsProperty(t *testing.T) {
	// Property: for random Kaiser lowpass filters and tolerances, the result
	// meets its bands and is minimal. Seeded RNG.
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 12; trial++ {
		n := 15 + rng.IntN(60)
		rate := 1e6
		fc := rate * (0.05 + 0.3*rng.Float64())
		fp, fs := 0.5*fc, math.Min(rate/2, 1.6*fc)
		taps := kaiserLowpass(n, fc, rate, 4+6*rng.Float64())
		bands := lowpassBands(fp, fs, rate, 0, 0)
		fd := Deviations(taps, rate, bands, 0)
		for i := range bands {
			bands[i].MaxError = fd[i] * (1.2 + 3*rng.Float64())
		}
		c, _, err := MinCoefBits(taps, rate, bands, QuantSettings{})
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		checkMinimal(t, "kaiser", taps, rate, bands, QuantSettings{}, c)
		for k := 0; k < n/2; k++ {
			if c.Ints[k] != c.Ints[n-1-k] {
				t.Fatalf("trial %d: quantised taps not symmetric at %d", trial, k)
			}
		}
	}
}

func TestLocalSearchHelps(t *testing.T) {
	// The local search must never make a width fail that plain rounding
	// meets, and across random cases it must save a bit at least once.
	rng := rand.New(rand.NewPCG(3, 4))
	saved := 0
	for trial := 0; trial < 20; trial++ {
		n := 21 + 2*rng.IntN(30)
		taps := kaiserLowpass(n, 250e3, 1e6, 8)
		bands := lowpassBands(100e3, 400e3, 1e6, 0, 0)
		fd := Deviations(taps, 1e6, bands, 0)
		for i := range bands {
			bands[i].MaxError = fd[i] * (1.1 + rng.Float64())
		}
		plain, _, err := MinCoefBits(taps, 1e6, bands, QuantSettings{Budget: -1})
		if err != nil {
			t.Fatal(err)
		}
		searched, _, err := MinCoefBits(taps, 1e6, bands, QuantSettings{})
		if err != nil {
			t.Fatal(err)
		}
		if searched.Bits > plain.Bits {
			t.Errorf("trial %d: search %d bits, plain rounding %d", trial, searched.Bits, plain.Bits)
		}
		if searched.Bits < plain.Bits {
			saved++
		}
	}
	if saved == 0 {
		t.Error("the local search never saved a bit in 20 cases")
	}
	t.Logf("local search saved a bit in %d of 20 cases", saved)
}

func TestHalfBandQuantised(t *testing.T) {
	// docs/design.md §4: a half-band's zeros are exactly zero and its centre exactly
	// 1/2; after quantisation the centre must be a power of two, 2^(Frac-1).
	for _, k := range []int{3, 6, 11} {
		h := kaiserHalfBand(k, 7)
		mid := len(h) / 2
		h[mid+2] = 1e-12 // design residue must not survive
		h[mid-2] = 1e-12
		for _, b := range []int{8, 12, 16, 20} {
			c, err := QuantizeHalfBand(h, b)
			if err != nil {
				t.Fatal(err)
			}
			checkHalfBand(t, c)
		}
		rate := 2e6
		fp := rate * 0.1
		bands := []remez.Band{{Lo: 0, Hi: fp, Gain: 1}, {Lo: rate/2 - fp, Hi: rate / 2}}
		fd := Deviations(h, rate, bands, 0)
		for i := range bands {
			bands[i].MaxError = 2 * math.Max(fd[0], fd[1])
		}
		s := QuantSettings{HalfBand: true}
		c, _, err := MinCoefBits(h, rate, bands, s)
		if err != nil {
			t.Fatal(err)
		}
		checkHalfBand(t, c)
		checkMinimal(t, "half-band", h, rate, bands, s, c)
	}
}

func checkHalfBand(t *testing.T, c Coefficients) {
	t.Helper()
	mid := len(c.Ints) / 2
	if c.Ints[mid] != int64(1)<<(c.Frac-1) {
		t.Errorf("%d bits: centre %d, want 2^(Frac-1) = %d", c.Bits, c.Ints[mid], int64(1)<<(c.Frac-1))
	}
	if math.Ldexp(float64(c.Ints[mid]), -c.Frac) != 0.5 {
		t.Errorf("%d bits: centre is not exactly 1/2", c.Bits)
	}
	for k := 2; k <= mid; k += 2 {
		if c.Ints[mid-k] != 0 || c.Ints[mid+k] != 0 {
			t.Errorf("%d bits: tap at offset %d is %d, want 0", c.Bits, k, c.Ints[mid+k])
		}
	}
}

func TestCICIntegerExact(t *testing.T) {
	// Hogenauer (1981): with registers of Bin + ceil(N log2 RM) bits that wrap
	// in two's complement, the CIC's output equals the exact convolution with
	// (boxcar of RM)^N, even at full-scale input. Seeded RNG.
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range []struct{ n, m, r, bits int }{{3, 1, 8, 12}, {4, 1, 25, 16}, {5, 2, 7, 14}, {2, 1, 3, 8}} {
		p, err := chain.PruneCIC(tc.n, tc.m, tc.r, tc.bits, 62)
		if err != nil {
			t.Fatal(err)
		}
		x := make([]int64, 3000)
		top := int64(1) << (tc.bits - 1)
		for i := range x {
			switch rng.IntN(3) {
			case 0:
				x[i] = top - 1
			case 1:
				x[i] = -top
			default:
				x[i] = rng.Int64N(2*top) - top
			}
		}
		got := cicInt(x, &p)
		h := cicTaps(tc.n, tc.r*tc.m, 1)
		for mi := range got {
			var want int64
			for k := 0; k < len(h) && k <= mi*tc.r; k++ {
				want += int64(h[k]) * x[mi*tc.r-k]
			}
			if got[mi] != want {
				t.Fatalf("N=%d R=%d M=%d: output %d = %d, exact %d", tc.n, tc.r, tc.m, mi, got[mi], want)
			}
		}
	}
}

func TestAccumulatorWorstCase(t *testing.T) {
	// Worst-case growth: the full-scale input with each tap's sign gives the
	// largest sum, the opposite signs (most negative code) the smallest; the
	// planned accumulator holds both and one bit fewer does not hold one of
	// them (the definition of AccumulatorBits, checked on a designed filter).
	taps := kaiserLowpass(31, 100e3, 1e6, 6)
	bands := lowpassBands(40e3, 250e3, 1e6, 1e-2, 1e-3)
	c := Cascade{InputRate: 1e6, Passband: 40e3, Stages: []Stage{{R: 2, Taps: taps, Bands: bands}}}
	for _, in := range []int{8, 16, 24} {
		w, err := Plan(c, Words{InputBits: in, OutputBits: 16, CoefBits: 18}, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		sw := w.Stages[0]
		top := int64(1) << (in - 1)
		var lo, hi int64
		for _, v := range sw.Coefficients.Ints {
			if v > 0 {
				lo, hi = lo+v*-top, hi+v*(top-1)
			} else {
				lo, hi = lo+v*(top-1), hi+v*-top
			}
		}
		if !fits(lo, hi, sw.AccumulatorBits) || fits(lo, hi, sw.AccumulatorBits-1) {
			t.Errorf("%d-bit input: sums [%d, %d] must fit %d bits and not %d", in, lo, hi, sw.AccumulatorBits, sw.AccumulatorBits-1)
		}
		// Never wider than the symmetric bound's Bin + floor(log2 sum|h|) + 1.
		if sym := in + bits.Len64(uint64(sw.Coefficients.AbsSum())); sw.AccumulatorBits > sym {
			t.Errorf("%d-bit input: %d bits, above the symmetric bound's %d", in, sw.AccumulatorBits, sym)
		}
	}
}

// fits reports whether [lo, hi] lies within b-bit two's complement.
func fits(lo, hi int64, b int) bool {
	return b >= 1 && lo >= -(int64(1)<<(b-1)) && hi <= int64(1)<<(b-1)-1
}

func TestAccumulatorBitsBruteForce(t *testing.T) {
	// Brute force: every input sequence of a few taps on a narrow input word
	// is summed, and the extreme sums must fit AccumulatorBits and not one
	// bit fewer. Random integer taps, seeded RNG; a power-of-two sum|h| is
	// among them.
	rng := rand.New(rand.NewPCG(31, 32))
	cases := [][]int64{{1, 2, 1}, {-1, 3, -1}, {0, 0, 0}, {3}, {-3, 0, 7, 0, -3}}
	for len(cases) < 300 {
		h := make([]int64, 1+rng.IntN(4))
		for k := range h {
			h[k] = rng.Int64N(31) - 15
		}
		cases = append(cases, h)
	}
	for _, h := range cases {
		for in := 2; in <= 4; in++ {
			top := int64(1) << (in - 1)
			var lo, hi int64
			x := make([]int64, len(h))
			for k := range x {
				x[k] = -top
			}
			for {
				var s int64
				for k, v := range h {
					s += v * x[k]
				}
				lo, hi = min(lo, s), max(hi, s)
				k := 0
				for k < len(x) && x[k] == top-1 {
					x[k] = -top
					k++
				}
				if k == len(x) {
					break
				}
				x[k]++
			}
			b := AccumulatorBits(h, in)
			if !fits(lo, hi, b) || (b > 1 && fits(lo, hi, b-1)) {
				t.Fatalf("taps %v, %d-bit input: sums [%d, %d], AccumulatorBits %d", h, in, lo, hi, b)
			}
		}
	}
}

func TestNativeMultipliers(t *testing.T) {
	// Tiling an a x b product onto 18 x 27 blocks, better orientation
	// (arithmetic; real signed blocks may differ, see the doc comment).
	for _, tc := range []struct{ x, y, want int }{
		{16, 16, 1}, {18, 27, 1}, {27, 18, 1}, {24, 16, 1}, {30, 20, 2}, {35, 35, 4}, {19, 28, 2}, {45, 10, 2},
	} {
		if got := NativeMultipliers(tc.x, tc.y, 18, 27); got != tc.want {
			t.Errorf("%d x %d on 18 x 27: %d, want %d", tc.x, tc.y, got, tc.want)
		}
	}
}

func TestAmplitudeRecurrence(t *testing.T) {
	// Clenshaw's recurrence against the direct cosine sum, odd and even
	// lengths, over the whole band. Seeded RNG.
	rng := rand.New(rand.NewPCG(9, 9))
	for _, n := range []int{1, 2, 3, 4, 7, 10, 63, 64, 301, 1000} {
		h := make([]float64, n)
		for k := 0; k < (n+1)/2; k++ {
			h[k] = rng.NormFloat64()
			h[n-1-k] = h[k]
		}
		for j := 0; j <= 200; j++ {
			f := 0.5 * float64(j) / 200
			got, want := Amplitude(h, f, 1), amplitudeDirect(h, f, 1)
			if math.Abs(got-want) > 1e-11*float64(n) {
				t.Fatalf("n %d f %g: recurrence %.15g, direct %.15g", n, f, got, want)
			}
		}
	}
}

func TestParseMultiplier(t *testing.T) {
	for _, tc := range []struct {
		in   string
		a, b int
		ok   bool
	}{{"18x27", 18, 27, true}, {"18 x 25", 18, 25, true}, {"27*18", 27, 18, true}, {"18X27", 18, 27, true},
		{"18", 0, 0, false}, {"x27", 0, 0, false}, {"1x27", 0, 0, false}, {"18x27x2", 0, 0, false}, {"", 0, 0, false}} {
		a, b, err := ParseMultiplier(tc.in)
		if (err == nil) != tc.ok || a != tc.a || b != tc.b {
			t.Errorf("ParseMultiplier(%q) = %d, %d, %v", tc.in, a, b, err)
		}
	}
}

// AccumulatorBits past 64 bits is the width of the extreme sums taken tap
// by tap in math/big (each tap's product with the full-scale input of its
// sign for the largest sum, of the other sign for the smallest): 2000
// seeded random tap sets of up to 40-bit taps and 1- to 64-bit inputs,
// most of them wider than an int64; and where the sums fit an int64, the
// math/big route equals the int64 one.
func TestAccumulatorBitsWide(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 8))
	for c := range 2400 {
		h := make([]int64, 1+rng.IntN(300))
		tb := 2 + rng.IntN(39)
		if c >= 2000 {
			// Taps up to 63 bits, so that their sums pass 2^63 too.
			h, tb = make([]int64, 3+rng.IntN(6)), 60+rng.IntN(4)
		}
		for k := range h {
			h[k] = int64(rng.Uint64N(1<<tb) - 1<<(tb-1))
			if c >= 2200 {
				// Two near the largest int64 of one sign and one up to
				// 2^62: P or N passes 2^64, and wraps a uint64 to at most
				// 2^62.
				h = h[:3]
				sign := int64(1 - 2*(c%2))
				h[0], h[1] = sign*(math.MaxInt64-rng.Int64N(1<<40)), sign*math.MaxInt64
				h[2] = sign * (1<<62 - rng.Int64N(1<<40))
				break
			}
		}
		in := 1 + rng.IntN(64)
		top := new(big.Int).Lsh(big.NewInt(1), uint(in-1)) // 2^(in-1)
		maxIn := new(big.Int).Sub(top, big.NewInt(1))
		minIn := new(big.Int).Neg(top)
		lo, hi := new(big.Int), new(big.Int)
		for _, v := range h {
			a := new(big.Int).Mul(big.NewInt(v), maxIn)
			b := new(big.Int).Mul(big.NewInt(v), minIn)
			if a.Cmp(b) > 0 {
				a, b = b, a
			}
			lo.Add(lo, a)
			hi.Add(hi, b)
		}
		want := 1
		for {
			m := new(big.Int).Lsh(big.NewInt(1), uint(want-1))
			if lo.Cmp(new(big.Int).Neg(m)) >= 0 && hi.Cmp(new(big.Int).Sub(m, big.NewInt(1))) <= 0 {
				break
			}
			want++
		}
		if got := AccumulatorBits(h, in); got != want {
			t.Fatalf("case %d: %d taps of %d bits, %d-bit input: %d bits, the extremes need %d", c, len(h), tb, in, got, want)
		}
		if in <= 62 && want <= 63 {
			if got := accumulatorBitsBig(h, in); got != want {
				t.Fatalf("case %d: math/big route %d, want %d", c, got, want)
			}
		}
	}
}

// A cascade whose FIR stages' accumulators pass 63 bits is refused with
// one AccumulatorError that has gone through every stage: its excesses
// are those of each stage planned alone, with and without UnityGain (no
// plan comes back either way), and the words it says would fit do: the
// same taps plan at InputFits-bit input and BetweenFits-bit words between
// stages (each bit off a stage's data word takes one off its accumulator).
// The cascade is bittrue_test's invented receiver without its CIC.
func TestPlanAccumulatorErrorGoesOn(t *testing.T) {
	c := testCascade()
	c.InputRate /= 8
	c.Stages = c.Stages[1:]
	w := Words{InputBits: 32, DataBits: 30, OutputBits: 30, CoefBits: 40}
	need := func(st Stage, in, out int) int {
		_, err := Plan(Cascade{InputRate: c.InputRate, Passband: c.Passband, Stages: []Stage{st}}, Words{InputBits: in, OutputBits: out, CoefBits: w.CoefBits}, Settings{})
		ae := AsAccumulatorError(err)
		if ae == nil {
			t.Fatalf("stage %+v alone at %d bits: %v, want an AccumulatorError", st.R, in, err)
		}
		return ae.NeedBits - MaxAccumulatorBits
	}
	first, later := need(c.Stages[0], w.InputBits, w.DataBits), need(c.Stages[1], w.DataBits, w.OutputBits)
	for _, unity := range []bool{false, true} {
		ws, err := Plan(c, w, Settings{UnityGain: unity})
		ae := AsAccumulatorError(err)
		if ws != nil || ae == nil {
			t.Fatalf("UnityGain %v: widths %v, error %v; want no plan and an AccumulatorError", unity, ws != nil, err)
		}
		if !strings.Contains(err.Error(), "stage 1:") || ae.FirstExcess != first || (!unity && ae.LaterExcess != later) || ae.LaterExcess <= 0 {
			t.Errorf("UnityGain %v: %v: excesses %d and %d, each stage alone %d and %d", unity, err, ae.FirstExcess, ae.LaterExcess, first, later)
		}
		if ae.InputFits != w.InputBits-ae.FirstExcess || ae.BetweenFits != w.DataBits-ae.LaterExcess {
			t.Errorf("UnityGain %v: fits %d and %d, want %d and %d", unity, ae.InputFits, ae.BetweenFits, w.InputBits-ae.FirstExcess, w.DataBits-ae.LaterExcess)
		}
		fit := Words{InputBits: ae.InputFits, DataBits: ae.BetweenFits, OutputBits: ae.BetweenFits, CoefBits: w.CoefBits}
		if _, err := Plan(c, fit, Settings{UnityGain: unity}); err != nil {
			t.Errorf("UnityGain %v: at the words the error says fit (%+v): %v", unity, fit, err)
		}
	}
}

// accumulators keeps the earliest stage's error as the one returned, and
// the most each kind of stage passes by and the narrowest word that fits
// them, whatever the order the stages are added in (the UnityGain target
// is planned last).
func TestAccumulatorsGather(t *testing.T) {
	e := func(data, need int, mu bool) error {
		return fmt.Errorf("wrapped: %w", &AccumulatorError{DataBits: data, CoefBits: 40, NeedBits: need, MuProducts: mu})
	}
	var a accumulators
	if a.add(errors.New("other"), 0) || a.err() != nil {
		t.Fatal("a plain error counted")
	}
	a.add(e(24, 66, false), 2) // 3 over, fits at 21
	a.add(e(24, 65, false), 1) // 2 over, fits at 22
	a.add(e(30, 68, false), 0) // the first stage: 5 over, fits at 25
	got := AsAccumulatorError(a.err())
	if got == nil || !strings.HasPrefix(a.err().Error(), "fixed: stage 1:") || got.DataBits != 30 || got.NeedBits != 68 {
		t.Fatalf("the first stage's error should lead: %v", a.err())
	}
	if got.FirstExcess != 5 || got.LaterExcess != 3 || got.InputFits != 25 || got.BetweenFits != 21 || got.Excess() != 5 {
		t.Errorf("gathered %+v", *got)
	}
	var b accumulators
	b.add(e(24, 65, false), 1)
	b.add(e(20, 90, true), 2) // mu products: no data word fits them
	if got := AsAccumulatorError(b.err()); got.BetweenFits != -1 || got.LaterExcess != 27 || got.FirstExcess != 0 {
		t.Errorf("with a Farrow stage's mu products: %+v", *got)
	}
}
