package cost

import (
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

// Small blocks worked by hand (here, not from a source): the graph's
// adders are the fewest any graph can have, one per distinct odd
// fundamental above 1, in each case, and the structural adders are the
// nonzero taps less one.
func TestIntsBlockHand(t *testing.T) {
	for _, tc := range []struct {
		name       string
		ints       []int64
		coef, strc int
	}{
		// 7 = 8 - 1 and 21 = 7 + (7 << 1): two adders, where plain CSD
		// builds 21 = 16 + 4 + 1 on its own (two more) beside 7 (one).
		{"7 and 21 shared", []int64{7, 21, 0, 21, 7}, 2, 3},
		// A half-band's zeros and centre 16 are free, 1 is a wire and
		// 9 = 8 + 1 one adder; five nonzero taps, four tap adders.
		{"half-band", []int64{-1, 0, 9, 16, 9, 0, -1}, 1, 4},
		// Powers of two and their negatives: no graph adders at all.
		{"powers of two", []int64{-4, 2, 1, 2, -4}, 0, 4},
		// 3 = 2 + 1, 5 = 4 + 1, 7 = 8 - 1, and -6 = -(3 << 1) shares 3.
		{"three fundamentals", []int64{3, 5, 7, -6}, 3, 3},
		{"all zero", []int64{0, 0, 0}, 0, 0},
		{"one tap", []int64{11}, 2, 0}, // 11 = 8 + 2 + 1: two adders either way
	} {
		b, err := IntsBlock(tc.ints)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if b.Coefficient != tc.coef || b.Structural != tc.strc || b.Estimated {
			t.Errorf("%s: block %+v, want %d graph and %d tap adders", tc.name, b, tc.coef, tc.strc)
		}
	}
}

// ProveGraph refuses a graph built for other coefficients.
func TestProveGraphRefuses(t *testing.T) {
	g, err := mcm.Build([]int64{7, 21})
	if err != nil {
		t.Fatal(err)
	}
	if err := ProveGraph(g, []int64{7, 22}); err == nil || !strings.Contains(err.Error(), "coefficient 1") {
		t.Errorf("ProveGraph on the wrong coefficients: %v", err)
	}
	if err := ProveGraph(g, []int64{7}); err == nil {
		t.Error("ProveGraph on too few coefficients: no error")
	}
}

// Price with Multiplierless on a designed chain: every FIR and half-band
// stage's graph is mcm.Build's on its taps rounded by RoundTaps, proved by
// mcm.Eval here (independently of the pricing's own check), never above
// plain CSD; its tap adders are its nonzero rounded taps less one; the
// stage's adders are the block times its lanes and real filters, a CIC's
// its integrators per lane plus its combs; no multipliers; the multiplies
// and latency are those priced without the mode, and the memory theirs
// without the stored coefficients.
func TestPriceMultiplierless(t *testing.T) {
	sp := chain.Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.3, RejectionDB: 80,
		CoefBits: 16, Complex: true}
	plan, _ := chain.ParseNotation("cic4m1r16 > hb > fir4 > fir2")
	c, err := chain.Design(sp, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	const clock = 40e6 // the CIC takes two samples a cycle
	s := Settings{Clock: clock, Multiplierless: true}
	f, err := Price(sp, c, s)
	if err != nil {
		t.Fatal(err)
	}
	plain, _ := Price(sp, c, Settings{Clock: clock})
	if !f.Multiplierless || f.MultipliesPerOutput != plain.MultipliesPerOutput || f.LatencyS != plain.LatencyS {
		t.Errorf("multiplierless %+v, plain %+v", f, plain)
	}
	// Memory: the plain chain's less its stored coefficients, the taps
	// being wired into the graphs (with symmetry, ceil(N/2) words for a
	// FIR of N taps, K for a half-band of 4K-1; common practice).
	coefBits := 0
	for i, st := range c.Stages {
		want := 0
		if v, ok := st.(chain.FIRStage); ok {
			want = (len(v.Taps) + 1) / 2
			if v.HalfBand {
				want = (len(v.Taps) + 1) / 4
			}
		}
		if d := plain.Stages[i].MemoryWords - f.Stages[i].MemoryWords; d != want || f.Stages[i].MemoryBits != plain.Stages[i].MemoryBits-want*16 {
			t.Errorf("stage %d: %d words and %d bits, plain %d and %d: want %d coefficient words of 16 bits fewer", i+1, f.Stages[i].MemoryWords, f.Stages[i].MemoryBits, plain.Stages[i].MemoryWords, plain.Stages[i].MemoryBits, want)
		}
		coefBits += want * 16
	}
	if f.MemoryBits != plain.MemoryBits-coefBits {
		t.Errorf("memory %d bits, plain %d less %d coefficient bits", f.MemoryBits, plain.MemoryBits, coefBits)
	}
	rates := c.Rates()
	total := 0
	for i, st := range c.Stages {
		sf := f.Stages[i]
		lanes := Lanes(rates[i], clock)
		if sf.Multipliers != 0 || sf.AddersEstimated {
			t.Errorf("stage %d: %d multipliers, estimated %v", i+1, sf.Multipliers, sf.AddersEstimated)
		}
		switch v := st.(type) {
		case chain.CICStage:
			if lanes != 2 || sf.Adders != (4*2+4)*2 {
				t.Errorf("CIC: %d lanes, %d adders; want 2 lanes, (4 x 2 + 4) x 2 = 24", lanes, sf.Adders)
			}
		case chain.FIRStage:
			ints, err := RoundTaps(v.Taps, v.HalfBand, 16)
			if err != nil {
				t.Fatal(err)
			}
			g, err := mcm.Build(ints)
			if err != nil {
				t.Fatal(err)
			}
			for _, x := range []int64{1, -1, 12345, -(1 << 20)} {
				got, err := g.Eval(x)
				if err != nil {
					t.Fatal(err)
				}
				for k, ck := range ints {
					if got[k] != ck*x {
						t.Fatalf("stage %d: Eval(%d)[%d] = %d, want %d", i+1, x, k, got[k], ck*x)
					}
				}
			}
			nz := 0
			for _, ck := range ints {
				if ck != 0 {
					nz++
				}
			}
			if sf.CoefficientAdders != g.Adders() || sf.StructuralAdders != nz-1 ||
				sf.Adders != (g.Adders()+nz-1)*lanes*2 || g.Adders() > mcm.CSDAdders(ints) {
				t.Errorf("stage %d: %+v; graph %d (CSD %d), nonzero taps %d, lanes %d", i+1, sf, g.Adders(), mcm.CSDAdders(ints), nz, lanes)
			}
			if v.HalfBand && ints[len(ints)/2]&(ints[len(ints)/2]-1) != 0 {
				t.Errorf("half-band centre %d is not a power of two", ints[len(ints)/2])
			}
			t.Logf("stage %d (%s, %d taps): graph %d adders, plain CSD %d, tap adders %d", i+1, v.Kind(), len(v.Taps), g.Adders(), mcm.CSDAdders(ints), nz-1)
		}
		total += sf.Adders
	}
	if f.Adders != total {
		t.Errorf("chain adders %d, stages sum to %d", f.Adders, total)
	}
	// An estimated chain gets EstimateAdders' blocks, labelled estimated.
	e, err := chain.Estimate(sp, plan, chain.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	fe, err := Price(sp, e, s)
	if err != nil {
		t.Fatal(err)
	}
	for i, st := range e.Stages {
		if v, ok := st.(chain.FIRStage); ok {
			b := EstimateAdders(v.Length, v.HalfBand)
			if sf := fe.Stages[i]; !sf.AddersEstimated || sf.CoefficientAdders != b.Coefficient || sf.StructuralAdders != b.Structural {
				t.Errorf("estimated stage %d: %+v, want %+v", i+1, sf, b)
			}
		}
	}
}

// EstimateAdders' rule on hand-counted lengths: a FIR of n taps ceil(n/2)
// graph and n-1 tap adders, a half-band of 4K-1 taps K and 2K.
func TestEstimateAdders(t *testing.T) {
	for _, tc := range []struct {
		n        int
		hb       bool
		coef, st int
	}{{31, false, 16, 30}, {32, false, 16, 31}, {11, true, 3, 6}, {3, true, 1, 2}} {
		if b := EstimateAdders(tc.n, tc.hb); b.Coefficient != tc.coef || b.Structural != tc.st || !b.Estimated {
			t.Errorf("EstimateAdders(%d, %v) = %+v, want %d and %d", tc.n, tc.hb, b, tc.coef, tc.st)
		}
	}
}
