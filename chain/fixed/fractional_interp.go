package fixed

import (
	"fmt"
	"maps"
	"math"
	"math/big"
	"math/bits"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain/farrow"
)

// The transposed Farrow stage of an interpolation cascade (package doc,
// Fractional stages): the transpose of the chain's L/M Farrow stage, which
// raises the rate by M/L. Input m sits at time m M / L of its output
// samples, rounded to the mu word as the decimation stage's output m is
// (farrowTiming: whole samples b and mu); it is multiplied by mu P times
// (the transpose of Horner's rule) and scattered by the rows into the N
// outputs b - N/2 + 1 + n, n = 0..N-1, each the exact sum of what every
// input gave it.

// farrowTGuard is how many bits below the output's LSB the transposed
// stage keeps its mu products: their rounding then adds at most 1/32 of an
// output LSB per product (our choice; the decimation stage rounds its
// Horner products to the branch sums' LSB, which the transpose, taking mu
// before the branches, has no counterpart of).
const farrowTGuard = 4

// farrowTShift returns G, the bits the input word is shifted left before
// the mu products: farrowTGuard below the output's LSB, and at least 2
// below the input's.
func farrowTShift(in, ob int) int { return max(2, ob-in+farrowTGuard) }

// mulRound returns w mu / 2^mb rounded half up (floor(w mu / 2^mb + 1/2)),
// exact for any w and mu < 2^32 through a 128-bit product; mb lies in
// [1, 32] and |result| <= |w| when mu < 2^mb.
func mulRound(w, mu int64, mb int) int64 {
	neg := w < 0
	a := uint64(w)
	if neg {
		a = uint64(-w)
	}
	hi, lo := bits.Mul64(a, uint64(mu))
	if neg {
		lo, hi = ^lo+1, ^hi
		if lo == 0 {
			hi++
		}
	}
	var c uint64
	lo, c = bits.Add64(lo, uint64(1)<<(mb-1), 0)
	hi += c
	return int64(hi<<(64-mb) | lo>>mb)
}

// muPowers fills w with the transposed stage's mu products of input code
// v: w[0] = v 2^g, w[p] = mulRound(w[p-1], mu, mb).
func muPowers(w []int64, v int64, g int, mu int64, mb int) {
	w[0] = v << g
	for p := 1; p < len(w); p++ {
		w[p] = mulRound(w[p-1], mu, mb)
	}
}

// planFarrowT plans the data path of an interpolation cascade's Farrow
// stage st, whose coefficients (the rows times M/L, one scale) and mu word
// sw already holds: the mu products' register (HornerBits, the input word
// shifted left G = farrowTShift bits: HornerGuard), the accumulators
// (the worst case of every output phase, exact), the output rounded half
// up at OutputShift = Frac + G + in - ob and saturated, each output
// phase's DC gain, and the cost of the transposed structure.
func planFarrowT(sw StageWidths, st Stage, in, ob int) (StageWidths, error) {
	rows := sw.FarrowRows
	cf := sw.Coefficients
	n := len(cf.Ints) / rows
	l, m := st.fracView()
	mb := sw.MuBits
	g := farrowTShift(in, ob)
	if in+g > 62 {
		return StageWidths{}, fmt.Errorf("farrow stage: a %d-bit input shifted left %d bits for its mu products passes 62 bits (a narrower output word)", in, g)
	}
	sw.HornerGuard, sw.HornerBits = g, in+g
	q, mu := farrowTiming(l, m, mb)
	// Each output k gets, from input m = a L + s, the row entries n =
	// k - (a M + q_s) + N/2 - 1 in [0, N): which (s, n) pairs meet in one
	// output depends on k mod M alone, its phase. Every pair (s, n) falls
	// in exactly one phase; a phase no pair reaches is always zero.
	type phase struct {
		lo, hi *big.Int
		gain   float64
	}
	phases := map[int]*phase{}
	xlo, xhi := -(int64(1) << (in - 1)), int64(1)<<(in-1)-1
	wlo, whi := make([]int64, rows), make([]int64, rows)
	scale := math.Ldexp(1, -cf.Frac)
	t := new(big.Int)
	for s := range l {
		// w_p is monotone in the input (mulRound is, and mu >= 0), so
		// its extremes are the input word's.
		muPowers(wlo, xlo, g, mu[s], mb)
		muPowers(whi, xhi, g, mu[s], mb)
		muf := math.Ldexp(float64(mu[s]), -mb)
		for j := range n {
			k := ((q[s]-n/2+1+j)%m + m) % m
			ph := phases[k]
			if ph == nil {
				ph = &phase{lo: new(big.Int), hi: new(big.Int)}
				phases[k] = ph
			}
			// The input's term sum_p c_p w_p(x): w_p(x) is x 2^g mu^p
			// plus a rounding error of at most p/2 (p products, each
			// rounded half up, each error then shrunk by mu < 1), so the
			// term is a line in x off by at most sum_p |c_p| p / 2: its
			// extremes over the input word are those at the word's ends
			// widened by sum_p |c_p| p, the safe side by a few LSBs. (The
			// rows' extremes taken one by one would add extremes no one
			// input makes: bits too many.)
			dc := 0.0
			vlo, vhi, slack := new(big.Int), new(big.Int), new(big.Int)
			for p := rows - 1; p >= 0; p-- {
				c := cf.Ints[p*n+j]
				vlo.Add(vlo, t.Mul(big.NewInt(c), big.NewInt(wlo[p])))
				vhi.Add(vhi, t.Mul(big.NewInt(c), big.NewInt(whi[p])))
				slack.Add(slack, t.Mul(big.NewInt(c), big.NewInt(int64(p))).Abs(t))
				dc = dc*muf + float64(c)
			}
			if vlo.Cmp(vhi) > 0 {
				vlo, vhi = vhi, vlo
			}
			ph.lo.Add(ph.lo, vlo.Sub(vlo, slack))
			ph.hi.Add(ph.hi, vhi.Add(vhi, slack))
			ph.gain += dc * scale
		}
	}
	lo, hi := new(big.Int), new(big.Int)
	sw.PhaseGainMin, sw.PhaseGainMax = math.Inf(1), math.Inf(-1)
	total := 0.0
	// In phase order: the gains' float sum must not depend on the map's
	// iteration order (report.json is the same bytes run after run).
	for _, k := range slices.Sorted(maps.Keys(phases)) {
		ph := phases[k]
		if ph.lo.Cmp(lo) < 0 {
			lo.Set(ph.lo)
		}
		if ph.hi.Cmp(hi) > 0 {
			hi.Set(ph.hi)
		}
		total += ph.gain
		sw.PhaseGainMin, sw.PhaseGainMax = math.Min(sw.PhaseGainMin, ph.gain), math.Max(sw.PhaseGainMax, ph.gain)
	}
	if len(phases) < m {
		sw.PhaseGainMin = math.Min(sw.PhaseGainMin, 0)
		sw.PhaseGainMax = math.Max(sw.PhaseGainMax, 0)
	}
	sw.Gain = total / float64(m)
	acc := bigWidth(lo, hi)
	if acc > MaxAccumulatorBits {
		return StageWidths{}, &AccumulatorError{DataBits: in + g, CoefBits: cf.Bits, NeedBits: acc, MuProducts: true}
	}
	sw.AccumulatorBits = acc
	sw.OutputShift = cf.Frac + g + in - ob
	exact := fmt.Sprintf("exact (L = %d, a power of two within the word)", l)
	if l&(l-1) != 0 || bitsLen(l-1) > mb {
		exact = fmt.Sprintf("rounded half up to the word (L = %d is not a power of two within it)", l)
	}
	sw.Points = []string{
		fmt.Sprintf("coefficients: %d rows of %d times %d/%d (the transpose's gain, the rate raised), one scale 2^-%d for the whole matrix (phases' DC gains %.6g to %.6g, mean %.9g)", rows, n, m, l, cf.Frac, sw.PhaseGainMin, sw.PhaseGainMax, sw.Gain),
		fmt.Sprintf("mu: unsigned %d-bit word; input m at output sample m*%d/%d, mu = k/%d %s", mb, m, l, l, exact),
		fmt.Sprintf("mu products: w_0 = input shifted left %d bits, w_p = w_(p-1)*mu rounded half up to the register's LSB (%d x %d bits, %d guard bits below the output's LSB), %d-bit register", g, in+g, mb+1, g+in-ob, in+g),
		fmt.Sprintf("scatter: input m at whole sample b adds sum_p c_p[n] w_p to output b - %d + n, exact (%d x %d bits into %d-bit accumulators, the worst case of every output phase)", n/2-1, in+g, cf.Bits, acc),
		roundPoint(sw.OutputShift, ob),
	}
	if sw.PhaseGainMax > 1 {
		// Its inputs are sparser than its outputs: an output phase sums
		// h at points M/L apart, whose sum is 1 only on average, and the
		// images that leaves are the later stages' to remove.
		sw.Points = append(sw.Points, fmt.Sprintf("headroom: the largest output phase's DC gain is %.6g: an input above %.4g of full scale saturates that phase", sw.PhaseGainMax, 1/sw.PhaseGainMax))
	}
	// Cost per input sample (the stage's low rate): P mu products and
	// every branch's N products (farrow.Cost, as the decimation stage's
	// per output); every coefficient stored; N partial sums pending.
	sw.MultiplierA, sw.MultiplierB = in+g, cf.Bits
	sw.MultipliesPerSample = farrow.Cost(rows-1, n)
	sw.CoefMemoryBits = rows * n * cf.Bits
	sw.DataMemoryBits = n * acc
	return sw, nil
}

// bigWidth returns the narrowest two's-complement width that holds lo and
// hi (lo <= 0 <= hi).
func bigWidth(lo, hi *big.Int) int {
	b := hi.BitLen() + 1
	if lo.Sign() < 0 {
		neg := new(big.Int).Neg(lo)
		b = max(b, neg.Sub(neg, big.NewInt(1)).BitLen()+1)
	}
	return b
}

// farrowTReady returns how many outputs of the transposed stage are
// complete once end inputs have arrived: every later input m has whole
// sample b_m >= floor(end M / L) (its rounded time is never earlier), so
// it reaches no output below floor(end M / L) - N/2 + 1.
func farrowTReady(end, l, m, n int) int {
	return max(0, end*m/l-n/2+1)
}

// farrowTInt is the transposed Farrow stage's integer data path, run a
// block at a time (planFarrowT): outputs are made once complete
// (farrowTReady), outputs before the first dropped.
type farrowTInt struct {
	c         [][]int64
	n, l, m   int
	q         []int
	mu        []int64
	mb, g     int
	shift     int
	lo, hi    int64
	acc       []int64 // outputs base, base+1, ... pending
	base      int
	seen, sat int
	w         []int64
	// The extremes the finished sums reached, for the tests that drive
	// the stage with worst-case inputs.
	accLo, accHi int64
}

func newFarrowTInt(sw *StageWidths) *farrowTInt {
	rows := sw.FarrowRows
	n := len(sw.Coefficients.Ints) / rows
	c := make([][]int64, rows)
	for p := range c {
		c[p] = sw.Coefficients.Ints[p*n : (p+1)*n]
	}
	l, m := sw.Down, sw.Up
	q, mu := farrowTiming(l, m, sw.MuBits)
	hi := int64(1)<<(sw.OutputBits-1) - 1
	return &farrowTInt{c: c, n: n, l: l, m: m, q: q, mu: mu, mb: sw.MuBits, g: sw.HornerGuard,
		shift: sw.OutputShift, lo: -hi - 1, hi: hi, w: make([]int64, rows)}
}

func (s *farrowTInt) run(x, out []int64) []int64 {
	for i, v := range x {
		mi := s.seen + i
		ph := mi % s.l
		k0 := mi/s.l*s.m + s.q[ph] - s.n/2 + 1
		muPowers(s.w, v, s.g, s.mu[ph], s.mb)
		for j := range s.n {
			k := k0 + j - s.base
			if k < 0 {
				continue // an output before the first
			}
			for k >= len(s.acc) {
				s.acc = append(s.acc, 0)
			}
			var a int64
			for p, row := range s.c {
				a += row[j] * s.w[p]
			}
			s.acc[k] += a
		}
	}
	s.seen += len(x)
	ready := farrowTReady(s.seen, s.l, s.m, s.n)
	done := 0
	for ; s.base+done < ready; done++ {
		var a int64
		if done < len(s.acc) {
			a = s.acc[done]
		}
		s.accLo, s.accHi = min(s.accLo, a), max(s.accHi, a)
		y, sat := roundSat(a, s.shift, s.lo, s.hi)
		if sat {
			s.sat++
		}
		out = append(out, y)
	}
	if done >= len(s.acc) {
		s.acc = s.acc[:0]
	} else {
		s.acc = s.acc[:copy(s.acc, s.acc[done:])]
	}
	s.base += done
	return out
}

func (s *farrowTInt) saturated() int { return s.sat }

// farrowTFloat is farrowTInt's float chain, chain.Run's transposed Farrow
// stage: the float rows times M/L at the exact times m M / L, mu^p exact
// in float64; outputs are made when farrowTInt's are.
type farrowTFloat struct {
	c       [][]float64
	n, l, m int
	acc     []float64
	base    int
	seen    int
	w       []float64
}

func newFarrowTFloat(st Stage) *farrowTFloat {
	l, m := st.fracView()
	g := float64(m) / float64(l)
	c := make([][]float64, len(st.Farrow))
	for p, row := range st.Farrow {
		c[p] = make([]float64, len(row))
		for j, v := range row {
			c[p][j] = v * g
		}
	}
	return &farrowTFloat{c: c, n: len(st.Farrow[0]), l: l, m: m, w: make([]float64, len(c))}
}

func (s *farrowTFloat) run(x, out []float64) []float64 {
	for i, v := range x {
		mi := s.seen + i
		ph := mi % s.l
		t := ph * s.m
		k0 := mi/s.l*s.m + t/s.l - s.n/2 + 1
		mu := float64(t%s.l) / float64(s.l)
		s.w[0] = v
		for p := 1; p < len(s.w); p++ {
			s.w[p] = s.w[p-1] * mu
		}
		for j := range s.n {
			k := k0 + j - s.base
			if k < 0 {
				continue
			}
			for k >= len(s.acc) {
				s.acc = append(s.acc, 0)
			}
			var a float64
			for p, row := range s.c {
				a += row[j] * s.w[p]
			}
			s.acc[k] += a
		}
	}
	s.seen += len(x)
	ready := farrowTReady(s.seen, s.l, s.m, s.n)
	done := 0
	for ; s.base+done < ready; done++ {
		var a float64
		if done < len(s.acc) {
			a = s.acc[done]
		}
		out = append(out, a)
	}
	if done >= len(s.acc) {
		s.acc = s.acc[:0]
	} else {
		s.acc = s.acc[:copy(s.acc, s.acc[done:])]
	}
	s.base += done
	return out
}
