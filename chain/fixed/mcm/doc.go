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
//     fundamental's estimated adder distance before and after. Distance 1
//     and 2 are exact (t in A(s, R + s); t in A(s', r) for s' in S, or
//     t = s'(2^i ± 1)) and a case of 3 is seen (t becomes two away through a
//     successor that s creates); beyond that t = A(r, d) is estimated at
//     the nonzero CSD digits of the cheapest d. The successors scored are
//     all of S while that is cheap (small sets), otherwise the sixteen that
//     bring the most fundamentals to distance 1 (RAG-n's and Hcub's
//     distance-2 case), or, when none does, the first steps towards the
//     fundamentals of least estimate. Ties go to the shallower, then the
//     smaller successor.
//
// Hcub computes its distances more exactly (its distance-3 tests and its
// estimator see more ways to share), so its graphs are as good or better;
// see Measurements. After the search, nodes no coefficient uses are
// dropped, and if the graph has more adders than building every
// fundamental from its own CSD digits (a balanced tree of adders per
// fundamental, partial sums shared), that graph is returned instead: the
// result never costs more than CSDAdders.
//
// The work is bounded: the search counts its elementary steps and, past
// about 6·10^7 of them (about a second), builds the fundamentals left from
// their CSD digits. A 300-tap stage of 18-bit coefficients uses about 1% of
// that; sets of thousands of wide coefficients reach it. Sets of values up
// to 2^25 keep S in bitsets; wider ones in a hash table capped at 2^19
// values, which only costs quality.
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
// To be filled in.
package mcm
