package mcm

import "math/bits"

// Digit is one digit of a signed-digit number: -1, 0 or +1.
type Digit int8

// CSD returns the canonical signed-digit form (the non-adjacent form) of c:
// digits d[k] in {-1, 0, +1}, least significant first, with
// c = sum of d[k]·2^k, no two adjacent digits nonzero and the last digit
// nonzero. Of all signed-digit forms of c it has the fewest nonzero digits
// (Reitwiesner 1960). CSD(0) is empty. Every int64 has one, math.MinInt64
// included (a single -1 at position 63); at most 64 digits.
func CSD(c int64) []Digit {
	m := uint64(c)
	if c < 0 {
		m = -m // two's complement magnitude; 2^63 for math.MinInt64
	}
	var d []Digit
	for m != 0 {
		switch {
		case m&1 == 0:
			d = append(d, 0)
		case m&3 == 3: // ...11: digit -1, carry up
			d = append(d, -1)
			m++ // m < 2^63 here, no overflow
		default: // ...01
			d = append(d, 1)
			m--
		}
		m >>= 1
	}
	if c < 0 {
		for k := range d {
			d[k] = -d[k]
		}
	}
	return d
}

// weight is the number of nonzero digits in the CSD form of m.
func weight(m uint64) int {
	if m < 1<<62 {
		// Digit k of the NAF is bit k+1 of 3m less bit k+1 of m
		// (common practice), so it is nonzero where those bits differ.
		return bits.OnesCount64((3*m ^ m) >> 1)
	}
	n := 0
	for m != 0 {
		if m&1 == 1 {
			n++
			if m&3 == 3 {
				m++
			} else {
				m--
			}
		}
		m >>= 1
	}
	return n
}

// fundamental returns the odd part of |c| and the power of two it was
// shifted by: |c| = f << s. fundamental(0) is (0, 0).
func fundamental(c int64) (f uint64, s int) {
	m := uint64(c)
	if c < 0 {
		m = -m
	}
	if m == 0 {
		return 0, 0
	}
	s = bits.TrailingZeros64(m)
	return m >> s, s
}

// CSDAdders is the plain-CSD baseline: the adders needed to build every
// coefficient on its own from its CSD form, one adder (or subtractor) per
// nonzero digit after the first, counted once per distinct odd fundamental
// (c, -c and c·2^k share one). Zero and powers of two cost nothing.
func CSDAdders(coefs []int64) int {
	seen := make(map[uint64]bool, len(coefs))
	n := 0
	for _, c := range coefs {
		f, _ := fundamental(c)
		if f <= 1 || seen[f] {
			continue
		}
		seen[f] = true
		n += weight(f) - 1
	}
	return n
}
