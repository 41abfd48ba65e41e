package chain

import (
	"crypto/sha256"
	"encoding/binary"
	"math"
	"sync"
	"sync/atomic"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// MaxCreditedLimit caps a stage's stopband limit under the cascade rule
// (package doc, Cascade requirements): however much the earlier stages
// remove at a frequency, the stage still attenuates it to at most 0.5
// (-6 dB) of its passband gain, so that every stage stays a filter on its
// own bands and a later change to an earlier stage cannot leave a band
// wide open.
const MaxCreditedLimit = 0.5

// maxProtectedLimit bounds a compensator's gain on its protected band
// (fp, fa] under the cascade rule from above only where the earlier
// stages' attenuation of the aliases that land there asks for less: 60 dB
// above the passband, far above any compensator's transition gain, and
// finite so that the band's weight stays positive.
const maxProtectedLimit = 1e3

// protectedGap is the fraction of (fp, fa] left free at each end of a
// compensator's protected band, so that the band does not share its edge
// with the passband or the first stopband.
const protectedGap = 1e-3

// stopCredit is the cascade rule's relaxation of one FIR stage's stopband
// limit by what the stages before it remove (package doc, Cascade
// requirements). Copies of a Requirement share it: it holds the earlier
// stages (their taps are the chain's own slices) and, once first used, the
// table of its credit over the stage's stopbands (table; at most
// maxCreditCells+1 values), built once under a sync.Once; the bounds the
// table is built from are dropped once it is.
type stopCredit struct {
	// base is the stage's limit before the credit: the target's ds times
	// (1 - dp_i) prod_{j>i} (1 - dp_j)/(1 + dp_j) over the ripple-bearing
	// stages from this one on; the earlier stages' factors are in the
	// credit itself, measured on their real responses.
	base float64
	// rate is the stage's input rate, f0 the chain's.
	rate, f0 float64
	// stages are the earlier stages, from the high rate down, rates their
	// input rates.
	stages []Stage
	rates  []float64
	// stop are the stage's stopbands, where the table is built.
	stop []Interval
	// lift are the CICs a later compensator corrects (at their input
	// rates liftRates): an alias the stage lets through lands at x folded
	// at its output rate out, in [0, fa], where the compensator lifts it
	// by up to 1/prod |H_cic| (taken at fp beyond fp). The limit is
	// lowered by that much.
	lift      []CICStage
	liftRates []float64
	out, fp   float64
	// liftFp is the lift at fp (liftGain(fp)), set with the table: the
	// lift of every x that folds to fp or beyond.
	liftFp float64
	// aliasOnly leaves out the image g = x itself: the credit of a
	// compensator's protected band (fp, fa], where x is signal and only
	// the images m F(i-1) +- x, m >= 1, are aliases.
	aliasOnly bool
	// cap is the largest limit: MaxCreditedLimit for a stopband,
	// maxProtectedLimit for a compensator's protected band.
	cap float64
	// mask, when not nil, is the spec's rejection mask and top its largest
	// rejection, which base is stated at: each input frequency g counts
	// with the weight 10^((mask(g) - top)/20) <= 1, so that the limit at x
	// is the least over the g the stage sees there of the mask's own
	// limit at g over the earlier stages' gain at g.
	mask *Mask
	top  float64

	// share, when not nil, is the credit tables' share of the StageMemo
	// the chain is designed with (creditShare).
	share *creditShare

	once sync.Once
	tab  *creditEval // the table, its bounders dropped
}

// newStopCredit is the credit the stages prev (designed, from the chain's
// input rate f0 down) give the stage with stopbands stop whose limit
// before the credit is base.
func newStopCredit(base, f0 float64, prev []Stage, stop []Interval) *stopCredit {
	c := &stopCredit{base: base, f0: f0, stop: append([]Interval(nil), stop...), cap: MaxCreditedLimit}
	rate := f0
	for _, st := range prev {
		c.stages = append(c.stages, st)
		c.rates = append(c.rates, rate)
		rate /= float64(st.Factor())
	}
	c.rate = rate
	return c
}

// The number of cells over [0, F(i-1)/2] on which creditEval tabulates
// the credit: creditPerFeature cells to the finest feature of the earlier
// stages (a FIR of n taps at P times the stage's rate varies on a scale of
// P F(i-1)/n; a CIC of delay M at Q times the stage's output rate has
// lobes Q F(i-1)/M wide), a power of two from minCreditCells to
// maxCreditCells.
const (
	creditPerFeature = 32
	minCreditCells   = 256
	maxCreditCells   = 8192
)

// creditEval evaluates a stopCredit from a table: for each cell of
// [0, F(i-1)/2] that meets one of the stage's stopbands, a rigorous upper
// bound of the credit over the whole cell (cellBound), and at a node the
// larger of its two cells' bounds, so that the linear interpolation
// between nodes, which at is, lies above the credit everywhere in the
// cell. Frequencies outside the table are bounded on the spot.
type creditEval struct {
	c     *stopCredit
	bnd   []stageBounder // each stage's rigorous bounder (bound.go)
	step  []float64      // a FIR bounder's grid step, 0 for a CIC
	rest  []float64      // rest[j]: an upper bound of prod_{k>=j} |H_k|
	dc    float64        // prod_j |H_j(0)|
	w     float64        // cell width
	cells int            // cells over [0, F(i-1)/2]
	nodes []float64      // node k at k w; -1 where not tabulated
}

// eval builds the evaluator of c for a stage with the given stopbands.
// With a share, the layout and the cells' bounds already computed for
// the same earlier stages are taken from it, and the cells computed here
// are added to it; the bounders are built (or taken from the share) only
// when a cell is missing.
func (c *stopCredit) eval(stop []Interval) *creditEval {
	var pre *creditPrefix
	if c.share != nil {
		pre = c.share.prefix(string(c.prefixKey(nil)))
		pre.mu.Lock()
		defer pre.mu.Unlock()
	}
	var e *creditEval
	if pre != nil && pre.layout != nil {
		l := pre.layout
		e = &creditEval{c: c, step: l.step, rest: l.rest, dc: l.dc, w: l.w, cells: l.cells}
	} else {
		e = c.layout()
		if pre != nil {
			pre.layout = &creditEval{step: e.step, rest: e.rest, dc: e.dc, w: e.w, cells: e.cells}
		}
	}
	if !(e.dc > 0) {
		return e
	}
	cells := e.cells
	e.nodes = make([]float64, cells+1)
	for k := range e.nodes {
		e.nodes[k] = -1
	}
	row := c.share.cicRow(c, e.w)
	for _, sb := range stop {
		// A cell of margin each side: the design engine's frequencies
		// may round just outside a band.
		k0 := max(0, int(math.Floor(sb.Lo/e.w))-1)
		k1 := min(cells, int(math.Ceil(sb.Hi/e.w))+1)
		for k := k0; k < k1; k++ {
			u, ok := 0.0, false
			if pre != nil {
				u, ok = pre.cells[k]
			}
			if !ok {
				e.load()
				m := row.cell(k, c.share)
				if m != nil {
					m.mu.Lock()
				}
				u = e.cellBound(float64(k)*e.w, float64(k+1)*e.w, m)
				if m != nil {
					m.mu.Unlock()
				}
				if pre != nil && c.share.cells.Add(1) <= maxSharedCells {
					pre.cells[k] = u
				}
			}
			for _, q := range [2]int{k, k + 1} {
				if !(e.nodes[q] >= u) {
					e.nodes[q] = u
				}
			}
		}
	}
	return e
}

// layout is c's evaluator without nodes: the earlier stages' bounders,
// their grid steps and peaks (rest), their gain at 0 Hz (dc, 0 when a
// stage cannot be bounded) and the table's cells.
func (c *stopCredit) layout() *creditEval {
	n := len(c.stages)
	e := &creditEval{c: c, bnd: make([]stageBounder, n), step: make([]float64, n), rest: make([]float64, n+1), dc: 1}
	peaks := make([]float64, n)
	for j, st := range c.stages {
		e.dc *= st.Gain(0, c.rates[j])
		b, err := c.share.bounder(st, c.rates[j])
		if err != nil {
			// A stage that cannot be bounded (a FIR without taps): no
			// credit at all.
			e.dc = 0
			return e
		}
		e.bnd[j] = b
		peaks[j] = 1
		if fb, ok := b.(*firBounder); ok {
			e.step[j] = fb.step
			_, peaks[j] = fb.coarse(0, c.rates[j]/2)
		}
	}
	e.rest[n] = 1
	for j := n - 1; j >= 0; j-- {
		e.rest[j] = e.rest[j+1] * peaks[j]
	}
	if !(e.dc > 0) {
		return e
	}
	// The finest feature of the earlier stages, in cells of [0, rate/2].
	feat := 1.0
	for j, st := range c.stages {
		switch s := st.(type) {
		case FIRStage:
			feat = math.Max(feat, float64(len(s.Taps))*c.rate/c.rates[j])
		case CICStage:
			feat = math.Max(feat, float64(s.M*s.R)*c.rate/c.rates[j])
		}
	}
	e.cells = nextPow2(min(maxCreditCells, max(minCreditCells, int(math.Ceil(creditPerFeature*feat/2)))))
	e.w = c.rate / 2 / float64(e.cells)
	return e
}

// load sets e's bounders when they are not set (an evaluator laid out
// from a share's layout, whose stages were bounded once already).
func (e *creditEval) load() {
	if e.bnd != nil {
		return
	}
	c := e.c
	e.bnd = make([]stageBounder, len(c.stages))
	for j, st := range c.stages {
		// The layout bounded every stage: no error here.
		e.bnd[j], _ = c.share.bounder(st, c.rates[j])
	}
}

// cellBound is a rigorous upper bound of the earlier stages' largest
// relative gain prod_j |H_j(g)|/|H_j(0)| over every g in [0, F0/2] that
// the stage sees at some x in [a, b] (0 <= a <= b <= F(i-1)/2): the
// images [m F(i-1) - b, m F(i-1) - a] and [m F(i-1) + a, m F(i-1) + b],
// each stage bounded over each image by its bounder (a FIR's over at
// least a grid step, where its bound is a range query). Images are taken
// in increasing frequency; one whose partial product times the bound of
// the stages left cannot beat the best so far is dropped, and when the
// first stage is a CIC, whose envelope 1/(RM sin(pi g/F0))^N falls with g
// below F0/2, the first image whose envelope cannot beat the best ends
// the search. A first CIC's envelope and bound at each image are taken
// from memo, and added to it, when memo is not nil (memo.mu held): the
// images, their order and the bounds' arguments are the same in every
// table of the memo's row (cicRow), so the values are the ones computed
// here.
func (e *creditEval) cellBound(a, b float64, memo *cicCell) float64 {
	c := e.c
	var first CICStage
	firstCIC := false
	if len(c.stages) > 0 {
		first, firstCIC = c.stages[0].(CICStage)
	}
	if !firstCIC {
		memo = nil
	}
	v := 0 // images visited, the index into memo
	best := 0.0
	half := c.f0 / 2
	for m := 0; float64(m)*c.rate-b <= half; m++ {
		base := float64(m) * c.rate
		for s := 0; s < 2; s++ {
			lo, hi := base-b, base-a
			if s == 1 {
				if m == 0 && c.aliasOnly {
					continue
				}
				lo, hi = base+a, base+b
			} else if m == 0 {
				continue
			}
			// The builtins are math.Max and math.Min here: they
			// differ only for a NaN against +Inf.
			lo, hi = max(lo, 0), min(hi, half)
			if lo > hi {
				continue
			}
			if firstCIC {
				var env float64
				if memo != nil && v < len(memo.env) {
					env = memo.env[v]
				} else {
					env = cicEnvelope(first, lo, c.rates[0])
					if memo != nil {
						cicAdd(&memo.env, v, env, c.share)
					}
				}
				if env*e.rest[1] <= best {
					return best / e.dc
				}
			}
			p := 1.0
			for j, bd := range e.bnd {
				l, h := lo, hi
				if st := e.step[j]; h-l < 1.01*st {
					mid := l + (h-l)/2
					l, h = mid-0.51*st, mid+0.51*st
				}
				var u float64
				if j == 0 && memo != nil && v < len(memo.up) {
					u = memo.up[v]
				} else {
					u = bd.upper(l, h)
					if j == 0 && memo != nil {
						cicAdd(&memo.up, v, u, c.share)
					}
				}
				p *= u
				if p*e.rest[j+1] <= best {
					break
				}
			}
			v++
			if c.mask != nil {
				// The mask's weight, at most 1, only lowers p: the
				// prunes above stay safe.
				p *= math.Pow(10, (c.mask.MaxOver(lo, hi)-c.top)/20)
			}
			best = math.Max(best, p)
		}
	}
	return best / e.dc
}

// table returns c's table, building it on first use.
func (c *stopCredit) table() *creditEval {
	c.once.Do(func() {
		if len(c.lift) > 0 {
			c.liftFp = c.liftGain(c.fp)
		}
		e := c.eval(c.stop)
		e.bnd, e.step, e.rest = nil, nil, nil
		c.tab = e
		// The share served the table; a chain kept after its plan (a
		// sweep keeps every value's front) must not keep the plan's
		// whole share alive through it. A frequency outside the table
		// is then bounded without the share (at).
		c.share = nil
	})
	return c.tab
}

// at is an upper bound of the credit at x (see creditEval). A frequency
// outside the table is bounded on the spot, by a fresh evaluator when the
// table's bounders were dropped.
func (e *creditEval) at(x float64) float64 {
	if x < 0 || x > e.c.rate/2 {
		x = foldFreq(x, e.c.rate)
	}
	if e.nodes != nil {
		k := int(x / e.w)
		if k >= e.cells {
			k = e.cells - 1
		}
		if v0, v1 := e.nodes[k], e.nodes[k+1]; v0 >= 0 && v1 >= 0 {
			t := min(max((x-float64(k)*e.w)/e.w, 0), 1) // as math.Min and math.Max: the bounds are finite
			return v0 + t*(v1-v0)
		}
	}
	if e.bnd == nil {
		f := e.c.eval(nil)
		f.load()
		return f.cellBound(x, x, nil)
	}
	return e.cellBound(x, x, nil)
}

// cicEnvelope is an upper bound of the CIC's |H(g)| at rate:
// min(1, 1/(RM |sin(pi g/F)|)^N), its numerator being at most 1.
func cicEnvelope(cs CICStage, g, rate float64) float64 {
	s := float64(cs.R*cs.M) * math.Abs(math.Sin(math.Pi*foldFreq(g, rate)/rate))
	if s <= 1 {
		return 1
	}
	return math.Pow(1/s, float64(cs.N))
}

// limit is the stage's absolute stopband limit at x: base over the
// credit, at most MaxCreditedLimit (and base when no credit can be
// computed), times the later compensator's lift (liftAt).
func (e *creditEval) limit(x float64) float64 {
	l := e.c.liftAt(x)
	if !(e.dc > 0) {
		return math.Min(e.c.base*l, e.c.cap)
	}
	cr := e.at(x)
	if !(cr > 0) || e.c.base*l/cr > e.c.cap {
		return e.c.cap
	}
	return e.c.base * l / cr
}

// liftAt is 1 over the later compensator's lift of an alias the stage
// lets through at x: prod |H_cic(min(x', fp))| over the CICs it corrects,
// x' being x folded at the stage's output rate; 1 without a later
// compensator.
func (c *stopCredit) liftAt(x float64) float64 {
	if len(c.lift) == 0 {
		return 1
	}
	if c.liftFp > 0 {
		// Where x folds to fp or beyond, the lift is its value at fp,
		// taken once (table): the same number, without the sines. x mod
		// out is found here to a few ulps of x; the margin tol keeps
		// every x whose exact fold could lie below fp on the full path.
		ax := math.Abs(x)
		r := ax - math.Floor(ax/c.out)*c.out
		tol := 1e-9*c.out + 1e-14*ax
		if r >= c.fp+tol && r <= c.out-c.fp-tol {
			return c.liftFp
		}
	}
	return c.liftGain(math.Min(foldFreq(x, c.out), c.fp))
}

// liftGain is prod |H_cic(f)| over the CICs a later compensator corrects.
func (c *stopCredit) liftGain(f float64) float64 {
	g := 1.0
	for j, cs := range c.lift {
		g *= cs.Gain(f, c.liftRates[j])
	}
	return g
}

// key appends what the credit depends on to b: its base, cap and the
// later compensator's lift, then its prefixKey.
func (c *stopCredit) key(b []byte) []byte {
	u := func(v uint64) { b = binary.LittleEndian.AppendUint64(b, v) }
	f := func(v float64) { u(math.Float64bits(v)) }
	f(c.base)
	u(uint64(len(c.lift)))
	for j, cs := range c.lift {
		u(uint64(cs.N))
		u(uint64(cs.R * cs.M))
		f(c.liftRates[j])
	}
	f(c.out)
	f(c.fp)
	f(c.cap)
	return c.prefixKey(b)
}

// prefixKey appends what the credit's table depends on to b: the stage's
// input rate and the chain's, the rejection mask, whether the image x
// itself counts (aliasOnly), and every earlier stage as designed (kind,
// factor, rate; a CIC's order and delay, a FIR's taps by their SHA-256).
// The stage's stopbands only choose which cells are tabulated.
func (c *stopCredit) prefixKey(b []byte) []byte {
	u := func(v uint64) { b = binary.LittleEndian.AppendUint64(b, v) }
	f := func(v float64) { u(math.Float64bits(v)) }
	f(c.rate)
	f(c.f0)
	u(uint64(len(c.maskPoints())))
	if c.mask != nil {
		f(c.top)
		for _, p := range c.mask.p {
			f(p.Hz)
			f(p.DB)
		}
	}
	if c.aliasOnly {
		u(1)
	} else {
		u(0)
	}
	u(uint64(len(c.stages)))
	for j, st := range c.stages {
		u(uint64(st.Kind()))
		u(uint64(st.Factor()))
		f(c.rates[j])
		switch s := st.(type) {
		case CICStage:
			u(uint64(s.N))
			u(uint64(s.M))
		case FIRStage:
			b = tapsHash(b, s.Taps)
		}
	}
	return b
}

// tapsHash appends the SHA-256 of the taps' bits to b.
func tapsHash(b []byte, taps []float64) []byte {
	h := sha256.New()
	var w [8]byte
	for _, t := range taps {
		binary.LittleEndian.PutUint64(w[:], math.Float64bits(t))
		h.Write(w[:])
	}
	return h.Sum(b)
}

// creditShare is what the credit tables of one StageMemo's chains share,
// the chains of a search having many earlier stages in common: for each
// prefixKey the table's layout and the bound of every cell computed so
// far (up to maxSharedCells cells in all), and the bounders of the
// earlier FIR stages (while they hold fewer than maxSharedBounderFloats
// values): what a search keeps is bounded whatever its size. A cell's bound depends on nothing
// but the prefix and the cell, so a table built from the share is the
// table built without it, value for value.
type creditShare struct {
	mu     sync.Mutex
	pre    map[string]*creditPrefix
	fir    map[string]*firBounder
	floats int // values held by fir's bounders
	// cic holds a first CIC's values over the cells' images (cicRow),
	// cicVals counts them: beyond maxSharedCICValues they are no longer
	// kept.
	cic     map[cicRowKey]*cicRow
	cicVals atomic.Int64
	// cells counts the cell bounds offered to the prefixes' records:
	// beyond maxSharedCells they are no longer kept.
	cells atomic.Int64
}

// creditPrefix is the share's record of one prefix, its fields guarded by
// mu (held while a table of the prefix is built).
type creditPrefix struct {
	mu     sync.Mutex
	layout *creditEval // step, rest, dc, w and cells of the prefix's tables
	cells  map[int]float64
}

// maxSharedCells bounds the cell bounds a creditShare keeps (about 40 MB
// of map entries); later cells are computed for each table.
const maxSharedCells = 1 << 20

// maxSharedBounderFloats bounds the values a creditShare's FIR bounders
// hold (16 MB): beyond it bounders are built for each table and dropped.
const maxSharedBounderFloats = 2 << 20

func newCreditShare() *creditShare {
	return &creditShare{pre: map[string]*creditPrefix{}, fir: map[string]*firBounder{}, cic: map[cicRowKey]*cicRow{}}
}

// prefix returns the share's record of the prefix key, new when unseen.
func (s *creditShare) prefix(key string) *creditPrefix {
	s.mu.Lock()
	defer s.mu.Unlock()
	p := s.pre[key]
	if p == nil {
		p = &creditPrefix{cells: map[int]float64{}}
		s.pre[key] = p
	}
	return p
}

// bounder is newStageBounder(st, rate), but a FIR's upper-only
// (newFIRUpper: the credit asks for upper bounds alone) and taken from the
// share when it holds one for the same taps and rate; a nil share builds
// it.
func (s *creditShare) bounder(st Stage, rate float64) (stageBounder, error) {
	fs, ok := st.(FIRStage)
	if !ok || len(fs.Taps) == 0 {
		return newStageBounder(st, rate)
	}
	if s == nil {
		return newFIRUpper(fs.Taps, rate)
	}
	key := string(tapsHash(binary.LittleEndian.AppendUint64(nil, math.Float64bits(rate)), fs.Taps))
	s.mu.Lock()
	b := s.fir[key]
	s.mu.Unlock()
	if b != nil {
		return b, nil
	}
	b, err := newFIRUpper(fs.Taps, rate)
	if err != nil {
		return nil, err
	}
	size := b.floats()
	s.mu.Lock()
	if s.fir[key] == nil && s.floats+size <= maxSharedBounderFloats {
		s.fir[key] = b
		s.floats += size
	}
	s.mu.Unlock()
	return b, nil
}

// cicRowKey is what the images of a table's cells, and a first CIC's
// envelope and bound over them, depend on besides the cell's index: the
// CIC (order, delay times factor), the chain's input rate (the CIC's),
// the stage's input rate, the cell width, and whether the image x itself
// counts.
type cicRowKey struct {
	n, rm       int
	f0, rate, w float64
	aliasOnly   bool
}

// cicRow is the share's record of one cicRowKey: for each cell index
// the first CIC's values met so far (cicCell).
type cicRow struct {
	mu    sync.Mutex
	cells map[int]*cicCell
}

// cicCell holds a first CIC's envelope (cicEnvelope) and bound (upper)
// over a cell's images in the order cellBound visits them: env[v] and
// up[v] for the v-th image (up is one shorter than env where the envelope
// ended the search). Its mutex is held while a cell is bounded with it.
type cicCell struct {
	mu      sync.Mutex
	env, up []float64
}

// maxSharedCICValues bounds the values the cicCells of a creditShare hold
// (their slices' capacity), their records counted at cicCellCost values
// each: 8 MB; later values are computed each time.
const maxSharedCICValues = 1 << 20

// cicRow returns the share's row for c's tables of cell width w, nil for
// a nil share or a table whose first earlier stage is not a CIC.
func (s *creditShare) cicRow(c *stopCredit, w float64) *cicRow {
	if s == nil || len(c.stages) == 0 {
		return nil
	}
	cs, ok := c.stages[0].(CICStage)
	if !ok {
		return nil
	}
	k := cicRowKey{n: cs.N, rm: cs.R * cs.M, f0: c.f0, rate: c.rate, w: w, aliasOnly: c.aliasOnly}
	s.mu.Lock()
	defer s.mu.Unlock()
	r := s.cic[k]
	if r == nil {
		r = &cicRow{cells: map[int]*cicCell{}}
		s.cic[k] = r
	}
	return r
}

// cicCellCost is what a cicCell's record costs besides its values, in
// values (its map entry, mutex and slice headers).
const cicCellCost = 16

// cell returns the row's record of cell k, new when unseen and the share
// s has room; nil for a nil row or a full share.
func (r *cicRow) cell(k int, s *creditShare) *cicCell {
	if r == nil {
		return nil
	}
	r.mu.Lock()
	defer r.mu.Unlock()
	m := r.cells[k]
	if m == nil {
		if s.cicVals.Add(cicCellCost) > maxSharedCICValues {
			return nil
		}
		m = &cicCell{}
		r.cells[k] = m
	}
	return m
}

// cicAdd appends x to *vals, a cicCell's slice, as its v-th value when
// that is the next one and the share s has room, counting the slice's
// growth in capacity.
func cicAdd(vals *[]float64, v int, x float64, s *creditShare) {
	if v != len(*vals) || s.cicVals.Load() >= maxSharedCICValues {
		return
	}
	c := cap(*vals)
	*vals = append(*vals, x)
	s.cicVals.Add(int64(cap(*vals) - c))
}

// Credited reports whether the stage's stopband limit is relaxed by the
// earlier stages (the cascade rule, a FIR stage after another stage).
func (r Requirement) Credited() bool { return r.credit != nil }

// StopbandLimitFunc returns the stage's absolute stopband limit as a
// function of x Hz on its input axis: Ds under the stage-alone rule (and
// for a stage without credit), and under the cascade rule Ds' / c(x), at
// most MaxCreditedLimit, where c(x) bounds from above the largest gain of
// the earlier stages relative to their gain at 0 Hz over the input
// frequencies the stage sees at x, and Ds' is the target's ds times the
// passband factors of this stage and the later ones (package doc, Cascade
// requirements). The function is what Bands' stopbands are held to (their
// WeightFunc is its inverse). The credit is tabulated over the stopbands
// on first use and kept with the requirement.
func (r Requirement) StopbandLimitFunc() func(x float64) float64 {
	if r.credit == nil {
		ds := r.Ds
		return func(float64) float64 { return ds }
	}
	return r.credit.table().limit
}

// splitRipple returns each ripple-bearing stage's share of left dB (the
// budget after the uncorrected droop) under the cascade rule. A half-band
// is designed for min(dp, ds) on both bands, so ripple beyond its
// stopband's deviation buys it nothing: each half-band gets the ripple of
// the target's ds, DevToRipple(ds), or the equal share when that is less.
// The rest goes to the FIR stages, split by the cheapest of a few splits
// (equal; and each FIR in turn given 1/2, 3/4 or 9/10 of it, the others
// the rest equally), cheapest meaning the fewest multiplies per output
// sample by the Herrmann-Rabiner-Chan formula, unrounded, at the flat
// limits the split gives (splitCost); the equal split wins a tie. reqs
// hold the stages' bands; ripple lists the ripple-bearing stages' indices;
// fk is the final output rate. The shares add up to left.
func splitRipple(reqs []Requirement, ripple []int, left, ds, fk float64) []float64 {
	n := len(ripple)
	sh := make([]float64, n)
	var firs []int // positions in ripple of the FIR stages
	hbShare := math.Min(DevToRipple(ds), left/float64(n))
	rest := left
	for k, i := range ripple {
		if reqs[i].Kind == HalfBand {
			sh[k] = hbShare
			rest -= hbShare
			continue
		}
		firs = append(firs, k)
	}
	if len(firs) == 0 {
		// Half-bands alone: the equal split.
		for k := range sh {
			sh[k] = left / float64(n)
		}
		return sh
	}
	split := func(big int, frac float64) []float64 {
		out := append([]float64(nil), sh...)
		for _, k := range firs {
			switch {
			case big < 0:
				out[k] = rest / float64(len(firs))
			case k == big:
				out[k] = rest * frac
			default:
				out[k] = rest * (1 - frac) / float64(len(firs)-1)
			}
		}
		return out
	}
	best := split(-1, 0)
	bestCost := splitCost(reqs, ripple, best, ds, fk)
	if len(firs) < 2 {
		return best
	}
	for _, k := range firs {
		for _, frac := range []float64{0.5, 0.75, 0.9} {
			if frac <= 1/float64(len(firs)) {
				continue
			}
			cand := split(k, frac)
			if c := splitCost(reqs, ripple, cand, ds, fk); c < bestCost {
				best, bestCost = cand, c
			}
		}
	}
	return best
}

// splitCost is the multiplies per output sample of the FIR stages under
// the shares sh: the Herrmann-Rabiner-Chan length D/df - f df + 1,
// unrounded so that small differences count, at Dp and the flat Ds the
// shares give, times the stage's output rate over fk. Half-bands, whose
// shares the rule fixes, are left out. A stage outside the formula's
// domain costs +Inf.
func splitCost(reqs []Requirement, ripple []int, sh []float64, ds, fk float64) float64 {
	dps := make([]float64, len(sh))
	for k, s := range sh {
		dps[k] = RippleToDev(s)
	}
	total := 0.0
	for k, i := range ripple {
		r := reqs[i]
		if r.Kind == HalfBand {
			continue
		}
		d := ds * stopbandScaleOf(dps, k, true)
		df := (r.Stopbands[0].Lo - r.Passband) / r.InputRate
		if !(dps[k] > 0 && dps[k] < 1 && d > 0 && d < 1 && df > 0) {
			return math.Inf(1)
		}
		taps := remez.HerrmannD(dps[k], d)/df - remez.HerrmannF(dps[k], d)*df + 1
		total += taps * r.OutputRate / fk
	}
	return total
}

// stopbandScaleOf is StopbandScale for stages with unequal deviations
// dps: prod_j (1 - dp_j) / prod_{j != k} (1 + dp_j) for stage k when own,
// prod_j (1 - dp_j)/(1 + dp_j) for a CIC (own false).
func stopbandScaleOf(dps []float64, k int, own bool) float64 {
	s := 1.0
	for j, dp := range dps {
		s *= 1 - dp
		if !own || j != k {
			s /= 1 + dp
		}
	}
	return s
}

// laterScale is the cascade rule's factor before the credit of
// ripple-bearing stage k: (1 - dp_k) prod_{j>k} (1 - dp_j)/(1 + dp_j).
func laterScale(dps []float64, k int) float64 {
	s := 1 - dps[k]
	for _, dp := range dps[k+1:] {
		s *= (1 - dp) / (1 + dp)
	}
	return s
}

// maskPoints is the mask's points, none without one.
func (c *stopCredit) maskPoints() []MaskPoint {
	if c.mask == nil {
		return nil
	}
	return c.mask.p
}
