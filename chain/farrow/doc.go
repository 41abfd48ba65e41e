// Package farrow designs and evaluates Farrow (polynomial) fractional-delay
// interpolators, the fractional-rate stage of a decimation chain of any
// rate ratio.
//
// # Conventions
//
// Everything is in units of the stage's input sample period: input x[n]
// is at time n, and frequencies nu are in cycles per input sample
// (nu = f / F_in). A Filter's Coef[i][j], i = 0..P the power of mu (lowest
// first) and j = 0..N-1 with N even, gives for an output at time
// t = b + mu (b = floor(t), 0 <= mu < 1)
//
//	y(t) = sum_{i=0}^{P} mu^i * sum_{j=0}^{N-1} Coef[i][j] * x[b - N/2 + 1 + j],
//
// samples outside the input reading as 0 (Convention says the same in one
// sentence). Equivalently y(t) = sum_n x[n] h(t - n), with the continuous
// impulse response h(tau) = sum_i Coef[i][j] mu^i for tau in [-N/2, N/2),
// j = N/2 - 1 - floor(tau), mu = tau - floor(tau), and zero outside.
// H(nu) = integral h(tau) exp(-j 2 pi nu tau) dtau; a unity-gain filter has
// H(0) = 1. An input tone at nu reaches the continuous output at nu + k for
// every integer k with gain H(nu + k), which the stage then samples at its
// output times; so a chain's analysis needs |H| at any nu, however large.
//
// # Evaluation
//
// Response uses the closed form H(nu) = sum_j exp(-j 2 pi nu s_j)
// sum_i Coef[i][j] I_i(2 pi nu), s_j = N/2 - 1 - j the left end of segment
// j and I_i(w) = integral_0^1 mu^i exp(-j w mu) dmu, from its Taylor series
// for small |w| and from the integration-by-parts recursion
// I_i = (i I_{i-1} - exp(-j w)) / (j w) above max(2, 1 + P/2), where the
// recursion's growth stays small; phases are taken from nu reduced modulo
// 1, so the figures hold for nu up to 1e6 and beyond. Run evaluates the
// Farrow structure itself: every subfilter, then Horner's rule in mu.
//
// # Bounds
//
// Bounds(a, b) returns lo <= |H(nu)| <= up for every nu in [a, b], never
// optimistic: up is the least of the first-order bound |H(m)| + L hw
// (m the midpoint, hw the half-width, L >= 2 pi integral |tau||h| dtau,
// which bounds |H'| since h is centred at tau = 0), the second-order bound
// max |H(m) +- H'(m) hw| + M2 hw^2/2 (H' in closed form, M2 >= 4 pi^2
// integral tau^2 |h| dtau), the tail bound TV(h)/(2 pi |nu|) (TV with the
// jumps at the segment ends and at +-N/2), the sharper tail
// sum_r J_r/(2 pi |nu|)^(r+1) (J_r the summed jumps of the r-th
// derivative: integration by parts down to the piecewise-constant P-th
// derivative) and integral |h|. The integrals of |h| and |h'| are bounded
// per sixteenth of a segment by Taylor's formula at its midpoint, exact for
// a polynomial; every constant is widened by 1e-9 of itself and the
// computed H by 1e-12 of the coefficients' absolute sum. As b - a shrinks,
// lo and up close on |H|, so a branch and bound converges.
//
// # Design
//
// Design finds a symmetric filter, h(tau) = h(-tau) so that H is real: the
// free coefficients are the segments with tau >= 0, segment N-1-j being
// p_j(1 - mu). It solves a weighted least-squares problem on a dense grid
// (12 N points per unit of nu, at least 9 a band) over the passband
// [0, Pass] (target 1, weight 1/PassDev) and the stopbands
// [k - Stop, k + Stop], k = 1..max(16, 4N) (target 0, weight 1/StopDev),
// and refines it toward the minimax solution by Lawson's iteratively
// reweighted least squares (Lawson 1961, from memory): each point's weight
// is multiplied by its weighted error and renormalised, for
// LawsonIterations solves after the first, and the solution of smallest
// largest grid error is kept. Lawson's iteration converges slowly: on the
// specs we tried, 30 solves leave the largest weighted error up to about
// 10% above what 300 reach. The stopband rows share their phases across
// k (nu = k + d), which the normal equations exploit; they are solved by
// Cholesky with a ridge of 1e-13 of their largest diagonal (grown if the
// factorisation fails). The gaps between stopbands are unconstrained, and a
// pure least-squares fit lets the response there grow large (a gain of 9
// was seen with N = 16); an energy term, integral h^2 weighed as a stopband
// of deviation StopDev spread over every nu (Parseval) and scaled with the
// mean Lawson weight, keeps it near unit size at a small cost in the
// bands (our choice, not part of Lawson's method).
//
// Design's Result is certified: max |H - 1| over the passband and max |H|
// over every stopband are rigorous upper bounds found by branch and bound
// on the bounds above, within 1% of the larger of the largest computed
// value and a tenth of the target. The
// stopbands k = 1..Bands are searched; beyond, H(k + d) =
// sum_r T_r(d)/(j 2 pi nu)^(r+1) exactly, with T_r(d) the transform of the
// r-th derivative's jumps, which is periodic in d: max |T_0| over
// |d| <= Stop is bounded once by branch and bound and the others by J_r,
// and Bands is the first k from the design's own count past which that
// series (or the tail bound) is a quarter of StopDev, at most MaxCertBands.
//
// MinDesign returns the cheapest filter that meets, cost being multiplies
// per output, (P+1) N + P: it designs the candidates of degree
// MinSearchDegree..MaxSearchDegree and even length up to MaxLen within the
// cost limit in increasing order of cost, and certifies those whose grid
// figures meet; it designs up to four candidates at once, on the cores it
// has, and returns the first in that order that meets, so its answer does
// not depend on the number of cores. Design and MinDesign refuse, with errors that name the
// figure and the rule, a passband edge not in (0, Stop), a stopband
// half-width of 0.5 or more, deviations outside (0, 1), and degrees and
// lengths beyond MaxDegree and MaxLen, which bound their time and memory;
// MinDesign honours its context between and within designs.
//
// # Verification
//
// The tests hold Response to Gauss-Legendre integration of Impulse, to
// SciPy's oscillatory quadrature (testdata/gen_response_scipy.py) and, up
// to nu = 1e6, to the exact integration-by-parts series over the jumps of
// h and its derivatives; Run to the direct sum over h(t - n) and a
// Lagrange cubic table to a cubic input; Bounds to dense sampling on random
// filters and intervals; and designs to dense brute-force maxima that the
// certified figures must not undercut.
package farrow
