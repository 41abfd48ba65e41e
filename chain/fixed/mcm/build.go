package mcm

import (
	"cmp"
	"container/heap"
	"fmt"
	"math/bits"
	"slices"
	"sort"
)

// budget bounds the greedy search's elementary steps (one shift of one
// A-operation, about 10 ns); past it the remaining coefficients are built
// from their CSD digits. A 300-tap stage of 18-bit coefficients uses about
// 1% of it.
const budget = 1 << 26

// evalCands is the most candidates one heuristic step scores in full when
// it cannot score every successor; allWork is the work below which it
// scores every successor, as Hcub does.
const (
	evalCands = 16
	allWork   = 1 << 18
	slistCap  = 1 << 20
	denseLim  = 1 << 22 // candidate places in a 8 MB array at most
)

// op is the wiring of one A-operation on operands u and v:
// w = (±(u << la) ± (v << lb)) >> r.
type op struct {
	la, lb, r  uint8
	negA, negB bool
}

// aops calls f for every odd w <= lim of the A-operation set of Voronenko
// and Püschel (2007) on the odd operands u, v <= lim: u<<i ± v and
// u ± v<<i for i >= 1, and (u ± v) >> r with the trailing zeros removed,
// every result taken in absolute value. It returns the shifts tried, the
// work done. w is in A(u, v) exactly when v is in A(u, w) (within lim),
// which is how a target's possible operands are found.
func aops(u, v, lim uint64, f func(w uint64, o op)) int {
	if u == 0 || v == 0 {
		return 0 // not an odd fundamental; guards the loops below
	}
	n := 0
	for i := uint8(1); u <= (lim+v)>>i; i++ {
		n++
		U := u << i
		if w := U + v; w <= lim {
			f(w, op{la: i})
		}
		if U > v {
			if w := U - v; w <= lim {
				f(w, op{la: i, negB: true})
			}
		} else {
			f(v-U, op{la: i, negA: true})
		}
	}
	if u != v {
		for i := uint8(1); v <= (lim+u)>>i; i++ {
			n++
			V := v << i
			if w := u + V; w <= lim {
				f(w, op{lb: i})
			}
			if V > u {
				if w := V - u; w <= lim {
					f(w, op{lb: i, negA: true})
				}
			} else {
				f(u-V, op{lb: i, negB: true})
			}
		}
		if u > v {
			d := u - v
			r := uint8(bits.TrailingZeros64(d))
			f(d>>r, op{r: r, negB: true})
		} else {
			d := v - u
			r := uint8(bits.TrailingZeros64(d))
			f(d>>r, op{r: r, negA: true})
		}
	}
	s := u + v
	r := uint8(bits.TrailingZeros64(s))
	if w := s >> r; w != u { // (u + u) >> 1 is u itself
		f(w, op{r: r})
	}
	return n + 1
}

// set is a set of odd values <= lim: a bitset when lim is small, else an
// open-addressing hash table that holds at most hashCap values (past that
// it drops new values, which costs only quality: S then misses some
// successors).
type set struct {
	bits  []uint64
	table []uint64 // 0 is empty (values are odd)
	n     int
}

const (
	bitsetLim = 1 << 25 // 2 MB of bits
	hashCap   = 1 << 19 // 8 MB of table
)

func newSet(lim uint64) set {
	if lim <= bitsetLim {
		return set{bits: make([]uint64, (lim>>1)/64+1)}
	}
	return set{table: make([]uint64, 1<<10)}
}

// slot is v's home slot: Fibonacci hashing, the top bits of v·2^64/phi.
func (s *set) slot(v uint64) uint64 {
	return (v * 0x9E3779B97F4A7C15) >> (64 - bits.Len(uint(len(s.table)-1)))
}

func (s *set) has(v uint64) bool {
	if s.bits != nil {
		i := v >> 1
		return s.bits[i>>6]>>(i&63)&1 != 0
	}
	mask := uint64(len(s.table) - 1)
	for i := s.slot(v); ; i = (i + 1) & mask {
		switch s.table[i] {
		case v:
			return true
		case 0:
			return false
		}
	}
}

// add adds v and reports whether it was new.
func (s *set) add(v uint64) bool {
	if s.bits != nil {
		i := v >> 1
		w := &s.bits[i>>6]
		if *w>>(i&63)&1 != 0 {
			return false
		}
		*w |= 1 << (i & 63)
		return true
	}
	if s.has(v) || s.n >= hashCap {
		return false
	}
	if 2*(s.n+1) > len(s.table) {
		old := s.table
		s.table = make([]uint64, 2*len(old))
		s.n = 0
		for _, x := range old {
			if x != 0 {
				s.insert(x)
			}
		}
	}
	s.insert(v)
	return true
}

// reset empties a hash-table set, keeping its table.
func (s *set) reset() {
	clear(s.table)
	s.n = 0
}

func (s *set) insert(v uint64) {
	mask := uint64(len(s.table) - 1)
	i := s.slot(v)
	for s.table[i] != 0 {
		i = (i + 1) & mask
	}
	s.table[i] = v
	s.n++
}

// builder grows one adder graph. vals[i] is nodes[i]'s value; R (the
// realised set) is vals, S (succ) the values one adder from R.
type builder struct {
	lim     uint64
	nodes   []Node
	vals    []uint64
	index   map[uint64]int
	greedy  bool
	rset    set // R's values, a quick filter before index
	succ    set
	pos     map[uint64]int // step's scratch: candidate -> cands index (large lim)
	posArr  []int32        // step's scratch: candidate/2 -> cands index + 1 (small lim)
	cands   []cand         // step's scratch
	slist   []uint64       // S's values in the order found (at most slistCap)
	tset    set
	pset    set      // partners' values (a hash table, whatever lim)
	tgt     []uint64 // distinct odd targets > 1, ascending
	tidx    map[uint64]int
	done    []bool
	ready   []bool
	queue   intHeap
	pending int
	work    int // elementary steps so far
	budget  int // the most work before the rest is built from CSD digits
	unit    int // work of one step: 1 with bitsets, 4 with hash tables (cache misses)
}

func newBuilder(targets []uint64, greedy bool) *builder {
	var top uint64
	if n := len(targets); n > 0 {
		top = targets[n-1]
	}
	b := &builder{
		lim:     1 << (bits.Len64(top) + 1),
		nodes:   []Node{{Value: 1}},
		vals:    []uint64{1},
		index:   map[uint64]int{1: 0},
		greedy:  greedy,
		tgt:     targets,
		tidx:    make(map[uint64]int, len(targets)),
		done:    make([]bool, len(targets)),
		ready:   make([]bool, len(targets)),
		pending: len(targets),
		budget:  budget,
	}
	for i, t := range targets {
		b.tidx[t] = i
	}
	if greedy {
		b.succ, b.tset, b.rset = newSet(b.lim), newSet(b.lim), newSet(b.lim)
		b.unit = 1
		if b.succ.bits == nil {
			b.unit = 4
		}
		b.rset.add(1)
		for _, t := range targets {
			b.tset.add(t)
		}
		b.grow(0)
	}
	return b
}

// run builds every target: targets one adder away first (each costs the
// one adder it must), otherwise the successor the heuristic step picks.
func (b *builder) run() error {
	for b.pending > 0 {
		if b.work > b.budget {
			b.greedy = false
			for i, t := range b.tgt {
				if !b.done[i] {
					b.addCSD(t)
				}
			}
			return nil
		}
		v := uint64(0)
		if b.queue.Len() > 0 {
			i := heap.Pop(&b.queue).(int)
			if b.done[i] {
				continue
			}
			v = b.tgt[i]
		} else if v = b.step(); v == 0 {
			// No successor helps any target: build the cheapest from
			// its digits.
			b.addCSD(b.cheapest())
			continue
		}
		if !b.add(v) {
			return fmt.Errorf("mcm: internal error: %d is not one adder from the graph", v)
		}
	}
	return nil
}

// cheapest returns the pending target of fewest CSD digits (the smaller
// on ties).
func (b *builder) cheapest() uint64 {
	best, bw := uint64(0), 1<<30
	for i, t := range b.tgt {
		if w := weight(t); !b.done[i] && w < bw {
			best, bw = t, w
		}
	}
	return best
}

// add realises v, which must be one adder from R, by the operands that
// give it the least depth. It reports false when v is not one adder from
// R (a bug: the callers pass successors only).
func (b *builder) add(v uint64) bool {
	ia, ib, d := b.realize(v)
	if ia < 0 {
		return false
	}
	found := false
	aops(b.vals[ia], b.vals[ib], b.lim, func(w uint64, o op) {
		if w == v && !found {
			found = true
			b.appendNode(Node{Value: int64(v), A: ia, B: ib, ShiftA: int(o.la), ShiftB: int(o.lb),
				NegA: o.negA, NegB: o.negB, Shift: int(o.r), Depth: d})
		}
	})
	return found
}

// realize returns the operands in R that give v with the least depth
// (ties to the first pair found) and that depth, or -1 when v is not one
// adder from R.
func (b *builder) realize(v uint64) (ia, ib, depth int) {
	ia, ib, depth = -1, -1, 1<<30
	for a := range b.vals {
		b.work += b.unit * aops(v, b.vals[a], b.lim, func(w uint64, _ op) {
			if !b.rset.has(w) {
				return
			}
			if j, ok := b.index[w]; ok {
				if d := 1 + max(b.nodes[a].Depth, b.nodes[j].Depth); d < depth {
					ia, ib, depth = a, j, d
				}
			}
		})
	}
	return ia, ib, depth
}

func (b *builder) appendNode(n Node) int {
	i := len(b.nodes)
	v := uint64(n.Value)
	b.nodes = append(b.nodes, n)
	b.vals = append(b.vals, v)
	b.index[v] = i
	if b.greedy {
		b.rset.add(v)
	}
	if k, ok := b.tidx[v]; ok && !b.done[k] {
		b.done[k] = true
		b.pending--
	}
	if b.greedy {
		b.grow(i)
	}
	return i
}

// grow adds to S every value one adder from node i and an earlier node
// (or itself), and queues the targets among them.
func (b *builder) grow(i int) {
	u := b.vals[i]
	for j := 0; j <= i; j++ {
		b.work += b.unit * aops(u, b.vals[j], b.lim, func(w uint64, _ op) {
			if b.succ.add(w) && len(b.slist) < slistCap {
				b.slist = append(b.slist, w)
			}
			if b.tset.has(w) {
				if k, ok := b.tidx[w]; ok && !b.done[k] && !b.ready[k] {
					b.ready[k] = true
					heap.Push(&b.queue, k)
				}
			}
		})
	}
}

type cand struct {
	v     uint64
	count int // targets it brings to one adder away
	last  int // the last target counted
}

// step is the heuristic part: no target is one adder away. It returns the
// successor to add: among those that bring targets within one adder (two
// away now, RAG-n's and Hcub's distance-2 case), or else among the first
// steps towards the targets that look cheapest, the one of greatest
// benefit, Hcub's sum over targets of 10^-d' (d - d'), d and d' a target's
// estimated distance before and after. Ties go to the shallower, then the
// smaller successor.
func (b *builder) step() uint64 {
	var pend []int
	for i := range b.tgt {
		if !b.done[i] {
			pend = append(pend, i)
		}
	}
	est := make([]int, len(pend))
	// pos finds a candidate's place in cands: a dense array (index v/2,
	// place+1) for small lim, else a map.
	dense := b.lim <= denseLim
	if dense && b.posArr == nil {
		b.posArr = make([]int32, b.lim/2+1)
	}
	if !dense {
		if b.pos == nil {
			b.pos = make(map[uint64]int)
		}
		clear(b.pos)
	}
	cands := b.cands[:0]
	defer func() { b.cands = cands[:0] }()
	bump := func(s uint64, k int) {
		if s <= 1 || !b.succ.has(s) || b.rset.has(s) {
			return
		}
		var j int
		var ok bool
		if dense {
			j, ok = int(b.posArr[s>>1])-1, b.posArr[s>>1] != 0
		} else {
			j, ok = b.pos[s]
		}
		if !ok {
			j = len(cands)
			if dense {
				b.posArr[s>>1] = int32(j + 1)
			} else {
				b.pos[s] = j
			}
			cands = append(cands, cand{v: s, last: -1})
		}
		if c := &cands[j]; c.last != k {
			c.last = k
			c.count++
		}
	}
	for k, i := range pend {
		if b.work > b.budget {
			break
		}
		t := b.tgt[i]
		e := 1 << 30
		for _, r := range b.vals {
			b.work += b.unit * aops(t, r, b.lim, func(d uint64, _ op) {
				if b.succ.has(d) {
					e = 2
					bump(d, k)
				} else if z := weight(d); z < e {
					e = z
				}
			})
		}
		for m := range mults(t) {
			if t%m == 0 && b.succ.has(t/m) {
				e = 2
				bump(t/m, k)
			}
		}
		est[k] = e
	}
	if dense {
		for _, c := range cands {
			b.posArr[c.v>>1] = 0
		}
	}
	if b.work > b.budget {
		return 0
	}
	lb := bits.Len64(b.lim)
	var pp []pair
	if len(cands) == 0 {
		pp = b.partners(pend, lb)
	}
	per := len(pend) // work of scoring one candidate, in units of 3·lb
	if pp != nil {
		per += len(b.vals) + 1
	}
	if len(b.slist) < slistCap && len(b.slist)*per*3*lb <= allWork {
		cands = cands[:0]
		for _, v := range b.slist {
			if !b.rset.has(v) {
				cands = append(cands, cand{v: v})
			}
		}
	} else if len(cands) > 0 {
		cands = topCands(cands, evalCands)
	} else {
		cands = b.farCandidates(pend, est)
	}
	if len(cands) > evalCands && len(cands)*per*3*lb > allWork {
		cands = cands[:evalCands]
	}
	hs := make([]float64, len(cands))
	top := -1.0
	for j, c := range cands {
		hs[j] = b.benefit(c.v, pend, est, pp)
		top = max(top, hs[j])
	}
	best, bestD := uint64(0), 1<<30
	for j, c := range cands {
		if hs[j] != top || top <= 0 {
			continue
		}
		_, _, d := b.realize(c.v)
		if d < bestD || d == bestD && c.v < best {
			best, bestD = c.v, d
		}
	}
	return best
}

// topCands moves the n candidates of most count (ties to the smaller
// value) to the front, in that order, and returns them.
func topCands(c []cand, n int) []cand {
	better := func(x, y cand) bool { return x.count > y.count || x.count == y.count && x.v < y.v }
	m := min(n, len(c))
	for i := 0; i < m; i++ {
		for j := i + 1; j < len(c); j++ {
			if better(c[j], c[i]) {
				c[i], c[j] = c[j], c[i]
			}
		}
	}
	return c[:m]
}

// isMult reports whether q is 2^i ± 1 for some i >= 1, q >= 3.
func isMult(q uint64) bool { return q >= 3 && ((q-1)&(q-2) == 0 || (q+1)&q == 0) }

// mults yields 2^i ± 1 for the i that can divide t (3, 5, 7, 9, 15, ...).
func mults(t uint64) func(func(uint64) bool) {
	return func(yield func(uint64) bool) {
		for i := 2; i < 63 && uint64(1)<<i-1 <= t; i++ {
			p := uint64(1) << i
			if !yield(p-1) || p+1 <= t && !yield(p+1) {
				return
			}
		}
	}
}

var pow10 = func() (p [70]float64) {
	p[0] = 1
	for i := 1; i < len(p); i++ {
		p[i] = p[i-1] / 10
	}
	return p
}()

// benefit is Hcub's benefit of adding s: the sum over pending targets of
// 10^-d' (d - d'), with d the estimate before (est) and d' after. A
// target is one adder from R+s when it is in A(s, R+s); two when it is in
// A(s, S); otherwise t in A(s, d) costs 1 + (weight(d) - 1) adders.
func (b *builder) benefit(s uint64, pend, est []int, pp []pair) float64 {
	var two []bool
	if pp != nil {
		two = make([]bool, len(pend))
		for j := 0; j <= len(b.vals); j++ {
			r := s
			if j < len(b.vals) {
				r = b.vals[j]
			}
			b.work += b.unit * aops(s, r, b.lim, func(u uint64, _ op) {
				if !b.pset.has(u) {
					return
				}
				q := sort.Search(len(pp), func(x int) bool { return pp[x].d >= u })
				for ; q < len(pp) && pp[q].d == u; q++ {
					two[pp[q].k] = true
				}
			})
		}
	}
	h := 0.0
	for k, i := range pend {
		t := b.tgt[i]
		e := est[k]
		if two != nil && two[k] {
			e = min(e, 2)
		}
		b.work += b.unit * aops(t, s, b.lim, func(d uint64, _ op) {
			if e == 1 {
				return
			}
			if d == s || b.rset.has(d) {
				e = 1
			} else if b.succ.has(d) {
				e = min(e, 2)
			} else {
				e = min(e, weight(d))
			}
		})
		if e > 1 && t%s == 0 {
			if isMult(t / s) {
				e = 1
			}
		}
		if e < est[k] {
			h += pow10[min(e, len(pow10)-1)] * float64(est[k]-e)
		}
	}
	return h
}

type pair struct {
	d uint64
	k int
}

// partners returns, sorted, the pairs (d, k) with pending target k in
// A(r, d) for some r in R: a target becomes two adders away when a
// successor added makes d one adder away. Nil when there would be too
// many.
func (b *builder) partners(pend []int, lb int) []pair {
	if len(pend)*len(b.vals)*6*lb > 1<<16 {
		return nil
	}
	var pp []pair
	for k, i := range pend {
		for _, r := range b.vals {
			b.work += b.unit * aops(b.tgt[i], r, b.lim, func(d uint64, _ op) {
				pp = append(pp, pair{d, k})
			})
		}
	}
	slices.SortFunc(pp, func(x, y pair) int {
		if c := cmp.Compare(x.d, y.d); c != 0 {
			return c
		}
		return cmp.Compare(x.k, y.k)
	})
	b.work += len(pp) * bits.Len(uint(len(pp)))
	if b.pset.table == nil {
		b.pset.table = make([]uint64, 1<<10)
	}
	b.pset.reset()
	for _, p := range pp {
		b.pset.add(p.d)
	}
	return pp
}

// farCandidates gives the first steps towards the targets of least
// estimate when none is two adders away: for t = A(x, d) with x in R and
// d of fewest CSD digits (at most four such (x, d) per target), x
// combined with each digit of d (one adder from R), and d's two top and
// two bottom digits.
func (b *builder) farCandidates(pend, est []int) []cand {
	least := 1 << 30
	for _, e := range est {
		least = min(least, e)
	}
	seen := make(map[uint64]bool)
	var out []cand
	push := func(s uint64) {
		if s > 1 && s <= b.lim && !seen[s] {
			if _, in := b.index[s]; !in {
				seen[s] = true
				out = append(out, cand{v: s})
			}
		}
	}
	for k, i := range pend {
		if est[k] != least {
			continue
		}
		t := b.tgt[i]
		type dec struct{ x, d uint64 }
		var decs []dec
		for _, x := range b.vals {
			b.work += b.unit * aops(t, x, b.lim, func(d uint64, _ op) {
				if len(decs) < 4 && weight(d) == least {
					decs = append(decs, dec{x, d})
				}
			})
		}
		for _, dc := range decs {
			var fw op
			found := false
			b.work += b.unit * aops(dc.x, dc.d, b.lim, func(w uint64, o op) {
				if w == t && !found {
					fw, found = o, true
				}
			})
			if !found {
				continue
			}
			dg := CSD(int64(dc.d))
			var nz []int
			for p, g := range dg {
				if g == 0 {
					continue
				}
				nz = append(nz, p)
				// ±(x << la) ± (g << (p + lb)), sign of d's term as in t.
				sx := !fw.negA
				sg := !fw.negB == (g > 0)
				push(combine(dc.x, int(fw.la), sx, int(p)+int(fw.lb), sg, b.lim))
			}
			if n := len(nz); n >= 2 {
				push(combine(1, nz[n-1]-nz[n-2], true, 0, dg[nz[n-1]] == dg[nz[n-2]], b.lim))
				push(combine(1, nz[1]-nz[0], true, 0, dg[nz[1]] == dg[nz[0]], b.lim))
			}
		}
	}
	sort.Slice(out, func(x, y int) bool { return out[x].v < out[y].v })
	return out
}

// combine returns the odd part of |±(x << lx) ± (1 << lp)| (signs: true
// for +), or 0 when a term would pass 2·lim.
func combine(x uint64, lx int, sx bool, lp int, sp bool, lim uint64) uint64 {
	e := min(lx, lp)
	lx, lp = lx-e, lp-e
	if lx > 62 || lp > 62 || x > (2*lim)>>lx || uint64(1)<<lp > 2*lim {
		return 0 // lim <= 2^62: X, P <= 2^63 and X + P < 2^64
	}
	X, P := x<<lx, uint64(1)<<lp
	var w uint64
	switch {
	case sx == sp:
		w = X + P
	case X > P:
		w = X - P
	default:
		w = P - X
	}
	if w == 0 {
		return 0
	}
	return w >> bits.TrailingZeros64(w)
}

// addCSD builds t from its CSD digits by a balanced tree of adders,
// reusing every partial sum that is already a node.
func (b *builder) addCSD(t uint64) {
	if _, ok := b.index[t]; ok {
		return
	}
	var pos, sg []int
	for p, d := range CSD(int64(t)) {
		if d != 0 {
			pos = append(pos, p)
			sg = append(sg, int(d))
		}
	}
	b.csdGroup(pos, sg)
}

// csdGroup builds the sum of the digits sg[k]·2^pos[k] (pos ascending) and
// returns it as sign·vals[node] << exp.
func (b *builder) csdGroup(pos, sg []int) (node, exp, sign int) {
	if len(pos) == 1 {
		return 0, pos[0], sg[0]
	}
	h := len(pos) / 2
	li, le, ls := b.csdGroup(pos[:h], sg[:h])
	hi, he, hs := b.csdGroup(pos[h:], sg[h:])
	sh := he - le // > 0: the low group's lowest digit is lower
	av, bv := b.vals[li], b.vals[hi]<<sh
	var mag uint64
	switch {
	case ls == hs:
		mag, sign = av+bv, ls
	case bv > av:
		mag, sign = bv-av, hs
	default:
		mag, sign = av-bv, ls
	}
	if j, ok := b.index[mag]; ok {
		return j, le, sign
	}
	n := Node{Value: int64(mag), A: li, B: hi, ShiftB: sh, NegA: ls != sign, NegB: hs != sign,
		Depth: 1 + max(b.nodes[li].Depth, b.nodes[hi].Depth)}
	return b.appendNode(n), le, sign
}

// prune drops the nodes no target uses, and returns the adders and the
// depth left.
func (b *builder) prune() (adders, depth int) {
	used := make([]bool, len(b.nodes))
	used[0] = true
	for _, t := range b.tgt {
		used[b.index[t]] = true
		depth = max(depth, b.nodes[b.index[t]].Depth)
	}
	for i := len(b.nodes) - 1; i > 0; i-- {
		if used[i] {
			used[b.nodes[i].A], used[b.nodes[i].B] = true, true
		}
	}
	remap := make([]int, len(b.nodes))
	var nodes []Node
	for i, n := range b.nodes {
		if !used[i] {
			continue
		}
		remap[i] = len(nodes)
		n.A, n.B = remap[n.A], remap[n.B]
		nodes = append(nodes, n)
	}
	b.nodes = nodes
	b.vals = b.vals[:0]
	b.index = make(map[uint64]int, len(nodes))
	for i, n := range nodes {
		b.vals = append(b.vals, uint64(n.Value))
		b.index[uint64(n.Value)] = i
	}
	return len(nodes) - 1, depth
}

type intHeap []int

func (h intHeap) Len() int           { return len(h) }
func (h intHeap) Less(i, j int) bool { return h[i] < h[j] }
func (h intHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *intHeap) Push(x any)        { *h = append(*h, x.(int)) }
func (h *intHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

func sortU64(v []uint64) { sort.Slice(v, func(i, j int) bool { return v[i] < v[j] }) }
