package fixed

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// For a decimation cascade, the in-band gain bound is the whole quantised
// chain's response (chain.Chain.Gain, another path to the same figure)
// scaled to full scale by the planned DC gain, and passbandPeak finds its
// largest value over the passband within 1e-6 of a brute-force scan of
// 20000 points. Seeded random CIC + FIR cascades.
func TestPrefixGainAtAgainstChain(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 9))
	for trial := 0; trial < 16; trial++ {
		c, words := randomAliasChain(rng)
		w, err := Plan(c, words, Settings{UnityGain: trial%2 == 0})
		if err != nil {
			t.Fatal(err)
		}
		q, _ := cascadeChain(c, w, true)
		last := len(c.Stages) - 1
		brute := 0.0
		for k := 0; k <= 20000; k++ {
			f := c.Passband * float64(k) / 20000
			want := q.Gain(f) / q.Gain(0) * w.DCGain
			got := prefixGainAt(c, w, last, f)
			if math.Abs(got-want) > 1e-9*want {
				t.Fatalf("trial %d, %g Hz: prefixGainAt %.12g, the chain's response %.12g", trial, f, got, want)
			}
			brute = math.Max(brute, got)
		}
		_, peak := passbandPeak(c, w, last)
		if peak < brute*(1-1e-6) {
			t.Errorf("trial %d: passbandPeak %.9g below the scan's %.9g", trial, peak, brute)
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
		headroomPoints(c, w)
		last := len(w.Stages) - 1
		_, peak := passbandPeak(c, w, last)
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
