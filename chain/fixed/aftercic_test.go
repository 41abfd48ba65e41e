package fixed

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// Chains whose polyphase stage follows the CIC (chain package, Fractional
// stages, After the CIC): cic > poly<L>/<M> > FIR stages.

// randomAfterCICChain designs a seeded invented chain whose polyphase
// stage follows a CIC, with one FIR (or a half-band and a FIR) after it,
// decimating or, with interp, its transpose interpolating. Words are drawn
// too. It returns nil when the draw cannot be designed.
func randomAfterCICChain(rng *rand.Rand, interp bool) (chain.Spec, *chain.Chain) {
	for range 200 {
		r := 2 + rng.IntN(6)
		up := 2 + rng.IntN(14)
		down := up + 1 + rng.IntN(up)
		db := 2 + rng.IntN(3)
		if fracGcd(up, down) != 1 || fracGcd(db, up) != 1 {
			continue
		}
		num, den := r*down*db, up
		if g := fracGcd(num, den); g != 1 {
			num, den = num/g, den/g
		}
		f1 := 1 / float64(r)
		fk := f1 * float64(up) / float64(down) / float64(db)
		fp := fk * (0.05 + 0.25*rng.Float64())
		fa := fp + (fk/2-fp)*0.5*rng.Float64()
		spec := chain.Spec{InputRate: 1, OutputRate: float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 30*rng.Float64(), Complex: rng.IntN(2) == 0,
			InputBits: 8 + rng.IntN(10), OutputBits: 12 + rng.IntN(12)}
		if interp {
			spec.InputRate, spec.OutputRate = spec.OutputRate, spec.InputRate
		}
		ns, err := spec.Normalize()
		if err != nil {
			continue
		}
		if p, q := ns.DecimationView().Fraction(); p != num || q != den {
			continue
		}
		plan := []chain.StagePlan{{Kind: chain.CIC, Factor: r, CICOrder: 4 + rng.IntN(3), CICDelay: 1}, {Kind: chain.Polyphase, Factor: 1, Up: up, Down: down}}
		if db == 4 && rng.IntN(2) == 0 {
			plan = append(plan, chain.StagePlan{Kind: chain.HalfBand, Factor: 2}, chain.StagePlan{Kind: chain.FIR, Factor: 2})
		} else {
			plan = append(plan, chain.StagePlan{Kind: chain.FIR, Factor: db})
		}
		c, err := chain.Design(spec, plan, chain.Settings{MaxTaps: 300})
		if err != nil {
			continue
		}
		return spec, c
	}
	return chain.Spec{}, nil
}

// cicGainRef is a CIC's gain at f Hz, rate its input rate, relative to its
// gain at 0 Hz: |sin(pi f R M / rate) / (R M sin(pi f / rate))|^N
// (Hogenauer's response, the handbook formula).
func cicGainRef(n, m, r int, f, rate float64) float64 {
	x := math.Pi * f / rate
	s := math.Sin(x)
	if math.Abs(s) < 1e-300 {
		return 1
	}
	return math.Pow(math.Abs(math.Sin(x*float64(r*m))/(float64(r*m)*s)), float64(n))
}

// bruteAfterCICRejection scans every path of a quantised chain whose
// polyphase stage follows its CIC (its decimation view q) with gains of
// its own: the CIC by cicGainRef, the prototype and the FIRs by their
// transforms summed term by term. Path k of a tone at g has gain
// C(g) |P(g + k F1)| T(g + k F1), T the FIRs after it; it lands at
// fold(g + k F1 mod FK). Each landing band in [0, fa] (the tone itself
// left out) is scanned at 64 points and refined by golden section at its
// best; a real chain's paths that land together are summed by where they
// land at every multiple of F1 / (2 M Db) (the only input frequencies
// where two meet), and a real interpolation chain's images of a DC input
// count twice. It returns the worst over the gain at 0 Hz, in dB.
func bruteAfterCICRejection(q *chain.Chain, fa float64) float64 {
	rates := q.Rates()
	cic := q.Stages[0].(chain.CICStage)
	pp := q.Stages[1].(chain.PolyphaseStage)
	f0, f1, fk := rates[0], rates[1], rates[len(rates)-1]
	prate := f1 * float64(pp.Up)
	a := func(g float64) float64 { return cicGainRef(cic.N, cic.M, cic.R, g, f0) }
	tail := func(h float64) float64 {
		v := 1.0
		for i, s := range q.Stages[2:] {
			v *= dtft(s.(chain.FIRStage).Taps, h, rates[2+i])
		}
		return v
	}
	path := func(g float64, k int) float64 {
		h := g + float64(k)*f1
		return a(g) * dtft(pp.Taps, h, prate) * tail(h)
	}
	fold := func(f float64) float64 {
		f = math.Mod(f, fk)
		return math.Min(f, fk-f)
	}
	f0h := f0 / 2
	worst := 0.0
	for k := range pp.Up {
		shift := float64(k) * f1
		for nn := int(math.Floor((shift - fa) / fk)); float64(nn)*fk-shift-fa <= f0h; nn++ {
			c := float64(nn)*fk - shift
			lo, hi := math.Max(0, c-fa), math.Min(f0h, c+fa)
			if (k == 0 && nn == 0) || hi < lo {
				continue
			}
			worst = math.Max(worst, scanBand(func(g float64) float64 { return path(g, k) }, lo, hi))
		}
	}
	if !q.Complex {
		db := 1
		for _, s := range q.Stages[2:] {
			db *= s.Factor()
		}
		step := f1 / float64(2*pp.Down*db)
		for j := 0; float64(j)*step <= f0h; j++ {
			g := float64(j) * step
			land := map[int64]float64{}
			for k := range pp.Up {
				y := fold(g + float64(k)*f1)
				if (k == 0 && g <= fa) || y > fa*(1+1e-12) {
					continue
				}
				land[int64(math.Round(y/fk*1e8))] += path(g, k)
			}
			for _, v := range land {
				worst = math.Max(worst, v)
			}
		}
	}
	if q.Direction == chain.Interpolate && !q.Complex {
		// A real interpolation chain's DC input is one component: its
		// images (the inputs g = n FK - k F1 of path k, below F0/2) come
		// out with their mirrors at twice the path.
		for k := range pp.Up {
			for n := 0; float64(n)*fk-float64(k)*f1 < f0h; n++ {
				if g := float64(n)*fk - float64(k)*f1; g > 0 && g < f0h*(1-1e-12) {
					worst = math.Max(worst, 2*path(g, k))
				}
			}
		}
	}
	return -20 * math.Log10(worst/path(0, 0))
}

// TestAfterCICWordLengths plans seeded random chains whose polyphase stage
// follows the CIC, decimating and interpolating: the quantised chain's
// rejection (chain.Analyze) is held to bruteAfterCICRejection, never
// optimistic and at most 0.02 dB below; the bit-true alias (image) tone
// to the quantised response within what the noise in its bin can move it,
// where the noise leaves it valid;
// the bit-true SNR is a figure.
func TestAfterCICWordLengths(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 31))
	worstGap, worstTone, checked := 0.0, 0.0, 0
	for i := range fracCases(6, 40) {
		interp := i%3 == 2
		spec, c := randomAfterCICChain(rng, interp)
		if c == nil {
			t.Fatal("no random chain")
		}
		name := c.Direction.Notation(c.Plan)
		res, err := Evaluate(spec, c, Settings{}, Signal{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		fa := spec.Protected
		if fa == 0 {
			fa = spec.Passband
		}
		ref := bruteAfterCICRejection(QuantisedChain(c, res.Widths), fa)
		gap := ref - res.Quantised.AliasRejectionDB
		if gap < -1e-6 || gap > 0.02 {
			t.Errorf("%s: Analyze of the quantised chain %.4f dB, the dense scan %.4f dB", name, res.Quantised.AliasRejectionDB, ref)
		}
		worstGap = math.Max(worstGap, gap)
		if res.BitTrueErr != nil {
			t.Fatalf("%s: %v", name, res.BitTrueErr)
		}
		bt := res.BitTrue
		if math.IsNaN(bt.SNRDB) || bt.SNRDB < 20 {
			t.Errorf("%s: bit-true SNR %.2f dB", name, bt.SNRDB)
		}
		if bt.AliasValid {
			// The noise in the alias's bin, AliasNoiseDB (at least 20 dB
			// under the alias when valid), moves the measurement: by up to
			// 20 log10(1 + 3 r) dB for noise three times its RMS at the
			// ratio r (a Rayleigh tail; one draw of 40 came out 1.04 dB
			// off at 21.6 dB of margin).
			r := math.Pow(10, -(bt.AliasNoiseDB-bt.AliasResponseDB)/20)
			d := math.Abs(bt.AliasRejectionDB - bt.AliasResponseDB)
			if d > 20*math.Log10(1+3*r)+0.1 {
				t.Errorf("%s: bit-true alias %.2f dB at %g Hz, the quantised response %.2f dB", name, bt.AliasRejectionDB, bt.AliasHz, bt.AliasResponseDB)
			}
			worstTone = math.Max(worstTone, d)
			checked++
		}
		t.Logf("%s (complex %v): rounded %.3f dB (scan %.3f), bit-true SNR %.1f dB, alias %.2f dB (float run %.2f, response %.2f, noise %.1f, valid %v, %d samples)", name, c.Complex, res.Quantised.AliasRejectionDB, ref, bt.SNRDB, bt.AliasRejectionDB, bt.AliasFloatRunDB, bt.AliasResponseDB, bt.AliasNoiseDB, bt.AliasValid, bt.AliasSamples)
	}
	if checked == 0 {
		t.Error("no bit-true alias measurement was valid")
	}
	t.Logf("Analyze at most %.4f dB below the dense scan; bit-true alias tones within %.3f dB of the response (%d valid)", worstGap, worstTone, checked)
}

// TestAfterCICDataPath runs the integer model of seeded random chains
// whose polyphase stage follows the CIC (decimating, and their transposes
// interpolating, the polyphase stage then just before the CIC), in random
// blocks: the polyphase stage's outputs equal the plain resampler's
// (refPolyphase) on the stage before's outputs, and every other stage's
// equal the same stage run alone on its input, so the stream between the
// stages loses, repeats or misaligns no sample.
func TestAfterCICDataPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 32))
	for i := range fracCases(6, 40) {
		spec, c := randomAfterCICChain(rng, i%2 == 1)
		if c == nil {
			t.Fatal("no random chain")
		}
		name := chain.Notation(c.Plan)
		cas, _, err := FromChain(spec, c)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		ws, _, err := PlanChain(spec, c, Settings{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		md, err := NewModel(cas, ws)
		if err != nil {
			t.Fatal(err)
		}
		x := randomCodes(rng, 4000, ws.InputBits)
		outs := make([][]int64, len(cas.Stages))
		for i := 0; i < len(x); {
			n := min(len(x)-i, 1+rng.IntN(500))
			o, err := md.Run(x[i : i+n])
			if err != nil {
				t.Fatal(err)
			}
			for k := range outs {
				outs[k] = append(outs[k], o[k]...)
			}
			i += n
		}
		pi := slices.IndexFunc(cas.Stages, func(st Stage) bool { return st.fractional() })
		st, sw := cas.Stages[pi], ws.Stages[pi]
		want := refPolyphase(sw.Coefficients.Ints, st.Up, st.Down, sw.OutputShift, sw.OutputBits, outs[pi-1])
		if !slices.Equal(outs[pi], want) {
			t.Fatalf("%s: the polyphase stage's %d outputs differ from the plain resampler's %d", name, len(outs[pi]), len(want))
		}
		for k := 1; k < len(cas.Stages); k++ {
			if k == pi {
				continue
			}
			one := Cascade{InputRate: cas.Rates()[k], Complex: cas.Complex, Interpolate: cas.Interpolate, Stages: cas.Stages[k : k+1], Passband: cas.Passband, Protected: cas.Protected}
			w1 := &Widths{InputBits: ws.Stages[k-1].OutputBits, OutputBits: ws.Stages[k].OutputBits, Stages: ws.Stages[k : k+1]}
			m1, err := NewModel(one, w1)
			if err != nil {
				t.Fatal(err)
			}
			o, err := m1.Run(outs[k-1])
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(outs[k], o[0]) {
				t.Fatalf("%s: stage %d's %d outputs in the chain differ from its %d run alone", name, k+1, len(outs[k]), len(o[0]))
			}
		}
	}
}

// TestAfterCICStopped: a cancelled context stops the word lengths of a
// chain whose polyphase stage follows the CIC with an error wrapping
// ctx.Err().
func TestAfterCICStopped(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 33))
	spec, c := randomAfterCICChain(rng, false)
	if c == nil {
		t.Fatal("no random chain")
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := EvaluateContext(ctx, spec, c, Settings{}, Signal{}); err == nil || ctx.Err() == nil {
		t.Fatalf("a cancelled evaluation returned %v", err)
	}
}
