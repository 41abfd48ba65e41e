//go:build amd64.v3

package remez

// fmaBuild is true when the compiler may fuse multiply-adds (GOAMD64=v3),
// which changes the engine's rounding.
const fmaBuild = true
