package fixed

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// The chains run a block at a time must give the same samples, bit for bit,
// whatever the block boundaries: blocks of irregular sizes (1 to 3000
// samples, across every stage's decimation phase) against one block.
func TestStreamBlocksAgree(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 14, OutputBits: 20}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 7))
	x := make([]float64, 40000)
	for i := range x {
		x[i] = 0.9 * (2*rng.Float64() - 1)
	}
	whole := newChainState(c, w)
	wi, wf := whole.run(x)
	wi, wf = append([]float64(nil), wi...), append([]float64(nil), wf...)
	split := newChainState(c, w)
	var si, sf []float64
	for n := 0; n < len(x); {
		k := min(len(x)-n, 1+rng.IntN(3000))
		bi, bf := split.run(x[n : n+k])
		si, sf = append(si, bi...), append(sf, bf...)
		n += k
	}
	if len(si) != len(wi) || len(sf) != len(wf) {
		t.Fatalf("split run gave %d/%d outputs, whole run %d/%d", len(si), len(sf), len(wi), len(wf))
	}
	for i := range wi {
		if si[i] != wi[i] || sf[i] != wf[i] {
			t.Fatalf("output %d: split (%v, %v), whole (%v, %v)", i, si[i], sf[i], wi[i], wf[i])
		}
	}
	if split.inErr != whole.inErr || split.clipped != whole.clipped {
		t.Errorf("input figures differ: split %v/%d, whole %v/%d", split.inErr, split.clipped, whole.inErr, whole.clipped)
	}
}

// The bit-true run streams: a run of a million input samples allocates a
// few blocks and its output windows (about 4.5 MB here), not the signal,
// which took over 32 bytes an input sample (two runs, the float signal and
// its integer codes; 277 MB for one chain at D = 65536) when it was held
// whole.
func TestBitTrueStreams(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 16, OutputBits: 24}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	// An explicit alias frequency keeps chain.Analyze (and its own
	// allocations) out of the measurement.
	r, err := BitTrue(c, w, Signal{Samples: 32768, AliasHz: 410e3})
	runtime.ReadMemStats(&after)
	if err != nil {
		t.Fatal(err)
	}
	alloc := after.TotalAlloc - before.TotalAlloc
	perSample := float64(alloc) / float64(r.InputSamples)
	t.Logf("%d input samples, %d bytes allocated (%.2f a sample)", r.InputSamples, alloc, perSample)
	if r.InputSamples < 1<<20 || alloc > 8<<20 {
		t.Errorf("%d input samples allocated %d bytes (%.2f a sample); want at least 2^20 samples and at most 8 MB", r.InputSamples, alloc, perSample)
	}
}

func TestBitTrueContextCancelled(t *testing.T) {
	c := testCascade()
	w, err := Plan(c, Words{InputBits: 16, OutputBits: 24}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := BitTrueContext(ctx, c, w, Signal{}); !errors.Is(err, context.Canceled) {
		t.Errorf("BitTrueContext with a cancelled context: err = %v, want context.Canceled", err)
	}
}

func TestEvaluateContextCancelled(t *testing.T) {
	spec := chain.Spec{InputRate: 64e6, OutputRate: 2e6, Passband: 300e3, RippleDB: 0.1, RejectionDB: 70}
	plan, err := chain.ParseNotation("cic4m1r8 > fir4")
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, _, err := PlanChainContext(ctx, spec, c, Settings{}); !errors.Is(err, context.Canceled) {
		t.Errorf("PlanChainContext with a cancelled context: err = %v, want context.Canceled", err)
	}
	if r, err := EvaluateContext(ctx, spec, c, Settings{}, Signal{}); r != nil || !errors.Is(err, context.Canceled) {
		t.Errorf("EvaluateContext with a cancelled context: %v, err = %v, want no result and context.Canceled", r, err)
	}
}

// TestToneExact checks the rotated tone against math.Cos sample by sample
// (within 1e-13 of the amplitude plus what rounding the argument w n +
// phase to float64 already costs math.Cos, a few of its ulps) and that a tone made in blocks of any
// split equals the tone made whole, bit for bit, on seeded random cases.
func TestToneExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for c := 0; c < 200; c++ {
		w := math.Pi * rng.Float64()
		a, phase := rng.Float64(), 2*math.Pi*rng.Float64()
		n0 := rng.IntN(1 << 24)
		whole := make([]float64, 500)
		tone(whole, n0, w, a, phase)
		for i, v := range whole {
			arg := w*float64(n0+i) + phase
			tol := a * (1e-13 + 8*arg*0x1p-52)
			if want := a * math.Cos(arg); math.Abs(v-want) > tol {
				t.Fatalf("case %d: sample %d = %v, math.Cos gives %v", c, n0+i, v, want)
			}
		}
		parts := make([]float64, len(whole))
		for i := 0; i < len(parts); {
			k := min(len(parts)-i, 1+rng.IntN(150))
			tone(parts[i:i+k], n0+i, w, a, phase)
			i += k
		}
		for i := range whole {
			if parts[i] != whole[i] {
				t.Fatalf("case %d: sample %d differs made in blocks: %v vs %v", c, n0+i, parts[i], whole[i])
			}
		}
	}
}

// toneSerial is tone one anchored stretch at a time (its definition).
func toneSerial(x []float64, n0 int, w, a, phase float64) {
	sw, cw := math.Sincos(w)
	for i := 0; i < len(x); {
		n := n0 + i
		anchor := n - n%toneAnchor
		s, c := math.Sincos(w*float64(anchor) + phase)
		for k := anchor; k < n; k++ {
			c, s = float64(c*cw)-float64(s*sw), float64(s*cw)+float64(c*sw)
		}
		end := min(len(x), i+toneAnchor-(n-anchor))
		for ; i < end; i++ {
			x[i] += float64(a * c)
			c, s = float64(c*cw)-float64(s*sw), float64(s*cw)+float64(c*sw)
		}
	}
}

// tone, which rotates four stretches at once where it can, is toneSerial
// bit for bit on 300 seeded random tones, starts and lengths.
func TestToneAsSerial(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 12))
	for c := 0; c < 300; c++ {
		w := math.Pi * rng.Float64()
		a, phase := rng.Float64(), 2*math.Pi*rng.Float64()
		n0 := rng.IntN(1 << 24)
		got := make([]float64, rng.IntN(3000))
		want := make([]float64, len(got))
		for i := range got {
			got[i] = rng.NormFloat64()
			want[i] = got[i]
		}
		tone(got, n0, w, a, phase)
		toneSerial(want, n0, w, a, phase)
		if !slices.Equal(got, want) {
			t.Fatalf("case %d (n0 = %d, %d samples): tone differs from one stretch at a time", c, n0, len(got))
		}
	}
}
