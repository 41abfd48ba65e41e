package fixed

import (
	"math/bits"
	"slices"
)

// MaxModelBits is the widest CIC register the integer model runs: 127
// bits, in two's-complement 128-bit arithmetic (int128), which holds any
// CIC whose register growth N log2(RM) leaves room for the input word
// below it. Registers up to 63 bits run in int64 (cicState), wider ones in
// int128 (cicState128), with the same rules.
const MaxModelBits = 127

// int128 is a two's-complement 128-bit integer: hi holds bits 64..127
// (with the sign), lo bits 0..63.
type int128 struct {
	hi int64
	lo uint64
}

func (a int128) add(b int128) int128 {
	lo, c := bits.Add64(a.lo, b.lo, 0)
	return int128{hi: a.hi + b.hi + int64(c), lo: lo}
}

func (a int128) sub(b int128) int128 {
	lo, c := bits.Sub64(a.lo, b.lo, 0)
	return int128{hi: a.hi - b.hi - int64(c), lo: lo}
}

// wrap reduces a to a w-bit two's-complement value, 1 <= w <= 128.
func (a int128) wrap(w int) int128 {
	switch {
	case w >= 128:
		return a
	case w > 64:
		s := uint(128 - w)
		return int128{hi: a.hi << s >> s, lo: a.lo}
	default:
		s := uint(64 - w)
		lo := int64(a.lo) << s >> s
		return int128{hi: lo >> 63, lo: uint64(lo)}
	}
}

// shr is the arithmetic right shift (floor division by 2^k), k >= 0.
func (a int128) shr(k int) int128 {
	switch {
	case k == 0:
		return a
	case k < 64:
		return int128{hi: a.hi >> uint(k), lo: a.lo>>uint(k) | uint64(a.hi)<<uint(64-k)}
	case k < 128:
		return int128{hi: a.hi >> 63, lo: uint64(a.hi >> uint(k-64))}
	default:
		return int128{hi: a.hi >> 63, lo: uint64(a.hi >> 63)}
	}
}

// shl is the left shift by k >= 0 (bits above 127 are lost).
func (a int128) shl(k int) int128 {
	switch {
	case k == 0:
		return a
	case k < 64:
		return int128{hi: a.hi<<uint(k) | int64(a.lo>>uint(64-k)), lo: a.lo << uint(k)}
	case k < 128:
		return int128{hi: int64(a.lo << uint(k-64)), lo: 0}
	default:
		return int128{}
	}
}

// shiftTo128 is shiftTo in int128: v from units of 2^from to units of
// 2^to, truncating (floor).
func shiftTo128(v int128, from, to int) int128 {
	if to >= from {
		return v.shr(to - from)
	}
	return v.shl(from - to)
}

// cicState128 is cicState for registers of 64 to 127 bits: the same
// truncations, wraps and output sampling, in int128.
type cicState128 struct {
	p      *CICPruning
	integ  []int128
	combIn [][]int128
	pos    int
	phase  int // input samples since the last output (k mod R)
	// shift[j] is the LSBs integrator j drops from its input:
	// Dropped[j] less the previous register's (the input's for j = 0).
	shift []int
	// narrow is the first integrator from which on every register is at
	// most 64 bits wide: those run in int64 (narrowInteg), since a w-bit
	// wrap keeps only the low w bits of the sum and, for w <= 64, the
	// sign-extended low word holds the whole register (the high word is
	// its sign).
	narrow      int
	narrowInteg []int64
	aligned     bool // see msbAligned
	// blocks: aligned, and no integrator shifts its input up (run).
	blocks bool
	wbuf   []int128 // a stretch's wide integrator outputs (run)
	nbuf   []int64  // a stretch's narrow integrator outputs (run)
}

func (s *cicState128) prepare() {
	s.shift = make([]int, s.p.N)
	prev := 0
	for j := range s.shift {
		s.shift[j] = s.p.Dropped[j] - prev
		prev = s.p.Dropped[j]
	}
	s.narrow = s.p.N
	for s.narrow > 0 && s.p.RegisterBits[s.narrow-1] <= 64 {
		s.narrow--
	}
	s.narrowInteg = make([]int64, s.p.N)
	s.aligned = msbAligned(s.p)
	s.blocks = s.aligned && !slices.ContainsFunc(s.shift, func(d int) bool { return d < 0 })
	if s.blocks {
		s.wbuf = make([]int128, cicStretch)
		s.nbuf = make([]int64, cicStretch)
	}
}

func newCICState128(p *CICPruning) *cicState128 {
	s := &cicState128{p: p, integ: make([]int128, p.N), combIn: make([][]int128, p.N)}
	for j := range s.combIn {
		s.combIn[j] = make([]int128, p.M)
	}
	return s
}

func (s *cicState128) run(x, out []int64) []int64 {
	if s.shift == nil {
		s.prepare()
	}
	if !s.blocks {
		return s.runSamples(x, out)
	}
	// As cicState.run: an aligned CIC whose integrators only drop bits
	// runs one integrator over a stretch of the block, then the next, the
	// same steps as runSamples for each register.
	for len(x) > 0 {
		k := min(len(x), cicStretch)
		out = s.runStretch(x[:k], out)
		x = x[k:]
	}
	return out
}

// runStretch is run on at most cicStretch samples.
func (s *cicState128) runStretch(x, out []int64) []int64 {
	p := s.p
	n, nw := p.N, s.narrow
	var wb []int128
	if nw > 0 {
		wb = s.wbuf[:len(x)]
		s.integ[0] = integrate128From64(s.integ[0], x, wb, s.shift[0])
		for j := 1; j < nw; j++ {
			s.integ[j] = integrate128(s.integ[j], wb, s.shift[j])
		}
	}
	var nb []int64
	if nw < n {
		nb = s.nbuf[:len(x)]
		// The first narrow integrator's input is shifted in int128 (its
		// source may be wide); only the low word then matters.
		if nw > 0 {
			lowWords(nb, wb, s.shift[nw])
			s.narrowInteg[nw] = integrate64(s.narrowInteg[nw], nb, 0)
		} else {
			copy(nb, x)
			s.narrowInteg[nw] = integrate64(s.narrowInteg[nw], nb, s.shift[nw])
		}
		for j := nw + 1; j < n; j++ {
			s.narrowInteg[j] = integrate64(s.narrowInteg[j], nb, s.shift[j])
		}
	}
	r := p.R
	for i := (r - s.phase) % r; i < len(x); i += r {
		if nw < n {
			out = append(out, s.comb128(int128{hi: nb[i] >> 63, lo: uint64(nb[i])}))
		} else {
			out = append(out, s.comb128(wb[i]))
		}
	}
	s.phase = (s.phase + len(x)) % r
	return out
}

// cicStretch is how many input samples the block form of the integer CICs
// runs one integrator over before the next: their outputs then stay near
// the core (16 KiB of int64 words; 32 KiB of int128 and 16 KiB of int64
// in the 128-bit form).
const cicStretch = 2048

// integrate128 runs an integrator from acc over v in place: v[i] becomes
// the register after input v[i] floored by 2^d (d >= 0), modulo 2^128.
func integrate128(acc int128, v []int128, d int) int128 {
	var c uint64
	switch {
	case d == 0:
		for i := range v {
			acc.lo, c = bits.Add64(acc.lo, v[i].lo, 0)
			acc.hi += v[i].hi + int64(c)
			v[i] = acc
		}
	case d < 64:
		sr, sl := uint(d), uint(64-d)
		for i := range v {
			acc.lo, c = bits.Add64(acc.lo, v[i].lo>>sr|uint64(v[i].hi)<<sl, 0)
			acc.hi += v[i].hi>>sr + int64(c)
			v[i] = acc
		}
	default:
		sr := uint(min(d-64, 63))
		for i := range v {
			acc.lo, c = bits.Add64(acc.lo, uint64(v[i].hi>>sr), 0)
			acc.hi += v[i].hi>>63 + int64(c)
			v[i] = acc
		}
	}
	return acc
}

// integrate128From64 is integrate128 on the int64 inputs x, writing the
// registers to v.
func integrate128From64(acc int128, x []int64, v []int128, d int) int128 {
	v = v[:len(x)]
	sr := uint(min(d, 63)) // an int64 floored by 2^d, d >= 63, is its sign
	var c uint64
	for i, x0 := range x {
		u := x0 >> sr
		acc.lo, c = bits.Add64(acc.lo, uint64(u), 0)
		acc.hi += u>>63 + int64(c)
		v[i] = acc
	}
	return acc
}

// lowWords writes to dst the low words of v floored by 2^d (d >= 0).
func lowWords(dst []int64, v []int128, d int) {
	dst = dst[:len(v)]
	switch {
	case d == 0:
		for i := range v {
			dst[i] = int64(v[i].lo)
		}
	case d < 64:
		sr, sl := uint(d), uint(64-d)
		for i := range v {
			dst[i] = int64(v[i].lo>>sr | uint64(v[i].hi)<<sl)
		}
	default:
		sr := uint(min(d-64, 63))
		for i := range v {
			dst[i] = v[i].hi >> sr
		}
	}
}

// integrate64 is integrate128 modulo 2^64 (int64 shifts by 64 or more,
// which the 128-bit form's narrow integrators may be given, yield the
// sign, as int128.shr's low word does).
func integrate64(acc int64, v []int64, d int) int64 {
	sr := uint(d)
	for i := range v {
		acc += v[i] >> sr
		v[i] = acc
	}
	return acc
}

// comb128 runs the combs on v, the last integrator's value at an output
// sample (wrapped here to its register), and returns the output.
func (s *cicState128) comb128(v int128) int64 {
	p := s.p
	n := p.N
	v = v.wrap(p.RegisterBits[n-1])
	unit := p.Dropped[n-1]
	for j := 0; j < n; j++ {
		d := p.Dropped[n+j]
		in := shiftTo128(v, unit, d).wrap(p.RegisterBits[n+j])
		old := s.combIn[j][s.pos]
		s.combIn[j][s.pos] = in
		v, unit = in.sub(old).wrap(p.RegisterBits[n+j]), d
	}
	s.pos = (s.pos + 1) % p.M
	// The output word is at most 32 bits: its low word holds it.
	return int64(shiftTo128(v, unit, p.Dropped[2*n]).wrap(p.OutputBits).lo)
}

func (s *cicState128) runSamples(x, out []int64) []int64 {
	p := s.p
	n, r := p.N, p.R
	if s.shift == nil {
		s.prepare()
	}
	nw := s.narrow
	wide, narrow := s.integ[:nw], s.narrowInteg[nw:n]
	shift, regs := s.shift[:n], p.RegisterBits[:n]
	for _, x0 := range x {
		// The integrators, at the input rate: the same steps as the
		// combs' (comb128: shiftTo128, add, wrap), written out on the two
		// words.
		hi, lo := x0>>63, uint64(x0)
		for j := range wide {
			if d := shift[j]; d > 0 { // floor to the register's unit
				if d < 64 {
					lo = lo>>uint(d) | uint64(hi)<<uint(64-d)
					hi >>= uint(d)
				} else {
					lo = uint64(hi >> uint(min(d-64, 63)))
					hi >>= 63
				}
			} else if d < 0 { // a finer unit: shift up
				v := int128{hi: hi, lo: lo}.shl(-d)
				hi, lo = v.hi, v.lo
			}
			var c uint64
			lo, c = bits.Add64(wide[j].lo, lo, 0)
			hi = wide[j].hi + hi + int64(c)
			// Aligned registers run unwrapped, modulo 2^128 (see
			// msbAligned).
			if w := regs[j]; !s.aligned && w > 64 {
				sh := uint(128 - w)
				hi = hi << sh >> sh
			} else if !s.aligned {
				sh := uint(64 - w)
				l := int64(lo) << sh >> sh
				hi, lo = l>>63, uint64(l)
			}
			wide[j] = int128{hi: hi, lo: lo}
		}
		if len(narrow) > 0 {
			// The first narrow integrator's input is shifted in int128
			// (its source may be wide); only the low word then matters.
			d := shift[nw]
			switch {
			case d > 0 && d < 64:
				lo = lo>>uint(d) | uint64(hi)<<uint(64-d)
			case d >= 64:
				lo = uint64(hi >> uint(min(d-64, 63)))
			case d < 0:
				lo = int128{hi: hi, lo: lo}.shl(-d).lo
			}
			v := int64(lo)
			for j := range narrow {
				if j > 0 {
					// int64 shifts by 64 or more give the sign (right)
					// or zero (left), as shiftTo128's low word does.
					if d := shift[nw+j]; d >= 0 {
						v >>= uint(d)
					} else {
						v <<= uint(-d)
					}
				}
				v += narrow[j]
				if !s.aligned {
					sh := uint(64 - regs[nw+j])
					v = v << sh >> sh
				}
				narrow[j] = v
			}
		}
		if s.phase != 0 {
			if s.phase++; s.phase == r {
				s.phase = 0
			}
			continue
		}
		if s.phase++; s.phase == r {
			s.phase = 0
		}
		if nw < n {
			out = append(out, s.comb128(int128{hi: s.narrowInteg[n-1] >> 63, lo: uint64(s.narrowInteg[n-1])}))
		} else {
			out = append(out, s.comb128(s.integ[n-1]))
		}
	}
	return out
}

// newCICFilter returns the integer CIC of p in the narrowest arithmetic
// that holds its registers.
func newCICFilter(p *CICPruning) intFilter {
	if p.FullBits > 63 {
		return newCICState128(p)
	}
	return newCICState(p)
}
