package fixed

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// For a decimation cascade, the in-band gain bound is the whole quantised
// chain's response (chain.Chain.Gain, another path to the same figure)
// scaled to full scale by the planned DC gain, and gainModel.peak finds its
// largest value over the passband within 1e-6 of a brute-force scan of
// 20000 points. Seeded random CIC + FIR cascades.
func TestGainBoundAgainstChain(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 9))
	for trial := 0; trial < 16; trial++ {
		c, words := randomAliasChain(rng)
		w, err := Plan(c, words, Settings{UnityGain: trial%2 == 0})
		if err != nil {
			t.Fatal(err)
		}
		q, _ := cascadeChain(c, w, true)
		last := len(c.Stages) - 1
		gm := newGainModel(c, w)
		brute := 0.0
		for k := 0; k <= 20000; k++ {
			f := c.Passband * float64(k) / 20000
			want := q.Gain(f) / q.Gain(0) * w.DCGain
			got := gm.at(last, f)
			if math.Abs(got-want) > 1e-9*want {
				t.Fatalf("trial %d, %g Hz: the bound %.12g, the chain's response %.12g", trial, f, got, want)
			}
			brute = math.Max(brute, got)
		}
		_, peak, _ := gm.peak(context.Background(), c, last)
		if peak < brute*(1-1e-6) {
			t.Errorf("trial %d: the peak search %.9g below the scan's %.9g", trial, peak, brute)
		}
	}
}

// With words.unity_gain the chain's passband ripple lifts an input tone
// of full scale above the output's largest code at the ripple's peaks: the
// last stage says so in a headroom point.
func TestHeadroomPointUnityGain(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 10))
	seen := 0
	for trial := 0; trial < 8; trial++ {
		c, words := randomAliasChain(rng)
		w, err := Plan(c, words, Settings{UnityGain: true})
		if err != nil {
			t.Fatal(err)
		}
		if err := headroomPoints(context.Background(), c, w); err != nil {
			t.Fatal(err)
		}
		last := len(w.Stages) - 1
		_, peak, _ := newGainModel(c, w).peak(context.Background(), c, last)
		has := false
		for _, p := range w.Stages[last].Points {
			has = has || strings.HasPrefix(p, "headroom:")
		}
		// The largest code less two LSBs for the rounding (headroomPoints).
		top := 1 - 3*math.Ldexp(1, 1-w.Stages[last].OutputBits)
		in := 1 - math.Ldexp(1, 1-w.InputBits)
		if has != (peak*in > top) {
			t.Errorf("trial %d: peak %.9g, largest code %.9g, headroom point %v", trial, peak, top, has)
		}
		if has {
			seen++
		}
	}
	if seen == 0 {
		t.Error("no chain had a headroom point: the test checks nothing")
	}
}

// Plan refuses a clock under which a stage would take more than
// chain.MaxLanes samples a cycle (its registers and multipliers counted
// from the lanes wrapped past an int at 1e-30 Hz), and takes the least one.
func TestPlanRefusesTinyClock(t *testing.T) {
	c := testCascade()
	if _, err := Plan(c, Words{}, Settings{Clock: 1e-30}); err == nil || !strings.Contains(err.Error(), "Clock") || !strings.Contains(err.Error(), "at least") {
		t.Errorf("clock 1e-30 Hz: err = %v", err)
	}
	if _, err := Plan(c, Words{}, Settings{Clock: c.InputRate / 65536}); err != nil {
		t.Errorf("clock of the input rate / 65536: err = %v", err)
	}
}

// A cascade with a fractional stage gets no passband headroom point, and its
// bound is the gain at 0 Hz: the model does not follow a fractional
// stage's paths (a review found it 14 dB high on a polyphase interpolator
// and 0.25 dB low where a prototype lifts the band). Seeded interpolation
// chains with a polyphase or a Farrow stage.
func TestHeadroomFractionalLeftOut(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 2))
	for trial := 0; trial < 4; trial++ {
		_, _, cas, res := plannedFracInterp(t, rng, trial%2 == 1)
		w := res.Widths
		for i := range w.Stages {
			if got := newGainModel(cas, w).at(i, 0.7*cas.Passband); got != prefixGain(w, i) {
				t.Errorf("trial %d, stage %d: bound %g, the gain at 0 Hz %g", trial, i+1, got, prefixGain(w, i))
			}
			for _, p := range w.Stages[i].Points {
				// The fractional stage's own point on its phases' gains
				// stays; the passband bound's is left out.
				if strings.HasPrefix(p, "headroom:") && strings.Contains(p, "can peak at") {
					t.Errorf("trial %d, stage %d: %s", trial, i+1, p)
				}
			}
		}
	}
}

// An interpolator's DC input: its images at k F_in are lines of twice the
// DC line's amplitude, but the one at the output's Nyquist rate is alone
// (a review found it counted twice). A 2-phase interpolator of taps
// [1/2, 1, 1/2]: its zero-stuffed DC input gives 1 at every output, so
// the peak is exactly the DC gain, while the line sum counts DC (1) and
// the Nyquist line (|H(Fs/2)| / |H(0)| = 0).
func TestHeadroomNyquistLineOnce(t *testing.T) {
	c := Cascade{InputRate: 1e6, Passband: 1e5, Interpolate: true, Stages: []Stage{
		{R: 2, Interpolate: true, Taps: []float64{0.5, 1, 0.5}, Bands: lowpassBands(1e5, 4e5, 2e6, 0.05, 1e-3)},
	}}
	w, err := Plan(c, Words{InputBits: 16, OutputBits: 16, CoefBits: 16}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := newGainModel(c, w).at(0, 0), prefixGain(w, 0); math.Abs(got-want) > 1e-12 {
		t.Errorf("DC bound %.15g, want the DC gain %.15g", got, want)
	}
}

// Words too narrow for the rounding margin, and a 1-bit input, give no
// point and no NaN.
func TestHeadroomNarrowWords(t *testing.T) {
	c, _ := randomAliasChain(rand.New(rand.NewPCG(43, 3)))
	for _, words := range []Words{{InputBits: 16, OutputBits: 2, DataBits: 2, CoefBits: 12}, {InputBits: 1, OutputBits: 16, CoefBits: 12}} {
		w, err := Plan(c, words, Settings{UnityGain: true})
		if err != nil {
			t.Fatal(err)
		}
		if err := headroomPoints(context.Background(), c, w); err != nil {
			t.Fatal(err)
		}
		for i := range w.Stages {
			for _, p := range w.Stages[i].Points {
				if strings.Contains(p, "NaN") || (words.InputBits == 1 && strings.HasPrefix(p, "headroom:")) {
					t.Errorf("%+v, stage %d: %s", words, i+1, p)
				}
			}
		}
	}
}

// The bound against the integer data path (Model, independent of the
// bound's arithmetic): interpolation chains whose compensator comes before
// its CIC, driven by a tone at 41 frequencies over [0, fa] and two phases,
// at a level that keeps every stage clear of saturation; each stage's
// measured peak, in its full scale, stays within the bound at that
// frequency times the level, plus four output LSBs for the rounding.
func TestHeadroomBoundAgainstModel(t *testing.T) {
	for _, tc := range []struct {
		notation string
		fin, fp  float64
	}{
		{"fir2 > cic5m2r16", 2.5e6, 1e6},
		{"fir4 > cic4m1r8", 1e6, 300e3},
		{"fir3 > hb > cic3m1r10", 1e6, 150e3},
	} {
		_, _, cas, words, w := plannedInterp(t, tc.notation, tc.fin, tc.fp)
		for _, lines := range []int{maxImageLines, 2} {
			headroomAgainstModel(t, tc.notation, tc.fin, cas, words, w, lines)
		}
	}
}

// headroomAgainstModel is TestHeadroomBoundAgainstModel on one cascade,
// its CICs' images summed up to lines and bounded beyond (cicTail and the
// positive taps' bound, which lines = 2 forces where the full sum is
// cheap enough to make).
func headroomAgainstModel(t *testing.T, notation string, fin float64, cas Cascade, words Words, w *Widths, lines int) {
	gm := newGainModel(cas, w)
	gm.lines = lines
	fa := cas.protectedEdge()
	level := 0.5 / gm.maxGainAt(fa) // the band's edge lifts most
	for k := 0; k <= 40; k++ {
		level = math.Min(level, 0.5/gm.maxGainAt(fa*float64(k)/40))
	}
	inMax := math.Ldexp(1, words.InputBits-1)
	tight := 0.0 // the largest measured peak over its bound
	for k := 0; k <= 40; k++ {
		f := fa * float64(k) / 40
		for _, phase := range []float64{0, math.Pi / 3} {
			x := make([]int64, 4096)
			for n := range x {
				x[n] = int64(math.Round(level * (inMax - 1) * math.Cos(2*math.Pi*f/fin*float64(n)+phase)))
			}
			m, err := NewModel(cas, w)
			if err != nil {
				t.Fatal(err)
			}
			outs, err := m.Run(x)
			if err != nil {
				t.Fatal(err)
			}
			for i, y := range outs {
				fs := math.Ldexp(1, w.Stages[i].OutputBits-1)
				peak := 0.0
				for _, v := range y[len(y)/4:] { // after the transients
					peak = math.Max(peak, math.Abs(float64(v)))
				}
				if bound := gm.at(i, f)*level + 4/fs; peak/fs > bound {
					t.Errorf("%s, stage %d, %.0f Hz: measured peak %.6f of full scale, bound %.6f", notation, i+1, f, peak/fs, bound)
				}
				tight = math.Max(tight, peak/fs/(gm.at(i, f)*level))
			}
		}
	}
	// A bound far above every peak would pass whatever it said.
	if tight < 0.95 {
		t.Errorf("%s, images summed up to %d: the peaks reach at most %.3f of the bound: the test checks little", notation, lines, tight)
	}
	t.Logf("%s, images summed up to %d: the peaks reach %.4f of the bound", notation, lines, tight)
}

// headroomPoints stops when its context is done: the peak search looks at
// it at every point of its search, and at itself every haltCheckEvery
// stage magnitudes or image lines.
func TestHeadroomStops(t *testing.T) {
	spec, ch, cas, _, w := plannedInterp(t, "fir2 > cic5m2r16", 2.5e6, 1e6)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if err := headroomPoints(ctx, cas, w); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: %v, want context.Canceled", err)
	}
	if _, err := EvaluateContext(ctx, spec, ch, Settings{}, Signal{}); !errors.Is(err, context.Canceled) {
		t.Errorf("Evaluate cancelled: %v, want context.Canceled", err)
	}
	// Once halted, at returns at once (0, which peak never reports).
	m := newGainModel(cas, w)
	if g := m.at(1, 1e5); !(g > 0) {
		t.Fatalf("at = %v before the halt", g)
	}
	m.halt = new(atomic.Bool)
	m.halt.Store(true)
	if g := m.at(1, 1e5); g != 0 {
		t.Errorf("at = %v after the halt, want 0", g)
	}
	if _, _, err := m.peak(ctx, cas, 1); !errors.Is(err, context.Canceled) {
		t.Errorf("peak after the halt: %v, want context.Canceled", err)
	}
}

// plannedInterp is designedInterp's chain with 16-bit words, as package
// fixed's cascade, its words and its plan.
func plannedInterp(t *testing.T, notation string, fin, fp float64) (chain.Spec, *chain.Chain, Cascade, Words, *Widths) {
	t.Helper()
	spec, ch := designedInterp(t, notation, fin, fp, 16, 16)
	cas, words, err := FromChain(spec, ch)
	if err != nil {
		t.Fatal(err)
	}
	w, err := Plan(cas, words, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	return spec, ch, cas, words, w
}
