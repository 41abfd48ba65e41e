package mcm

import (
	"math"
	"math/big"
	"math/rand"
	"testing"
)

// checkForm checks that d is a valid CSD form of c: digits in {-1, 0, 1},
// summing to c exactly (in big integers), no two adjacent nonzero, the
// last nonzero; it returns the nonzero count.
func checkForm(t *testing.T, c int64, d []Digit) int {
	t.Helper()
	sum := new(big.Int)
	nz := 0
	for k, x := range d {
		if x < -1 || x > 1 {
			t.Fatalf("CSD(%d) digit %d = %d", c, k, x)
		}
		if x == 0 {
			continue
		}
		nz++
		if k > 0 && d[k-1] != 0 {
			t.Fatalf("CSD(%d) = %v: digits %d and %d both nonzero", c, d, k-1, k)
		}
		sum.Add(sum, new(big.Int).Lsh(big.NewInt(int64(x)), uint(k)))
	}
	if sum.Cmp(big.NewInt(c)) != 0 {
		t.Fatalf("CSD(%d) = %v sums to %v", c, d, sum)
	}
	if len(d) > 0 && d[len(d)-1] == 0 {
		t.Fatalf("CSD(%d) = %v ends in a zero digit", c, d)
	}
	return nz
}

// TestCSDMinimalExhaustive compares the nonzero digits of CSD(v) with a
// brute-force minimum over every signed-digit vector of 13 digits
// (positions 0..12, 3^13 vectors), for every |v| < 2^12: the non-adjacent
// form has the fewest nonzero digits of any signed-digit form (Reitwiesner
// 1960), and fits 13 digits here.
func TestCSDMinimalExhaustive(t *testing.T) {
	const digits = 13
	const off = 1<<digits - 1 // values in [-(2^13 - 1), 2^13 - 1]
	minW := make([]int8, 2*off+1)
	for i := range minW {
		minW[i] = 127
	}
	var rec func(k int, v int, w int8)
	rec = func(k int, v int, w int8) {
		if k == digits {
			if w < minW[v+off] {
				minW[v+off] = w
			}
			return
		}
		rec(k+1, v, w)
		rec(k+1, v+1<<k, w+1)
		rec(k+1, v-1<<k, w+1)
	}
	rec(0, 0, 0)
	for v := int64(-(1<<12 - 1)); v < 1<<12; v++ {
		d := CSD(v)
		nz := checkForm(t, v, d)
		if nz != int(minW[v+off]) {
			t.Fatalf("CSD(%d) = %v has %d nonzero digits; brute force finds %d", v, d, nz, minW[v+off])
		}
		m := uint64(v)
		if v < 0 {
			m = uint64(-v)
		}
		if weight(m) != nz {
			t.Fatalf("weight(%d) = %d, CSD has %d nonzero digits", m, weight(m), nz)
		}
	}
}

// TestCSDRandom checks the form on random integers of every width and on
// the extremes of int64, and weight (both of its paths) against it.
func TestCSDRandom(t *testing.T) {
	rng := rand.New(rand.NewSource(11))
	vals := []int64{0, 1, -1, 2, 3, -3, math.MaxInt64, math.MinInt64, math.MinInt64 + 1,
		1 << 62, 1<<62 - 1, 1<<62 + 1, -(1 << 62), 1<<61 - 1, -(1 << 61)}
	for i := 0; i < 20000; i++ {
		w := 1 + rng.Intn(63)
		v := rng.Int63n(1 << (w - 1))
		if w == 63 {
			v = rng.Int63()
		}
		if rng.Intn(2) == 0 {
			v = -v
		}
		vals = append(vals, v)
	}
	for _, v := range vals {
		d := CSD(v)
		nz := checkForm(t, v, d)
		if len(d) > 64 {
			t.Fatalf("CSD(%d) has %d digits", v, len(d))
		}
		m := uint64(v)
		if v < 0 {
			m = -m
		}
		if weight(m) != nz {
			t.Fatalf("weight(%d) = %d, CSD has %d nonzero digits", m, weight(m), nz)
		}
	}
	if d := CSD(math.MinInt64); len(d) != 64 || d[63] != -1 {
		t.Fatalf("CSD(MinInt64) = %v, want a single -1 at position 63", d)
	}
	if d := CSD(0); len(d) != 0 {
		t.Fatalf("CSD(0) = %v, want empty", d)
	}
}

// TestCSDAdders checks the plain-CSD baseline on cases counted by hand.
func TestCSDAdders(t *testing.T) {
	for _, tc := range []struct {
		coefs []int64
		want  int
		why   string
	}{
		{nil, 0, "nothing to build"},
		{[]int64{0, 1, -1, 2, -64, 1 << 40}, 0, "zero and powers of two are wires"},
		{[]int64{3}, 1, "3 = 4 - 1: two digits"},
		{[]int64{3, -3, 6, -12, 3 << 30}, 1, "one odd fundamental, 3"},
		{[]int64{5, 7}, 2, "5 = 4 + 1, 7 = 8 - 1: one adder each"},
		{[]int64{45}, 3, "45 = 64 - 16 - 4 + 1: four digits"},
		{[]int64{7, 45, -90}, 4, "1 for 7, 3 for 45, -90 = -(45 << 1) shared"},
		{[]int64{0x5555}, 7, "0x5555 = 0101010101010101b: eight isolated ones, already non-adjacent"},
		{[]int64{-(1 << 61)}, 0, "a power of two"},
	} {
		if got := CSDAdders(tc.coefs); got != tc.want {
			t.Errorf("CSDAdders(%v) = %d, want %d (%s)", tc.coefs, got, tc.want, tc.why)
		}
	}
}
