package mcm

import (
	"errors"
	"math"
	"math/rand"
	"os"
	"slices"
	"strings"
	"testing"
)

// fundamentals counts the distinct odd fundamentals above 1 of coefs: a
// lower bound on any graph's adders (each is a node of its own).
func fundamentals(coefs []int64) int {
	seen := map[uint64]bool{}
	for _, c := range coefs {
		if f, _ := fundamental(c); f > 1 {
			seen[f] = true
		}
	}
	return len(seen)
}

// prove checks g against coefs: the wiring (every node odd and positive,
// operands earlier, depth one more than the deeper operand), the taps,
// and Eval on x = 1, 0, -1 and on random x small enough not to overflow:
// every product exact.
func prove(t *testing.T, g *Graph, coefs []int64, rng *rand.Rand) {
	t.Helper()
	nodes, taps := g.Nodes(), g.Taps()
	if len(nodes) == 0 || nodes[0].Value != 1 || nodes[0].Depth != 0 {
		t.Fatalf("%v: node 0 = %+v, want the input", coefs, nodes)
	}
	if g.Adders() != len(nodes)-1 {
		t.Fatalf("%v: Adders %d with %d nodes", coefs, g.Adders(), len(nodes))
	}
	for i, n := range nodes[1:] {
		i++
		if n.Value <= 0 || n.Value&1 == 0 || n.A >= i || n.B >= i || n.A < 0 || n.B < 0 ||
			n.Depth != 1+max(nodes[n.A].Depth, nodes[n.B].Depth) {
			t.Fatalf("%v: node %d = %+v", coefs, i, n)
		}
	}
	if len(taps) != len(coefs) {
		t.Fatalf("%v: %d taps", coefs, len(taps))
	}
	depth, width := 0, 1
	for k, tp := range taps {
		if tp.Coef != coefs[k] {
			t.Fatalf("%v: tap %d is for %d", coefs, k, tp.Coef)
		}
		if tp.Node >= 0 {
			depth = max(depth, nodes[tp.Node].Depth)
		}
		width = max(width, bitsOf(coefs[k]))
	}
	if g.Depth() != depth {
		t.Fatalf("%v: Depth %d, taps reach %d", coefs, g.Depth(), depth)
	}
	xs := []int64{1, 0, -1}
	if lim := 62 - width - 2; lim > 0 {
		for range 4 {
			xs = append(xs, rng.Int63n(1<<lim)-rng.Int63n(1<<lim))
		}
	}
	for _, x := range xs {
		got, err := g.Eval(x)
		if err != nil {
			t.Fatalf("%v: Eval(%d): %v", coefs, x, err)
		}
		for k, c := range coefs {
			if got[k] != c*x {
				t.Fatalf("%v: Eval(%d)[%d] = %d, want %d\n%s", coefs, x, k, got[k], c*x, g)
			}
		}
	}
}

func bitsOf(c int64) int { return width(c) }

// TestBuildByHand checks small sets counted by hand.
func TestBuildByHand(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	for _, tc := range []struct {
		coefs         []int64
		adders, depth int
		why           string
	}{
		{nil, 0, 0, "no coefficients"},
		{[]int64{0, 1, -1, 2, -4, 1 << 40, -(1 << 61)}, 0, 0, "zero and powers of two: wires only"},
		{[]int64{3}, 1, 1, "3 = (1 << 1) + 1"},
		{[]int64{3, -3, 6, -12, 3 << 30, 0}, 1, 1, "one fundamental, 3; signs and shifts are free"},
		{[]int64{5, 7}, 2, 1, "5 = (1 << 2) + 1, 7 = (1 << 3) - 1: one adder each, the lower bound"},
		{[]int64{45}, 2, 2, "45 is not 2^i ± 1, so two at least; 5 = (1 << 2) + 1, 45 = (5 << 3) + 5 (CSD: 3)"},
		{[]int64{-45, 90}, 2, 2, "as {45}"},
		{[]int64{21, 35}, 3, 2, "neither is 2^i ± 1, so the first adder is neither: three at least; " +
			"7 = (1 << 3) - 1, 21 = (7 << 1) + 7, 35 = (7 << 2) + 7 (CSD: 2 + 2)"},
		{[]int64{7, 45}, 3, 2, "45 is not in A({1, 7}, {1, 7}) (7·2^i ± 1, 7 ± 2^j, 7(2^i ± 1), " +
			"2^i ± 1 and their halvings miss it), so three at least; 7, 3, 45 = (3 << 4) - 3 (CSD: 1 + 3)"},
	} {
		g, err := Build(tc.coefs)
		if err != nil {
			t.Fatalf("%v: %v", tc.coefs, err)
		}
		prove(t, g, tc.coefs, rng)
		if g.Adders() != tc.adders || g.Depth() != tc.depth {
			t.Errorf("%v: %d adders, depth %d; want %d, %d (%s)\n%s", tc.coefs, g.Adders(), g.Depth(), tc.adders, tc.depth, tc.why, g)
		}
	}
}

// randomSet draws n coefficients of at most w bits (two's complement),
// with zeros, powers of two, duplicates, sign flips and shifted copies
// mixed in.
func randomSet(rng *rand.Rand, n, w int) []int64 {
	c := make([]int64, n)
	half := int64(1) << (w - 1)
	for i := range c {
		switch r := rng.Intn(10); {
		case r == 0:
			c[i] = 0
		case r == 1:
			c[i] = int64(1) << rng.Intn(w-1)
			if rng.Intn(2) == 0 {
				c[i] = -c[i]
			}
		case r == 2 && i > 0:
			c[i] = c[rng.Intn(i)]
		case r == 3 && i > 0:
			if p := c[rng.Intn(i)]; p != -half {
				c[i] = -p
			}
		case r == 4 && i > 0:
			p := c[rng.Intn(i)]
			if -half <= 2*p && 2*p < half {
				p *= 2
			}
			c[i] = p
		default:
			c[i] = rng.Int63n(2*half) - half
		}
	}
	return c
}

// TestBuildRandom proves graphs for 1000 random sets of 1 to 40
// coefficients of 2 to 24 bits (3000 with STEPDOWN_LONG=1, CI's long
// step), and holds each between the lower bound (one adder per distinct
// odd fundamental) and plain CSD.
func TestBuildRandom(t *testing.T) {
	rng := rand.New(rand.NewSource(2))
	saved := 0
	sets := 1000
	if os.Getenv("STEPDOWN_LONG") != "" {
		sets = 3000
	}
	for i := 0; i < sets; i++ {
		w := 2 + rng.Intn(23)
		coefs := randomSet(rng, 1+rng.Intn(40), w)
		g, err := Build(coefs)
		if err != nil {
			t.Fatalf("%v: %v", coefs, err)
		}
		prove(t, g, coefs, rng)
		lo, hi := fundamentals(coefs), CSDAdders(coefs)
		if g.Adders() < lo || g.Adders() > hi {
			t.Fatalf("%v: %d adders, outside [%d, %d]", coefs, g.Adders(), lo, hi)
		}
		saved += hi - g.Adders()
	}
	if saved == 0 {
		t.Fatal("the graphs never beat plain CSD")
	}
}

// TestBuildWide proves graphs of wide coefficients, up to MaxBits, where
// the successor set lives in a hash table.
func TestBuildWide(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for i := 0; i < 30; i++ {
		w := 25 + rng.Intn(MaxBits-24)
		coefs := randomSet(rng, 1+rng.Intn(6), w)
		g, err := Build(coefs)
		if err != nil {
			t.Fatalf("%v: %v", coefs, err)
		}
		prove(t, g, coefs, rng)
		if g.Adders() > CSDAdders(coefs) || g.Adders() < fundamentals(coefs) {
			t.Fatalf("%v: %d adders, CSD %d", coefs, g.Adders(), CSDAdders(coefs))
		}
	}
	// The extremes of the range.
	coefs := []int64{1<<61 - 1, -(1 << 61), -(1<<61 - 1), 1<<60 + 1, 0x1555555555555555}
	g, err := Build(coefs)
	if err != nil {
		t.Fatal(err)
	}
	prove(t, g, coefs, rng)
}

// TestBuildBudget runs the greedy search out of work at once and at a
// few points part way, so that the rest of the targets are built from
// their CSD digits beside the greedy nodes: still proved, still no dearer
// than plain CSD.
func TestBuildBudget(t *testing.T) {
	rng := rand.New(rand.NewSource(4))
	for _, work := range []int{0, 1000, 30000, 300000} {
		for i := 0; i < 50; i++ {
			coefs := randomSet(rng, 1+rng.Intn(60), 2+rng.Intn(30))
			g, err := build(coefs, work)
			if err != nil {
				t.Fatalf("%v: %v", coefs, err)
			}
			prove(t, g, coefs, rng)
			if g.Adders() > CSDAdders(coefs) {
				t.Fatalf("%v, work %d: %d adders, CSD %d", coefs, work, g.Adders(), CSDAdders(coefs))
			}
		}
	}
}

// TestBuildDeterministic: the same coefficients in any order give the same
// nodes, and the same call the same graph.
func TestBuildDeterministic(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	for i := 0; i < 100; i++ {
		coefs := randomSet(rng, 1+rng.Intn(50), 2+rng.Intn(22))
		g1, err1 := Build(coefs)
		g2, err2 := Build(coefs)
		perm := slices.Clone(coefs)
		rng.Shuffle(len(perm), func(a, b int) { perm[a], perm[b] = perm[b], perm[a] })
		g3, err3 := Build(perm)
		if err := errors.Join(err1, err2, err3); err != nil {
			t.Fatal(err)
		}
		if g1.String() != g2.String() || !slices.Equal(g1.Nodes(), g3.Nodes()) {
			t.Fatalf("%v: graphs differ:\n%s\n%s", coefs, g1, g3)
		}
	}
}

// TestBuildErrors: too many or too wide coefficients are refused, the
// widest accepted are not.
func TestBuildErrors(t *testing.T) {
	for _, tc := range []struct {
		coefs []int64
		want  string
	}{
		{make([]int64, MaxCoefs+1), "at most 65536"},
		{[]int64{3, 1 << 61}, "coefficient 1 = 2305843009213693952 is 63 bits"},
		{[]int64{-(1<<61 + 1)}, "63 bits"},
		{[]int64{math.MaxInt64}, "64 bits"},
		{[]int64{math.MinInt64}, "64 bits"},
		{make([]int64, MaxCoefs), ""},
		{[]int64{1<<61 - 1, -(1 << 61)}, ""},
	} {
		g, err := Build(tc.coefs)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("Build(%d coefficients): %v", len(tc.coefs), err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("Build(%v...): error %v, want one with %q", tc.coefs[:1], err, tc.want)
		case tc.want != "" && g != nil:
			t.Errorf("Build(%v...): a graph with the error", tc.coefs[:1])
		}
	}
}

// TestZeroGraph: the zero Graph is empty, not a panic.
func TestZeroGraph(t *testing.T) {
	var g Graph
	v, err := g.Eval(5)
	if err != nil || len(v) != 0 || g.Adders() != 0 || g.Depth() != 0 || g.String() != "" {
		t.Errorf("zero Graph: Eval %v, %v; Adders %d, Depth %d, String %q", v, err, g.Adders(), g.Depth(), g.String())
	}
}

// TestEvalOverflow: a product beyond int64 is an error, not a wrong
// number.
func TestEvalOverflow(t *testing.T) {
	g, err := Build([]int64{1<<40 + 1, 3})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := g.Eval(1 << 23); !errors.Is(err, ErrOverflow) {
		t.Errorf("Eval(2^23) of 2^40 + 1: error %v, want ErrOverflow", err)
	}
	if v, err := g.Eval(1 << 22); err != nil || v[0] != (1<<40+1)<<22 {
		t.Errorf("Eval(2^22) = %v, %v", v, err)
	}
	g, err = Build([]int64{-(1 << 61)})
	if err != nil {
		t.Fatal(err)
	}
	if v, err := g.Eval(4); err != nil || v[0] != math.MinInt64 {
		t.Errorf("Eval(4) of -2^61 = %v, %v; want -2^63", v, err)
	}
	if _, err := g.Eval(-4); !errors.Is(err, ErrOverflow) {
		t.Errorf("Eval(-4) of -2^61: error %v, want ErrOverflow (2^63)", err)
	}
}
