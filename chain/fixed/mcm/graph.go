package mcm

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"strings"
)

// MaxCoefs is the most coefficients Build takes.
const MaxCoefs = 65536

// MaxBits is the widest coefficient Build takes, in two's-complement bits
// (sign included): every coefficient is in [-2^61, 2^61 - 1].
const MaxBits = 62

// ErrOverflow is wrapped by Eval's error when a product or an intermediate
// sum would not fit an int64.
var ErrOverflow = errors.New("mcm: int64 overflow")

// Node is one node of a Graph. Node 0 is the input (Value 1, no adder);
// every other node is one adder or subtractor:
//
//	Value = (±(Nodes[A].Value << ShiftA) ± (Nodes[B].Value << ShiftB)) >> Shift
//
// with the operand subtracted where NegA or NegB is set (never both), A and
// B earlier nodes (they may be the same node), and the right shift exact:
// the sum is a multiple of 2^Shift. Value is an odd fundamental, positive.
// Multiplied by the input x, the node gives Value·x by the same wiring.
type Node struct {
	Value          int64
	A, B           int
	ShiftA, ShiftB int
	NegA, NegB     bool
	Shift          int
	// Depth counts the adders on the longest path from the input (0 for
	// the input).
	Depth int
}

// Tap says how a Graph gives one coefficient c: c·x is
// ±(Nodes[Node]·x << Shift), negative where Neg is set. A zero coefficient
// has Node -1.
type Tap struct {
	Coef  int64
	Node  int
	Shift int
	Neg   bool
}

// Graph is a shared adder graph that multiplies one input by every
// coefficient it was built for. Graphs come from Build; the zero Graph
// has no coefficients and no adders.
type Graph struct {
	nodes []Node
	taps  []Tap
}

// Adders returns the adders and subtractors of the graph (its nodes other
// than the input).
func (g *Graph) Adders() int { return max(len(g.nodes)-1, 0) }

// Depth returns the adder depth: the most adders on any path from the
// input to a coefficient (0 when every coefficient is zero or a power of
// two).
func (g *Graph) Depth() int {
	d := 0
	for _, t := range g.taps {
		if t.Node >= 0 {
			d = max(d, g.nodes[t.Node].Depth)
		}
	}
	return d
}

// Nodes returns a copy of the nodes in order, the input first; every
// node's operands come before it.
func (g *Graph) Nodes() []Node { return append([]Node(nil), g.nodes...) }

// Taps returns a copy of the taps, one per coefficient, in the order the
// coefficients were given.
func (g *Graph) Taps() []Tap { return append([]Tap(nil), g.taps...) }

// Eval runs the graph on the input x in int64 arithmetic, node by node as
// wired, and returns the product for every coefficient, in order. It does
// not use the coefficients' values, so Eval(x)[k] == coefs[k]*x checks the
// graph. The error wraps ErrOverflow when a node's value or a product does
// not fit an int64 (keep |x|·2^(w+1) below 2^63 for coefficients of w
// bits).
func (g *Graph) Eval(x int64) ([]int64, error) {
	if len(g.nodes) == 0 {
		return []int64{}, nil // the zero Graph
	}
	v := make([]int64, len(g.nodes))
	v[0] = x
	for i := 1; i < len(g.nodes); i++ {
		n := &g.nodes[i]
		a, ok1 := shl(v[n.A], n.ShiftA)
		b, ok2 := shl(v[n.B], n.ShiftB)
		if n.NegA {
			a, ok1 = neg(a, ok1)
		}
		if n.NegB {
			b, ok2 = neg(b, ok2)
		}
		s, ok3 := add(a, b)
		if !ok1 || !ok2 || !ok3 {
			return nil, fmt.Errorf("mcm: node %d (%d) with input %d: %w", i, n.Value, x, ErrOverflow)
		}
		v[i] = s >> n.Shift
	}
	out := make([]int64, len(g.taps))
	for k, t := range g.taps {
		if t.Node < 0 {
			continue
		}
		p, ok := v[t.Node], true
		if t.Neg {
			p, ok = neg(p, ok)
		}
		p, ok2 := shl(p, t.Shift)
		if !ok || !ok2 {
			return nil, fmt.Errorf("mcm: coefficient %d (%d) with input %d: %w", k, t.Coef, x, ErrOverflow)
		}
		out[k] = p
	}
	return out, nil
}

func shl(a int64, s int) (int64, bool) {
	if a == 0 {
		return 0, true
	}
	if s >= 63 {
		return 0, false
	}
	r := a << s
	return r, r>>s == a
}

func neg(a int64, ok bool) (int64, bool) {
	return -a, ok && a != math.MinInt64
}

func add(a, b int64) (int64, bool) {
	s := a + b
	return s, (a >= 0) != (b >= 0) || (s >= 0) == (a >= 0)
}

// String lists the nodes one a line, "n3 = (n1 << 2) - n0 = 19 [depth 2]",
// then the coefficients, "c[0] = -(n3 << 1) = -38".
func (g *Graph) String() string {
	var sb strings.Builder
	term := func(node, shift int) string {
		if shift == 0 {
			return fmt.Sprintf("n%d", node)
		}
		return fmt.Sprintf("(n%d << %d)", node, shift)
	}
	for i := 1; i < len(g.nodes); i++ {
		n := g.nodes[i]
		a, b := term(n.A, n.ShiftA), term(n.B, n.ShiftB)
		var e string
		switch {
		case n.NegA:
			e = b + " - " + a
		case n.NegB:
			e = a + " - " + b
		default:
			e = a + " + " + b
		}
		if n.Shift > 0 {
			e = fmt.Sprintf("(%s) >> %d", e, n.Shift)
		}
		fmt.Fprintf(&sb, "n%d = %s = %d [depth %d]\n", i, e, n.Value, n.Depth)
	}
	for k, t := range g.taps {
		if t.Node < 0 {
			fmt.Fprintf(&sb, "c[%d] = 0\n", k)
			continue
		}
		e := term(t.Node, t.Shift)
		if t.Neg {
			e = "-" + e
		}
		fmt.Fprintf(&sb, "c[%d] = %s = %d\n", k, e, t.Coef)
	}
	return sb.String()
}

// width is the two's-complement width of c, sign included.
func width(c int64) int {
	if c < 0 {
		c = ^c
	}
	return bits.Len64(uint64(c)) + 1
}

// Build returns a shared adder graph for coefs: every coefficient is a
// node's value shifted and possibly negated (see Tap). The graph never has
// more adders than CSDAdders(coefs). The same coefficients, in any order,
// give the same nodes. It returns an error for more than MaxCoefs
// coefficients or one wider than MaxBits.
func Build(coefs []int64) (*Graph, error) { return build(coefs, budget) }

// build is Build with the greedy search's work bounded by work.
func build(coefs []int64, work int) (*Graph, error) {
	if len(coefs) > MaxCoefs {
		return nil, fmt.Errorf("mcm: %d coefficients: at most %d", len(coefs), MaxCoefs)
	}
	for k, c := range coefs {
		if w := width(c); w > MaxBits {
			return nil, fmt.Errorf("mcm: coefficient %d = %d is %d bits wide: at most %d (two's complement, sign included)", k, c, w, MaxBits)
		}
	}
	seen := make(map[uint64]bool, len(coefs))
	var targets []uint64
	for _, c := range coefs {
		if f, _ := fundamental(c); f > 1 && !seen[f] {
			seen[f] = true
			targets = append(targets, f)
		}
	}
	sortU64(targets)

	greedy := newBuilder(targets, true)
	greedy.budget = work
	if err := greedy.run(); err != nil {
		return nil, err
	}
	plain := newBuilder(targets, false)
	for _, t := range targets {
		plain.addCSD(t)
	}
	best := plain
	gn, gd := greedy.prune()
	pn, pd := plain.prune()
	if gn < pn || gn == pn && gd <= pd {
		best = greedy
	}
	g := &Graph{nodes: best.nodes, taps: make([]Tap, len(coefs))}
	for k, c := range coefs {
		f, s := fundamental(c)
		t := Tap{Coef: c, Node: -1, Shift: s, Neg: c < 0}
		if f == 0 {
			t.Shift, t.Neg = 0, false
		} else {
			t.Node = best.index[f]
		}
		g.taps[k] = t
	}
	if err := g.check(); err != nil {
		return nil, err
	}
	return g, nil
}

// check recomputes every node's value from its wiring in exact unsigned
// arithmetic (values are below 2^62), and every tap from its node.
func (g *Graph) check() error {
	for i, n := range g.nodes {
		if i == 0 {
			if n.Value != 1 {
				return fmt.Errorf("mcm: internal error: input node %d", n.Value)
			}
			continue
		}
		if n.A >= i || n.B >= i || n.A < 0 || n.B < 0 || n.NegA && n.NegB {
			return fmt.Errorf("mcm: internal error: node %d wiring %+v", i, n)
		}
		a := uint64(g.nodes[n.A].Value) << n.ShiftA
		b := uint64(g.nodes[n.B].Value) << n.ShiftB
		var s uint64
		switch {
		case n.NegA:
			s = b - a
		case n.NegB:
			s = a - b
		default:
			s = a + b
		}
		if int64(s) <= 0 || s&(1<<n.Shift-1) != 0 || s>>n.Shift != uint64(n.Value) || n.Value&1 == 0 ||
			n.Depth != 1+max(g.nodes[n.A].Depth, g.nodes[n.B].Depth) {
			return fmt.Errorf("mcm: internal error: node %d %+v", i, n)
		}
	}
	for k, t := range g.taps {
		if t.Node < 0 {
			if t.Coef != 0 {
				return fmt.Errorf("mcm: internal error: coefficient %d", k)
			}
			continue
		}
		f, s := fundamental(t.Coef)
		if uint64(g.nodes[t.Node].Value) != f || s != t.Shift || (t.Coef < 0) != t.Neg {
			return fmt.Errorf("mcm: internal error: coefficient %d", k)
		}
	}
	return nil
}
