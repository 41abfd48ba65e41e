package fixed

import (
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// lanesCIC runs the pruned CIC p as a P-lane build takes it: P input
// samples a clock; each integrator forms the block's P truncated inputs, their
// running sums within the block (a prefix-sum network, written here as a
// Hillis-Steele scan: log2 P levels of adders) and adds its register to
// each, wrapping at its width; the combs take the block's sample whose
// index is a multiple of R, one lane, as in a single-lane build. It is the
// structure package cost prices above the clock (cost.Lanes: integrators
// per lane, combs once).
func lanesCIC(p *CICPruning, lanes int, x []int64) []int64 {
	n, r, m := p.N, p.R, p.M
	integ := make([]int64, n)
	combIn := make([][]int64, n)
	for j := range combIn {
		combIn[j] = make([]int64, m)
	}
	pos := 0
	var out []int64
	for b0 := 0; b0 < len(x); b0 += lanes {
		blk := x[b0:min(b0+lanes, len(x))]
		v := append([]int64(nil), blk...) // values entering integrator j, unit 2^unit
		unit := 0
		for j := 0; j < n; j++ {
			in := make([]int64, len(v))
			for k := range v {
				in[k] = shiftTo(v[k], unit, p.Dropped[j])
			}
			// Scan: after level s, in[k] holds the sum of in[k-2^s+1..k].
			for s := 1; s < len(in); s *= 2 {
				next := append([]int64(nil), in...)
				for k := s; k < len(in); k++ {
					next[k] = wrap(in[k]+in[k-s], p.RegisterBits[j])
				}
				in = next
			}
			for k := range in {
				v[k] = wrap(integ[j]+in[k], p.RegisterBits[j])
			}
			integ[j] = v[len(v)-1]
			unit = p.Dropped[j]
		}
		for k := range v {
			if (b0+k)%r != 0 {
				continue
			}
			c, u := v[k], unit
			for j := 0; j < n; j++ {
				d := p.Dropped[n+j]
				in := wrap(shiftTo(c, u, d), p.RegisterBits[n+j])
				old := combIn[j][pos]
				combIn[j][pos] = in
				c, u = wrap(in-old, p.RegisterBits[n+j]), d
			}
			pos = (pos + 1) % m
			out = append(out, wrap(shiftTo(c, u, p.Dropped[2*n]), p.OutputBits))
		}
	}
	return out
}

// A CIC decomposed into P lanes gives, bit for bit, the single-lane CIC's
// output in the bit-true model: 300 seeded random pruned CICs (orders 1-6,
// delays 1-2, factors 2-40, words of 2 to 24 bits in, 2 to 32 out) and lane
// counts 2 to 9, on full-scale random input whose length is no multiple of
// the lanes. Two's-complement addition wraps, so the scan's order of
// additions gives the register's value exactly; each truncation is taken
// per sample, as in the single lane. So the bit-true figures, computed one
// lane, hold for the lane-parallel build.
func TestCICLanesBitIdentical(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 1))
	for n := 0; n < 300; {
		in := 2 + rng.IntN(23)
		p, err := chain.PruneCIC(1+rng.IntN(6), 1+rng.IntN(2), 2+rng.IntN(39), in, 2+rng.IntN(31))
		if err != nil || p.FullBits > 63 {
			continue
		}
		n++
		x := make([]int64, 500+rng.IntN(700))
		for i := range x {
			x[i] = int64(rng.Uint64N(1<<in)) - 1<<(in-1)
		}
		want := newCICState(&p).run(x, nil)
		lanes := 2 + rng.IntN(8)
		got := lanesCIC(&p, lanes, x)
		if len(got) != len(want) {
			t.Fatalf("CIC %+v, %d lanes: %d outputs, single lane %d", p, lanes, len(got), len(want))
		}
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("CIC N=%d M=%d R=%d, %d lanes, output %d: %d, single lane %d", p.N, p.M, p.R, lanes, i, got[i], want[i])
			}
		}
	}
}

// boxcarThenCIC is the other P-lane decomposition (issue 15's "boxcar sums
// of P samples"): (1 - z^-RM)/(1 - z^-1) = (1 - z^-P)/(1 - z^-1) times
// (1 - z^-RM)/(1 - z^-P), so a CIC of order N and factor R (P dividing R)
// is N cascaded sums of P consecutive samples, kept every P-th sample (the
// lanes' non-recursive front), then a CIC of order N, delay M and factor
// R/P at the rate divided by P. Exact (unpruned) arithmetic.
func boxcarThenCIC(n, m, r, lanes int, x []int64) []int64 {
	v := append([]int64(nil), x...)
	for range n {
		y := make([]int64, len(v))
		for k := range v {
			for i := 0; i < lanes && i <= k; i++ {
				y[k] += v[k-i]
			}
		}
		v = y
	}
	var w []int64
	for k := 0; k < len(v); k += lanes {
		w = append(w, v[k])
	}
	return exactCIC(n, m, r/lanes, w)
}

// exactCIC is the unpruned CIC by its definition: N running sums, then, on
// samples 0, R, 2R, ..., N combs of delay M (Hogenauer's structure, int64,
// no truncation).
func exactCIC(n, m, r int, x []int64) []int64 {
	v := append([]int64(nil), x...)
	for range n {
		s := int64(0)
		for k := range v {
			s += v[k]
			v[k] = s
		}
	}
	var d []int64
	for k := 0; k < len(v); k += r {
		d = append(d, v[k])
	}
	for range n {
		y := make([]int64, len(d))
		for k := range d {
			y[k] = d[k]
			if k >= m {
				y[k] -= d[k-m]
			}
		}
		d = y
	}
	return d
}

// The boxcar decomposition gives the CIC's exact output bit for bit: 200
// seeded random cases, orders 1-5, delays 1-2, P from 2 to 8 dividing R.
func TestCICBoxcarLanesExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 2))
	for trial := 0; trial < 200; trial++ {
		n, m, lanes := 1+rng.IntN(5), 1+rng.IntN(2), 2+rng.IntN(7)
		r := lanes * (1 + rng.IntN(6))
		x := make([]int64, 300+rng.IntN(300))
		for i := range x {
			x[i] = int64(rng.IntN(1<<12)) - 1<<11
		}
		want := exactCIC(n, m, r, x)
		got := boxcarThenCIC(n, m, r, lanes, x)
		if len(got) != len(want) {
			t.Fatalf("N=%d M=%d R=%d P=%d: %d outputs, CIC %d", n, m, r, lanes, len(got), len(want))
		}
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("N=%d M=%d R=%d P=%d, output %d: %d, CIC %d", n, m, r, lanes, i, got[i], want[i])
			}
		}
	}
}
