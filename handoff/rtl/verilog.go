package rtl

import (
	"fmt"
	"strings"
)

// The helpers here write Verilog expressions whose arithmetic is spelt out
// in bits, so that no result depends on Verilog's rules for signed operands
// and expression widths: every shift and wrap is a part-select of a
// sign-extended vector, every sum is taken in a vector exactly as wide as
// its modulus.

// bitsOf returns a Verilog expression for bits hi..lo (hi = lo + wd - 1) of
// src, a ws-bit two's-complement vector taken as extended without end: bits
// at or above ws repeat the sign bit src[ws-1], bits below 0 are zero. So
// bitsOf(src, ws, s, wd) is src >>> s (floor) wrapped to wd bits for s >= 0,
// and src << -s wrapped to wd bits for s < 0.
func bitsOf(src string, ws, lo, wd int) string {
	if lo == 0 && wd == ws {
		return src
	}
	hi := lo + wd - 1
	var parts []string
	// Sign extension: bits max(lo, ws)..hi.
	if from := max(lo, ws); hi >= from {
		parts = append(parts, repl(hi-from+1, fmt.Sprintf("%s[%d]", src, ws-1)))
	}
	// The vector itself: bits max(lo, 0)..min(hi, ws-1).
	if a, b := min(hi, ws-1), max(lo, 0); a >= b {
		if a == b {
			parts = append(parts, fmt.Sprintf("%s[%d]", src, a))
		} else {
			parts = append(parts, fmt.Sprintf("%s[%d:%d]", src, a, b))
		}
	}
	// Zeros below bit 0: bits lo..min(hi, -1).
	if lo < 0 {
		parts = append(parts, repl(min(hi, -1)-lo+1, "1'b0"))
	}
	if len(parts) == 1 {
		return parts[0]
	}
	return "{" + strings.Join(parts, ", ") + "}"
}

// repl returns n copies of the one-bit expression b as a concatenation.
func repl(n int, b string) string {
	if n == 1 {
		return b
	}
	return fmt.Sprintf("{%d{%s}}", n, b)
}

// pow2Lit returns the w-bit literal 2^k (0 <= k < w) in hexadecimal.
func pow2Lit(w, k int) string {
	return fmt.Sprintf("%d'h%s", w, pow2Hex(k))
}

func pow2Hex(k int) string {
	return string("1248"[k%4]) + strings.Repeat("0", k/4)
}

// maxLit and minLit return the w-bit patterns of the largest and the
// smallest w-bit two's-complement codes, 2^(w-1) - 1 and -2^(w-1).
func maxLit(w int) string { return fmt.Sprintf("{1'b0, %s}", repl(w-1, "1'b1")) }
func minLit(w int) string { return fmt.Sprintf("{1'b1, %s}", repl(w-1, "1'b0")) }

// vec returns the declaration range of a w-bit vector, "[w-1:0]".
func vec(w int) string { return fmt.Sprintf("[%d:0]", w-1) }

// bitsFor returns the width of an unsigned counter that holds 0..n-1 (at
// least 1).
func bitsFor(n int) int {
	b := 1
	for (1 << b) < n {
		b++
	}
	return b
}
