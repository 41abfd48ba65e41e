// Package sweep runs a trade study for the stepdown command line: one spec
// key is stepped over a range of values, the chain search is run for each
// value, and the recommended chain's figures and the best figures on each
// front are tabulated (sweep.csv), drawn (sweep.svg, sweep.png) and written
// as JSON.
//
// Conventions: rates and frequencies in Hz, ripple peak-to-peak dB, rejection
// positive dB, latency in seconds, coefficient widths in bits, as in the spec
// file. Multiplies are per final output sample.
//
// The range FROM:TO:STEP (ParseVary):
//
//   - Each part is written like the spec's value for that key: "80:100:5",
//     "80 dB:100 dB:5 dB", "1.92 MHz:3.84 MHz:640 kHz". A plain number is in
//     the key's base unit (Hz, dB or bits). A unit written only after STEP
//     applies to the parts written without one ("1.92:3.84:0.64 MHz"), as in
//     the spec's band ranges.
//   - STEP must be above zero and FROM must not exceed TO; TO is an inclusive
//     bound, so the values are FROM, FROM+STEP, ... up to and including TO
//     (within a relative 1e-9), and a TO that the steps do not land on is
//     not itself a value. Each value is rounded to 12 significant digits so
//     that 0.1 dB steps give 0.3 dB, not 0.30000000000000004.
//   - At most MaxValues values.
//   - Each value must lie in the key's own domain (frequencies above 0 Hz,
//     ripple above 0 dB, rejection in (0, 150] dB, coefficient widths whole
//     numbers of bits in [2, 40]); otherwise the whole range is refused
//     with an *Error naming the key, the value and the rule (the command
//     exits with status 2).
//
// Values that pass those checks but make the spec inconsistent as a whole
// (a passband beyond half the output rate, a non-integer ratio of the input
// and output rates, ...) are not refused up front: each such value is a row
// of sweep.csv with status "invalid" and the spec's own message, and the
// sweep goes on with the other values; the figure marks them with a cross on
// the axis. When every value is invalid the command refuses the range (exit
// status 2); when no value gives a chain it fails (exit status 1) and leaves
// the output folder as it was.
//
// A value is applied by rewriting the spec text (the TOML key is set or
// added) and parsing it again with the command line's spec parser, so every
// default that depends on the swept key (the protected edge that defaults
// to the passband, the stopband that defaults to FK - fa) follows it.
//
// Statuses (sweep.csv's status column): "ok"; "partial" (the time limit came
// during the search: the front is the best found so far); "invalid" (the value
// makes the spec inconsistent); "infeasible" (searched, no chain meets the
// spec; detail gives the drop counts); "stopped" (the time limit or an
// interrupt came before any chain); "error" (the search failed).
//
// sweep.csv has one row per value, in the order of the values: the value in
// the key's base unit and written with its unit, the status, the recommended
// chain's notation, whether its structure changed, its figures (designed,
// meets_targets, multiplies and adds per output, memory bits, latency in
// seconds and output samples, hardware multipliers at the clock, alias
// rejection, passband ripple), the size of the front, the least multiplies,
// memory bits, latency and multipliers over the front (each on its own), the
// recommended chain's word-length figures from package chain/fixed (bit-true
// SNR and ENOB, alias rejection with quantised coefficients, and the FIR and
// half-band coefficient widths in stage order, space-separated; empty when the
// chain has no word-length plan), and a detail for any status but ok. Cells that do not apply are empty.
//
// The output folder holds report.json (schema "stepdown.sweep/1": the spec as
// given, the range, and per value its status, front without coefficient
// arrays, recommendation and reason), sweep.csv, sweep.svg, sweep.png, and
// values/NN/ (NN from 01) with each planned value's own report.json (schema
// "stepdown.report/1") and the recommended chain's coefficient files.
//
// Parallelism: Map runs values through a bounded pool of goroutines, each
// writing its result into the slot of its index, so the outputs are the same
// bytes whatever GOMAXPROCS or the pool size is, provided each run is
// deterministic (the search is).
//
// The recommended chain's structure is its notation (stage kinds, factors,
// CIC order and delay, FIR variant; not the tap counts). A row is marked
// "changed" when its recommended notation differs from that of the previous
// row that has a chain; the figure marks those values with a vertical line
// and the new notation. The figure itself is plots.Sweep: this package only
// converts its results into plots.SweepData (NewFigureData).
package sweep
