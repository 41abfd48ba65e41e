// Package mcm builds multiplierless constant multipliers: the products of
// one input by every coefficient of a filter stage, as one shared graph of
// adders, subtractors and shifts ("multiple constant multiplication",
// MCM), the way ASIC and low-power FPGA teams build FIR and half-band
// filters without multipliers (common practice: the transposed direct
// form, where every tap multiplies the same input sample, is the usual
// home of such a block).
//
// # Conventions
//
// Coefficients are the stage's rounded integers (fixed.Coefficients.Ints):
// int64 in two's complement, at most MaxBits (62) bits wide sign included,
// so in [-2^61, 2^61 - 1]; at most MaxCoefs (65536) of them. Build refuses
// anything beyond with an error.
//
// An adder is one adder or subtractor of two operands, each operand
// shifted left by any amount; shifts are wires and cost nothing, and so
// does a right shift of a sum that is exact (the sum's low bits are zero).
// Adders count the multiplier block only, not the structural adders that
// sum the taps.
//
// Signs are free: the graph builds |c| and the tap negates it (in a
// transposed form the subtraction goes into the structural adder; common
// practice). Every |c| is 2^k times an odd "fundamental"; the graph builds
// the fundamentals and the taps shift them. So zero and powers of two
// cost nothing, and c, -c, 2c, -4c, ... share one node. The adder depth
// (Depth) is the most adders on any path from the input to a coefficient;
// it sets how many pipeline registers a fast clock needs.
//
// # CSD
//
// CSD gives the canonical signed-digit (non-adjacent) form of an integer:
// digits -1, 0, +1 with no two adjacent nonzero, the fewest nonzero digits
// of any signed-digit form (Reitwiesner 1960). CSDAdders is the baseline
// it implies: each distinct odd fundamental built on its own from its
// digits, one adder per nonzero digit after the first.
//
// # Graph
//
// Build follows the structure of Hcub (Y. Voronenko and M. Püschel,
// "Multiplierless multiple constant multiplication", ACM Transactions on
// Algorithms 3(2), 2007), in a simplified form. It keeps the realised set
// R (starting with the input, 1) and the successor set S, every odd value
// up to 2^(b+1) one adder from R (b the widest fundamental's bits): the
// paper's A-operations |(u << i) ± (v << j)| >> k on two nodes. Then, until
// every fundamental is built:
//
//   - a fundamental in S is added at once: it costs the one adder it must
//     (the paper's optimal part); among the ways to make it, the shallowest;
//   - otherwise one successor is added, the one of greatest benefit, Hcub's
//     sum over the fundamentals left of 10^-d' (d - d'), d and d' a
//     fundamental's estimated adder distance before and after. Distances 1
//     and 2 are exact within the bound 2^(b+1) (t in A(s, R + s); t in
//     A(s', r) for s' in S and r in R, or t = s'(2^i ± 1)); one case of
//     distance 3 is seen while the sets are small (t becomes two away
//     through a successor that s creates); beyond that, t = A(r, d) is
//     estimated at the nonzero CSD digits of the cheapest d. The
//     successors scored are all of S while that is cheap (small sets),
//     otherwise the sixteen that bring the most fundamentals to distance 1
//     (the distance-2 case of RAG-n, A. G. Dempster and M. D. Macleod, "Use
//     of minimum-adder multiplier blocks in FIR digital filters", IEEE
//     Transactions on Circuits and Systems II 42(9), 1995, and of Hcub),
//     or, when none does, the first steps towards the fundamentals of
//     least estimate. Ties go to the shallower, then the smaller
//     successor.
//
// Hcub computes its distances more exactly (its distance-3 tests and its
// estimator see more ways to share), so expect it to need as many adders
// or fewer on average; see Measurements. After the search, nodes no coefficient uses are
// dropped, and if the graph has more adders than building every
// fundamental from its own CSD digits (a balanced tree of adders per
// fundamental, partial sums shared), that graph is returned instead: the
// result never costs more than CSDAdders.
//
// The work is bounded: the search counts its elementary steps and, past
// about 6·10^7 of them (about a second), builds the fundamentals left from
// their CSD digits. A 300-tap stage of 18-bit coefficients uses about 1% of
// that; sets of thousands of wide coefficients reach it. Fundamentals
// below 2^24 keep S in bitsets; wider ones in a hash table capped at 2^19
// values, which only costs quality.
//
// Package cost builds one graph per multiplierless FIR or half-band stage
// (cost.Settings.Multiplierless, spec key hardware.multiplierless) and
// proves it with Eval before it counts its adders.
//
// The result is deterministic: the same coefficients, in any order, give
// the same nodes (maps are only looked up, never ranged over; every choice
// has a total order).
//
// # Proof
//
// Graph.Eval runs the graph as wired, in int64 with overflow reported
// (ErrOverflow), so Eval(x)[k] == coefs[k]*x checks it without trusting
// the builder; Build also checks every node's arithmetic before it
// returns. The tests prove the graphs of thousands of random sets (zeros,
// powers of two, duplicates, sign flips included) on x = 1, 0, -1 and
// random x, hold them between the lower bound (one adder per distinct
// fundamental) and plain CSD, check CSD against a brute-force minimum for
// every integer below 2^12 in magnitude, and compare single 12-bit
// constants with a brute-force optimum.
//
// # Measurements
//
// TestMeasure prints these tables; rerun them with
//
//	STEPDOWN_LONG=1 go test -count=1 -run TestMeasure -v ./chain/fixed/mcm
//
// Random sets: N coefficients with magnitudes uniform in [1, 2^b - 1] and
// random signs ((b+1)-bit two's complement), 100 sets per row, math/rand
// seeded with 2007. Mean adders; "distinct" is the mean number of distinct
// odd fundamentals above 1, a lower bound on any graph; saving is the
// graph's against CSD; times are per set, on a shared two-core machine
// (AMD EPYC) with other jobs running.
//
//	bits    N  distinct     CSD   graph  saving  depth     time
//	  12   10      9.93   34.08   14.11   58.6%   5.34     1 ms
//	  12   20     19.78   67.91   23.03   66.1%   7.23     1 ms
//	  12   50     49.02  168.89   49.57   70.6%   7.26     1 ms
//	  12  100     96.24  334.50   96.32   71.2%   4.88     1 ms
//	  16   10      9.98   47.77   19.36   59.5%   6.53     2 ms
//	  16   20     19.98   94.13   31.44   66.6%   8.63     2 ms
//	  16   50     49.93  238.23   62.59   73.7%  11.82     4 ms
//	  16  100     99.76  475.00  107.86   77.3%  18.45     7 ms
//	  20   10     10.00   61.32   23.87   61.1%   7.87     3 ms
//	  20   20     20.00  122.48   40.70   66.8%   9.38     3 ms
//	  20   50     50.00  304.23   81.99   73.0%  13.98    12 ms
//	  20  100    100.00  611.21  140.51   77.0%  15.86    30 ms
//
// Designed filters: lowpass filters from remez.MinLength (rate 1, the
// passband's and the stopband's MaxError given), rounded by fixed.Quantize
// to 16 and 18 bits; the whole impulse response is passed, so symmetric
// taps are duplicates and share a node.
//
//	filter                               taps bits distinct  CSD graph saving depth
//	pass 0.10, stop 0.15, 1e-3/1e-4        82   16       38  112    39  65.2%     6
//	pass 0.10, stop 0.15, 1e-3/1e-4        82   18       39  136    43  68.4%     6
//	pass 0.20, stop 0.25, 1e-3/1e-5        94   16       39  113    40  64.6%     5
//	pass 0.20, stop 0.25, 1e-3/1e-5        94   18       43  142    46  67.6%     5
//	pass 0.20, stop 0.30, 1e-4/1e-4 (*)    47   16       12   33    13  60.6%     5
//	pass 0.20, stop 0.30, 1e-4/1e-4 (*)    47   18       12   42    16  61.9%     7
//	pass 0.02, stop 0.04, 1e-3/1e-4       204   16       88  289    88  69.6%     5
//	pass 0.02, stop 0.04, 1e-3/1e-4       204   18       99  374   102  72.7%     6
//	pass 0.05, stop 0.06, 1e-3/1e-4       400   16      128  375   128  65.9%     3
//	pass 0.05, stop 0.06, 1e-3/1e-4       400   18      166  552   166  69.9%     4
//
// (*) a half-band: every other tap zero, the centre a power of two. Each
// takes at most 10 ms; BenchmarkBuild300x18 (a symmetric 300-tap stage of
// random 18-bit taps, 150 distinct values) about 15 ms and 160 adders.
//
// Designed taps are easier than random ones: their many small values (the
// tails) are cheap and sit close to other values, so the graph comes
// within 0 to 4 adders of the lower bound, one adder per distinct
// fundamental, where CSD needs 2.5 to 3.4 times as many.
// TestSingleConstantNearOptimal finds single odd 12-bit constants at 3.167
// adders on average against a brute-force optimum of 3.120 (CSD 3.780).
//
// Against the paper, from memory and not checked against its text: it
// plots mean adders against the number of constants for random sets of a
// few widths, Hcub beside RAG-n, BHM and CSD, and reports Hcub up to about
// 20% below the best earlier heuristic; at 12 bits and sets of tens of
// constants the graph methods approach the lower bound. Its figures are
// not recalled here well enough to set beside this table cell by cell.
// What the measurements show for certain: at 12 bits and N = 50 to 100
// this package is within 0.6 adders of the lower bound on average (so
// nothing can do much better there), and single 12-bit constants are
// within 2% of optimal. Where Hcub's fuller distance tests matter, wide
// constants in small sets (16 to 20 bits, N = 10 to 20: here 1.6 to 2.4
// adders per constant against a bound of 1), expect Hcub to need fewer
// adders; how many fewer is not measured here (a guess, no more: up to the
// 20% that, from memory, separates Hcub from RAG-n).
package mcm
