package fixed

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// randomFracInterpChain designs the transpose of a seeded random
// fractional decimation chain (randomFracChain): the same plan on the
// spec with its rates swapped, an interpolation chain that begins with
// the fractional stage. It returns nil when the draw cannot be designed.
func randomFracInterpChain(rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain) {
	for range 20 {
		down, c := randomFracChain(rng, farrowStage)
		if c == nil {
			continue
		}
		up := down
		up.InputRate, up.OutputRate = down.OutputRate, down.InputRate
		ci, err := chain.Design(up, c.Plan, chain.Settings{MaxTaps: 300})
		if err != nil || ci.Direction != chain.Interpolate {
			continue
		}
		return up, ci
	}
	return chain.Spec{}, nil
}

// plannedFracInterp plans a random fractional interpolation chain: its
// spec, chain, cascade and the Evaluate result.
func plannedFracInterp(t *testing.T, rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain, Cascade, *Result) {
	t.Helper()
	spec, c := randomFracInterpChain(rng, farrowStage)
	if c == nil {
		t.Fatal("no random interpolation chain could be designed")
	}
	cas, _, err := FromChain(spec, c)
	if err != nil {
		t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
	}
	res, err := Evaluate(spec, c, Settings{}, Signal{})
	if err != nil {
		t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
	}
	return spec, c, cas, res
}

// refMu returns the mu code of a time r/l past a whole sample on an mb-bit
// word, floor(r 2^mb / l + 1/2), in exact rationals.
func refMu(r, l, mb int) int64 {
	v := new(big.Rat).SetFrac64(int64(r)<<mb, int64(l))
	v.Add(v, big.NewRat(1, 2))
	return new(big.Int).Div(v.Num(), v.Denom()).Int64()
}

// refFarrowT is the transposed Farrow stage done the plain way in exact
// integers (math/big), from the package doc's words and no package code:
// input i at time i M / L output samples, b its whole part and mu its
// fraction rounded half up to mb bits (a mu of 1 moves to b + 1, mu 0);
// w_0 = x 2^G, w_p = floor((w_(p-1) mu + 2^(mb-1)) / 2^mb); output
// b - N/2 + 1 + n gains sum_p c_p[n] w_p; each output rounded half up at
// shift and saturated to ob bits. It returns the outputs no later input
// can reach (below floor(len(x) M / L) - N/2 + 1).
func refFarrowT(c [][]int64, l, m, mb, g, shift, ob int, x []int64) []int64 {
	n := len(c[0])
	acc := map[int]*big.Int{}
	one := new(big.Int).Lsh(big.NewInt(1), uint(mb))
	half := new(big.Int).Lsh(big.NewInt(1), uint(mb-1))
	for i, v := range x {
		t := i * m
		b, r := t/l, t%l
		mu := refMu(r, l, mb)
		if mu == one.Int64() {
			b, mu = b+1, 0
		}
		w := []*big.Int{new(big.Int).Lsh(big.NewInt(v), uint(g))}
		for p := 1; p < len(c); p++ {
			next := new(big.Int).Mul(w[p-1], big.NewInt(mu))
			next.Add(next, half)
			next.Div(next, one) // Euclidean: floor for a positive divisor
			w = append(w, next)
		}
		for j := range n {
			k := b - n/2 + 1 + j
			if k < 0 {
				continue
			}
			if acc[k] == nil {
				acc[k] = new(big.Int)
			}
			for p := range c {
				acc[k].Add(acc[k], new(big.Int).Mul(big.NewInt(c[p][j]), w[p]))
			}
		}
	}
	ready := len(x)*m/l - n/2 + 1
	var y []int64
	for k := 0; k < ready; k++ {
		a := acc[k]
		if a == nil {
			a = new(big.Int)
		}
		y = append(y, bigRoundSat(a, shift, ob))
	}
	return y
}

// farrowRows splits a Farrow stage's coefficients into its rows.
func farrowRows(sw *StageWidths) [][]int64 {
	n := len(sw.Coefficients.Ints) / sw.FarrowRows
	var c [][]int64
	for p := range sw.FarrowRows {
		c = append(c, sw.Coefficients.Ints[p*n:(p+1)*n])
	}
	return c
}

// TestFracInterpBitExact holds an interpolation chain's fractional stage
// (the first), run in random blocks, to a plain big-integer reference
// written from the package doc, sample for sample: the polyphase stage to
// refPolyphase (zero-stuff by M, convolve, keep every L-th), the Farrow
// stage to refFarrowT, on the planned stages of seeded random designed
// chains (extreme codes among the inputs) and on random synthetic Farrow
// stages (random rows, L/M, mu and guard widths, shifts). A dozen cases of
// each by default, 120 with STEPDOWN_LONG=1.
func TestFracInterpBitExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 61))
	cases := fracCases(12, 120)
	for i := range cases {
		_, c, cas, res := plannedFracInterp(t, rng, i%2 == 1)
		sw := &res.Widths.Stages[0]
		st := cas.Stages[0]
		x := randomCodes(rng, 300+rng.IntN(400), sw.InputBits)
		fi, _ := newFracFilters(st, sw)
		got := runBlocks(rng, fi, x)
		var want []int64
		if st.Farrow == nil {
			want = refPolyphase(sw.Coefficients.Ints, sw.Up, sw.Down, sw.OutputShift, sw.OutputBits, x)
		} else {
			want = refFarrowT(farrowRows(sw), sw.Down, sw.Up, sw.MuBits, sw.HornerGuard, sw.OutputShift, sw.OutputBits, x)
		}
		if err := sameCodes(got, want); err != nil {
			t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
		}
	}
	for range cases {
		l := 2 + rng.IntN(30)
		m := 1 + rng.IntN(3*l)
		if fracGcd(l, m) != 1 {
			continue
		}
		rows, n := 1+rng.IntN(5), 2*(1+rng.IntN(5))
		bits := 2 + rng.IntN(18)
		in, ob := 2+rng.IntN(16), 2+rng.IntN(20)
		sw := &StageWidths{Up: m, Down: l, Farrow: true, FarrowRows: rows, MuBits: max(bitsLen(l-1), 1+rng.IntN(20)),
			HornerGuard: rng.IntN(8), OutputShift: rng.IntN(bits+in) - 3, OutputBits: ob,
			Coefficients: Coefficients{Bits: bits, Ints: randomCodes(rng, rows*n, bits)}}
		x := randomCodes(rng, 200+rng.IntN(300), in)
		got := runBlocks(rng, newFarrowTInt(sw), x)
		want := refFarrowT(farrowRows(sw), l, m, sw.MuBits, sw.HornerGuard, sw.OutputShift, ob, x)
		if err := sameCodes(got, want); err != nil {
			t.Fatalf("synthetic L/M %d/%d, %d rows of %d, mu %d bits, guard %d: %v", l, m, rows, n, sw.MuBits, sw.HornerGuard, err)
		}
	}
}

// TestFracInterpAccumulatorsWorstCase drives every output phase of the
// planned transposed Farrow stages of seeded random chains with its
// worst-case inputs (each input that reaches the output at its word's
// extreme that makes its products' sum largest, then smallest): the
// finished sums stay within AccumulatorBits (never overflow), and the
// widest phase needs every bit but the sign's slack (within one bit).
func TestFracInterpAccumulatorsWorstCase(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 62))
	for range fracCases(4, 40) {
		_, c, cas, res := plannedFracInterp(t, rng, true)
		sw := &res.Widths.Stages[0]
		st := cas.Stages[0]
		l, m := st.fracView()
		rows := farrowRows(sw)
		n := len(rows[0])
		q, mu := farrowTiming(l, m, sw.MuBits)
		xlo, xhi := -(int64(1) << (sw.InputBits - 1)), int64(1)<<(sw.InputBits-1)-1
		w := make([]int64, len(rows))
		term := func(i, j int, v int64) int64 {
			muPowers(w, v, sw.HornerGuard, mu[i%l], sw.MuBits)
			var a int64
			for p := range rows {
				a += rows[p][j] * w[p]
			}
			return a
		}
		lim := int64(1) << (sw.AccumulatorBits - 1)
		var peak int64
		for ph := range min(m, 64) {
			k := ph + (n+4)*m // an output far from the start
			for _, sign := range []int64{1, -1} {
				last := (k + n) * l / m
				x := make([]int64, last+l+1)
				for i := range x {
					b := i/l*m + q[i%l]
					j := k - (b - n/2 + 1)
					if j < 0 || j >= n {
						continue
					}
					if sign*term(i, j, xhi) >= sign*term(i, j, xlo) {
						x[i] = xhi
					} else {
						x[i] = xlo
					}
				}
				f := newFarrowTInt(sw)
				f.run(x, nil)
				if f.accHi > lim-1 || f.accLo < -lim {
					t.Fatalf("%s: phase %d: sums reached [%d, %d], beyond the %d-bit accumulator", chain.Notation(c.Plan), ph, f.accLo, f.accHi, sw.AccumulatorBits)
				}
				peak = max(peak, f.accHi, -f.accLo)
			}
		}
		if m <= 64 && peak < lim/4 {
			t.Errorf("%s: the worst case reached %d, under a quarter of the %d-bit accumulator's range", chain.Notation(c.Plan), peak, sw.AccumulatorBits)
		}
	}
}

// bruteDCImages is the worst image of a DC input through a real
// interpolation chain, in its decimation view as bruteFracRejectionOf
// takes it: path k of the input frequencies g = n FK - k Fm in (0, F0/2)
// lands on the channel's 0 Hz, and a DC input, one real component, comes
// out there with its mirror at twice the path's gain A(g) |P(g + k Fm)|
// (amplitudes; at F0/2 the image is its own mirror). In dB below the
// gain at 0 Hz.
func bruteDCImages(taps [][]float64, rates, proto []float64, up int, fm, fk, f0h float64) float64 {
	prate := fm * float64(up)
	a := firsGain(taps, rates)
	g0 := a(0) * dtft(proto, 0, prate)
	worst := 0.0
	for k := range up {
		for n := 0; float64(n)*fk-float64(k)*fm < f0h; n++ {
			g := float64(n)*fk - float64(k)*fm
			if g <= 0 || g >= f0h*(1-1e-12) {
				continue
			}
			worst = math.Max(worst, 2*a(g)*dtft(proto, g+float64(k)*fm, prate))
		}
	}
	if worst == 0 {
		return math.Inf(1)
	}
	return -20 * math.Log10(worst/g0)
}

// bruteProtoT rebuilds the prototype (unit gain, at L Fm) of an
// interpolation chain's quantised fractional stage from its definition,
// without the package's helpers: the polyphase stage's integer taps over
// 2^Frac M; for the Farrow stage, the response of each input phase s of
// the transposed structure (input s at time s M / L output samples,
// rounded as refFarrowT rounds it) to output k, sum_p c_p[n] mu^p /
// 2^Frac, placed at tap k L - s M + (N/2 + 1) L and divided by M: the
// M/L resampler (up M, down L) of that prototype is the structure, to a
// delay, and its gains are the decimation view's paths'.
func bruteProtoT(sw *StageWidths) []float64 {
	cf := sw.Coefficients
	l, m := sw.Down, sw.Up
	scale := math.Ldexp(1, -cf.Frac)
	if !sw.Farrow {
		out := make([]float64, len(cf.Ints))
		for k, v := range cf.Ints {
			out[k] = float64(v) * scale / float64(m)
		}
		return out
	}
	rows := farrowRows(sw)
	n := len(rows[0])
	out := make([]float64, (n+4)*l)
	for s := range l {
		t := s * m
		b, r := t/l, t%l
		code := refMu(r, l, sw.MuBits)
		if code == int64(1)<<sw.MuBits {
			b, code = b+1, 0
		}
		mu := math.Ldexp(float64(code), -sw.MuBits)
		for j := range n {
			k := b - n/2 + 1 + j
			v, pw := 0.0, 1.0
			for p := range rows {
				v += float64(rows[p][j]) * pw
				pw *= mu
			}
			out[k*l-s*m+(n/2+1)*l] += v * scale / float64(m)
		}
	}
	return out
}

// TestFracInterpQuantisedAnalyzeBruteForce holds PlanChain's analysis of
// an interpolation chain's quantised chain (chain.Analyze on
// QuantisedChain) to a dense scan of the rounded structure in the
// decimation view (bruteFracRejectionOf on bruteProtoT; never optimistic,
// at most 0.02 dB below), and Evaluate's bit-true image tone to the
// quantised response at its frequencies, within 0.6 dB when the noise
// leaves the measurement valid: seeded random chains of both kinds, six
// by default, 40 with STEPDOWN_LONG=1.
func TestFracInterpQuantisedAnalyzeBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 63))
	worstGap, worstTone, checked := 0.0, 0.0, 0
	for i := range fracCases(6, 40) {
		spec, c, cas, res := plannedFracInterp(t, rng, i%2 == 1)
		fa := spec.Protected
		if fa == 0 {
			fa = spec.Passband
		}
		rates := cas.Rates()
		var taps [][]float64
		var trates []float64
		for k := len(cas.Stages) - 1; k >= 1; k-- {
			taps = append(taps, res.Widths.Stages[k].Coefficients.Float())
			trates = append(trates, rates[k+1])
		}
		sw := &res.Widths.Stages[0]
		ref := bruteFracRejectionOf(taps, trates, bruteProtoT(sw), sw.Down, sw.Up, rates[1], rates[0], rates[len(rates)-1]/2, fa, cas.Complex)
		if !cas.Complex {
			ref = math.Min(ref, bruteDCImages(taps, trates, bruteProtoT(sw), sw.Down, rates[1], rates[0], rates[len(rates)-1]/2))
		}
		gap := ref - res.Quantised.AliasRejectionDB
		if gap < -1e-6 || gap > 0.02 {
			t.Errorf("%s: Analyze of the quantised chain %.4f dB, the dense scan %.4f dB", chain.Notation(c.Plan), res.Quantised.AliasRejectionDB, ref)
		}
		worstGap = math.Max(worstGap, gap)
		if res.BitTrueErr != nil {
			t.Fatalf("%s: %v", chain.Notation(c.Plan), res.BitTrueErr)
		}
		bt := res.BitTrue
		if !bt.SNRValid {
			t.Errorf("%s: SNR not valid: %s", chain.Notation(c.Plan), bt.SNRNote)
		}
		if bt.AliasValid {
			d := math.Abs(bt.AliasRejectionDB - bt.AliasResponseDB)
			if d > 0.6 {
				t.Errorf("%s: bit-true image %.2f dB at %g Hz (tone %g Hz), the quantised response %.2f dB", chain.Notation(c.Plan), bt.AliasRejectionDB, bt.AliasHz, bt.AliasOutHz, bt.AliasResponseDB)
			}
			worstTone = math.Max(worstTone, d)
			checked++
		}
	}
	t.Logf("Analyze at most %.4f dB below the dense scan; bit-true image tones within %.3f dB of the response (%d valid)", worstGap, worstTone, checked)
}

// TestFarrowTPlanRepeats: planning a transposed Farrow stage's widths
// gives the same phase gains bit for bit every time (they were summed over
// a map in its random order: report.json differed run to run).
func TestFarrowTPlanRepeats(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 5))
	for range 12 {
		spec, c, _, res := plannedFracInterp(t, rng, true)
		want := res.Widths.Stages[0]
		for range 4 {
			// The word-length plan alone (Evaluate's first half): the
			// phase gains are its.
			again, _, err := PlanChain(spec, c, Settings{})
			if err != nil {
				t.Fatal(err)
			}
			got := again.Stages[0]
			if math.Float64bits(got.Gain) != math.Float64bits(want.Gain) || got.PhaseGainMin != want.PhaseGainMin || got.PhaseGainMax != want.PhaseGainMax {
				t.Fatalf("%s: gain %v then %v", chain.Notation(c.Plan), want.Gain, got.Gain)
			}
		}
	}
}
