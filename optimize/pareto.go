package optimize

// Points on the front are compared on three axes: multiplies per output,
// memory bits and latency, all smaller-is-better; the rejection margin
// (larger is better) breaks exact ties.

// axisFloor keeps ratios finite on an axis whose best value is zero (a
// CIC-only chain does no multiplies): one multiply per output, one bit, one
// nanosecond.
var axisFloor = [3]float64{1, 1, 1e-9}

func (f figs) axes() [3]float64 { return [3]float64{f.mpo, f.bits, f.lat} }

// addAxes adds k times g to f on the three axes (k = 1 adds exactly).
func (f *figs) addAxes(g figs, k float64) {
	f.mpo += k * g.mpo
	f.bits += k * g.bits
	f.lat += k * g.lat
}

// dominates reports whether a is at least as good as b on every axis and
// strictly better on one, or equal on all three with a larger margin.
func dominates(a, b *figs) bool {
	if a.mpo > b.mpo || a.bits > b.bits || a.lat > b.lat {
		return false
	}
	if a.mpo < b.mpo || a.bits < b.bits || a.lat < b.lat {
		return true
	}
	return a.margin > b.margin
}

// frontSet is a running non-dominated set. Items are identified by an
// integer id chosen by the caller; equal points are all kept.
type frontSet struct {
	f  []figs
	id []int
}

// add offers a point and reports whether it joined the set.
func (s *frontSet) add(f figs, id int) bool {
	for i := range s.f {
		if dominates(&s.f[i], &f) {
			return false
		}
	}
	j := 0
	for i := range s.f {
		if !dominates(&f, &s.f[i]) {
			if j != i {
				s.f[j], s.id[j] = s.f[i], s.id[i]
			}
			j++
		}
	}
	s.f, s.id = append(s.f[:j], f), append(s.id[:j], id)
	return true
}

// slack returns the multiplicative epsilon indicator of f against the
// front: the largest, over front points d, of the smallest ratio
// (f + floor)/(d + floor) over the axes. It is at most 1 for a point on the
// front and grows with the factor by which f trails the nearest front point
// on its best axis. A point whose slack is below 1 + tol is within tol of not
// being dominated at all.
func (s *frontSet) slack(f *figs) float64 {
	x := f.axes()
	worst := 0.0
	for i := range s.f {
		y := s.f[i].axes()
		m := (x[0] + axisFloor[0]) / (y[0] + axisFloor[0])
		for j := 1; j < 3; j++ {
			if r := (x[j] + axisFloor[j]) / (y[j] + axisFloor[j]); r < m {
				m = r
			}
		}
		if m > worst {
			worst = m
		}
	}
	return worst
}

// front returns the indices of the non-dominated points of fs.
func front(fs []figs) []int {
	var s frontSet
	for i := range fs {
		s.add(fs[i], i)
	}
	return s.id
}
