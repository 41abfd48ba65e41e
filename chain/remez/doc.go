// Package remez designs linear-phase FIR filters by the Parks-McClellan
// (Remez exchange) method, estimates the lengths they need and evaluates
// their responses.
//
// # Conventions
//
// Frequencies and sample rates are in Hz; a band runs from Lo to Hi
// inclusive with 0 <= Lo < Hi <= rate/2, bands in increasing order, not
// overlapping. Deviations are linear amplitudes; where dB appear they are
// positive: attenuation is -20 log10(ds) and passband ripple is
// peak-to-peak, 20 log10((1+dp)/(1-dp)). A filter of n taps is type I when
// n is odd and type II when n is even; both are symmetric, and a type II
// filter is zero at rate/2. Result.Deviations are unweighted,
// max |A(f) - D(f)| per band, read at the design's extrema (a little below
// a dense scan: see Result); Result.Delta is the weighted deviation that
// the optimum levels across all bands.
//
// # Method
//
// The engine works in the x = cos(omega) domain (type II with cos(omega/2)
// factored out) with barycentric Lagrange interpolation in its second, true
// form (Berrut and Trefethen 2004), x differences taken from sin^2 and
// cos^2 of omega/2 so that points crowded near x = +-1 keep their relative
// precision, and the levelled deviation chosen by the same barycentric
// evaluation that reads the error. Long designs start from a reference
// scaled from designs of about half the length (reference scaling, Filip
// 2016) and converged on a coarse grid (4 points per extremum); each point
// of a reference whose structure is right then moves to its lobe's top by
// a few evaluations (safeguarded parabolic search), and convergence is
// always confirmed on the whole dense grid (Settings.Density points per
// extremum, 16 by default as in McClellan, Parks and Rabiner 1973, the
// extrema counted over the bands' total width rather than all of [0,
// rate/2], and at least 16 points in every band whatever the density, so
// that short filters on narrow bands have a grid to work on): the
// largest error on it, each extremum refined locally, must exceed the
// levelled deviation by at most 1e-5 of it. Local steps that leave the
// levelled deviation unchanged to 1e-9 four times running without
// converging (rounding noise in the error of long, deep designs) hand over
// to the grid exchange for the rest of the design; a seeded start that
// does not converge is followed, within the same MaxIterations (which
// Result.Iterations counts over all starts), by the 1973 program's evenly
// spread start (unless the seeding fell back to it) and then by an equal
// share of the points in every band (where many narrow bands each hold
// far more extrema than their share of the grid, the even spread can level
// to rounding level and break down), and the best run is kept. A short
// design, which starts evenly spread, gets that last start only when it
// is asked for by length (Design), and keeps it only when its taps hold
// the levelled response at the reference points: MinLength's short
// designs get no other start, since from it the exchange can converge,
// far beyond the length narrow bands with wide gaps need, on a response
// so large between the bands that it misleads the search; GridOnly
// designs get none. The
// exchange keeps, among the
// local extrema of every band (band edges included) and the old reference,
// one point per run of equal sign and trims the surplus while keeping
// alternation. Taps come from the interpolant sampled at Chebyshev points
// (first, backward-stable barycentric form) through a DCT done with gonum's
// FFT. Reported deviations are measured on the taps themselves at the
// refined extrema, so they are true maxima, not grid maxima.
//
// Settings.GridOnly instead solves the discrete problem on the 1973
// program's grid with its starting reference, as SciPy's signal.remez does;
// the tests use it to reproduce SciPy's coefficients.
//
// # Searches
//
// MinLength and MinHalfBand search the length from an order estimate by a
// safeguarded secant on the log of the error ratio, galloping until the
// answer is bracketed and bisecting: typically a handful of designs, never
// more than 40 for each parity searched. A secant along which the ratio
// rose with the length is not followed, and aimed steps that land on the
// same side twice running before a bracket exists gallop (8 %, 32 %, then
// doubling), since a ratio recorded by a design stopped on its floor (below)
// is a lower bound that can lie just above 1 far from the answer.
// MinLength's estimate takes every pair of bands whose gains differ by more
// than both allow, adjacent or not, so that a loose band between a passband
// and a stopband (a protected band) does not hide the transition across it.
// MinLength's first step follows the estimate's own slope
// (the taps Herrmann's formula adds for a factor e of error at the binding
// transition), and a later secant never assumes more than four times that
// many taps per factor e; every design after the first starts from the
// reference of the nearest length already designed (a converged one on a
// tie, else where a design stopped by the floor below ended), scaled band
// by band, instead of a seed design. A length that fails is known before
// its design converges: the levelled deviation on any reference of the
// right size in the bands is a lower bound of the least weighted error of
// that length (de la Vallee Poussin's theorem), so MinLength stops a
// design as soon as it passes the limit (by a relative 1e-6) and records
// it as the length's error ratio, a lower bound. A length that meets is
// still designed to convergence and judged on its measured taps, so none
// of this changes the answer, only how fast the search gets there; with
// MaxIterations cut short, a length's unconverged design, and so the answer,
// may depend on its start. Gaps between bands of equal gain (the don't-care slivers
// between alias stopbands) are not transitions for the estimate. A length
// met to rounding level counts as too long; one that cannot be designed
// counts as failing. A search starts no shorter than the least length
// with a coefficient for every band (2 nb - 1 taps for nb bands, odd; 2 nb
// even), and wraps ErrTooManyBands when that is over its limit. Every
// phase of a design (coarse seeding, grid
// iterations, local steps) is bounded by Settings.MaxIterations, so every
// call returns in bounded time.
//
// # Cancellation and memory
//
// DesignContext, MinLengthContext, HalfBandContext and MinHalfBandContext
// take a context, which must not be nil (as everywhere in Go; Background
// never stops). It is checked before every iteration of the exchange and
// of the shorter designs that seed it, before every design of a length
// search, and (through a flag set by context.AfterFunc) every 64 grid
// points or one reference point inside the O(n^2) loops, so a design of
// any length returns within about 100 ms of cancellation (65535 taps: 30
// to 120 ms measured on two shared cores; BenchmarkCancelLatency measures
// 8000 taps), with no Result and an error wrapping ctx.Err(). Design,
// MinLength, HalfBand and MinHalfBand are the same with
// context.Background().
//
// The dense grid is the engine's one large allocation: it holds about
// Density x n/2 points, and a design peaks at about 270 bytes a point
// (seed designs, work arrays and the collector's headroom included). A
// design whose grid would exceed MaxGridPoints (2^21, about 600 MB) is
// refused before anything
// is laid, with an error wrapping ErrGridTooLarge that gives the largest
// density that fits (MaxDensity); MinLength searches only the lengths
// whose grid fits and wraps ErrGridTooLarge when none of them meets.
//
// # Errors
//
// Invalid specifications give an error that names the field, the value and
// the rule, and no Result. When the exchange does not converge (or the
// specification is met to rounding level, beyond what double precision can
// optimise) Design returns its best result, with Converged false where it
// did not converge, together with a descriptive error; non-convergence
// wraps ErrNotConverged. A numerical breakdown that leaves no finite
// filter (lengths far beyond what the bands need) gives no Result and an
// error wrapping ErrNotConverged. No result ever holds NaN or infinite
// taps, and every call returns in bounded time. A length search that ends
// without an answer returns a *SearchError (the longest length found to
// fail, the shortest met only to rounding level, the longest searched)
// wrapping ErrNotConverged, ErrRoundingLevel (the shortest length that
// meets is met only to rounding level, RoundingLevel(n): a limit too small
// for double precision), ErrNoLength (none up to the limit meets) or
// ErrGridTooLarge, so that callers can word it for their users. The
// order estimators return 0 for inputs outside their domain.
//
// # Evaluation
//
// Magnitude and Amplitude evaluate one frequency directly, without
// allocating, with phase rotations re-seeded every 32 taps (Amplitude pairs
// the taps about the centre, half the work, and keeps the sign). A Spectrum
// evaluates |H| on an evenly spaced grid through gonum's real FFT, reusing
// its buffers; MagnitudeGrid is the one-shot form. Design runs its grid
// work on GOMAXPROCS goroutines in fixed contiguous chunks, each point
// computed alone, so results are bit-identical whatever GOMAXPROCS is. On
// amd64 processors with AVX2 and FMA the barycentric sums run in a vector
// kernel (bary_amd64.s), four lanes at a time; elsewhere, or with the
// purego build tag, in portable Go. The two round differently in the last
// bits, so results are identical across runs and GOMAXPROCS on one machine
// and agree to rounding between machines.
//
// Output is planning data: before hardware sign-off, check the final
// coefficients by a bit-true simulation of the RTL.
package remez
