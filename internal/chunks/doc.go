// Package chunks runs a loop over an index range on every processor, in
// fixed contiguous chunks (Run). The caller's function computes each index
// on its own and writes only to its own indices, so the results are the
// same bits whatever GOMAXPROCS is; only the time changes. Work below
// MinWork inner-loop steps stays on the calling goroutine.
//
// Package remez runs its grid work through it, and package fixed the
// response of a long unsymmetric filter (a fractional stage's prototype).
package chunks
