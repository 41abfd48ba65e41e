package optimize

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

// space is the search space of one plan: the ratio, the stage-count limit
// and the stage kinds and CIC parameters to try.
type space struct {
	d         int
	interp    bool // params.interp
	maxStages int
	cic       bool
	halfBand  bool
	fir       bool
	orders    []int
	delays    []int
	forms     []chain.CICForm // the CIC forms tried, Recursive first
	// sameLayout reports whether the multiband and lowpass layouts of a FIR
	// stage of factor f with output rate at prefix p*f coincide, in which
	// case only the multiband one is tried.
	sameLayout func(prefix, factor int) bool

	// skipCIC, when not nil, is asked about each first-stage CIC before the
	// walk descends; a non-zero code skips every candidate under it, and
	// skipped is told the code and how many candidates that was.
	skipCIC func(st chain.StagePlan) dropCode
	skipped func(code dropCode, n int64)

	memo map[[2]int]int64
}

// divisors returns the divisors of n that are at least 2, ascending.
func divisors(n int) []int {
	var lo, hi []int
	for k := 2; k*k <= n; k++ {
		if n%k == 0 {
			lo = append(lo, k)
			if k*k != n {
				hi = append(hi, n/k)
			}
		}
	}
	for i := len(hi) - 1; i >= 0; i-- {
		lo = append(lo, hi[i])
	}
	if n >= 2 {
		lo = append(lo, n)
	}
	return lo
}

// stageFactors returns the divisors of n that one stage can take: at least
// 2 and at most chain.MaxStageFactor, ascending. Above that a chain is
// refused at design, so a ratio beyond 2^20 is split over two stages or
// more.
func stageFactors(n int) []int {
	ds := divisors(n)
	for i, f := range ds {
		if f > chain.MaxStageFactor {
			return ds[:i]
		}
	}
	return ds
}

// cicForms returns the CIC forms to try: Recursive alone by default.
func (sp *space) cicForms() []chain.CICForm {
	if sp.forms == nil {
		return []chain.CICForm{chain.Recursive}
	}
	return sp.forms
}

// choices returns how many stage plans a stage of factor f at position pos
// (prefix product p before it) has.
func (sp *space) choices(pos, prefix, f int) int {
	c := 0
	if pos == 0 && sp.cic {
		for _, m := range sp.delays {
			for _, form := range sp.cicForms() {
				if form == chain.Recursive || chain.NonRecursiveOK(m, f) == nil {
					c += len(sp.orders)
				}
			}
		}
	}
	if f == 2 && sp.halfBand {
		c++
	}
	if sp.fir {
		c++
		if !sp.sameLayout(prefix, f) {
			c++
		}
	}
	return c
}

// count returns the number of candidates in the space, saturating at
// math.MaxInt64/2 so that a huge space compares as huge without overflow.
func (sp *space) count() int64 { return sp.completions(sp.d, 0) }

// completions is the number of ways to finish a candidate whose stages
// before position pos leave the ratio rem.
func (sp *space) completions(rem, pos int) int64 {
	if rem == 1 {
		return 1
	}
	if pos == sp.maxStages {
		return 0
	}
	if sp.memo == nil {
		sp.memo = map[[2]int]int64{}
	}
	k := [2]int{rem, pos}
	if v, ok := sp.memo[k]; ok {
		return v
	}
	prefix := sp.d / rem
	var total int64
	for _, f := range stageFactors(rem) {
		c := int64(sp.choices(pos, prefix, f))
		if c == 0 {
			continue
		}
		total = satAdd(total, satMul(c, sp.completions(rem/f, pos+1)))
	}
	sp.memo[k] = total
	return total
}

const satMax = math.MaxInt64 / 2

func satAdd(a, b int64) int64 {
	if a+b > satMax || a+b < 0 {
		return satMax
	}
	return a + b
}

func satMul(a, b int64) int64 {
	if a == 0 || b == 0 {
		return 0
	}
	if a > satMax/b {
		return satMax
	}
	return a * b
}

// walk calls visit with every candidate of the space in a fixed order:
// factorisations depth first with factors ascending, and at each stage CIC
// (orders then delays ascending), then half-band, then FIR multiband, then FIR
// lowpass. The slice passed to visit is reused; visit must copy what it keeps.
// visit returns false to stop the walk; walk then returns false. It is
// walkFrom over firsts in order, with the first-stage CICs that skipCIC
// drops counted to skipped instead.
func (sp *space) walk(visit func(plan []chain.StagePlan) bool) bool {
	if sp.d == 1 {
		return visit(nil)
	}
	for _, st := range sp.firsts() {
		if sp.skips(st) {
			continue
		}
		if !sp.walkFrom(st, visit) {
			return false
		}
	}
	return true
}

// skips reports whether skipCIC drops the first stage st, and counts the
// candidates under it to skipped when it does.
func (sp *space) skips(st chain.StagePlan) bool {
	if st.Kind != chain.CIC || sp.skipCIC == nil {
		return false
	}
	code := sp.skipCIC(st)
	if code == dropNone {
		return false
	}
	sp.skipped(code, sp.completions(sp.d/st.Factor, 1))
	return true
}

// firsts returns the first stages of the space's candidates in walk order.
func (sp *space) firsts() []chain.StagePlan {
	var out []chain.StagePlan
	for _, f := range stageFactors(sp.d) {
		if sp.maxStages == 1 && f != sp.d {
			continue
		}
		if sp.cic {
			for _, n := range sp.orders {
				for _, m := range sp.delays {
					for _, form := range sp.cicForms() {
						if form == chain.NonRecursive && chain.NonRecursiveOK(m, f) != nil {
							continue
						}
						out = append(out, chain.StagePlan{Kind: chain.CIC, Factor: f, CICOrder: n, CICDelay: m, CICForm: form})
					}
				}
			}
		}
		if f == 2 && sp.halfBand {
			out = append(out, chain.StagePlan{Kind: chain.HalfBand, Factor: f})
		}
		if sp.fir {
			out = append(out, chain.StagePlan{Kind: chain.FIR, Factor: f, Variant: chain.Multiband})
			if !sp.sameLayout(1, f) {
				out = append(out, chain.StagePlan{Kind: chain.FIR, Factor: f, Variant: chain.Lowpass})
			}
		}
	}
	return out
}

// walkFrom calls visit with every candidate whose first stage is first, in
// walk order (see walk). It only reads the space, once count has filled
// its memo, so walks from different first stages may run concurrently.
func (sp *space) walkFrom(first chain.StagePlan, visit func(plan []chain.StagePlan) bool) bool {
	buf := make([]chain.StagePlan, sp.maxStages)
	buf[0] = first
	divs := map[int][]int{}
	var rec func(rem, pos int) bool
	rec = func(rem, pos int) bool {
		if rem == 1 {
			return visit(buf[:pos])
		}
		if pos == sp.maxStages {
			return true
		}
		ds, ok := divs[rem]
		if !ok {
			ds = stageFactors(rem)
			divs[rem] = ds
		}
		prefix := sp.d / rem
		for _, f := range ds {
			if pos == sp.maxStages-1 && f != rem {
				continue
			}
			if f == 2 && sp.halfBand {
				buf[pos] = chain.StagePlan{Kind: chain.HalfBand, Factor: f}
				if !rec(rem/f, pos+1) {
					return false
				}
			}
			if sp.fir {
				buf[pos] = chain.StagePlan{Kind: chain.FIR, Factor: f, Variant: chain.Multiband}
				if !rec(rem/f, pos+1) {
					return false
				}
				if !sp.sameLayout(prefix, f) {
					buf[pos] = chain.StagePlan{Kind: chain.FIR, Factor: f, Variant: chain.Lowpass}
					if !rec(rem/f, pos+1) {
						return false
					}
				}
			}
		}
		return true
	}
	return rec(sp.d/first.Factor, 1)
}

// comparePlans is the total order used for every tie-break: fewer stages
// first, then stage by stage factor, kind, CIC order, CIC delay, variant.
func comparePlans(a, b []chain.StagePlan) int {
	if len(a) != len(b) {
		if len(a) < len(b) {
			return -1
		}
		return 1
	}
	for i := range a {
		x, y := a[i], b[i]
		switch {
		case x.Factor != y.Factor:
			return cmpInt(x.Factor, y.Factor)
		case x.Kind != y.Kind:
			return cmpInt(int(x.Kind), int(y.Kind))
		case x.CICOrder != y.CICOrder:
			return cmpInt(x.CICOrder, y.CICOrder)
		case x.CICDelay != y.CICDelay:
			return cmpInt(x.CICDelay, y.CICDelay)
		case x.CICForm != y.CICForm:
			return cmpInt(int(x.CICForm), int(y.CICForm))
		case x.Variant != y.Variant:
			return cmpInt(int(x.Variant), int(y.Variant))
		}
	}
	return 0
}

func cmpInt(a, b int) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// ratio names the search's ratio in messages: "decimation d", or
// "interpolation d" for an interpolation spec searched as its transpose.
func (sp *space) ratio() string {
	if sp.interp {
		return fmt.Sprintf("interpolation %d", sp.d)
	}
	return fmt.Sprintf("decimation %d", sp.d)
}
