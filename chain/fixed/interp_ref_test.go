package fixed

import (
	"fmt"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// The reference below is the interpolation contract's integer data path
// (the package doc's Interpolation section) written from
// its text with plain integers and math/big, sharing no code with the
// model: the FIR as the zero-stuffed input convolved with the integer taps,
// the CIC as its equivalent integer FIR (N boxcars of R M ones, Hogenauer
// 1981; equal to the register structure while no register wraps, which
// TestInterpolationWorstCaseWidths checks), and the widths from the
// contract's rules (Hogenauer's interpolator growth for the CIC).

// refInterpFIR is y[m] = sum_j h[j] u[m - j], u = x zero-stuffed by l,
// m < l len(x), rounded half up at shift (a left shift when negative) and
// saturated to ob bits.
func refInterpFIR(x, h []int64, l, shift, ob int) []int64 {
	return refRound(refUpConv(x, h, l), shift, ob, false)
}

// refInterpCIC is the CIC interpolator (n, m, r) on x: its equivalent
// FIR's output, floored by shift bits.
func refInterpCIC(x []int64, n, m, r, shift int) []int64 {
	h := []int64{1}
	for range n {
		// Convolve with R M ones: each tap the sum of the R M before it
		// (every tap stays below (RM)^(N-1), within int64 here).
		g := make([]int64, len(h)+r*m-1)
		var run int64
		for k := range g {
			if k < len(h) {
				run += h[k]
			}
			if k >= r*m {
				run -= h[k-r*m]
			}
			g[k] = run
		}
		h = g
	}
	return refRound(refUpConv(x, h, r), shift, 64, true)
}

// refUpConv is upfirdn's y = h * (x zero-stuffed by l), its first l
// len(x) samples, exact: in int64 when every sum is bounded below 2^62
// (sum |h| times the largest |x|), else in math/big.
func refUpConv(x, h []int64, l int) []*big.Int {
	bound := new(big.Int)
	var xmax int64
	for _, v := range x {
		xmax = max(xmax, v, -v)
	}
	for _, v := range h {
		bound.Add(bound, new(big.Int).Abs(big.NewInt(v)))
	}
	bound.Mul(bound, big.NewInt(xmax))
	small := bound.BitLen() < 62
	y := make([]*big.Int, l*len(x))
	t := new(big.Int)
	for i := range y {
		// u[i - j] is nonzero only where l divides i - j.
		if small {
			var acc int64
			for j := i % l; j < len(h) && j <= i; j += l {
				acc += h[j] * x[(i-j)/l]
			}
			y[i] = big.NewInt(acc)
			continue
		}
		acc := new(big.Int)
		for j := i % l; j < len(h) && j <= i; j += l {
			acc.Add(acc, t.Mul(big.NewInt(h[j]), big.NewInt(x[(i-j)/l])))
		}
		y[i] = acc
	}
	return y
}

// refRound moves y to the output word: floor by shift bits when truncate,
// else round half up ((y + 2^(shift-1)) floored), or multiply by
// 2^-shift for a negative shift; then saturate to ob bits (ob = 64: none).
func refRound(y []*big.Int, shift, ob int, truncate bool) []int64 {
	out := make([]int64, len(y))
	one := big.NewInt(1)
	hi := new(big.Int).Sub(new(big.Int).Lsh(one, uint(ob-1)), one)
	lo := new(big.Int).Neg(new(big.Int).Lsh(one, uint(ob-1)))
	var half, div *big.Int
	if shift > 0 {
		half, div = new(big.Int).Lsh(one, uint(shift-1)), new(big.Int).Lsh(one, uint(shift))
	}
	v := new(big.Int)
	for i, y := range y {
		v.Set(y)
		switch {
		case shift > 0 && !truncate:
			v.Add(v, half)
			fallthrough
		case shift > 0:
			// Floor division by 2^shift (big.Int.Div is Euclidean, which
			// is floor for a positive divisor).
			v.Div(v, div)
		case shift < 0:
			v.Lsh(v, uint(-shift))
		}
		switch {
		case v.Cmp(hi) > 0:
			out[i] = hi.Int64()
		case v.Cmp(lo) < 0:
			out[i] = lo.Int64()
		default:
			out[i] = v.Int64()
		}
	}
	return out
}

// refLog2Floor is floor(log2 l) by repeated halving.
func refLog2Floor(l int) int {
	k := 0
	for l > 1 {
		l /= 2
		k++
	}
	return k
}

// refCICWidths are Hogenauer's interpolator register widths, combs then
// integrators: Bin + ceil(log2 G_j), G_j = 2^j for the combs and
// 2^(2N-j) (RM)^(j-N) / R for the integrators, at least Bin.
func refCICWidths(n, m, r, bin int) []int {
	var w []int
	for j := 1; j <= 2*n; j++ {
		num, den := new(big.Int).Lsh(big.NewInt(1), uint(j)), big.NewInt(1)
		if j > n {
			num = new(big.Int).Lsh(big.NewInt(1), uint(2*n-j))
			num.Mul(num, new(big.Int).Exp(big.NewInt(int64(r*m)), big.NewInt(int64(j-n)), nil))
			den = big.NewInt(int64(r))
		}
		k := 0
		for new(big.Int).Lsh(den, uint(k)).Cmp(num) < 0 {
			k++
		}
		w = append(w, bin+k)
	}
	return w
}

// randomInterpChain designs an invented interpolation chain: a spec of
// random band edges, ripple and rejection, and a random plan (in
// decimation order, as chain.Design takes it) of at most one CIC and up
// to two FIR and half-band stages; nil when the chain package refuses it.
func randomInterpChain(rng *rand.Rand, memo *chain.StageMemo) (chain.Spec, *chain.Chain) {
	var plan []chain.StagePlan
	l := 1
	switch rng.IntN(8) {
	case 0:
		// A CIC whose registers pass 63 bits on a wide enough word (the
		// 128-bit model): Bin + 5 log2 1024 + 1 (M = 2) bits.
		plan = append(plan, chain.StagePlan{Kind: chain.CIC, Factor: 1024, CICOrder: 6, CICDelay: 1 + rng.IntN(2)})
		l *= 1024
	case 1, 2, 3, 4, 5:
		r := []int{2, 4, 5, 8, 10, 16, 64}[rng.IntN(7)]
		plan = append(plan, chain.StagePlan{Kind: chain.CIC, Factor: r, CICOrder: 1 + rng.IntN(6), CICDelay: 1 + rng.IntN(2)})
		l *= r
	}
	for k := 1 + rng.IntN(2); k > 0; k-- {
		if rng.IntN(2) == 0 {
			plan = append(plan, chain.StagePlan{Kind: chain.HalfBand, Factor: 2})
			l *= 2
		} else {
			f := 2 + rng.IntN(4)
			plan = append(plan, chain.StagePlan{Kind: chain.FIR, Factor: f})
			l *= f
		}
	}
	fin := 48e3 * float64(1+rng.IntN(4))
	in := 8 + rng.IntN(13)
	spec := chain.Spec{InputRate: fin, OutputRate: fin * float64(l), Passband: fin * (0.05 + 0.25*rng.Float64()),
		RippleDB: 0.05 + 0.5*rng.Float64(), RejectionDB: 40 + 50*rng.Float64(),
		InputBits: in, OutputBits: in + rng.IntN(25-in)}
	if rng.IntN(2) == 0 {
		spec.CoefBits = 10 + rng.IntN(11)
	}
	c, err := chain.Design(spec, plan, chain.Settings{Memo: memo})
	if err != nil {
		return spec, nil
	}
	return spec, c
}

// On seeded random designed interpolation chains, Plan's widths are the
// contract's (shifts, output words, Hogenauer's CIC registers) and the
// Model's every stage is the reference's, bit for bit, run in blocks of
// random sizes on random codes with full-scale runs.
func TestInterpolationReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 12))
	memo := chain.NewStageMemo()
	done, wide := 0, 0
	for tries := 0; done < 100 && tries < 400; tries++ {
		spec, c := randomInterpChain(rng, memo)
		if c == nil {
			continue
		}
		name := chain.Interpolate.Notation(c.Plan)
		cas, words, err := FromChain(spec, c)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if rng.IntN(3) == 0 {
			words.DataBits = words.OutputBits + 1 + rng.IntN(6)
			words.DataBits = min(words.DataBits, 32)
		}
		w, err := Plan(cas, words, Settings{UnityGain: rng.IntN(2) == 0})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		done++
		l := c.Ratio()
		nin := max(3, 2000/l)
		x := make([]int64, nin)
		lo, hi := -(int64(1) << (words.InputBits - 1)), int64(1)<<(words.InputBits-1)-1
		for i := range x {
			switch rng.IntN(4) {
			case 0:
				x[i] = lo
			case 1:
				x[i] = hi
			default:
				x[i] = lo + rng.Int64N(hi-lo+1)
			}
		}
		// The reference, stage by stage, with the contract's widths.
		cur, bin := x, words.InputBits
		var want [][]int64
		for k, st := range cas.Stages {
			sw := w.Stages[k]
			bout := words.DataBits
			if k == len(cas.Stages)-1 {
				bout = words.OutputBits
			}
			if sw.InputBits != bin {
				t.Fatalf("%s stage %d: input word %d bits, the contract's %d", name, k+1, sw.InputBits, bin)
			}
			if st.CIC {
				regs := refCICWidths(st.N, st.M, st.R, bin)
				full := regs[len(regs)-1]
				if !equalIntSlices(sw.CICInterp.RegisterBits, regs) || sw.OutputBits != min(full, bout) {
					t.Fatalf("%s stage %d: registers %v, output %d bits; Hogenauer's %v, %d", name, k+1, sw.CICInterp.RegisterBits, sw.OutputBits, regs, min(full, bout))
				}
				wide = max(wide, full)
				cur = refInterpCIC(cur, st.N, st.M, st.R, full-sw.OutputBits)
			} else {
				shift := sw.Coefficients.Frac + bin - bout - refLog2Floor(st.R)
				if sw.OutputShift != shift || sw.OutputBits != bout {
					t.Fatalf("%s stage %d: shift %d, output %d bits; the contract's %d, %d", name, k+1, sw.OutputShift, sw.OutputBits, shift, bout)
				}
				cur = refInterpFIR(cur, sw.Coefficients.Ints, st.R, shift, bout)
			}
			want = append(want, cur)
			bin = sw.OutputBits
		}
		m, err := NewModel(cas, w)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got := make([][]int64, len(cas.Stages))
		for n := 0; n < len(x); {
			k := min(len(x)-n, 1+rng.IntN(nin/2+1))
			out, err := m.Run(x[n : n+k])
			if err != nil {
				t.Fatal(err)
			}
			for i := range out {
				got[i] = append(got[i], out[i]...)
			}
			n += k
		}
		for i := range want {
			if err := sameCodes(got[i], want[i]); err != nil {
				t.Fatalf("%s (in %d, data %d, out %d bits) stage %d: %v", name, words.InputBits, words.DataBits, words.OutputBits, i+1, err)
			}
		}
	}
	if done < 100 {
		t.Fatalf("only %d random chains designed", done)
	}
	t.Logf("%d chains, widest CIC register %d bits", done, wide)
	if wide <= 63 {
		t.Errorf("no chain reached a CIC register over 63 bits (widest %d): the 128-bit model went untested", wide)
	}
}

func sameCodes(got, want []int64) error {
	if len(got) != len(want) {
		return fmt.Errorf("%d outputs, reference %d", len(got), len(want))
	}
	for j := range want {
		if got[j] != want[j] {
			return fmt.Errorf("output %d: model %d, reference %d", j, got[j], want[j])
		}
	}
	return nil
}

func equalIntSlices(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
