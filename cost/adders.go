package cost

import (
	"encoding/binary"
	"fmt"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

// Block is the adders of one copy of a multiplierless FIR or half-band
// stage (one lane of one real filter; see Multiplierless in the package
// doc): Coefficient, the adders of the shared graph that multiplies the
// input by every tap, and Structural, the adders that sum the taps.
// Estimated marks a block counted from a length (EstimateAdders) rather
// than a graph of rounded taps.
type Block struct {
	Coefficient, Structural int
	Estimated               bool
}

// CICAdders is a recursive CIC's hardware adders for one real filter:
// its n integrators once per lane (each lane's running sum has its own
// adder, as its register; Lanes) and its n combs, which run at the output
// rate.
func CICAdders(n, lanes int) int { return n*max(1, lanes) + n }

// EstimateAdders is the block of a stage of n taps before its taps are
// designed and rounded (a planning estimate, labelled so by Estimated):
// one coefficient adder per distinct tap of a linear-phase response,
// ceil(n/2) for a FIR and K for a half-band of 4K-1 taps (its centre is a
// power of two and its other odd taps zero), and one structural adder per
// tap after the first, n-1 (a half-band's 2K+1 nonzero taps, 2K). The
// graphs of long designed stages come well below one adder per distinct
// rounded tap (package mcm's measurements: 39 adders for 82 taps, 88 for
// 204, 128 for 400 taps at 16 bits), and their tails rounded to zero
// take structural adders away; short ones can need more (a 7-tap FIR
// took 7 graph adders, a 15-tap half-band 6, against 4). A guide, not a
// bound either way.
func EstimateAdders(n int, halfBand bool) Block {
	if halfBand {
		k := (n + 1 + 3) / 4
		return Block{Coefficient: k, Structural: 2 * k, Estimated: true}
	}
	return Block{Coefficient: (n + 1) / 2, Structural: max(n-1, 0), Estimated: true}
}

// RoundTaps rounds a stage's taps to coefBits-bit integers as the
// multiplierless pricing builds them: fixed.QuantizeHalfBand for a
// half-band (its zeros exact, its centre a power of two), falling back to
// fixed.Quantize when the width cannot hold the centre exactly, and
// fixed.Quantize for a FIR. coefBits must lie in [2, fixed.MaxBits].
func RoundTaps(taps []float64, halfBand bool, coefBits int) ([]int64, error) {
	if coefBits < 2 || coefBits > fixed.MaxBits {
		return nil, fmt.Errorf("coefficient width %d bits: want 2 to %d", coefBits, fixed.MaxBits)
	}
	if halfBand {
		if c, err := fixed.QuantizeHalfBand(taps, coefBits); err == nil {
			return c.Ints, nil
		}
	}
	return fixed.Quantize(taps, coefBits).Ints, nil
}

// IntsBlock is the block of a stage whose rounded taps are ints: the
// adders of mcm.Build's graph, proved by evaluating it (every product
// ints[k]·x reproduced exactly for x = 1, -1 and 3; an error otherwise,
// never a wrong count), and one structural adder per nonzero tap after
// the first (the transposed direct form; see the package doc).
func IntsBlock(ints []int64) (Block, error) {
	g, err := graphOf(ints)
	if err != nil {
		return Block{}, err
	}
	nz := 0
	for _, c := range ints {
		if c != 0 {
			nz++
		}
	}
	return Block{Coefficient: g.Adders(), Structural: max(nz-1, 0)}, nil
}

// GraphAdders is IntsBlock of taps rounded by RoundTaps.
func GraphAdders(taps []float64, halfBand bool, coefBits int) (Block, error) {
	ints, err := RoundTaps(taps, halfBand, coefBits)
	if err != nil {
		return Block{}, err
	}
	return IntsBlock(ints)
}

// ProveGraph checks that g multiplies by every coefficient of ints exactly:
// Eval(x)[k] == ints[k]·x for x = 1, -1 and 3.
func ProveGraph(g *mcm.Graph, ints []int64) error {
	for _, x := range []int64{1, -1, 3} {
		got, err := g.Eval(x)
		if err != nil {
			return fmt.Errorf("adder graph: %w", err)
		}
		if len(got) != len(ints) {
			return fmt.Errorf("internal error: the adder graph gives %d products for %d coefficients", len(got), len(ints))
		}
		for k, c := range ints {
			if got[k] != c*x {
				return fmt.Errorf("internal error: the adder graph gives %d for coefficient %d (%d) times %d, want %d", got[k], k, c, x, c*x)
			}
		}
	}
	return nil
}

// graphs caches mcm.Build's graphs by their coefficients: a search prices
// the same designed stage in many chains, and Build takes milliseconds.
// The graph depends on the coefficients alone, so the cache changes no
// figure. It is emptied when it reaches graphCacheSize entries.
var graphs struct {
	sync.Mutex
	m map[string]*mcm.Graph
}

const graphCacheSize = 4096

// graphOf is mcm.Build of ints, proved (ProveGraph) and cached.
func graphOf(ints []int64) (*mcm.Graph, error) {
	key := make([]byte, 8*len(ints))
	for k, c := range ints {
		binary.LittleEndian.PutUint64(key[8*k:], uint64(c))
	}
	graphs.Lock()
	g, ok := graphs.m[string(key)]
	graphs.Unlock()
	if ok {
		return g, nil
	}
	g, err := mcm.Build(ints)
	if err != nil {
		return nil, err
	}
	if err := ProveGraph(g, ints); err != nil {
		return nil, err
	}
	graphs.Lock()
	if graphs.m == nil || len(graphs.m) >= graphCacheSize {
		graphs.m = make(map[string]*mcm.Graph)
	}
	graphs.m[string(key)] = g
	graphs.Unlock()
	return g, nil
}

// KeepAdders gives f, a multiplierless chain's figures priced again (say,
// by Evaluate, for its analysis), the adder counts of g, the same chain's
// figures once counted from its integer coefficients (CountInts): pricing
// counts taps it rounds itself, which may differ from the build's by a
// step. It does nothing unless both are multiplierless and of as many
// stages.
func (f *Figures) KeepAdders(g Figures) {
	if !f.Multiplierless || !g.Multiplierless || len(f.Stages) != len(g.Stages) {
		return
	}
	f.Stages = append([]StageFigures(nil), f.Stages...) // not the caller's copy's
	for i := range f.Stages {
		s, t := &f.Stages[i], &g.Stages[i]
		s.CoefficientAdders, s.StructuralAdders, s.Adders, s.AddersEstimated = t.CoefficientAdders, t.StructuralAdders, t.Adders, t.AddersEstimated
	}
	f.Adders = g.Adders
}

// CountInts re-counts a multiplierless chain's FIR and half-band blocks
// from the integer coefficients it will be built with: ints[i], when not
// empty, are stage i's (such as a word-length plan's, whose rounding may
// move a tap by a step from RoundTaps'), counted by IntsBlock; the
// stage's and the chain's Adders follow (the block times the stage's
// lanes and cx real filters). f must have been priced with
// Settings.Multiplierless; stages without ints keep their counts.
func (f *Figures) CountInts(cx int, ints [][]int64) error {
	if !f.Multiplierless {
		return fmt.Errorf("cost: CountInts on a chain not priced multiplierless")
	}
	if len(ints) != len(f.Stages) {
		return fmt.Errorf("cost: CountInts with %d stages' coefficients for %d stages", len(ints), len(f.Stages))
	}
	f.Stages = append([]StageFigures(nil), f.Stages...) // not the caller's copy's
	total := 0
	for i := range f.Stages {
		sf := &f.Stages[i]
		if len(ints[i]) > 0 {
			b, err := IntsBlock(ints[i])
			if err != nil {
				return fmt.Errorf("cost: stage %d: %w", i+1, err)
			}
			sf.CoefficientAdders, sf.StructuralAdders, sf.AddersEstimated = b.Coefficient, b.Structural, false
			sf.Adders = (b.Coefficient + b.Structural) * max(1, sf.Lanes) * cx
		}
		total += sf.Adders
	}
	f.Adders = total
	return nil
}
