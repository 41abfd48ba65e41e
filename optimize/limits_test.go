package optimize_test

import (
	"context"
	"math/rand/v2"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/cost"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// Every chain on the front honours the fabric's limits, checked on the
// chains' own figures (pruned CIC registers, factors, multipliers at the
// clock, memory) for seeded random sets of limits on an invented receiver
// (D = 64); a set no chain can meet names the limit that binds.
func TestLimitsHonoured(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("2 s: STEPDOWN_LONG (CI's long step)")
	}
	needDesigns(t)
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 960e3, Passband: 300e3, RippleDB: 0.1, RejectionDB: 80}
	free, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 4, Cost: costAt(100e6)})
	if err != nil {
		t.Fatal(err)
	}
	// Limits drawn around the unconstrained front's own figures, so that
	// some bind and some do not.
	var regs, mems, mults []int
	for _, c := range free.Front {
		mems = append(mems, c.Figures.MemoryBits)
		mults = append(mults, c.Figures.MultipliersAtClock)
		if cs, ok := c.Chain.Stages[0].(chain.CICStage); ok {
			regs = append(regs, slices.Max(cs.RegisterBits))
		}
	}
	rng := rand.New(rand.NewPCG(9, 9))
	pick := func(v []int) int {
		if len(v) == 0 || rng.IntN(3) == 0 {
			return 0
		}
		return v[rng.IntN(len(v))] + rng.IntN(3) - 1
	}
	for trial := 0; trial < 6; trial++ {
		lim := optimize.Limits{MaxRegisterBits: pick(regs), MaxMemoryBits: pick(mems), MaxMultipliers: pick(mults), MaxCICFactor: []int{0, 8, 16, 32}[rng.IntN(4)]}
		if trial%2 == 0 {
			lim.MaxMultipliers = max(1, mults[rng.IntN(len(mults))]-trial/2)
		}
		r, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 4, Cost: costAt(100e6), Limits: lim})
		if err != nil {
			t.Fatal(err)
		}
		if len(r.Front) == 0 && !strings.Contains(r.Reason, "Limits.") {
			t.Errorf("limits %+v: empty front, reason %q names no limit", lim, r.Reason)
		}
		for _, c := range r.Front {
			f := c.Figures
			if lim.MaxMemoryBits > 0 && f.MemoryBits > lim.MaxMemoryBits {
				t.Errorf("limits %+v: %s has %d memory bits", lim, chain.Notation(c.Plan), f.MemoryBits)
			}
			if lim.MaxMultipliers > 0 && f.MultipliersAtClock > lim.MaxMultipliers {
				t.Errorf("limits %+v: %s has %d multipliers", lim, chain.Notation(c.Plan), f.MultipliersAtClock)
			}
			if cs, ok := c.Chain.Stages[0].(chain.CICStage); ok {
				if lim.MaxRegisterBits > 0 && slices.Max(cs.RegisterBits) > lim.MaxRegisterBits {
					t.Errorf("limits %+v: %s has a %d-bit register", lim, chain.Notation(c.Plan), slices.Max(cs.RegisterBits))
				}
				if lim.MaxCICFactor > 0 && cs.R > lim.MaxCICFactor {
					t.Errorf("limits %+v: %s decimates by %d in its CIC", lim, chain.Notation(c.Plan), cs.R)
				}
			}
		}
		t.Logf("limits %+v: front %d, designed %d", lim, len(r.Front), r.Designed)
	}
	if _, err := optimize.Plan(context.Background(), spec, optimize.Settings{Limits: optimize.Limits{MaxMultipliers: 3}}); err == nil || !strings.Contains(err.Error(), "Clock") {
		t.Errorf("MaxMultipliers without a clock: err = %v", err)
	}
}

// costAt prices at a clock of clk Hz.
func costAt(clk float64) cost.Settings { return cost.Settings{Clock: clk} }

// With the chains priced multiplierless the front is over adders: every
// chain on it is designed, has no multipliers, counts its FIR and
// half-band stages from graphs of their rounded taps (not estimates), is
// sorted by adders and is dominated by no other on (adders, memory,
// latency); the reason speaks of adders. Limits drawn from that front
// (seeded) are honoured by every chain of the fronts they leave.
//
// It takes about 4 s, so it runs with STEPDOWN_LONG=1 (CI's long step).
func TestMultiplierlessFront(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("about 4 s; set STEPDOWN_LONG=1")
	}
	needDesigns(t)
	spec := chain.Spec{InputRate: 61.44e6, OutputRate: 960e3, Passband: 300e3, RippleDB: 0.1, RejectionDB: 80, CoefBits: 16}
	cs := cost.Settings{Clock: 100e6, Multiplierless: true}
	check := func(r *optimize.Result, lim optimize.Limits) {
		t.Helper()
		fr := r.Front
		for i, c := range fr {
			f := c.Figures
			if !f.Designed || !f.Multiplierless || f.Adders <= 0 || f.MultipliersAtClock != 0 {
				t.Errorf("%s: designed %v, multiplierless %v, %d adders, %d multipliers", chain.Notation(c.Plan), f.Designed, f.Multiplierless, f.Adders, f.MultipliersAtClock)
			}
			sum := 0
			for k, sf := range f.Stages {
				sum += sf.Adders
				if _, fir := c.Chain.Stages[k].(chain.FIRStage); fir && (sf.AddersEstimated || sf.CoefficientAdders+sf.StructuralAdders == 0) {
					t.Errorf("%s stage %d: %+v", chain.Notation(c.Plan), k+1, sf)
				}
			}
			if sum != f.Adders {
				t.Errorf("%s: stages' adders sum to %d, chain %d", chain.Notation(c.Plan), sum, f.Adders)
			}
			if i > 0 && fr[i-1].Figures.Adders > f.Adders {
				t.Errorf("front not sorted by adders: %d before %d", fr[i-1].Figures.Adders, f.Adders)
			}
			for j, d := range fr {
				g := d.Figures
				if j != i && g.Adders <= f.Adders && g.MemoryBits <= f.MemoryBits && g.LatencyS <= f.LatencyS &&
					(g.Adders < f.Adders || g.MemoryBits < f.MemoryBits || g.LatencyS < f.LatencyS) {
					t.Errorf("%s (%d adders, %d bits, %g s) is dominated by %s (%d, %d, %g)", chain.Notation(c.Plan), f.Adders, f.MemoryBits, f.LatencyS,
						chain.Notation(d.Plan), g.Adders, g.MemoryBits, g.LatencyS)
				}
			}
			if lim.MaxMemoryBits > 0 && f.MemoryBits > lim.MaxMemoryBits {
				t.Errorf("limits %+v: %s has %d memory bits", lim, chain.Notation(c.Plan), f.MemoryBits)
			}
			if cic, ok := c.Chain.Stages[0].(chain.CICStage); ok && lim.MaxRegisterBits > 0 && slices.Max(cic.RegisterBits) > lim.MaxRegisterBits {
				t.Errorf("limits %+v: %s has a %d-bit register", lim, chain.Notation(c.Plan), slices.Max(cic.RegisterBits))
			}
		}
		if len(fr) > 0 && (!strings.Contains(r.Reason, "adders") || strings.Contains(r.Reason, "multiplies")) {
			t.Errorf("reason %q", r.Reason)
		}
	}
	free, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 4, Cost: cs})
	if err != nil {
		t.Fatal(err)
	}
	if len(free.Front) == 0 {
		t.Fatalf("empty front: %s", free.Reason)
	}
	check(free, optimize.Limits{})
	var regs, mems []int
	for _, c := range free.Front {
		mems = append(mems, c.Figures.MemoryBits)
		if cic, ok := c.Chain.Stages[0].(chain.CICStage); ok {
			regs = append(regs, slices.Max(cic.RegisterBits))
		}
		t.Logf("%s: %d adders, %d bits", chain.Notation(c.Plan), c.Figures.Adders, c.Figures.MemoryBits)
	}
	rng := rand.New(rand.NewPCG(15, 15))
	for trial := 0; trial < 2; trial++ {
		lim := optimize.Limits{MaxMemoryBits: mems[rng.IntN(len(mems))]}
		if len(regs) > 0 {
			lim.MaxRegisterBits = regs[rng.IntN(len(regs))] - 1
		}
		r, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 4, Cost: cs, Limits: lim})
		if err != nil {
			t.Fatal(err)
		}
		check(r, lim)
		t.Logf("limits %+v: front %d", lim, len(r.Front))
	}
}

// With a fixed coefficient width and a native multiplier size, the search
// holds max_multipliers to the native blocks the chain's word lengths need
// at the clock (fixed.Widths.HardwareMultipliers: a 25 x 19 product takes
// two 18 x 25 blocks), not only to the multipliers at the clock: every
// front chain of an invented 122.88 MS/s to 960 kS/s I/Q receiver, planned
// again by package fixed, needs at most the limit, and some chain was
// dropped for it.
func TestNativeMultipliersHeld(t *testing.T) {
	needDesigns(t)
	spec := chain.Spec{InputRate: 122.88e6, OutputRate: 960e3, Passband: 380e3, Protected: 420e3, RippleDB: 0.1, RejectionDB: 85,
		Complex: true, InputBits: 14, OutputBits: 24, CoefBits: 19}
	fs := fixed.Settings{NativeA: 18, NativeB: 25, Clock: 245.76e6}
	lim := optimize.Limits{MaxMultipliers: 2}
	r, err := optimize.Plan(context.Background(), spec, optimize.Settings{MaxStages: 3, CICDelays: []int{1}, Cost: costAt(fs.Clock), Fixed: fs, Limits: lim})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Front) == 0 || r.Dropped[optimize.ReasonOverNativeMultipliers] == 0 {
		t.Fatalf("front %d, dropped %v", len(r.Front), r.Dropped)
	}
	for _, c := range r.Front {
		ws, _, err := fixed.PlanChain(spec, c.Chain, fs)
		if err != nil {
			t.Fatal(err)
		}
		if ws.HardwareMultipliers > lim.MaxMultipliers {
			t.Errorf("%s needs %d native blocks, over the limit %d", chain.Notation(c.Plan), ws.HardwareMultipliers, lim.MaxMultipliers)
		}
	}
}
