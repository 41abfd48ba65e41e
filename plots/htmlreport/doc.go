// Package htmlreport writes report.html, the one-file summary of a stepdown
// plan, check or sweep that can be mailed, opened from a laptop's disk or
// printed for an architecture review.
//
// The file is self-contained: the figures are the plots' own SVG text, inlined;
// the stylesheet is inline; there is no script, no web font and no reference
// to anything on a network, so it opens the same without a server or a
// connection. The only links are relative ones to files beside it in the
// output folder (coefficients/*.csv, coefficients/*.hex, report.json, the
// figures), which work when the folder is kept together.
//
// Conventions: rates and frequencies are written with their unit (Hz, kHz,
// MHz, GHz), ripple is peak-to-peak dB, rejection positive dB, multiplies and
// adds are per final output sample, latency in seconds and output samples.
//
// Layout: one column at most about 60 em wide on a screen, tables that
// scroll sideways rather than overflow on a narrow one, and a print
// stylesheet (@media print) that drops the colours of the page furniture,
// keeps tables and figures from splitting across pages and prints each
// link's target beside it.
//
// Each stage card of the recommended chain carries its word-length plan's
// rounding points (report.json's rounding_points): the headroom points,
// where an input within full scale can drive the stage's output past its
// largest code, as a marked row under the word lengths, the others as a
// list in signal order at the card's foot.
//
// Output is deterministic: the same inputs give the same bytes (no dates, no
// absolute paths).
package htmlreport
