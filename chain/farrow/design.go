package farrow

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"
)

// Limits of Design and MinDesign; they keep every design bounded in time
// and memory.
const (
	MaxDegree = 7  // largest DesignSpec.Degree
	MaxLen    = 64 // largest DesignSpec.Len

	// MinSearchDegree and MaxSearchDegree are the degrees MinDesign tries.
	MinSearchDegree = 1
	MaxSearchDegree = 6

	// LawsonIterations is the number of reweighted least-squares solves
	// after the first.
	LawsonIterations = 30

	// MaxCertBands is the largest k whose stopband Design checks by branch
	// and bound; the bands beyond are covered by the tail bound.
	MaxCertBands = 1 << 14
)

// DesignSpec is the specification of a symmetric Farrow filter, in cycles
// per input sample. The zero value is not valid.
type DesignSpec struct {
	Degree int // P, the degree in mu, 0..MaxDegree
	Len    int // N, the subfilter length, even, 2..MaxLen

	Pass float64 // the passband is [0, Pass], 0 < Pass < Stop
	Stop float64 // the stopbands are [k - Stop, k + Stop] for every integer k >= 1; Stop < 0.5

	PassDev float64 // target max |H - 1| on the passband, in (0, 1)
	StopDev float64 // target max |H| on the stopbands, in (0, 1)
}

// Result is what a design achieved. Its deviations are rigorous upper
// bounds, never below the true maxima, and within about 1% of the larger
// of the maximum and a tenth of the target above them.
type Result struct {
	PassDev float64 // >= max |H(nu) - 1| over [0, Pass]
	StopDev float64 // >= max |H(nu)| over every stopband [k - Stop, k + Stop], k >= 1
	Meets   bool    // PassDev and StopDev within the spec's targets
	Cost    int     // multiplies per output, (Degree+1)*Len + Degree
	Bands   int     // stopbands k = 1..Bands checked by branch and bound; the tail bound covers the rest
}

// Cost returns the multiplies per output of a Farrow filter of degree p and
// subfilter length n: (p+1) n for the subfilters and p for Horner's rule.
func Cost(p, n int) int { return (p+1)*n + p }

func checkBands(pass, xs, passDev, stopDev float64) error {
	fin := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch {
	case !fin(pass) || pass <= 0:
		return fmt.Errorf("farrow design: passband edge %.6g: it must be a positive number of cycles per input sample", pass)
	case !fin(xs) || xs >= 0.5:
		return fmt.Errorf("farrow design: stopband half-width %.6g: it must be below 0.5 cycles per input sample, or the stopbands around neighbouring integers overlap", xs)
	case pass >= xs:
		return fmt.Errorf("farrow design: passband edge %.6g is not below the stopband half-width %.6g: the stopbands must be wider than the passband", pass, xs)
	case !fin(passDev) || passDev <= 0 || passDev >= 1:
		return fmt.Errorf("farrow design: passband deviation %.6g: it must lie strictly between 0 and 1", passDev)
	case !fin(stopDev) || stopDev <= 0 || stopDev >= 1:
		return fmt.Errorf("farrow design: stopband deviation %.6g: it must lie strictly between 0 and 1", stopDev)
	}
	return nil
}

func (s DesignSpec) validate() error {
	if s.Degree < 0 || s.Degree > MaxDegree {
		return fmt.Errorf("farrow design: degree %d: it must be 0..%d", s.Degree, MaxDegree)
	}
	if s.Len < 2 || s.Len > MaxLen || s.Len%2 != 0 {
		return fmt.Errorf("farrow design: subfilter length %d: it must be even, 2..%d", s.Len, MaxLen)
	}
	return checkBands(s.Pass, s.Stop, s.PassDev, s.StopDev)
}

// designBands is the number of stopbands k = 1..K on the design grid.
func designBands(n int) int { return max(16, 4*n) }

// lsGiveUp is the largest weighted error of the plain least-squares solve
// past which MinDesign drops a candidate without Lawson's refinement: the
// refinement lowers the largest error of these designs by well under this
// factor (a heuristic, which keeps a search over hopeless candidates to a
// fraction of its time).
const lsGiveUp = 10

// regRho weighs the energy term of the design (see design).
var regRho = 1.0

// gridDensity is the design grid's points per unit of nu: the response
// of a filter spanning n input samples moves on a scale of 1/n.
func gridDensity(n int) float64 { return 12 * float64(n) }

// Design returns the symmetric Farrow filter of s.Degree and s.Len that
// minimises, approximately, the largest weighted error over the passband
// and the stopbands (Lawson's iteratively reweighted least squares), and
// its certified figures. The filter is returned whether or not it meets;
// Result.Meets tells. An invalid spec gives an error and no filter.
func Design(s DesignSpec) (Filter, Result, error) {
	if err := s.validate(); err != nil {
		return Filter{}, Result{}, err
	}
	f, _, _, err := design(context.Background(), s, 0)
	if err != nil {
		return Filter{}, Result{}, err
	}
	r := certify(context.Background(), f, s)
	return f, r, nil
}

// design returns the filter and its largest grid errors |H-1| on the
// passband and |H| on the stopbands. With giveUp > 0 it stops after the
// plain least-squares solve when that solve's largest weighted error
// exceeds giveUp, returning it as it is.
func design(ctx context.Context, s DesignSpec, giveUp float64) (Filter, float64, float64, error) {
	p, n := s.Degree, s.Len
	np1 := p + 1
	half := n / 2
	nv := half * np1 // unknowns: c[j*np1+i], j < N/2 (tau >= 0), i = 0..P
	dens := gridDensity(n)
	K := designBands(n)

	// Stopband grid: nu = k + d, d on [-xs, xs], for k = 1..K. The phases
	// exp(-j 2 pi nu s_j) depend on d only, the integrals on k and d.
	nd := max(9, int(math.Ceil(2*s.Stop*dens))+1)
	npass := max(9, int(math.Ceil(s.Pass*dens))+1)
	ds := make([]float64, nd)
	for q := range ds {
		ds[q] = -s.Stop + 2*s.Stop*float64(q)/float64(nd-1)
	}
	trig := func(nu float64, a, b []float64) {
		fr := nu - math.Round(nu)
		for j := 0; j < half; j++ {
			sn, cs := math.Sincos(2 * math.Pi * math.Mod(fr*segStart(n, j), 1))
			a[j], b[j] = cs, sn
		}
	}
	sa := make([]float64, nd*half) // cos, per d
	sb := make([]float64, nd*half) // sin, per d
	ia := make([]float64, nd*K*np1)
	ib := make([]float64, nd*K*np1)
	iw := make([]complex128, np1)
	for q, d := range ds {
		trig(d, sa[q*half:(q+1)*half], sb[q*half:(q+1)*half])
		for k := 1; k <= K; k++ {
			integrals(float64(k)+d, iw)
			off := (q*K + k - 1) * np1
			for i, v := range iw {
				ia[off+i], ib[off+i] = real(v), imag(v)
			}
		}
	}
	// Passband rows, stored whole.
	prow := make([]float64, npass*nv)
	{
		a, b := make([]float64, half), make([]float64, half)
		for m := 0; m < npass; m++ {
			nu := s.Pass * float64(m) / float64(npass-1)
			trig(nu, a, b)
			integrals(nu, iw)
			r := prow[m*nv : (m+1)*nv]
			for j := 0; j < half; j++ {
				for i, v := range iw {
					r[j*np1+i] = 2 * (a[j]*real(v) + b[j]*imag(v))
				}
			}
		}
	}

	wp2 := 1 / (s.PassDev * s.PassDev)
	ws2 := 1 / (s.StopDev * s.StopDev)
	vp := make([]float64, npass) // Lawson weights
	vs := make([]float64, nd*K)
	for i := range vp {
		vp[i] = 1
	}
	for i := range vs {
		vs[i] = 1
	}
	g := mat.NewSymDense(nv, nil)
	rhs := mat.NewVecDense(nv, nil)
	c := mat.NewVecDense(nv, nil)
	A := make([]float64, np1*np1)
	B := make([]float64, np1*np1)
	D := make([]float64, np1*np1)
	Bt := make([]float64, np1*np1)
	ep := make([]float64, npass)
	es := make([]float64, nd*K)
	U := make([]float64, np1)
	V := make([]float64, np1)

	var bestC []float64
	bestErr := math.Inf(1)
	var bestPass, bestStop float64
	for it := 0; it <= LawsonIterations; it++ {
		if err := ctx.Err(); err != nil {
			return Filter{}, 0, 0, err
		}
		// Normal equations G c = rhs of the weighted least squares.
		gd := make([]float64, nv*nv)
		rv := make([]float64, nv)
		for m := 0; m < npass; m++ {
			w := wp2 * vp[m]
			if w == 0 {
				continue
			}
			r := prow[m*nv : (m+1)*nv]
			for x := 0; x < nv; x++ {
				wx := w * r[x]
				rv[x] += wx
				row := gd[x*nv+x : x*nv+nv]
				for t, v := range r[x:nv] {
					row[t] += wx * v
				}
			}
		}
		for q := 0; q < nd; q++ {
			clear(A)
			clear(B)
			clear(D)
			for k := 0; k < K; k++ {
				w := ws2 * vs[q*K+k]
				if w == 0 {
					continue
				}
				off := (q*K + k) * np1
				al, be := ia[off:off+np1], ib[off:off+np1]
				// Row slices of the length of al let the compiler drop
				// the bounds checks; the sums are the same, term by term.
				for i := 0; i < np1; i++ {
					wa, wb := w*al[i], w*be[i]
					ar, br, dr := A[i*np1:i*np1+np1], B[i*np1:i*np1+np1], D[i*np1:i*np1+np1]
					for i2, v := range al {
						ar[i2] += wa * v
					}
					for i2, v := range be {
						br[i2] += wa * v
						dr[i2] += wb * v
					}
				}
			}
			// B transposed, so that the sum below reads rows only.
			for i := 0; i < np1; i++ {
				for i2 := 0; i2 < np1; i2++ {
					Bt[i2*np1+i] = B[i*np1+i2]
				}
			}
			a, b := sa[q*half:(q+1)*half], sb[q*half:(q+1)*half]
			for j := 0; j < half; j++ {
				for j2 := j; j2 < half; j2++ {
					aa, ab, ba, bb := 4*a[j]*a[j2], 4*a[j]*b[j2], 4*b[j]*a[j2], 4*b[j]*b[j2]
					for i := 0; i < np1; i++ {
						x := j*np1 + i
						// The upper triangle only: y = j2 np1 + i2 >= x.
						i0 := 0
						if j2 == j {
							i0 = i
						}
						row := gd[x*nv+j2*np1+i0 : x*nv+j2*np1+np1]
						ar, br := A[i*np1+i0:i*np1+np1], B[i*np1+i0:i*np1+np1]
						bt, dr := Bt[i*np1+i0:i*np1+np1], D[i*np1+i0:i*np1+np1]
						for t := range row {
							row[t] += aa*ar[t] + ab*br[t] + ba*bt[t] + bb*dr[t]
						}
					}
				}
			}
		}
		// The energy term: rho * (mean Lawson weight) * density *
		// integral h^2 (Parseval: the integral of |H|^2 over all nu), a
		// don't-care region weighed as a stopband of deviation
		// StopDev/sqrt(rho). It keeps the response in the gaps between
		// the stopbands, which no band constrains, near unit size.
		{
			tot := 0.0
			for _, v := range vp {
				tot += v
			}
			for _, v := range vs {
				tot += v
			}
			kappa := regRho * tot / float64(len(vp)+len(vs)) * dens
			for j := 0; j < half; j++ {
				for i := 0; i < np1; i++ {
					x := j*np1 + i
					for i2 := i; i2 < np1; i2++ {
						// Both halves: 2 integral_0^1 mu^(i+i2) dmu.
						gd[x*nv+j*np1+i2] += kappa * 2 / float64(i+i2+1)
					}
				}
			}
		}
		if err := solve(gd, rv, nv, g, rhs, c); err != nil {
			return Filter{}, 0, 0, err
		}
		cv := c.RawVector().Data
		// Errors on the grid.
		maxP, maxS := 0.0, 0.0
		sumP, sumS := 0.0, 0.0
		for m := 0; m < npass; m++ {
			r := prow[m*nv : (m+1)*nv]
			h := 0.0
			for x, v := range r {
				h += v * cv[x]
			}
			ep[m] = math.Abs(h-1) / s.PassDev
			maxP = math.Max(maxP, ep[m])
			sumP += vp[m] * ep[m]
		}
		for q := 0; q < nd; q++ {
			a, b := sa[q*half:(q+1)*half], sb[q*half:(q+1)*half]
			for i := 0; i < np1; i++ {
				U[i], V[i] = 0, 0
				for j := 0; j < half; j++ {
					U[i] += cv[j*np1+i] * a[j]
					V[i] += cv[j*np1+i] * b[j]
				}
			}
			for k := 0; k < K; k++ {
				off := (q*K + k) * np1
				h := 0.0
				for i := 0; i < np1; i++ {
					h += U[i]*ia[off+i] + V[i]*ib[off+i]
				}
				e := math.Abs(2*h) / s.StopDev
				es[q*K+k] = e
				maxS = math.Max(maxS, e)
				sumS += vs[q*K+k] * e
			}
		}
		if e := math.Max(maxP, maxS); e < bestErr {
			bestErr = e
			bestC = append(bestC[:0], cv...)
			bestPass, bestStop = maxP*s.PassDev, maxS*s.StopDev
		}
		if it == 0 && giveUp > 0 && bestErr > giveUp {
			break
		}
		// Lawson's update: each point's weight times its error, renormalised.
		tot := sumP + sumS
		if !(tot > 0) || math.IsInf(tot, 0) {
			break
		}
		for m := range vp {
			vp[m] *= ep[m] / tot
		}
		for m := range vs {
			vs[m] *= es[m] / tot
		}
	}
	return expand(bestC, p, n), bestPass, bestStop, nil
}

// solve solves the normal equations held in the upper triangle of gd with
// a small ridge (grown if the Cholesky factorisation fails), which keeps
// the solve well posed when the bands leave wide don't-care regions.
func solve(gd, rv []float64, nv int, g *mat.SymDense, rhs, c *mat.VecDense) error {
	dmax := 0.0
	for x := 0; x < nv; x++ {
		dmax = math.Max(dmax, gd[x*nv+x])
	}
	if !(dmax > 0) || math.IsInf(dmax, 0) {
		return errors.New("farrow design: the least-squares system is degenerate")
	}
	for ridge := 1e-13; ridge < 1e-3; ridge *= 100 {
		for x := 0; x < nv; x++ {
			for y := x; y < nv; y++ {
				v := gd[x*nv+y]
				if x == y {
					v += ridge * dmax
				}
				g.SetSym(x, y, v)
			}
			rhs.SetVec(x, rv[x])
		}
		var ch mat.Cholesky
		if !ch.Factorize(g) {
			continue
		}
		if err := ch.SolveVecTo(c, rhs); err == nil {
			return nil
		}
	}
	return errors.New("farrow design: the least-squares system could not be solved in double precision")
}

// expand turns the free coefficients of the tau >= 0 half, c[j*(P+1)+i]
// for j < N/2, into the whole table: segment N-1-j mirrors segment j,
// p_{N-1-j}(mu) = p_j(1 - mu).
func expand(c []float64, p, n int) Filter {
	np1 := p + 1
	coef := make([][]float64, np1)
	for i := range coef {
		coef[i] = make([]float64, n)
	}
	for j := 0; j < n/2; j++ {
		for i := 0; i < np1; i++ {
			coef[i][j] = c[j*np1+i]
		}
		// sum_i c_i (1 - mu)^i = sum_k mu^k (-1)^k sum_{i>=k} binom(i,k) c_i.
		for k := 0; k < np1; k++ {
			sum := 0.0
			bin := 1.0 // binom(i, k) for i = k
			for i := k; i < np1; i++ {
				if i > k {
					bin = bin * float64(i) / float64(i-k)
				}
				sum += bin * c[j*np1+i]
			}
			if k%2 == 1 {
				sum = -sum
			}
			coef[k][n-1-j] = sum
		}
	}
	return Filter{Coef: coef}
}

// certify bounds the filter's deviations over the spec's bands.
func certify(ctx context.Context, f Filter, s DesignSpec) Result {
	bd := newBounder(f)
	check := func() bool { return ctx.Err() == nil }
	const relTol = 0.01
	const budget = 1 << 18
	var pass []piece
	const pieces = 16
	for m := 0; m < pieces; m++ {
		pass = append(pass, piece{a: s.Pass * float64(m) / pieces, b: s.Pass * float64(m+1) / pieces})
	}
	passUp := maxBound(pass, func(a, b float64) (float64, float64) {
		_, up, g := bd.bounds(a, b, 1)
		return up, g
	}, relTol, 0.1*s.PassDev, budget, check)

	// The stopbands k = 1..kc by branch and bound, kc the first k (from the
	// design's K on) past which the far-out bound is a quarter of the
	// target, and that bound beyond.
	xs := s.Stop
	pr := newPeriodic(f, bd, xs, check)
	far := func(k int) float64 {
		v := float64(k) - xs
		return math.Min(pr.bound(v), bd.tail(v))
	}
	kc := designBands(f.Len())
	if far(kc+1) > 0.25*s.StopDev {
		if far(MaxCertBands+1) > 0.25*s.StopDev {
			kc = MaxCertBands
		} else {
			lo, hi := kc, MaxCertBands // too big at lo+1, small enough at hi+1
			for hi-lo > 1 {
				m := lo + (hi-lo)/2
				if far(m+1) > 0.25*s.StopDev {
					lo = m
				} else {
					hi = m
				}
			}
			kc = hi
		}
	}
	stop := make([]piece, 0, kc+1)
	for k := 1; k <= kc; k++ {
		stop = append(stop, piece{a: float64(k) - xs, b: float64(k) + xs})
	}
	stop = append(stop, piece{a: float64(kc+1) - xs, b: math.Inf(1), up: far(kc + 1), leaf: true})
	stopUp := maxBound(stop, func(a, b float64) (float64, float64) {
		_, up, g := bd.bounds(a, b, 0)
		k := math.Round(a + 0.5*(b-a))
		return math.Min(up, far(int(k))), g
	}, relTol, 0.1*s.StopDev, budget, check)
	return Result{
		PassDev: passUp,
		StopDev: stopUp,
		Meets:   passUp <= s.PassDev && stopUp <= s.StopDev,
		Cost:    Cost(f.Degree(), f.Len()),
		Bands:   kc,
	}
}

// maxDesignWorkers bounds the candidates MinDesign designs at once.
const maxDesignWorkers = 4

// MinDesign returns the cheapest symmetric Farrow filter, in multiplies per
// output (Cost), that meets the bands: passband [0, pass] within passDev
// of 1, stopbands [k - xs, k + xs] for every integer k >= 1 below stopDev.
// It designs the candidates of degree MinSearchDegree..MaxSearchDegree and
// even length 2..MaxLen with cost at most maxCost in increasing order of
// cost (then degree), certifies each whose grid figures meet, and returns
// the first certified to meet. Up to maxDesignWorkers candidates are
// designed at once, on the available cores; the answer is the first in
// that order that meets, whatever the number of cores. A candidate whose plain least-squares
// design misses the targets tenfold is dropped unrefined (lsGiveUp). It returns ctx's error when ctx ends, and an
// error saying what could not be met, with the closest candidate's figures,
// when none does.
func MinDesign(ctx context.Context, pass, xs, passDev, stopDev float64, maxCost int) (Filter, Result, error) {
	if err := checkBands(pass, xs, passDev, stopDev); err != nil {
		return Filter{}, Result{}, err
	}
	if lo := Cost(MinSearchDegree, 2); maxCost < lo {
		return Filter{}, Result{}, fmt.Errorf("farrow design: cost limit %d multiplies per output: the cheapest candidate costs %d", maxCost, lo)
	}
	type cand struct{ p, n, cost int }
	var cands []cand
	for p := MinSearchDegree; p <= MaxSearchDegree; p++ {
		for n := 2; n <= MaxLen; n += 2 {
			if c := Cost(p, n); c <= maxCost {
				cands = append(cands, cand{p, n, c})
			}
		}
	}
	sort.Slice(cands, func(a, b int) bool {
		if cands[a].cost != cands[b].cost {
			return cands[a].cost < cands[b].cost
		}
		return cands[a].p < cands[b].p
	})
	// The candidates are designed a few at a time, in order, on every
	// core: each design is the same whoever runs it and whenever, and the
	// answer is the first in order that meets, as one at a time would find
	// it, so the result does not depend on the number of cores. A worker
	// takes no candidate past the first that has met.
	type outcome struct {
		f      Filter
		r      Result
		gp, gs float64
		ok     bool // designed (no error)
	}
	outs := make([]outcome, len(cands))
	var next atomic.Int64
	var met atomic.Int64 // index of the first candidate known to meet
	met.Store(int64(len(cands)))
	var wg sync.WaitGroup
	for w := 0; w < min(runtime.GOMAXPROCS(0), maxDesignWorkers, len(cands)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1) - 1)
				if i >= len(cands) || int64(i) > met.Load() || ctx.Err() != nil {
					return
				}
				cd := cands[i]
				s := DesignSpec{Degree: cd.p, Len: cd.n, Pass: pass, Stop: xs, PassDev: passDev, StopDev: stopDev}
				f, gp, gs, err := design(ctx, s, lsGiveUp)
				if err != nil {
					continue
				}
				o := outcome{f: f, gp: gp, gs: gs, ok: true}
				if math.Max(gp/passDev, gs/stopDev) <= 1 {
					// The grid shows no failing point: certify.
					o.r = certify(ctx, f, s)
					if o.r.Meets && ctx.Err() == nil {
						for {
							m := met.Load()
							if int64(i) >= m || met.CompareAndSwap(m, int64(i)) {
								break
							}
						}
					}
				}
				outs[i] = o
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return Filter{}, Result{}, err
	}
	if m := int(met.Load()); m < len(cands) {
		return outs[m].f, outs[m].r, nil
	}
	bestRatio := math.Inf(1)
	var best cand
	var bestPass, bestStop float64
	for i, o := range outs {
		if !o.ok {
			continue
		}
		if ratio := math.Max(o.gp/passDev, o.gs/stopDev); ratio < bestRatio {
			bestRatio, best, bestPass, bestStop = ratio, cands[i], o.gp, o.gs
		}
	}
	if len(cands) == 0 || math.IsInf(bestRatio, 1) {
		return Filter{}, Result{}, fmt.Errorf("farrow design: no candidate could be designed within the cost limit %d", maxCost)
	}
	return Filter{}, Result{}, fmt.Errorf("farrow design: no Farrow filter of degree %d..%d, length up to %d and at most %d multiplies per output keeps |H-1| <= %.3g on [0, %.6g] and |H| <= %.3g on the stopbands of half-width %.6g: the closest, degree %d length %d (cost %d), reached %.3g and %.3g on the design grid; relax the deviations, narrow the bands or raise the cost limit",
		MinSearchDegree, MaxSearchDegree, MaxLen, maxCost, passDev, pass, stopDev, xs, best.p, best.n, best.cost, bestPass, bestStop)
}
