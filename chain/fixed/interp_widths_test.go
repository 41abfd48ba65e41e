package fixed

import (
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// worstInput returns the input codes that drive sum_k g[p + l k] x[n - k]
// (n the last input) to its largest value (the full-scale code of each
// coefficient's sign) or, with low, to its smallest, and that value.
func worstInput(g []*big.Int, l, p, bits int, low bool) ([]int64, *big.Int) {
	hi, lo := int64(1)<<(bits-1)-1, -(int64(1) << (bits - 1))
	k := (len(g) - p + l - 1) / l
	x := make([]int64, k)
	sum := new(big.Int)
	for i := range k {
		c := g[p+l*i]
		v := hi
		if (c.Sign() < 0) != low {
			v = lo
		}
		x[k-1-i] = v
		sum.Add(sum, new(big.Int).Mul(c, big.NewInt(v)))
	}
	return x, sum
}

// fitsBits says whether v is a bits-bit two's-complement value.
func fitsBits(v *big.Int, bits int) bool {
	lim := new(big.Int).Lsh(big.NewInt(1), uint(bits-1))
	return v.Cmp(lim) < 0 && v.Cmp(new(big.Int).Neg(lim)) >= 0
}

func bigInts(h []int64) []*big.Int {
	out := make([]*big.Int, len(h))
	for i, v := range h {
		out[i] = big.NewInt(v)
	}
	return out
}

// No interpolating FIR's accumulator overflows: on seeded random designed
// chains, every phase of every FIR and half-band stage is driven with the
// full-scale input of each tap's sign and of the opposite sign (the worst
// cases, reached by no other input), and the model's accumulator reaches
// exactly the extremes the taps predict, each within AccumulatorBits; the
// widest phase needs every one of those bits (the width is the narrowest).
func TestInterpolationWorstCaseAccumulators(t *testing.T) {
	rng := rand.New(rand.NewPCG(77, 1))
	memo := chain.NewStageMemo()
	stages := 0
	for tries := 0; stages < 40 && tries < 200; tries++ {
		spec, c := randomInterpChain(rng, memo)
		if c == nil {
			continue
		}
		cas, words, err := FromChain(spec, c)
		if err != nil {
			t.Fatal(err)
		}
		w, err := Plan(cas, words, Settings{UnityGain: rng.IntN(2) == 0})
		if err != nil {
			t.Fatal(err)
		}
		for k, st := range cas.Stages {
			if st.CIC {
				continue
			}
			stages++
			sw := w.Stages[k]
			h := sw.Coefficients.Ints
			name := chain.Interpolate.Notation(c.Plan)
			// The extremes predicted over every phase, and those the
			// model's accumulator reached over every drive.
			wantHi, wantLo := new(big.Int), new(big.Int)
			var gotHi, gotLo int64
			for p := 0; p < st.R && p < len(h); p++ {
				for _, low := range []bool{false, true} {
					x, want := worstInput(bigInts(h), st.R, p, sw.InputBits, low)
					if want.Cmp(wantHi) > 0 {
						wantHi = want
					}
					if want.Cmp(wantLo) < 0 {
						wantLo = want
					}
					f := newFIRInterpInt(h, st.R, sw.OutputShift, sw.OutputBits)
					f.run(x, nil)
					gotHi, gotLo = max(gotHi, f.accHi), min(gotLo, f.accLo)
				}
			}
			if big.NewInt(gotHi).Cmp(wantHi) != 0 || big.NewInt(gotLo).Cmp(wantLo) != 0 {
				t.Fatalf("%s stage %d: the accumulator reached [%d, %d], the taps' worst cases [%v, %v]", name, k+1, gotLo, gotHi, wantLo, wantHi)
			}
			if !fitsBits(wantHi, sw.AccumulatorBits) || !fitsBits(wantLo, sw.AccumulatorBits) {
				t.Fatalf("%s stage %d: [%v, %v] overflows the %d-bit accumulator", name, k+1, wantLo, wantHi, sw.AccumulatorBits)
			}
			if fitsBits(wantHi, sw.AccumulatorBits-1) && fitsBits(wantLo, sw.AccumulatorBits-1) {
				t.Errorf("%s stage %d: [%v, %v] fits %d bits; the accumulator is %d", name, k+1, wantLo, wantHi, sw.AccumulatorBits-1, sw.AccumulatorBits)
			}
		}
	}
	if stages < 40 {
		t.Fatalf("only %d FIR stages driven", stages)
	}
}

// refCICRegisters runs a CIC interpolator (n, m, r) on x with unbounded
// registers (math/big), the contract's structure: n combs at the input
// rate, the rate raised by r (the comb output, then r-1 zeros), n
// integrators at the output rate. It returns the largest and smallest
// value each register held and the last integrator's outputs.
func refCICRegisters(x []int64, n, m, r int) (hi, lo []*big.Int, out []*big.Int) {
	hi, lo = make([]*big.Int, 2*n), make([]*big.Int, 2*n)
	for j := range hi {
		hi[j], lo[j] = new(big.Int), new(big.Int)
	}
	note := func(j int, v *big.Int) {
		if v.Cmp(hi[j]) > 0 {
			hi[j] = new(big.Int).Set(v)
		}
		if v.Cmp(lo[j]) < 0 {
			lo[j] = new(big.Int).Set(v)
		}
	}
	hist := make([][]*big.Int, n) // each comb's inputs so far
	integ := make([]*big.Int, n)
	for j := range integ {
		integ[j] = new(big.Int)
	}
	for _, s := range x {
		v := big.NewInt(s)
		for j := 0; j < n; j++ {
			hist[j] = append(hist[j], v)
			d := new(big.Int).Set(v)
			if i := len(hist[j]) - 1 - m; i >= 0 {
				d.Sub(d, hist[j][i])
			}
			note(j, d)
			v = d
		}
		for k := 0; k < r; k++ {
			u := new(big.Int)
			if k == 0 {
				u.Set(v)
			}
			for j := 0; j < n; j++ {
				integ[j] = new(big.Int).Add(integ[j], u)
				note(n+j, integ[j])
				u = integ[j]
			}
			out = append(out, u)
		}
	}
	return hi, lo, out
}

// No CIC interpolator register wraps: for each register, each of its
// phases and both signs, the input of the signs of that register's
// impulse response (combs at the input rate, integrators per output phase
// at the output rate: the worst case) is run through the unbounded
// reference, whose extremes must fit the planned widths, and through the
// model, whose outputs must be the reference's floored (a wrap would show).
func TestInterpolationWorstCaseCICRegisters(t *testing.T) {
	for _, tc := range []struct{ n, m, r, in, out int }{
		{3, 1, 8, 12, 14}, {4, 2, 5, 10, 24}, {2, 1, 2, 8, 8}, {1, 1, 7, 12, 16},
		{5, 1, 16, 16, 20}, {6, 2, 10, 14, 18}, {4, 1, 32, 16, 16}, {2, 3, 4, 9, 30},
	} {
		c := Cascade{InputRate: 1e6, Interpolate: true, Passband: 1e3, Stages: []Stage{{CIC: true, N: tc.n, M: tc.m, R: tc.r, Interpolate: true}}}
		w, err := Plan(c, Words{InputBits: tc.in, OutputBits: tc.out}, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		p := w.Stages[0].CICInterp
		// The impulse responses: register j's values for a unit impulse,
		// at the combs' rate (j < N) or the integrators' (j >= N).
		imp := make([]int64, tc.n*tc.m+2)
		imp[0] = 1
		resp := make([][]*big.Int, 2*tc.n)
		{
			// Run the reference on the impulse, recording each register.
			hist := make([][]*big.Int, tc.n)
			integ := make([]*big.Int, tc.n)
			for j := range integ {
				integ[j] = new(big.Int)
			}
			for _, s := range imp {
				v := big.NewInt(s)
				for j := 0; j < tc.n; j++ {
					hist[j] = append(hist[j], v)
					d := new(big.Int).Set(v)
					if i := len(hist[j]) - 1 - tc.m; i >= 0 {
						d.Sub(d, hist[j][i])
					}
					resp[j] = append(resp[j], d)
					v = d
				}
				for k := 0; k < tc.r; k++ {
					u := new(big.Int)
					if k == 0 {
						u.Set(v)
					}
					for j := 0; j < tc.n; j++ {
						integ[j] = new(big.Int).Add(integ[j], u)
						resp[tc.n+j] = append(resp[tc.n+j], integ[j])
						u = integ[j]
					}
				}
			}
		}
		for j := range 2 * tc.n {
			l := 1
			if j >= tc.n {
				l = tc.r
			}
			wantHi, wantLo := new(big.Int), new(big.Int)
			gotHi, gotLo := new(big.Int), new(big.Int)
			for ph := range l {
				for _, low := range []bool{false, true} {
					x, want := worstInput(resp[j], l, ph, tc.in, low)
					if want.Cmp(wantHi) > 0 {
						wantHi = want
					}
					if want.Cmp(wantLo) < 0 {
						wantLo = want
					}
					hi, lo, ref := refCICRegisters(x, tc.n, tc.m, tc.r)
					if hi[j].Cmp(gotHi) > 0 {
						gotHi = hi[j]
					}
					if lo[j].Cmp(gotLo) < 0 {
						gotLo = lo[j]
					}
					if !fitsBits(hi[j], p.RegisterBits[j]) || !fitsBits(lo[j], p.RegisterBits[j]) {
						t.Fatalf("N=%d M=%d R=%d register %d: [%v, %v] overflows its %d bits", tc.n, tc.m, tc.r, j+1, lo[j], hi[j], p.RegisterBits[j])
					}
					m, err := NewModel(c, w)
					if err != nil {
						t.Fatal(err)
					}
					out, err := m.Run(x)
					if err != nil {
						t.Fatal(err)
					}
					sh := new(big.Int).Lsh(big.NewInt(1), uint(p.FullBits()-p.OutputBits))
					for i, v := range ref {
						if want := new(big.Int).Div(v, sh); out[0][i] != want.Int64() {
							t.Fatalf("N=%d M=%d R=%d, register %d's worst case: output %d = %d, unbounded reference %v", tc.n, tc.m, tc.r, j+1, i, out[0][i], want)
						}
					}
				}
			}
			// The drives reach the worst cases of the register's impulse
			// response, and nothing beyond.
			if gotHi.Cmp(wantHi) != 0 || gotLo.Cmp(wantLo) != 0 {
				t.Fatalf("N=%d M=%d R=%d register %d reached [%v, %v], its impulse response's worst cases [%v, %v]", tc.n, tc.m, tc.r, j+1, gotLo, gotHi, wantLo, wantHi)
			}
		}
	}
}
