package fixed

import (
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// big128 is a's value as a big.Int.
func big128(a int128) *big.Int {
	v := new(big.Int).Lsh(big.NewInt(a.hi), 64)
	return v.Add(v, new(big.Int).SetUint64(a.lo))
}

// wrapBig is the w-bit two's-complement reduction of v (Euclidean modulus).
func wrapBig(v *big.Int, w int) *big.Int {
	m := new(big.Int).Lsh(big.NewInt(1), uint(w))
	r := new(big.Int).Mod(v, m)
	if r.Cmp(new(big.Int).Rsh(m, 1)) >= 0 {
		r.Sub(r, m)
	}
	return r
}

// The int128 operations are math/big's on 20 000 seeded random operands:
// sums and differences modulo 2^128, wraps to 1..128 bits, floor shifts
// right by 0..140 bits, shifts left by 0..127 bits.
func TestInt128AgainstBig(t *testing.T) {
	rng := rand.New(rand.NewPCG(128, 1))
	rnd := func() int128 {
		a := int128{hi: int64(rng.Uint64()), lo: rng.Uint64()}
		return a.wrap(1 + rng.IntN(128))
	}
	for i := 0; i < 20000; i++ {
		a, b := rnd(), rnd()
		if got, want := big128(a.add(b)), wrapBig(new(big.Int).Add(big128(a), big128(b)), 128); got.Cmp(want) != 0 {
			t.Fatalf("%v + %v = %v, want %v", big128(a), big128(b), got, want)
		}
		if got, want := big128(a.sub(b)), wrapBig(new(big.Int).Sub(big128(a), big128(b)), 128); got.Cmp(want) != 0 {
			t.Fatalf("%v - %v = %v, want %v", big128(a), big128(b), got, want)
		}
		w := 1 + rng.IntN(128)
		if got, want := big128(a.wrap(w)), wrapBig(big128(a), w); got.Cmp(want) != 0 {
			t.Fatalf("wrap(%v, %d) = %v, want %v", big128(a), w, got, want)
		}
		k := rng.IntN(141)
		// Floor division by 2^k: big.Int.Div is Euclidean, floor for a
		// positive divisor.
		if got, want := big128(a.shr(k)), new(big.Int).Div(big128(a), new(big.Int).Lsh(big.NewInt(1), uint(k))); got.Cmp(want) != 0 {
			t.Fatalf("%v >> %d = %v, want %v", big128(a), k, got, want)
		}
		k = rng.IntN(128)
		if got, want := big128(a.shl(k)), wrapBig(new(big.Int).Lsh(big128(a), uint(k)), 128); got.Cmp(want) != 0 {
			t.Fatalf("%v << %d = %v, want %v", big128(a), k, got, want)
		}
	}
}

// The int128 CIC is the int64 one wherever both apply: 150 seeded random
// pruned CICs with registers up to 63 bits, full-scale random input.
func TestCIC128AgreesWithInt64(t *testing.T) {
	rng := rand.New(rand.NewPCG(128, 2))
	n := 0
	for n < 150 {
		in := 2 + rng.IntN(20)
		p, err := chain.PruneCIC(1+rng.IntN(6), 1+rng.IntN(2), 2+rng.IntN(30), in, 2+rng.IntN(30))
		if err != nil || p.FullBits > 63 {
			continue
		}
		n++
		x := make([]int64, 300+rng.IntN(500))
		for i := range x {
			x[i] = int64(rng.Uint64N(1<<in)) - 1<<(in-1)
		}
		a := newCICState(&p).run(x, nil)
		b := newCICState128(&p).run(x, nil)
		for i := range a {
			if a[i] != b[i] {
				t.Fatalf("CIC %+v sample %d: int64 %d, int128 %d", p, i, a[i], b[i])
			}
		}
	}
}

// refCICBig is the pruned CIC of p in math/big, written from the pruning's
// definition (Hogenauer 1981): register j holds its value in units of
// 2^Dropped[j], takes its input floored to that unit and wraps at
// RegisterBits[j]; the combs (delay M) run at the output rate, on the
// last integrator at input indices 0, R, 2R, ...; the output is floored to
// 2^Dropped[2N] and wrapped at OutputBits.
func refCICBig(p *CICPruning, x []int64) []int64 {
	n := p.N
	to := func(v *big.Int, from, to int) *big.Int {
		if to >= from {
			return new(big.Int).Rsh(v, uint(to-from)) // floor, as two's complement
		}
		return new(big.Int).Lsh(v, uint(from-to))
	}
	integ := make([]*big.Int, n)
	for j := range integ {
		integ[j] = new(big.Int)
	}
	comb := make([][]*big.Int, n)
	for j := range comb {
		for range p.M {
			comb[j] = append(comb[j], new(big.Int))
		}
	}
	var out []int64
	for k, x0 := range x {
		v, unit := big.NewInt(x0), 0
		for j := 0; j < n; j++ {
			integ[j] = wrapBig(new(big.Int).Add(integ[j], to(v, unit, p.Dropped[j])), p.RegisterBits[j])
			v, unit = integ[j], p.Dropped[j]
		}
		if k%p.R != 0 {
			continue
		}
		pos := (k / p.R) % p.M
		for j := 0; j < n; j++ {
			d := p.Dropped[n+j]
			in := wrapBig(to(v, unit, d), p.RegisterBits[n+j])
			old := comb[j][pos]
			comb[j][pos] = in
			v, unit = wrapBig(new(big.Int).Sub(in, old), p.RegisterBits[n+j]), d
		}
		out = append(out, wrapBig(to(v, unit, p.Dropped[2*n]), p.OutputBits).Int64())
	}
	return out
}

// Both integer CICs are refCICBig: the int128 one (its wide integrators
// in int128, the narrow ones of 64 bits or fewer in int64) on 40 seeded
// random pruned CICs of 64 to 127 bits (most with both kinds of
// integrator), the int64 one on 40 of up to 63 bits; in half of each an
// integrator is narrowed below its successor's top bit, so that the
// integrators must wrap at every step (see msbAligned). The input is
// seeded noise and sustained full scale, run in blocks of seeded random
// lengths.
func TestCICAgainstBig(t *testing.T) {
	rng := rand.New(rand.NewPCG(128, 3))
	mixed := 0
	for _, wide := range []bool{true, false} {
		for cases := 0; cases < 40; {
			in := 4 + rng.IntN(21)
			p, err := chain.PruneCIC(3+rng.IntN(5), 1+rng.IntN(2), 1<<(2+rng.IntN(9)), in, 2+rng.IntN(31))
			if err != nil || (p.FullBits > 63) != wide || p.FullBits > MaxModelBits-2 {
				continue
			}
			cases++
			if cases%2 == 0 {
				// Narrow an integrator before the last by one or two
				// bits: its successor then reads above its top bit.
				p.RegisterBits = slices.Clone(p.RegisterBits)
				p.RegisterBits[rng.IntN(p.N-1)] -= 1 + rng.IntN(2)
				if msbAligned(&p) {
					t.Fatalf("CIC %+v: narrowed, yet aligned", p)
				}
			} else if !msbAligned(&p) {
				t.Fatalf("CIC %+v: not aligned", p)
			}
			if wide && p.RegisterBits[p.N-1] <= 64 {
				mixed++
			}
			rm := p.R * p.M
			x := adversarial(rng, p.N, rm, in)[0]
			for range 2000 + rng.IntN(3000) {
				x = append(x, rng.Int64N(1<<in)-1<<(in-1))
			}
			want := refCICBig(&p, x)
			var s intFilter = newCICState128(&p)
			if !wide {
				s = newCICState(&p)
			}
			var got []int64
			for b := 0; b < len(x); {
				e := min(len(x), b+1+rng.IntN(3*p.R))
				got = s.run(x[b:e], got)
				b = e
			}
			if len(got) != len(want) {
				t.Fatalf("CIC %+v: %d outputs, want %d", p, len(got), len(want))
			}
			for i := range want {
				if got[i] != want[i] {
					t.Fatalf("CIC %+v sample %d: %d, math/big %d", p, i, got[i], want[i])
				}
			}
		}
	}
	if mixed < 10 {
		t.Errorf("only %d of 40 cases mix wide and narrow integrators", mixed)
	}
}

// The block form of both integer CICs (run: one integrator over the whole
// block at a time) gives the outputs of the sample-by-sample form
// (runSamples) on 400 seeded random Hogenauer prunings, 4 to 127 bits
// wide, fed seeded noise and sustained full scale in blocks of seeded
// random lengths; every pruning of chain.PruneCIC takes the block form.
func TestCICBlocksAsSamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(128, 4))
	for cases := 0; cases < 400; {
		in := 2 + rng.IntN(23)
		p, err := chain.PruneCIC(1+rng.IntN(7), 1+rng.IntN(2), 2+rng.IntN(1500), in, 2+rng.IntN(31))
		if err != nil || p.FullBits > MaxModelBits-2 {
			continue
		}
		cases++
		x := adversarial(rng, p.N, p.R*p.M, in)[0]
		for range 1000 + rng.IntN(4000) {
			x = append(x, rng.Int64N(1<<in)-1<<(in-1))
		}
		var blocks intFilter
		var want []int64
		if p.FullBits > 63 {
			a, b := newCICState128(&p), newCICState128(&p)
			a.prepare()
			if !a.blocks {
				t.Fatalf("CIC %+v: a Hogenauer pruning not run in blocks", p)
			}
			blocks, want = a, b.runSamples(x, nil)
		} else {
			a, b := newCICState(&p), newCICState(&p)
			if !a.blocks {
				t.Fatalf("CIC %+v: a Hogenauer pruning not run in blocks", p)
			}
			blocks, want = a, b.runSamples(x, nil)
		}
		var got []int64
		for b := 0; b < len(x); {
			e := min(len(x), b+rng.IntN(3*p.R+2))
			got = blocks.run(x[b:e], got)
			b = e
		}
		if !slices.Equal(got, want) {
			t.Fatalf("CIC %+v: the block form differs from the sample form", p)
		}
	}
}

// The float FIR of the bit-true run (firFloatState, also the float model
// of a CIC) is its definition, y[m] = sum over k = 0..min(L-1, mR) of
// h[k] x[mR-k] summed in that order, each product rounded, to the last bit: 300 seeded random
// filters of 1 to 600 taps decimating by 1 to 40, fed in blocks of seeded
// random lengths.
func TestFIRFloatAsDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(128, 5))
	for range 300 {
		h := make([]float64, 1+rng.IntN(600))
		for k := range h {
			h[k] = rng.NormFloat64()
		}
		r := 1 + rng.IntN(40)
		x := make([]float64, rng.IntN(5000))
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		var want []float64
		for g := 0; g < len(x); g += r {
			var acc float64
			for k := 0; k <= min(len(h)-1, g); k++ {
				acc += float64(h[k] * x[g-k]) // each product rounded (not fused)
			}
			want = append(want, acc)
		}
		s := newFIRFloat(h, r)
		var got []float64
		for b := 0; b < len(x); {
			e := min(len(x), b+rng.IntN(6*r+len(h)/2+2))
			got = s.run(x[b:e], got)
			b = e
		}
		if !slices.Equal(got, want) {
			t.Fatalf("%d taps, R = %d, %d samples: the outputs differ from the definition's", len(h), r, len(x))
		}
	}
}
