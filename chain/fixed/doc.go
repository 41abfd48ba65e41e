// Package fixed turns a designed decimation chain into word lengths: quantised
// coefficients, accumulator and output widths, pruned CIC registers, a
// bit-true integer run against the floating-point chain, and costs from the
// widths.
//
// (Conventions are completed below as the package grows.)
package fixed
