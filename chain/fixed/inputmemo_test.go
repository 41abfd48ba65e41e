package fixed

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"sync"
	"testing"
)

// memoGroup is a seeded invented receiver: input rate, decimation,
// passband and input word, which every cascade of the group shares (as a
// plan's front does).
type memoGroup struct {
	rate, fp  float64
	dec, bits int
}

func randomMemoGroup(rng *rand.Rand) memoGroup {
	dec := []int{24, 36, 48, 60}[rng.IntN(4)]
	rate := 1e6 * float64(1+rng.IntN(100))
	return memoGroup{rate: rate, dec: dec, fp: rate / float64(dec) * (0.05 + 0.3*rng.Float64()), bits: 6 + rng.IntN(14)}
}

// randomMemoCascade is a seeded invented cascade of g (a CIC and a FIR
// after it, the split drawn) with its widths.
func randomMemoCascade(t *testing.T, rng *rand.Rand, g memoGroup) (Cascade, *Widths) {
	t.Helper()
	d := []int{2, 3, 4}[rng.IntN(3)]
	for g.dec%d != 0 {
		d--
	}
	r := g.dec / d
	mid := g.rate / float64(r)
	fk := mid / float64(d)
	fir := kaiserLowpass(21+2*rng.IntN(20), (g.fp+fk/2)/2, mid, 8)
	c := Cascade{InputRate: g.rate, Passband: g.fp, Stages: []Stage{
		{CIC: true, N: 2 + rng.IntN(5), M: 1 + rng.IntN(2), R: r},
		{R: d, Taps: fir, Bands: lowpassBands(g.fp, fk-g.fp, mid, 1e-2, 1e-4)},
	}}
	w, err := Plan(c, Words{InputBits: g.bits, OutputBits: 16 + rng.IntN(10)}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	return c, w
}

// A memo changes nothing a run measures: on seeded invented cascades that
// share one signal (and some that do not), the runs with one memo, eight
// at a time, give results equal to their runs without it, every field bit
// for bit. Some signals have no noise, some
// several tones; TestInputMemoView covers the block boundaries.
func TestInputMemoSameResults(t *testing.T) {
	cases := memoRunCases(t)
	for k := range cases {
		want, err := BitTrue(cases[k].c, cases[k].w, cases[k].sig)
		if err != nil {
			t.Fatalf("case %d: %v", k, err)
		}
		cases[k].want = want
	}
	memo := new(InputMemo)
	got := make([]BitTrueResult, len(cases))
	errs := make([]error, len(cases))
	var wg sync.WaitGroup
	sem := make(chan struct{}, 8)
	for k := range cases {
		wg.Add(1)
		sem <- struct{}{}
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			sig := cases[k].sig
			sig.Inputs = memo
			got[k], errs[k] = BitTrue(cases[k].c, cases[k].w, sig)
		}()
	}
	wg.Wait()
	for k, tc := range cases {
		if errs[k] != nil {
			t.Fatalf("case %d with the memo: %v", k, errs[k])
		}
		if !reflect.DeepEqual(got[k], tc.want) {
			t.Errorf("case %d (%v, %d input samples): with the memo\n%+v\nwithout\n%+v", k, tc.c.Stages[0], tc.want.InputSamples, got[k], tc.want)
		}
	}
	t.Logf("%d runs, %d signals held", len(cases), len(memo.signals))
	if len(memo.signals) < 2 || len(memo.signals) >= len(cases) {
		t.Errorf("the memo held %d signals for %d runs: want some shared, some not", len(memo.signals), len(cases))
	}
	if memo.held > memoSamples {
		t.Errorf("the memo holds room for %d samples, more than its bound %d", memo.held, memoSamples)
	}
}

// Evaluate passes Settings.Inputs on: a fractional chain (its tones on
// whole periods of the output phases) measures the same with it.
func TestInputMemoEvaluate(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	memo := new(InputMemo)
	for k := range 4 {
		spec, c := randomFracChain(rng, k%2 == 1)
		if c == nil {
			continue
		}
		want, err := Evaluate(spec, c, Settings{}, Signal{})
		if err != nil {
			t.Fatal(err)
		}
		for range 2 { // the second run takes the held input
			got, err := Evaluate(spec, c, Settings{Inputs: memo}, Signal{})
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got.BitTrue, want.BitTrue) || fmt.Sprint(got.BitTrueErr) != fmt.Sprint(want.BitTrueErr) {
				t.Errorf("chain %d: with the memo %+v (%v), without %+v (%v)", k, got.BitTrue, got.BitTrueErr, want.BitTrue, want.BitTrueErr)
			}
		}
	}
	if len(memo.signals) == 0 {
		t.Error("no fractional chain's input was held")
	}
}

// A run longer than the memo's bound makes its own input and leaves the
// memo empty.
func TestInputMemoBound(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 12, OutputBits: 20}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	memo := new(InputMemo)
	// 2^22 input samples and more: 32 decimation, 2^17 output samples.
	want, err := BitTrue(c, w, Signal{Samples: 1 << 17, AliasHz: 410e3})
	if err != nil {
		t.Fatal(err)
	}
	got, err := BitTrue(c, w, Signal{Samples: 1 << 17, AliasHz: 410e3, Inputs: memo})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("with the memo %+v, without %+v", got, want)
	}
	if want.InputSamples <= memoSamples || memo.held != 0 || len(memo.signals) != 0 {
		t.Errorf("%d input samples: the memo holds room for %d samples of %d signals; want none", want.InputSamples, memo.held, len(memo.signals))
	}
}

// The memo's view of the first n samples is what a run would make of them
// itself, a block at a time: samples, codes, sums, clip count and the
// generator's state after, for n on block boundaries, either side of them
// and within the first block, with noise and without, with clipping (a
// tone above full scale).
func TestInputMemoView(t *testing.T) {
	for _, sigma := range []float64{0, 1e-3} {
		memo := new(InputMemo)
		tones := []toneGen{{f: 1234.5, a: 1.2, phase: 0.3}, {f: 77, a: 0.01, phase: 2}}
		for _, n := range []int{1, 1000, blockSamples - 1, blockSamples, blockSamples + 1, 3 * blockSamples, 2*blockSamples + 17} {
			pcg := rand.NewPCG(9, 9)
			in := memo.input(context.Background(), pcg, tones, sigma, 1e5, 10, n)
			if in == nil {
				t.Fatalf("sigma %g, n %d: no input", sigma, n)
			}
			ref := rand.NewPCG(9, 9)
			gen := signalGen(tones, sigma, rand.New(ref), 1e5)
			var x []float64
			var codes []int64
			clipped := 0
			for n0 := 0; n0 < n; n0 += blockSamples {
				b := make([]float64, min(blockSamples, n-n0))
				gen(b, n0)
				q := make([]int64, len(b))
				clipped += ADC(q, b, 10)
				x, codes = append(x, b...), append(codes, q...)
			}
			var pow, errSum float64
			for k, q := range codes {
				e := float64(q)/512 - x[k]
				errSum += e * e
				pow += x[k] * x[k]
			}
			state, _ := ref.MarshalBinary()
			if !reflect.DeepEqual(in.x, x) || !reflect.DeepEqual(in.codes, codes) {
				t.Errorf("sigma %g, n %d: samples or codes differ", sigma, n)
			}
			if in.inPow != pow || in.inErr != errSum || in.clipped != clipped || string(in.state) != string(state) {
				t.Errorf("sigma %g, n %d: sums %v %v, clipped %d; want %v %v, %d; state same: %v", sigma, n, in.inPow, in.inErr, in.clipped, pow, errSum, clipped, string(in.state) == string(state))
			}
			if clipped == 0 {
				t.Errorf("sigma %g, n %d: nothing clipped; the test wants some", sigma, n)
			}
		}
		if len(memo.signals) != 1 {
			t.Errorf("sigma %g: %d signals held, want 1", sigma, len(memo.signals))
		}
	}
}

// memoRun is one of memoRunCases' runs: a cascade, its widths and a
// signal, and what BitTrue gave for them alone.
type memoRun struct {
	c    Cascade
	w    *Widths
	sig  Signal
	want BitTrueResult
}

// memoRunCases returns 40 seeded random runs, four a group of cascades
// sharing an input (randomMemoGroup), with short and default windows,
// without noise, and with two tones of their own.
func memoRunCases(t *testing.T) []memoRun {
	rng := rand.New(rand.NewPCG(11, 23))
	var cases []memoRun
	var g memoGroup
	var samples int
	for k := range 40 {
		if k%4 == 0 {
			g, samples = randomMemoGroup(rng), 64<<rng.IntN(4)
		}
		c, w := randomMemoCascade(t, rng, g)
		sig := Signal{Seed: uint64(1 + k%4/3), Samples: samples}
		switch k / 4 % 5 {
		case 1:
			sig.NoiseDBFS = math.Inf(-1)
		case 2:
			fk := c.ChannelRate()
			sig.Tones = []Tone{{Freq: 0.1 * fk, Level: -10}, {Freq: 0.2 * fk, Level: -12}}
		case 3:
			sig.Samples = 0 // the default window
		}
		cases = append(cases, memoRun{c: c, w: w, sig: sig})
	}
	return cases
}
