package fixed

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/big"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
)

// fracGcd is Euclid's algorithm.
func fracGcd(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// randomFracChain designs a seeded invented decimation chain that ends in
// a fractional stage: farrow picks a Farrow stage after a lowpass FIR,
// otherwise a polyphase stage after up to one FIR (or none). Words are
// drawn too. It returns nil when the draw cannot be designed.
func randomFracChain(rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain) {
	for range 50 {
		var up, down, dint int
		if farrowStage {
			dint = 2 + rng.IntN(4)
			up = 2 + rng.IntN(30)
			down = int(float64(up) * (2.2 + 2.8*rng.Float64()))
		} else {
			up = 2 + rng.IntN(14)
			down = up/2 + 1 + rng.IntN(2*up)
			dint = 1 + rng.IntN(5)
		}
		if g := fracGcd(up, down); g != 1 {
			up, down = up/g, down/g
		}
		if down == up || up < 2 || dint*down <= up {
			continue
		}
		num, den := dint*down, up
		if g := fracGcd(num, den); g != 1 {
			num, den = num/g, den/g
		}
		fm := 1 / float64(dint)
		fk := fm * float64(up) / float64(down)
		lo := math.Min(fm, fk)
		fp := lo * (0.05 + 0.25*rng.Float64())
		fa := fp + (lo/2-fp)*0.5*rng.Float64()
		spec := chain.Spec{InputRate: 1, OutputRate: float64(den) / float64(num), Passband: fp, Protected: fa,
			RippleDB: 0.1 + rng.Float64(), RejectionDB: 40 + 35*rng.Float64(),
			InputBits: 8 + rng.IntN(10), OutputBits: 12 + rng.IntN(12)}
		if _, err := spec.Normalize(); err != nil {
			continue
		}
		if p, q := spec.Fraction(); p != num || q != den {
			continue
		}
		var plan []chain.StagePlan
		if dint > 1 {
			plan = append(plan, chain.StagePlan{Kind: chain.FIR, Factor: dint, Variant: chain.Lowpass})
		}
		kind := chain.Polyphase
		if farrowStage {
			kind = chain.Farrow
		}
		plan = append(plan, chain.StagePlan{Kind: kind, Factor: 1, Up: up, Down: down})
		c, err := chain.Design(spec, plan, chain.Settings{MaxTaps: 300})
		if err != nil {
			continue
		}
		return spec, c
	}
	return chain.Spec{}, nil
}

// fracCases returns how many random chains of each kind a test runs:
// few by default, more with STEPDOWN_LONG=1.
func fracCases(short, long int) int {
	if os.Getenv("STEPDOWN_LONG") != "" {
		return long
	}
	return short
}

// plannedFrac plans a random fractional chain: its spec, chain, cascade
// and widths.
func plannedFrac(t *testing.T, rng *rand.Rand, farrowStage bool) (chain.Spec, *chain.Chain, Cascade, *Widths) {
	t.Helper()
	spec, c := randomFracChain(rng, farrowStage)
	if c == nil {
		t.Fatal("no random chain could be designed")
	}
	cas, _, err := FromChain(spec, c)
	if err != nil {
		t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
	}
	ws, _, err := PlanChain(spec, c, Settings{})
	if err != nil {
		t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
	}
	return spec, c, cas, ws
}

// bigRound rounds v / 2^shift half up (floor(v / 2^shift + 1/2)), or
// shifts it left for a negative shift, exactly, and saturates to ob bits.
func bigRoundSat(v *big.Int, shift, ob int) int64 {
	r := new(big.Int).Set(v)
	if shift > 0 {
		r.Add(r, new(big.Int).Lsh(big.NewInt(1), uint(shift-1)))
		r.Div(r, new(big.Int).Lsh(big.NewInt(1), uint(shift))) // Euclidean: floor for a positive divisor
	} else if shift < 0 {
		r.Lsh(r, uint(-shift))
	}
	hi := new(big.Int).Lsh(big.NewInt(1), uint(ob-1))
	lo := new(big.Int).Neg(hi)
	hi.Sub(hi, big.NewInt(1))
	if r.Cmp(hi) > 0 {
		return hi.Int64()
	}
	if r.Cmp(lo) < 0 {
		return lo.Int64()
	}
	return r.Int64()
}

// refPolyphase is the polyphase L/M stage done the plain way, in exact
// integers: the input zero-stuffed by L (each sample, then L-1 zeros),
// convolved at the full rate with the integer taps, every M-th sample
// kept (those at times within the input), then rounded half up at shift
// and saturated to ob bits.
func refPolyphase(h []int64, l, m, shift, ob int, x []int64) []int64 {
	u := make([]int64, len(x)*l)
	for i, v := range x {
		u[i*l] = v
	}
	var y []int64
	for t := 0; t < len(u); t += m {
		acc := new(big.Int)
		for j, c := range h {
			if t-j >= 0 {
				acc.Add(acc, new(big.Int).Mul(big.NewInt(c), big.NewInt(u[t-j])))
			}
		}
		y = append(y, bigRoundSat(acc, shift, ob))
	}
	return y
}

// runBlocks runs f on x in random blocks.
func runBlocks(rng *rand.Rand, f intFilter, x []int64) []int64 {
	var out []int64
	for i := 0; i < len(x); {
		n := min(len(x)-i, 1+rng.IntN(97))
		out = f.run(x[i:i+n], out)
		i += n
	}
	return out
}

// randomCodes returns n random codes of a bits-bit word, a tenth of them
// at the word's extremes.
func randomCodes(rng *rand.Rand, n, bits int) []int64 {
	hi := int64(1)<<(bits-1) - 1
	x := make([]int64, n)
	for i := range x {
		switch rng.IntN(10) {
		case 0:
			x[i] = hi
		case 1:
			x[i] = -hi - 1
		default:
			x[i] = rng.Int64N(2*hi+2) - hi - 1
		}
	}
	return x
}

// TestPolyphaseIntMatchesPlainResampler holds the integer polyphase
// stage, run in random blocks, to refPolyphase, sample for sample: on
// random integer taps and rate changes (extreme codes among them), and on
// the planned stages of seeded random chains through Model (its input the
// previous stage's output).
func TestPolyphaseIntMatchesPlainResampler(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 20))
	for trial := range 200 {
		l, m := 1+rng.IntN(12), 1+rng.IntN(20)
		n := 1 + rng.IntN(60)
		bits := 2 + rng.IntN(20)
		h := randomCodes(rng, n, bits)
		in, ob := 2+rng.IntN(16), 2+rng.IntN(20)
		shift := rng.IntN(bits+in) - 3
		x := randomCodes(rng, rng.IntN(300), in)
		got := runBlocks(rng, newPolyInt(h, l, m, shift, ob), x)
		want := refPolyphase(h, l, m, shift, ob, x)
		if len(got) != len(want) {
			t.Fatalf("trial %d (L %d M %d, %d taps): %d outputs, the plain resampler %d", trial, l, m, n, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] {
				t.Fatalf("trial %d (L %d M %d, %d taps, shift %d): y[%d] = %d, the plain resampler %d", trial, l, m, n, shift, i, got[i], want[i])
			}
		}
	}
	for range fracCases(4, 24) {
		_, c, cas, ws := plannedFrac(t, rng, false)
		md, err := NewModel(cas, ws)
		if err != nil {
			t.Fatal(err)
		}
		x := randomCodes(rng, 3000, ws.InputBits)
		var prev, last []int64
		for i := 0; i < len(x); {
			n := min(len(x)-i, 1+rng.IntN(500))
			out, err := md.Run(x[i : i+n])
			if err != nil {
				t.Fatal(err)
			}
			if len(out) > 1 {
				prev = append(prev, out[len(out)-2]...)
			} else {
				prev = append(prev, x[i:i+n]...)
			}
			last = append(last, out[len(out)-1]...)
			i += n
		}
		k := len(cas.Stages) - 1
		st, sw := cas.Stages[k], ws.Stages[k]
		want := refPolyphase(sw.Coefficients.Ints, st.Up, st.Down, sw.OutputShift, sw.OutputBits, prev)
		if len(want) != len(last) {
			t.Fatalf("%s: %d outputs, the plain resampler %d", chain.Notation(c.Plan), len(last), len(want))
		}
		for i := range last {
			if last[i] != want[i] {
				t.Fatalf("%s: y[%d] = %d, the plain resampler %d", chain.Notation(c.Plan), i, last[i], want[i])
			}
		}
	}
}

// TestPolyphaseFloatSciPy holds the bit-true run's float polyphase stage,
// run in random blocks, to SciPy's upfirdn (chain/testdata/fractional,
// gen_resample.py there).
func TestPolyphaseFloatSciPy(t *testing.T) {
	b, err := os.ReadFile("../testdata/fractional/resample.json")
	if err != nil {
		t.Fatal(err)
	}
	var g struct {
		Cases []struct {
			Up, Down int
			Taps     []float64
			Signals  []struct{ X, Y []float64 }
		}
	}
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(14, 21))
	for _, c := range g.Cases {
		h := make([]float64, len(c.Taps))
		for k, v := range c.Taps {
			h[k] = v * float64(c.Up)
		}
		for _, s := range c.Signals {
			f := newPolyFloat(h, c.Up, c.Down)
			var y []float64
			for i := 0; i < len(s.X); {
				n := min(len(s.X)-i, 1+rng.IntN(50))
				y = f.run(s.X[i:i+n], y)
				i += n
			}
			if len(y) != len(s.Y) {
				t.Fatalf("%d/%d: %d outputs, SciPy %d", c.Up, c.Down, len(y), len(s.Y))
			}
			for i := range y {
				if math.Abs(y[i]-s.Y[i]) > 1e-12 {
					t.Fatalf("%d/%d: y[%d] = %.17g, SciPy %.17g", c.Up, c.Down, i, y[i], s.Y[i])
				}
			}
		}
	}
}

// refFarrow is a planned Farrow stage evaluated directly in exact
// integers at the package doc's rounding points: output m at time
// t = m Down/Up (a rational), mu = floor(frac(t) 2^MuBits + 1/2) (t moved
// to the next sample, mu 0, when that is 2^MuBits), b = floor(t);
// v_p = sum_n c_p[n] x[b - N/2 + 1 + n]; v_p rounded half up by
// HornerDrop bits; acc = v_P, then acc = floor(acc mu / 2^MuBits + 1/2) +
// v_p for p = P-1..0; the output acc rounded half up at OutputShift -
// HornerDrop and saturated. Outputs whose last input lies past x are not
// made.
func refFarrow(sw *StageWidths, x []int64) []int64 {
	rows := sw.FarrowRows
	n := len(sw.Coefficients.Ints) / rows
	one := new(big.Int).Lsh(big.NewInt(1), uint(sw.MuBits))
	var y []int64
	for m := 0; ; m++ {
		t := big.NewRat(int64(m)*int64(sw.Down), int64(sw.Up))
		b := new(big.Int).Div(t.Num(), t.Denom())
		frac := new(big.Rat).Sub(t, new(big.Rat).SetInt(b))
		v := new(big.Rat).Mul(frac, new(big.Rat).SetInt(one))
		v.Add(v, big.NewRat(1, 2))
		mu := new(big.Int).Div(v.Num(), v.Denom())
		if mu.Cmp(one) == 0 {
			b.Add(b, big.NewInt(1))
			mu.SetInt64(0)
		}
		bi := int(b.Int64())
		if bi+n/2 >= len(x) {
			return y
		}
		vs := make([]*big.Int, rows)
		for p := range rows {
			a := new(big.Int)
			for j := range n {
				if k := bi - n/2 + 1 + j; k >= 0 {
					a.Add(a, new(big.Int).Mul(big.NewInt(sw.Coefficients.Ints[p*n+j]), big.NewInt(x[k])))
				}
			}
			if d := sw.HornerDrop; d > 0 {
				a.Add(a, new(big.Int).Lsh(big.NewInt(1), uint(d-1)))
				a.Div(a, new(big.Int).Lsh(big.NewInt(1), uint(d)))
			}
			vs[p] = a
		}
		acc := new(big.Int).Set(vs[rows-1])
		half := new(big.Int).Lsh(big.NewInt(1), uint(sw.MuBits-1))
		for p := rows - 2; p >= 0; p-- {
			acc.Mul(acc, mu)
			acc.Add(acc, half)
			acc.Div(acc, one)
			acc.Add(acc, vs[p])
		}
		y = append(y, bigRoundSat(acc, sw.OutputShift-sw.HornerDrop, sw.OutputBits))
	}
}

// TestFarrowIntMatchesDirect holds the integer Farrow stage of seeded
// random planned chains, run through Model in random blocks, to refFarrow
// sample for sample, at the planned mu width and at narrow ones (mu
// rounded), with the Horner register forced to drop bits, and with a
// wide output word that keeps only two guard bits (so that every Horner
// rounding shows at the output).
func TestFarrowIntMatchesDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 22))
	for i := range fracCases(8, 24) {
		_, c, cas, ws := plannedFrac(t, rng, true)
		k := len(cas.Stages) - 1
		sw := &ws.Stages[k]
		switch i % 4 {
		case 1:
			sw.MuBits = 1 + rng.IntN(6)
		case 2:
			sw.HornerDrop = 1 + rng.IntN(3)
		case 3:
			sw.OutputBits += sw.OutputShift - 2
			sw.OutputShift = 2
		}
		md, err := NewModel(cas, ws)
		if err != nil {
			t.Fatal(err)
		}
		x := randomCodes(rng, 2000, ws.InputBits)
		var prev, last []int64
		for i := 0; i < len(x); {
			n := min(len(x)-i, 1+rng.IntN(400))
			out, err := md.Run(x[i : i+n])
			if err != nil {
				t.Fatal(err)
			}
			prev = append(prev, out[k-1]...)
			last = append(last, out[k]...)
			i += n
		}
		want := refFarrow(sw, prev)
		if len(want) != len(last) {
			t.Fatalf("%s: %d outputs, the direct evaluation %d", chain.Notation(c.Plan), len(last), len(want))
		}
		for i := range last {
			if last[i] != want[i] {
				t.Fatalf("%s (mu %d bits, drop %d): y[%d] = %d, the direct evaluation %d", chain.Notation(c.Plan), sw.MuBits, sw.HornerDrop, i, last[i], want[i])
			}
		}
	}
}

// fitsWord says whether v lies in a bits-bit two's-complement word.
func fitsWord(v int64, bits int) bool {
	return bits >= 64 || v >= -(int64(1)<<(bits-1)) && v <= int64(1)<<(bits-1)-1
}

// TestFractionalAccumulatorsWorstCase drives every phase of planned
// polyphase stages, and every branch of planned Farrow stages, with the
// full-scale input of each tap's sign and of the opposite sign (common
// practice for the worst case): no accumulator, branch or Horner value
// leaves its planned width, and the polyphase extremes over all phases
// need the full planned width (it is the narrowest).
func TestFractionalAccumulatorsWorstCase(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 23))
	for range fracCases(4, 24) {
		_, c, cas, ws := plannedFrac(t, rng, false)
		k := len(cas.Stages) - 1
		st, sw := cas.Stages[k], ws.Stages[k]
		h, l, in := sw.Coefficients.Ints, st.Up, sw.InputBits
		kk := (len(h) + l - 1) / l
		hi := int64(1)<<(in-1) - 1
		var lo, top int64
		for r := range l {
			// An output of phase r late enough that its whole window is input.
			m := r
			for (m*st.Down)%l != r || (m*st.Down)/l < kk {
				m++
				if m > l*(kk+1)*st.Down+l {
					break
				}
			}
			if (m*st.Down)%l != r {
				continue // phase r is never used (gcd(L, M) = 1 uses all)
			}
			b := m * st.Down / l
			for _, sign := range []int64{1, -1} {
				x := make([]int64, b+1)
				for s := 0; r+l*s < len(h); s++ {
					if h[r+l*s]*sign > 0 {
						x[b-s] = hi
					} else if h[r+l*s]*sign < 0 {
						x[b-s] = -hi - 1
					}
				}
				f := newPolyInt(h, l, st.Down, sw.OutputShift, sw.OutputBits)
				f.run(x, nil)
				lo, top = min(lo, f.accLo), max(top, f.accHi)
			}
		}
		a := sw.AccumulatorBits
		if !fitsWord(lo, a) || !fitsWord(top, a) {
			t.Errorf("%s: the accumulator reached [%d, %d], beyond its %d bits", chain.Notation(c.Plan), lo, top, a)
		}
		if fitsWord(lo, a-1) && fitsWord(top, a-1) {
			t.Errorf("%s: the worst cases [%d, %d] fit %d bits; %d were planned", chain.Notation(c.Plan), lo, top, a-1, a)
		}
	}
	for range fracCases(4, 24) {
		_, c, cas, ws := plannedFrac(t, rng, true)
		k := len(cas.Stages) - 1
		sw := &ws.Stages[k]
		rows := sw.FarrowRows
		n := len(sw.Coefficients.Ints) / rows
		hi := int64(1)<<(sw.InputBits-1) - 1
		f := newFarrowInt(sw)
		var x []int64
		// Each row's sign pattern and its opposite, repeated so that
		// every phase meets them, then random full-scale codes.
		for p := range rows {
			for _, sign := range []int64{1, -1} {
				for range 3 * sw.Up {
					for j := range n {
						if sw.Coefficients.Ints[p*n+n-1-j]*sign >= 0 {
							x = append(x, hi)
						} else {
							x = append(x, -hi-1)
						}
					}
				}
			}
		}
		x = append(x, randomCodes(rng, 2000, sw.InputBits)...)
		f.run(x, nil)
		if !fitsWord(f.brLo, sw.AccumulatorBits) || !fitsWord(f.brHi, sw.AccumulatorBits) {
			t.Errorf("%s: a branch reached [%d, %d], beyond its %d bits", chain.Notation(c.Plan), f.brLo, f.brHi, sw.AccumulatorBits)
		}
		if !fitsWord(f.hoLo, sw.HornerBits) || !fitsWord(f.hoHi, sw.HornerBits) {
			t.Errorf("%s: the Horner register reached [%d, %d], beyond its %d bits", chain.Notation(c.Plan), f.hoLo, f.hoHi, sw.HornerBits)
		}
	}
}

// dtft is |sum_k h[k] exp(-j 2 pi f k / rate)|, term by term.
func dtft(h []float64, f, rate float64) float64 {
	var s complex128
	for k, v := range h {
		s += complex(v, 0) * cmplx.Exp(complex(0, -2*math.Pi*f*float64(k)/rate))
	}
	return cmplx.Abs(s)
}

// bruteProto rebuilds the quantised fractional stage's prototype (unit
// gain, at Up times its input rate) from its definition, without the
// package's helpers: a polyphase stage's integer taps over 2^Frac L; a
// Farrow stage's impulse response with the integer rows (farrow's own
// Impulse) at tau = floor(j/Up) - 1 - N/2 + mu(j mod Up), mu(r) =
// floor(r 2^MuBits / Up + 1/2) / 2^MuBits exactly (big.Rat), over Up.
func bruteProto(sw *StageWidths) []float64 {
	cf := sw.Coefficients
	l := sw.Up
	if !sw.Farrow {
		out := make([]float64, len(cf.Ints))
		for k, v := range cf.Ints {
			out[k] = float64(v) / math.Ldexp(1, cf.Frac) / float64(l)
		}
		return out
	}
	rows := sw.FarrowRows
	n := len(cf.Ints) / rows
	coef := make([][]float64, rows)
	for p := range coef {
		for _, v := range cf.Ints[p*n : (p+1)*n] {
			coef[p] = append(coef[p], float64(v)/math.Ldexp(1, cf.Frac))
		}
	}
	fl := farrow.Filter{Coef: coef}
	out := make([]float64, l*(n+1))
	for j := range out {
		r := new(big.Rat).SetFrac64(int64(j%l)<<sw.MuBits, int64(l))
		r.Add(r, big.NewRat(1, 2))
		code := new(big.Int).Div(r.Num(), r.Denom())
		mu, _ := new(big.Rat).SetFrac(code, new(big.Int).Lsh(big.NewInt(1), uint(sw.MuBits))).Float64()
		out[j] = fl.Impulse(float64(j/l-1-n/2)+mu) / float64(l)
	}
	return out
}

// bruteFracRejection scans every path k of a fractional cascade of FIR
// stages (then the fractional stage, cs and ws) densely: input g in every
// band where g + k Fm folds into [0, fa], the gain A(g) |P(g + k Fm)|
// (term-by-term transforms of the quantised taps), 64 points a band and
// golden-section refinement at the best; the worst over A(0) P(0), in dB.
func bruteFracRejection(cas Cascade, ws *Widths, fa float64) float64 {
	rates := cas.Rates()
	k := len(cas.Stages) - 1
	sw := &ws.Stages[k]
	var taps [][]float64
	for i := range k {
		taps = append(taps, ws.Stages[i].Coefficients.Float())
	}
	return bruteFracRejectionOf(taps, rates[:k], bruteProto(sw), sw.Up, sw.Down, rates[k], rates[k+1], cas.InputRate/2, fa, cas.Complex)
}

// firsGain is the gain at g of FIR stages taps[i] at rates[i], their
// transforms summed term by term (dtft).
func firsGain(taps [][]float64, rates []float64) func(g float64) float64 {
	return func(g float64) float64 {
		v := 1.0
		for i, h := range taps {
			v *= dtft(h, g, rates[i])
		}
		return v
	}
}

// scanBand is the largest f over [lo, hi]: the best of 65 evenly spaced
// points, refined by golden section within a step of it (the dense
// scans' rule).
func scanBand(f func(float64) float64, lo, hi float64) float64 {
	best, bg := -1.0, lo
	const pts = 64
	for i := 0; i <= pts; i++ {
		g := lo + (hi-lo)*float64(i)/pts
		if v := f(g); v > best {
			best, bg = v, g
		}
	}
	step := (hi - lo) / pts
	x0, x1 := math.Max(lo, bg-step), math.Min(hi, bg+step)
	phi := (math.Sqrt(5) - 1) / 2
	for range 60 {
		m1, m2 := x1-phi*(x1-x0), x0+phi*(x1-x0)
		if f(m1) > f(m2) {
			x1 = m2
		} else {
			x0 = m1
		}
	}
	return math.Max(best, f((x0+x1)/2))
}

// bruteFracRejectionOf is bruteFracRejection on the decimation view: FIR
// stages taps[i] at rates[i], then the fractional L/M stage (up, down) of
// prototype proto from fm to fk; f0h is half the high rate.
func bruteFracRejectionOf(taps [][]float64, rates, proto []float64, up, down int, fm, fk, f0h, fa float64, complexSig bool) float64 {
	prate := fm * float64(up)
	a := firsGain(taps, rates)
	g0 := a(0) * dtft(proto, 0, prate)
	worst := 0.0
	for path := range up {
		shift := float64(path) * fm
		gain := func(g float64) float64 { return a(g) * dtft(proto, g+shift, prate) }
		for nn := int(math.Floor((shift - fa) / fk)); float64(nn)*fk-shift-fa <= f0h; nn++ {
			c := float64(nn)*fk - shift
			lo, hi := math.Max(0, c-fa), math.Min(f0h, c+fa)
			if path == 0 && nn == 0 {
				continue // the tone itself
			}
			if hi < lo {
				continue
			}
			worst = math.Max(worst, scanBand(gain, lo, hi))
		}
	}
	if !complexSig {
		// A real tone's paths that land on one output frequency add;
		// two can meet only at multiples of Fm / (2 M) (package chain,
		// Fractional stages): there the paths are summed by where they
		// land.
		fold := func(f float64) float64 {
			f = math.Mod(f, fk)
			return math.Min(f, fk-f)
		}
		step := fm / float64(2*down)
		for j := 0; float64(j)*step <= f0h; j++ {
			g := float64(j) * step
			land := map[int64]float64{}
			for path := range up {
				y := fold(g + float64(path)*fm)
				if (path == 0 && g <= fa) || y > fa*(1+1e-12) {
					continue
				}
				land[int64(math.Round(y/fk*1e8))] += dtft(proto, g+float64(path)*fm, prate)
			}
			for _, v := range land {
				worst = math.Max(worst, a(g)*v)
			}
		}
	}
	return -20 * math.Log10(worst/g0)
}

// TestFractionalQuantisedAnalyzeBruteForce holds PlanChain's analysis of
// the quantised chain (chain.Analyze on QuantisedChain) to
// bruteFracRejection, a dense scan of the rounded structure (never
// optimistic, at most 0.02 dB below), and Evaluate's bit-true alias tone
// to the quantised response at its frequency, within 1 dB when the noise
// leaves the measurement valid: on seeded random chains of both kinds.
func TestFractionalQuantisedAnalyzeBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 24))
	worstGap, worstTone, checked := 0.0, 0.0, 0
	for i := range fracCases(4, 24) {
		spec, c := randomFracChain(rng, i%2 == 1)
		if c == nil {
			t.Fatal("no random chain")
		}
		res, err := Evaluate(spec, c, Settings{}, Signal{})
		if err != nil {
			t.Fatalf("%s: %v", chain.Notation(c.Plan), err)
		}
		cas, _, err := FromChain(spec, c)
		if err != nil {
			t.Fatal(err)
		}
		fa := spec.Protected
		if fa == 0 {
			fa = spec.Passband
		}
		ref := bruteFracRejection(cas, res.Widths, fa)
		gap := ref - res.Quantised.AliasRejectionDB
		if gap < -1e-6 || gap > 0.02 {
			t.Errorf("%s: Analyze of the quantised chain %.4f dB, the dense scan %.4f dB", chain.Notation(c.Plan), res.Quantised.AliasRejectionDB, ref)
		}
		worstGap = math.Max(worstGap, gap)
		if res.BitTrueErr != nil {
			t.Fatalf("%s: %v", chain.Notation(c.Plan), res.BitTrueErr)
		}
		bt := res.BitTrue
		// Paths of the tone that share the alias's bin add there (a real
		// tone's paths to +y and -y, at multiples of Fm / (2 M)).
		fk := c.OutputRate()
		bin := func(f float64) int { return int(math.Round(f / fk * float64(bt.AliasSamples))) }
		shared := 0
		for _, p := range chain.PathGains(QuantisedChain(c, res.Widths), bt.AliasHz, 0) {
			if bin(p.OutputHz) == bin(bt.AliasOutHz) && p.Gain > 1e-3*math.Pow(10, -bt.AliasResponseDB/20)*c.Gain(0) {
				shared++
			}
		}
		if shared > 1 {
			t.Logf("%s: %d paths share the alias's bin: bit-true %.2f dB, one path %.2f dB", chain.Notation(c.Plan), shared, bt.AliasRejectionDB, bt.AliasResponseDB)
		}
		// Where paths share the bin, the run measures the worst phase
		// and the response is the paths' sum: the same comparison.
		if bt.AliasValid {
			d := math.Abs(bt.AliasRejectionDB - bt.AliasResponseDB)
			if d > 1 {
				t.Errorf("%s: bit-true alias %.2f dB at %g Hz, the quantised response %.2f dB", chain.Notation(c.Plan), bt.AliasRejectionDB, bt.AliasHz, bt.AliasResponseDB)
			}
			worstTone = math.Max(worstTone, d)
			checked++
		}
	}
	t.Logf("Analyze at most %.4f dB below the dense scan; bit-true alias tones within %.3f dB of the response (%d valid)", worstGap, worstTone, checked)
}

// TestFractionalStopped: a cancelled context stops the plan and the
// bit-true run of a fractional chain with an error wrapping ctx.Err().
func TestFractionalStopped(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 26))
	for _, fa := range []bool{false, true} {
		spec, c := randomFracChain(rng, fa)
		if c == nil {
			t.Fatal("no chain")
		}
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		if _, err := EvaluateContext(ctx, spec, c, Settings{}, Signal{}); !errors.Is(err, context.Canceled) {
			t.Errorf("%s: EvaluateContext after cancel: %v", chain.Notation(c.Plan), err)
		}
		cas, _, err := FromChain(spec, c)
		if err != nil {
			t.Fatal(err)
		}
		ws, _, err := PlanChain(spec, c, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := BitTrueContext(ctx, cas, ws, Signal{}); !errors.Is(err, context.Canceled) {
			t.Errorf("%s: BitTrueContext after cancel: %v", chain.Notation(c.Plan), err)
		}
		// RunCodes gives Model's codes (the same integer data path).
		x := randomCodes(rng, 1500, ws.InputBits)
		codes, fl, err := RunCodes(context.Background(), cas, ws, x)
		if err != nil {
			t.Fatal(err)
		}
		md, _ := NewModel(cas, ws)
		out, err := md.Run(x)
		if err != nil {
			t.Fatal(err)
		}
		last := out[len(out)-1]
		if len(codes) != len(last) || len(fl) != len(codes) {
			t.Fatalf("%s: RunCodes %d codes, %d floats; Model %d", chain.Notation(c.Plan), len(codes), len(fl), len(last))
		}
		// RunCodes makes room for its outputs at once, never less than
		// the Model makes, on inputs of any length.
		for _, n := range []int{1, 2, 7, 99, 1000, 1499, len(x)} {
			fresh, _ := NewModel(cas, ws)
			out, err := fresh.Run(x[:n])
			if err != nil {
				t.Fatal(err)
			}
			if got, room := len(out[len(out)-1]), decimationRoom(cas, n); got > room {
				t.Errorf("%s: %d inputs make %d outputs; RunCodes made room for %d", chain.Notation(c.Plan), n, got, room)
			}
		}
		for i := range last {
			if codes[i] != last[i] {
				t.Fatalf("%s: RunCodes y[%d] = %d, Model %d", chain.Notation(c.Plan), i, codes[i], last[i])
			}
		}
	}
}

// TestFarrowFloatMatchesRun holds the bit-true run's float Farrow stage,
// run in random blocks, to farrow.Filter.Run at chain.FarrowTimes (which
// package farrow holds to the direct sum over h(t - n)), on the designed
// stages of seeded random chains: the same outputs, to rounding.
func TestFarrowFloatMatchesRun(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 27))
	for range 4 {
		_, c := randomFracChain(rng, true)
		if c == nil {
			t.Fatal("no chain")
		}
		st := c.Stages[len(c.Stages)-1].(chain.FarrowStage)
		x := make([]float64, 1200)
		for i := range x {
			x[i] = 2*rng.Float64() - 1
		}
		f := newFarrowFloat(Stage{Up: st.Up, Down: st.Down, Farrow: st.Filter.Coef}, 1+rng.IntN(12))
		var got []float64
		for i := 0; i < len(x); {
			n := min(len(x)-i, 1+rng.IntN(90))
			got = f.run(x[i:i+n], got)
			i += n
		}
		want := st.Filter.Run(x, chain.FarrowTimes(st.Up, st.Down, len(x)))
		if len(got) == 0 || len(got) > len(want) {
			t.Fatalf("%s: %d outputs, Run %d", chain.Notation(c.Plan), len(got), len(want))
		}
		for i := range got {
			if math.Abs(got[i]-want[i]) > 1e-12 {
				t.Fatalf("%s: y[%d] = %.17g, Run %.17g", chain.Notation(c.Plan), i, got[i], want[i])
			}
		}
	}
}

// TestFarrowBlocksAligned: with a narrow mu word (some phases' mu round
// up to 1, moving their time to the next sample) the integer and float
// chains still give the same outputs in every block, and Evaluate runs.
func TestFarrowBlocksAligned(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 28))
	for range 3 {
		spec, c := randomFracChain(rng, true)
		if c == nil {
			t.Fatal("no chain")
		}
		st := c.Stages[len(c.Stages)-1].(chain.FarrowStage)
		mb := max(1, bitsLen(st.Up-1)-2)
		s := Settings{MuBits: mb}
		spec.CoefBits = 16 // a narrow mu meets no bands: the width is set
		cas, _, _ := FromChain(spec, c)
		ws, _, err := PlanChain(spec, c, s)
		if err != nil {
			t.Fatal(err)
		}
		cs := newChainState(cas, ws)
		for range 40 {
			x := make([]float64, 1+rng.IntN(300))
			for i := range x {
				x[i] = 0.5 * (2*rng.Float64() - 1)
			}
			yi, yf := cs.run(x)
			if len(yi) != len(yf) {
				t.Fatalf("%s (mu %d bits): a block gave %d integer and %d float outputs", chain.Notation(c.Plan), mb, len(yi), len(yf))
			}
		}
		res, err := Evaluate(spec, c, s, Signal{})
		if err != nil || res.BitTrueErr != nil {
			t.Fatalf("%s (mu %d bits): %v, %v", chain.Notation(c.Plan), mb, err, res.BitTrueErr)
		}
		t.Logf("%s, mu %d bits: bit-true SNR %.1f dB", chain.Notation(c.Plan), mb, res.BitTrue.SNRDB)
	}
}

// TestMuBitsChecked: Settings.MuBits outside [0, 32] is refused with a
// message that names it.
func TestMuBitsChecked(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 29))
	spec, c := randomFracChain(rng, true)
	for _, mb := range []int{-1, 33} {
		if _, _, err := PlanChain(spec, c, Settings{MuBits: mb}); err == nil || !strings.Contains(err.Error(), "MuBits") {
			t.Errorf("MuBits %d: %v", mb, err)
		}
	}
}

// A fractional stage whose accumulator passes 63 bits no longer ends the
// word-length plan: the stages after it are planned too, so that the width
// the error names fits them all. The invented 100 to 3.75 MS/s I/Q chain
// cic4m1r5 > poly3/8 > fir2 at 16-bit input, 30-bit words and 36-bit
// coefficients: the polyphase stage is 1 bit over and the last FIR 4, so
// 32 bits are needed; stopping at the polyphase stage named 35, at which
// the last FIR still failed.
func TestFractionalAccumulatorErrorGoesOn(t *testing.T) {
	spec := chain.Spec{InputRate: 100e6, OutputRate: 3.75e6, Passband: 1.2e6, RippleDB: 0.1, RejectionDB: 80, Complex: true,
		InputBits: 16, OutputBits: 30, CoefBits: 36}
	c := designed(t, spec, "cic4m1r5 > poly3/8 > fir2")
	_, _, err := PlanChain(spec, c, Settings{})
	ae := AsAccumulatorError(err)
	if ae == nil {
		t.Fatalf("err = %v, want an AccumulatorError", err)
	}
	// Each stage alone, on the data word it has in the chain (planned at
	// a width that fits): the most any is over is the excess.
	cas, w, err := FromChain(spec, c)
	if err != nil {
		t.Fatal(err)
	}
	narrow := spec
	narrow.CoefBits = 24
	ws, _, err := PlanChain(narrow, c, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	most := 0
	for i := 1; i < len(cas.Stages); i++ {
		one := cas
		one.InputRate = cas.Rates()[i]
		one.Stages = cas.Stages[i : i+1]
		_, err := Plan(one, Words{InputBits: ws.Stages[i].InputBits, OutputBits: ws.Stages[i].OutputBits, CoefBits: w.CoefBits}, Settings{})
		if a := AsAccumulatorError(err); a != nil {
			most = max(most, a.NeedBits-MaxAccumulatorBits)
		}
	}
	if ae.Excess() != most || most < 2 {
		t.Errorf("excess %d bits; the stages alone are over by at most %d", ae.Excess(), most)
	}
	fit := spec
	fit.CoefBits -= ae.Excess()
	if _, _, err := PlanChain(fit, c, Settings{}); AsAccumulatorError(err) != nil {
		t.Errorf("at the %d bits the error names: %v", fit.CoefBits, err)
	}
}

// A polyphase stage sums one phase at a time: its accumulator is held to
// the widest phase's sum, not the whole prototype's (L times as large),
// which refused widths that fit. The invented 100 to 3.84 MS/s I/Q chain
// cic4m1r5 > poly24/25 > fir5 at 30-bit data words and 30-bit
// coefficients: the whole prototype would need over 63 bits, each phase
// fits, and the widest phase's worst-case sums (each tap's sign at full
// scale, common practice) need exactly the planned width.
func TestPolyphaseAccumulatorPerPhase(t *testing.T) {
	spec := chain.Spec{InputRate: 100e6, OutputRate: 3.84e6, Passband: 1.6e6, Protected: 1.9e6, RippleDB: 0.2, RejectionDB: 70, Complex: true,
		InputBits: 30, OutputBits: 30, CoefBits: 30}
	c := designed(t, spec, "cic4m1r5 > poly24/25 > fir5")
	ws, _, err := PlanChain(spec, c, Settings{})
	if err != nil {
		t.Fatalf("plan at 30-bit coefficients: %v", err)
	}
	sw := ws.Stages[1]
	h, in := sw.Coefficients.Ints, sw.InputBits
	if whole := AccumulatorBits(h, in); whole <= MaxAccumulatorBits {
		t.Fatalf("the whole prototype needs %d bits: not the case this test is for", whole)
	}
	widest := 0
	for p := 0; p < sw.Up; p++ {
		var pos, neg big.Int
		for k := p; k < len(h); k += sw.Up {
			v := big.NewInt(h[k])
			if h[k] > 0 {
				pos.Add(&pos, v)
			} else {
				neg.Sub(&neg, v)
			}
		}
		// Extremes: P (2^(in-1) - 1) + N 2^(in-1) and -(P 2^(in-1) + N (2^(in-1) - 1)).
		full := new(big.Int).Lsh(big.NewInt(1), uint(in-1))
		top := new(big.Int).Add(new(big.Int).Mul(&pos, new(big.Int).Sub(full, big.NewInt(1))), new(big.Int).Mul(&neg, full))
		low := new(big.Int).Add(new(big.Int).Mul(&pos, full), new(big.Int).Mul(&neg, new(big.Int).Sub(full, big.NewInt(1))))
		for w := 2; ; w++ {
			lim := new(big.Int).Lsh(big.NewInt(1), uint(w-1))
			if top.Cmp(new(big.Int).Sub(lim, big.NewInt(1))) <= 0 && low.Cmp(lim) <= 0 {
				widest = max(widest, w)
				break
			}
		}
	}
	if sw.AccumulatorBits != widest || widest > MaxAccumulatorBits {
		t.Errorf("planned accumulator %d bits; the widest phase's worst-case sums need %d", sw.AccumulatorBits, widest)
	}
}
