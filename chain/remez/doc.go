// Package remez designs linear-phase FIR filters by the Parks-McClellan
// (Remez exchange) method and estimates the lengths they need.
//
// Conventions: frequencies and sample rates are in Hz; a band runs from Lo
// to Hi inclusive with 0 <= Lo < Hi <= rate/2. Deviations are linear
// amplitudes (not dB); where dB appear they are positive: attenuation is
// -20 log10(ds) and passband ripple is peak-to-peak,
// 20 log10((1+dp)/(1-dp)). A filter of n taps is type I when n is odd and
// type II (a zero at rate/2) when n is even; both are symmetric.
//
// The engine works in the x = cos(omega) domain with barycentric Lagrange
// interpolation in its second (true) form (Berrut and Trefethen 2004). The
// initial reference of a long design is scaled from the reference of a
// shorter design of the same bands (Filip 2016), and every iteration looks
// for the error's local extrema on the whole dense grid (Settings.Density
// points per extremum, 16 by default as in McClellan, Parks and Rabiner
// 1973), places each one between its grid neighbours by a parabolic fit,
// and keeps an alternating set of the largest. The reported per-band
// deviations are measured after refining every extremum of the final error
// locally (golden-section search), so they are true maxima, not grid maxima.
//
// Design returns a best-effort Result together with a non-nil error when the
// exchange does not converge; callers that accept such results must check
// Result.Converged.
//
// Output is planning data: before hardware sign-off, check the final
// coefficients by a bit-true simulation of the RTL.
package remez
