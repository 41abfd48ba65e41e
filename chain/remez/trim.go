package remez

import "math"

// trimmer reduces an alternating run of extrema to a reference size. Its
// scratch is kept between exchanges; the zero value is ready to use.
type trimmer struct {
	prev, next []int32
	ver        []uint32
	heap       []trimEntry
}

type trimEntry struct {
	abs float64
	i   int32
	ver uint32
}

// less orders entries by |error|, then by position, so that the leftmost of
// equal smallest errors goes first.
func (a trimEntry) less(b trimEntry) bool {
	return a.abs < b.abs || (a.abs == b.abs && a.i < b.i)
}

// do trims s, whose signs alternate, to m points and returns them in s's
// storage. It repeats, while more than m points are left: with m+1 left,
// drop the smaller end (the last on a tie); otherwise take the leftmost
// smallest |error|: at an end, drop it; inside, drop it and keep the larger
// of its two neighbours in the first's place, since the two would otherwise
// be adjacent with equal signs. A heap of the points with stale entries
// skipped makes this O(k log k) for k points: a design whose error is at
// rounding level has local extrema at a large fraction of its grid points,
// and a scan per dropped point took minutes there.
func (t *trimmer) do(s []point, m int) []point {
	k := len(s)
	if k <= m {
		return s
	}
	if cap(t.prev) < k {
		t.prev = make([]int32, k)
		t.next = make([]int32, k)
		t.ver = make([]uint32, k)
	}
	prev, next, ver := t.prev[:k], t.next[:k], t.ver[:k]
	h := t.heap[:0]
	for i := range k {
		prev[i], next[i], ver[i] = int32(i-1), int32(i+1), 0
		h = append(h, trimEntry{math.Abs(s[i].e), int32(i), 0})
	}
	next[k-1] = -1
	for i := len(h)/2 - 1; i >= 0; i-- {
		siftDown(h, i)
	}
	head, tail, n := int32(0), int32(k-1), k
	for n > m {
		if n == m+1 {
			if math.Abs(s[head].e) < math.Abs(s[tail].e) {
				head = next[head]
				prev[head] = -1
			} else {
				tail = prev[tail]
				next[tail] = -1
			}
			break
		}
		top := h[0]
		last := len(h) - 1
		h[0] = h[last]
		h = h[:last]
		siftDown(h, 0)
		q := top.i
		if ver[q] != top.ver {
			continue // dropped or changed since this entry was pushed
		}
		ver[q]++
		switch {
		case q == head:
			head = next[q]
			prev[head] = -1
			n--
		case q == tail:
			tail = prev[q]
			next[tail] = -1
			n--
		default:
			a, b := prev[q], next[q]
			if math.Abs(s[b].e) > math.Abs(s[a].e) {
				s[a] = s[b]
			}
			ver[b]++
			nb := next[b]
			next[a] = nb
			if nb >= 0 {
				prev[nb] = a
			} else {
				tail = a
			}
			n -= 2
			ver[a]++
			h = append(h, trimEntry{math.Abs(s[a].e), a, ver[a]})
			siftUp(h, len(h)-1)
		}
	}
	t.heap = h
	out := s[:0]
	for i := head; i >= 0; i = next[i] {
		out = append(out, s[i])
	}
	return out
}

func siftDown(h []trimEntry, i int) {
	n := len(h)
	for {
		l := 2*i + 1
		if l >= n {
			return
		}
		c := l
		if r := l + 1; r < n && h[r].less(h[l]) {
			c = r
		}
		if !h[c].less(h[i]) {
			return
		}
		h[i], h[c] = h[c], h[i]
		i = c
	}
}

func siftUp(h []trimEntry, i int) {
	for i > 0 {
		p := (i - 1) / 2
		if !h[i].less(h[p]) {
			return
		}
		h[i], h[p] = h[p], h[i]
		i = p
	}
}
