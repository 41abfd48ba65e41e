// Package report builds and writes what a stepdown plan or check produces:
// report.json (schema "stepdown.report/1") and the coefficient files for RTL.
//
// Conventions: rates and frequencies in Hz (fields end in _hz), ripple
// peak-to-peak dB, rejection positive dB, latency in seconds (latency_s) and
// in final output samples. Multiplies and adds are counted per final output
// sample. Every number is finite: a NaN or infinity is an error, not output.
//
// Output is deterministic: no timestamps, no paths, maps written in sorted key
// order, floats in Go's shortest round-trip form. The same spec gives the
// same bytes whatever GOMAXPROCS is, as long as the library does.
//
// Coefficient files, per FIR or half-band stage i (from 1):
//
//	stage<i>_<kind>.csv       index,coefficient: the designed float taps
//	stage<i>_<kind>_int.csv   index,integer,value: rounded to the coefficient
//	                          width; value = integer * 2^-frac
//	stage<i>_<kind>.hex       for $readmemh: one two's-complement word per line,
//	                          ceil(bits/4) hex digits, no comments
//
// The integer files are written only when the spec sets a coefficient width.
package report
