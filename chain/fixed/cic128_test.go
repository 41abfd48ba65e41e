package fixed

import (
	"math/big"
	"math/rand/v2"
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
