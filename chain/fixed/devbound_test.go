package fixed

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"sync/atomic"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// devCase is one seeded random filter and bands for the tests of
// Deviations' bounded path.
type devCase struct {
	name  string
	h     []float64
	rate  float64
	bands []remez.Band
}

// randomDevCases returns count seeded cases: equiripple designs (every
// stopband peak equal, the case where no bound can skip a peak),
// windowed lowpasses, both rounded to a random width, and plain random
// symmetric taps; lengths from minN to maxN; bands of every width down to
// less than one grid step, at random places, with gains 0, 1 or a
// polyphase prototype's L.
func randomDevCases(t *testing.T, seed uint64, count, minN, maxN int) []devCase {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 17))
	var out []devCase
	for len(out) < count {
		n := minN + rng.IntN(maxN-minN+1)
		rate := 1e6 * (1 + 99*rng.Float64())
		fp := rate * (0.02 + 0.2*rng.Float64())
		fs := fp + rate*(4+8*rng.Float64())/float64(n)
		if fs >= rate/2 {
			continue
		}
		gain := []float64{1, 1, 24}[rng.IntN(3)]
		var h []float64
		kind := rng.IntN(3)
		switch kind {
		case 0:
			res, err := remez.Design(n, rate, []remez.Band{{Lo: 0, Hi: fp, Gain: 1}, {Lo: fs, Hi: rate / 2, Gain: 0, Weight: 10}}, remez.Settings{})
			if err != nil {
				continue
			}
			h = res.Taps
		case 1:
			h = kaiserLowpass(n, (fp+fs)/2, rate, 4+6*rng.Float64())
		default:
			h = make([]float64, n)
			for k := 0; k < (n+1)/2; k++ {
				h[k] = rng.NormFloat64() / float64(n)
				h[n-1-k] = h[k]
			}
		}
		for k := range h {
			h[k] *= gain
		}
		if kind < 2 && rng.IntN(2) == 0 {
			h = Quantize(h, 10+rng.IntN(14)).Float()
		}
		bands := []remez.Band{{Lo: 0, Hi: fp, Gain: gain}, {Lo: fs, Hi: rate / 2}}
		// A band narrower than one grid step, and one at a random place.
		step := rate / (16 * float64(n))
		lo := rate / 2 * rng.Float64()
		bands = append(bands, remez.Band{Lo: lo, Hi: math.Min(rate/2, lo+step*rng.Float64())})
		lo = rate / 2 * rng.Float64()
		bands = append(bands, remez.Band{Lo: lo, Hi: math.Min(rate/2, lo+rate/2*rng.Float64())})
		for i := range bands {
			if bands[i].Hi <= bands[i].Lo {
				bands[i].Hi = math.Min(rate/2, bands[i].Lo+step/3)
				bands[i].Lo = bands[i].Hi - step/3
			}
			bands[i].MaxError = 1
		}
		out = append(out, devCase{fmt.Sprintf("seed %d case %d kind %d n %d", seed, len(out), kind, n), h, rate, bands})
	}
	return out
}

// devCount is n cases in go test, long (CI's long step) with
// STEPDOWN_LONG=1.
func devCount(n, long int) int {
	if os.Getenv("STEPDOWN_LONG") != "" {
		return long
	}
	return n
}

// TestAmpBoundsBruteForce holds ampBounds to the amplitude evaluated
// directly, one cosine per tap pair (amplitudeDirect, sharing no code with
// the FFT or with remez.Amplitude), at random frequencies and at the edges
// of cells: never outside [lo, hi] of the cell holding the frequency.
func TestAmpBoundsBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	for _, c := range randomDevCases(t, 1, devCount(6, 40), boundMinTaps, 2500) {
		ab := newAmpBounds(c.h, c.rate)
		widest := 0.0
		for range 2000 {
			f := c.rate / 2 * rng.Float64()
			if rng.IntN(4) == 0 { // a cell's edge
				m := float64(rng.IntN(ab.size/2)) + 0.5
				f = m * c.rate / float64(ab.size)
			}
			a := amplitudeDirect(c.h, f, c.rate)
			m := ab.cell(f)
			if a < ab.lo[m] || a > ab.hi[m] {
				t.Fatalf("%s: A(%g Hz) = %.17g outside cell %d's [%.17g, %.17g]", c.name, f, a, m, ab.lo[m], ab.hi[m])
			}
			widest = math.Max(widest, ab.hi[m]-ab.lo[m])
		}
		// The cells are a thirtieth of a ripple or less: their bounds must
		// stay close enough to prune (a few percent of the taps' sum).
		sum := 0.0
		for _, v := range c.h {
			sum += math.Abs(v)
		}
		if widest > 0.3*sum {
			t.Errorf("%s: a cell's bounds are %g apart, taps' sum %g", c.name, widest, sum)
		}
	}
}

// TestDeviationsBoundedExact: the bounded path returns the same bits as
// refining every local maximum of the grid (deviations with bounded
// false, Deviations' way for short filters), on seeded random filters.
func TestDeviationsBoundedExact(t *testing.T) {
	cases := randomDevCases(t, 2, devCount(12, 80), boundMinTaps, 700)
	cases = append(cases, randomDevCases(t, 3, devCount(0, 4), 3000, 4500)...)
	for _, c := range cases {
		want := checkBoundedExact(t, c)
		// The remembered path gives the same again.
		for i, v := range Deviations(c.h, c.rate, c.bands, 0) {
			if math.Float64bits(v) != math.Float64bits(want[i]) {
				t.Errorf("%s band %d: Deviations %.17g, want %.17g", c.name, i, v, want[i])
			}
		}
	}
}

// TestDeviationsNotOptimistic compares Deviations with a brute-force
// dense direct evaluation (amplitudeDirect at 256 points per expected
// extremum, band edges included): never below it by more than rounding
// (1e-12 of the taps' sum).
func TestDeviationsNotOptimistic(t *testing.T) {
	cases := randomDevCases(t, 4, devCount(8, 60), boundMinTaps, 400)
	for _, c := range randomDevCases(t, 6, devCount(1, 4), 3000, 4500) {
		cases = append(cases, narrowed(c))
	}
	checkNotOptimistic(t, cases, func(h []float64, f, rate float64) float64 { return math.Abs(amplitudeDirect(h, f, rate)) })
}

// narrowed keeps a long case's narrow band and its random band, the latter
// cut to about 20 extrema, so that a dense brute-force scan stays short.
func narrowed(c devCase) devCase {
	c.bands = c.bands[2:]
	b := &c.bands[1]
	b.Hi = math.Min(b.Hi, b.Lo+20*c.rate/float64(len(c.h)))
	return c
}

// checkNotOptimistic holds Deviations of each case to a brute-force scan
// of mag (|H| by a direct sum) at 256 points per expected extremum, band
// edges included: never below it by more than rounding (1e-12 of the
// taps' sum).
func checkNotOptimistic(t *testing.T, cases []devCase, mag func(h []float64, f, rate float64) float64) {
	t.Helper()
	for _, c := range cases {
		got := Deviations(c.h, c.rate, c.bands, 0)
		sum := 0.0
		for _, v := range c.h {
			sum += math.Abs(v)
		}
		for i, b := range c.bands {
			pts := int(math.Ceil(float64(len(c.h))*(b.Hi-b.Lo)/c.rate*256)) + 2
			brute := 0.0
			for j := range pts {
				f := b.Lo + (b.Hi-b.Lo)*float64(j)/float64(pts-1)
				brute = math.Max(brute, math.Abs(mag(c.h, f, c.rate)-b.Gain))
			}
			if got[i] < brute-1e-12*sum {
				t.Errorf("%s band %d [%g, %g]: Deviations %.17g below brute force %.17g", c.name, i, b.Lo, b.Hi, got[i], brute)
			}
		}
	}
}

// asymmetrize turns a case's taps into a filter that is not symmetric,
// measured by its magnitude: a Farrow-like prototype (a windowed sinc of
// the case's cutoff sampled at L phases whose times are rounded,
// t = (j + e_(j mod L)) / L, then rounded to a random width), the taps
// delayed by zeros at one end (the same |H| as the symmetric filter),
// each tap moved by up to a thousandth of the largest, or decaying
// random taps. kind is which.
func asymmetrize(rng *rand.Rand, c devCase) (devCase, int) {
	n := len(c.h)
	h := make([]float64, n)
	kind := rng.IntN(4)
	big := 0.0
	for _, v := range c.h {
		big = math.Max(big, math.Abs(v))
	}
	switch kind {
	case 0:
		l := 2 + rng.IntN(min(n/8, 800))
		e := make([]float64, l)
		for r := range e {
			e[r] = 0.04 * (rng.Float64() - 0.5)
		}
		fc := (c.bands[0].Hi + c.bands[1].Lo) / 2 / c.rate // cycles per sample
		mid := float64(n-1) / 2
		for j := range h {
			t := (float64(j) + e[j%l] - mid) // in samples of the prototype
			x := 2 * fc * t
			s := 1.0
			if x != 0 {
				s = math.Sin(math.Pi*x) / (math.Pi * x)
			}
			w := 0.42 + 0.5*math.Cos(2*math.Pi*t/float64(n)) + 0.08*math.Cos(4*math.Pi*t/float64(n))
			h[j] = 2 * fc * s * w * c.bands[0].Gain
		}
		h = Quantize(h, 12+rng.IntN(12)).Float()
	case 1:
		z := 1 + rng.IntN(n/4)
		if rng.IntN(2) == 0 {
			copy(h[z:], c.h[:n-z])
		} else {
			copy(h, c.h[z:])
		}
	case 2:
		for k, v := range c.h {
			h[k] = v + 1e-3*big*(rng.Float64()-0.5)
		}
	default:
		for k := range h {
			h[k] = rng.NormFloat64() * math.Exp(-4*float64(k)/float64(n)) / float64(n)
		}
	}
	if symmetric(h) {
		h[0] += big / 7
	}
	c.h = h
	c.name += fmt.Sprintf(" asym %d", kind)
	return c, kind
}

// randomAsymCases is randomDevCases made asymmetric (asymmetrize).
func randomAsymCases(t *testing.T, seed uint64, count, minN, maxN int) []devCase {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 23))
	var out []devCase
	for _, c := range randomDevCases(t, seed, count, minN, maxN) {
		c, _ = asymmetrize(rng, c)
		out = append(out, c)
	}
	return out
}

// TestMagBoundsBruteForce holds newMagBounds to |H(f)| evaluated term by
// term (dtft, complex exponentials, sharing no code with the FFT or with
// magnitude) and to magnitude itself, at random frequencies and at cell
// edges: never outside [lo, hi] of the cell holding the frequency.
func TestMagBoundsBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 9))
	cases := randomAsymCases(t, 8, devCount(8, 50), boundMinTaps, 2500)
	cases = append(cases, randomAsymCases(t, 9, devCount(0, 3), 9000, 14000)...)
	for _, c := range cases {
		ab := newMagBounds(c.h, c.rate)
		widest, sum := 0.0, 0.0
		for _, v := range c.h {
			sum += math.Abs(v)
		}
		for range 600 {
			f := c.rate / 2 * rng.Float64()
			if rng.IntN(4) == 0 { // a cell's edge
				m := float64(rng.IntN(ab.size/2)) + 0.5
				f = m * c.rate / float64(ab.size)
			}
			m := ab.cell(f)
			for _, a := range []float64{dtft(c.h, f, c.rate), remez.Magnitude(c.h, f, c.rate)} {
				if a < ab.lo[m] || a > ab.hi[m] {
					t.Fatalf("%s: |H(%g Hz)| = %.17g outside cell %d's [%.17g, %.17g]", c.name, f, a, m, ab.lo[m], ab.hi[m])
				}
			}
			widest = math.Max(widest, ab.hi[m]-ab.lo[m])
		}
		if widest > 0.3*sum {
			t.Errorf("%s: a cell's bounds are %g apart, taps' sum %g", c.name, widest, sum)
		}
	}
}

// TestDeviationsBoundedExactAsym: for filters that are not symmetric the
// bounded path returns the same bits as refining every local maximum of
// the grid with magnitude.
func TestDeviationsBoundedExactAsym(t *testing.T) {
	cases := randomAsymCases(t, 10, devCount(10, 80), boundMinTaps, 700)
	cases = append(cases, randomAsymCases(t, 11, devCount(0, 3), 3000, 4500)...)
	// Long ones, a Farrow stage's prototype's length, on bands cut to
	// about 20 extrema (the direct way is slow).
	for _, c := range randomAsymCases(t, 18, devCount(0, 3), 10000, 14000) {
		for i := range c.bands {
			b := &c.bands[i]
			b.Hi = math.Min(b.Hi, b.Lo+20*c.rate/float64(len(c.h)))
		}
		cases = append(cases, c)
	}
	for _, c := range cases {
		checkBoundedExact(t, c)
	}
}

// TestDeviationsNotOptimisticAsym compares Deviations of filters that
// are not symmetric with a brute-force dense evaluation of |H| term by
// term (dtft at 256 points per expected extremum, band edges included):
// never below it by more than rounding (1e-12 of the taps' sum).
func TestDeviationsNotOptimisticAsym(t *testing.T) {
	cases := randomAsymCases(t, 12, devCount(4, 40), boundMinTaps, 400)
	for _, c := range randomAsymCases(t, 13, devCount(1, 4), 3000, 4500) {
		cases = append(cases, narrowed(c))
	}
	checkNotOptimistic(t, cases, dtft)
}

// TestMeetsBandsSameVerdict: meetsBands gives Meets(Deviations) on
// seeded random filters, symmetric or not, with each band's MaxError
// put just below, at and just above its measured deviation, far from it,
// and with a band whose gain and weight are functions.
func TestMeetsBandsSameVerdict(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 3))
	cases := randomDevCases(t, 15, devCount(6, 40), boundMinTaps, 600)
	cases = append(cases, randomAsymCases(t, 16, devCount(6, 40), boundMinTaps, 600)...)
	cases = append(cases, randomDevCases(t, 17, devCount(2, 6), 40, boundMinTaps-1)...)
	for _, c := range cases {
		if rng.IntN(3) == 0 {
			g := c.bands[0].Gain
			c.bands = append(c.bands, remez.Band{Lo: 0, Hi: c.bands[0].Hi, MaxError: 1,
				GainFunc:   func(f float64) float64 { return g * (1 + 0.1*f/c.rate) },
				WeightFunc: func(f float64) float64 { return 1 + f/c.rate }})
		}
		dev := Deviations(c.h, c.rate, c.bands, 0)
		for _, scale := range []float64{0.5, 1 - 1e-12, 1, 1 + 1e-12, 2} {
			bs := append([]remez.Band(nil), c.bands...)
			pick := rng.IntN(len(bs))
			for i := range bs {
				bs[i].MaxError = dev[i] * 3
				if i == pick || rng.IntN(3) == 0 {
					bs[i].MaxError = dev[i] * scale
				}
			}
			if !(bs[pick].MaxError > 0) {
				continue
			}
			want := Meets(dev, bs)
			if got := meetsBands(context.Background(), c.h, c.rate, bs, 0); got != want {
				t.Errorf("%s scale %g: meetsBands %v, Meets(Deviations) %v", c.name, scale, got, want)
			}
		}
	}
}

// TestFarrowProtoDeviationsExact: the quantised prototypes of planned
// random Farrow stages (rebuilt from their definition, bruteProto) are
// measured with the same bits by the bounded path as by refining every
// peak, near the planned deviations, and meetsBands gives Meets' verdict
// at the planned limits and just around the measured deviations.
func TestFarrowProtoDeviationsExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 5))
	need, found := fracCases(3, 12), 0
	for tries := 0; found < need; tries++ {
		if tries > 40*need {
			t.Fatalf("%d of %d random Farrow stages of %d taps or more", found, need, boundMinTaps)
		}
		_, c, cas, ws := plannedFrac(t, rng, true)
		k := len(cas.Stages) - 1
		sw := ws.Stages[k]
		st := cas.Stages[k]
		if !sw.Farrow {
			t.Fatalf("%s: last stage is not a Farrow stage", chain.Notation(c.Plan))
		}
		h := bruteProto(&sw)
		if len(h) < boundMinTaps { // measured the direct way anyway
			continue
		}
		found++
		t.Logf("%s: %d taps, %d bands", chain.Notation(c.Plan), len(h), len(st.Bands))
		rate := cas.Rates()[k] * float64(st.Up)
		want := deviations(h, rate, st.Bands, 16, false, nil)
		got := deviations(h, rate, st.Bands, 16, true, nil)
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Errorf("%s (%d taps) band %d: bounded %.17g, every peak %.17g", chain.Notation(c.Plan), len(h), i, got[i], want[i])
			}
			if d := sw.Deviations[i]; math.Abs(d-want[i]) > 1e-9*math.Max(d, 1e-6) {
				t.Errorf("%s band %d: planned deviation %.17g, measured %.17g", chain.Notation(c.Plan), i, d, want[i])
			}
		}
		for _, scale := range []float64{0, 1 - 1e-12, 1 + 1e-12} {
			bs := append([]remez.Band(nil), st.Bands...)
			if scale > 0 {
				for i := range bs {
					bs[i].MaxError = want[i] * scale
				}
			}
			if g, w := meetsBands(context.Background(), h, rate, bs, 0), Meets(want, bs); g != w {
				t.Errorf("%s scale %g: meetsBands %v, Meets %v", chain.Notation(c.Plan), scale, g, w)
			}
		}
	}
}

// checkBoundedExact holds the bounded path of deviations to the same bits
// as refining every local maximum of the grid, and returns the latter.
func checkBoundedExact(t *testing.T, c devCase) []float64 {
	t.Helper()
	want := deviations(c.h, c.rate, c.bands, 16, false, nil)
	got := deviations(c.h, c.rate, c.bands, 16, true, nil)
	for i := range want {
		if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
			t.Errorf("%s band %d [%g, %g]: bounded %.17g, every peak %.17g", c.name, i, c.bands[i].Lo, c.bands[i].Hi, got[i], want[i])
		}
	}
	return want
}

// DeviationsContext gives Deviations' bits while its context runs (the
// batched evaluation computes each point alone), on seeded random long
// filters, symmetric and not; stopped part way, it returns an error
// wrapping the context's and remembers nothing, so that the next
// measurement of the same filter gives the full figures.
func TestDeviationsContext(t *testing.T) {
	for i, c := range randomDevCases(t, 77, 6, boundMinTaps, 3*boundMinTaps) {
		if i%2 == 1 {
			c.h = append(slices.Clone(c.h), 0.001) // not symmetric: the magnitude path
		}
		ctx, cancel := context.WithCancel(context.Background())
		got, err := DeviationsContext(ctx, c.h, c.rate, c.bands, 16)
		cancel()
		if err != nil {
			t.Fatal(err)
		}
		want := deviations(c.h, c.rate, c.bands, 16, true, nil)
		for b := range want {
			if math.Float64bits(got[b]) != math.Float64bits(want[b]) {
				t.Errorf("%s band %d: DeviationsContext %v, deviations %v", c.name, b, got[b], want[b])
			}
		}
	}
	// A stopped measurement: a filter long enough that its response
	// takes many batches, stopped as it starts.
	c := randomDevCases(t, 78, 1, 6000, 6001)[0]
	ctx, cancel := context.WithCancel(context.Background())
	stop := new(atomic.Bool)
	stop.Store(true)
	if d := deviationsStop(stop, nil, c.h, c.rate, c.bands, 16); len(d) != len(c.bands) {
		t.Fatalf("a stopped measurement gave %d figures for %d bands", len(d), len(c.bands))
	}
	cancel()
	if _, err := DeviationsContext(ctx, c.h, c.rate, c.bands, 16); !errors.Is(err, context.Canceled) {
		t.Errorf("DeviationsContext after cancel: %v, want context.Canceled", err)
	}
	want := deviations(c.h, c.rate, c.bands, 16, true, nil)
	got := Deviations(c.h, c.rate, c.bands, 16)
	for b := range want {
		if math.Float64bits(got[b]) != math.Float64bits(want[b]) {
			t.Errorf("after a stopped measurement, band %d: %v, want %v (a stopped figure was remembered)", b, got[b], want[b])
		}
	}
}

// A width search whose context is done evaluates none of its grid (the
// first thing it would spend seconds on at tens of thousands of taps), and
// TryWidth then leaves the verdict to the caller's look at the context;
// running, the batched grid is the whole grid's, bit for bit.
func TestWidthSearchStops(t *testing.T) {
	c := randomDevCases(t, 79, 1, 3000, 3001)[0]
	q := Quantize(c.h, 18)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	ls := newSearch(c.h, c.rate, c.bands, q, QuantSettings{ctx: ctx})
	for j, v := range ls.a {
		if v != 0 {
			t.Fatalf("stopped search evaluated grid point %d (%v)", j, v)
		}
	}
	ls = newSearch(c.h, c.rate, c.bands, q, QuantSettings{ctx: context.Background()})
	want := make([]float64, len(ls.freqs))
	remez.AmplitudeEach(q.Float(), ls.freqs, c.rate, want)
	for j := range want {
		if math.Float64bits(ls.a[j]) != math.Float64bits(want[j]) {
			t.Fatalf("grid point %d: batched %v, whole %v", j, ls.a[j], want[j])
		}
	}
}

// flipCtx is a context that is not done for its first n looks at Err and
// cancelled after: a stop that lands part way through a measurement,
// without a clock.
type flipCtx struct {
	context.Context
	n    int
	done chan struct{}
}

func newFlipCtx(n int) *flipCtx {
	return &flipCtx{Context: context.Background(), n: n, done: make(chan struct{})}
}

func (c *flipCtx) Done() <-chan struct{} { return c.done }

func (c *flipCtx) Err() error {
	if c.n > 0 {
		c.n--
		return nil
	}
	return context.Canceled
}

// A width search stopped during its last width's trial says it stopped
// (an error wrapping context.Canceled), not that no width meets, whatever
// the point at which the stop lands; not stopped, it finds the width.
func TestWidthSearchStoppedIsStop(t *testing.T) {
	taps := kaiserLowpass(41, 0.17, 1, 6)
	bands := lowpassBands(0.1, 0.25, 1, 0.05, 0.05)
	if _, _, err := MinCoefBits(taps, 1, bands, QuantSettings{ctx: context.Background(), MinBits: 30, MaxBits: 30}); err != nil {
		t.Fatalf("not stopped: %v", err)
	}
	for n := 1; n < 6; n++ {
		_, _, err := MinCoefBits(taps, 1, bands, QuantSettings{ctx: newFlipCtx(n), MinBits: 30, MaxBits: 30})
		if err != nil && !errors.Is(err, context.Canceled) {
			t.Errorf("stopped after %d looks: %v, want nil or a stop", n, err)
		}
	}
}

// A measurement cancelled part way (by its own band's gain function, at
// its first use) returns the stop, and what the next measurement of the
// same filter gives is the full figures: nothing half-measured is kept.
func TestDeviationsCancelledPartWay(t *testing.T) {
	c := randomDevCases(t, 80, 1, 2*boundMinTaps, 2*boundMinTaps+1)[0]
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	bands := slices.Clone(c.bands)
	g := bands[0].Gain
	bands[0].GainFunc = func(float64) float64 { cancel(); return g }
	if _, err := DeviationsContext(ctx, c.h, c.rate, bands, 16); !errors.Is(err, context.Canceled) {
		t.Fatalf("cancelled part way: %v, want context.Canceled", err)
	}
	bands[0].GainFunc = func(float64) float64 { return g }
	want := deviations(c.h, c.rate, bands, 16, true, nil)
	got := Deviations(c.h, c.rate, bands, 16)
	for b := range want {
		if math.Float64bits(got[b]) != math.Float64bits(want[b]) {
			t.Errorf("band %d after a cancelled measurement: %v, want %v", b, got[b], want[b])
		}
	}
}
