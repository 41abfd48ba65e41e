// Package sweep runs a trade study for the stepdown command line: one spec
// key is stepped over a range of values, or two keys over a grid of every
// pair of their values, the chain search is run for each value (each cell),
// and the recommended chain's figures and the best figures on each front
// are tabulated (sweep.csv), drawn (sweep.svg, sweep.png) and written as
// JSON.
//
// Conventions: rates and frequencies in Hz, ripple peak-to-peak dB, rejection
// positive dB, latency in seconds, coefficient and word widths in bits, as in
// the spec file. Multiplies are per final output sample.
//
// The keys (Keys, LookupKey; the spec key each sets in brackets):
//
//   - input_rate, output_rate [input_rate, output_rate]: sample rates, written
//     with the frequency units or the sample-rate ones (MS/s, Msps);
//   - decimation [output_rate]: the ratio D, a whole number from 2; each value
//     sets output_rate = input_rate / D (after any other swept key, so that
//     in a grid with input_rate it divides the swept input rate);
//   - interpolation [output_rate]: the ratio L of an interpolation chain,
//     likewise: output_rate = input_rate L;
//   - passband, protected, stopband [passband, protected, stopband]:
//     frequencies;
//   - snr [sigma_delta.snr]: the in-band SNR target of a noise-shaped
//     input, in dB;
//   - ripple, rejection [ripple, rejection]: levels in dB; with a
//     rejection_mask in the spec, rejection moves the whole mask, every
//     point by the same dB, so that its largest rejection is the value;
//   - clock [hardware.clock]: a frequency (alias hardware.clock);
//   - input_bits, output_bits [words.input, words.output]: whole bits in
//     [2, 32] (aliases words.input, words.output);
//   - coefficient_bits [words.coefficients]: whole bits in [2, 40] (aliases
//     coefficients, words.coefficients);
//   - max_stages [search.max_stages]: whole stages in [1, 12] (alias
//     search.max_stages); the command refuses it together with --max-stages.
//
// The range FROM:TO:STEP (ParseVary):
//
//   - Each part is written like the spec's value for that key: "80:100:5",
//     "80 dB:100 dB:5 dB", "1.92 MHz:3.84 MHz:640 kHz", "2 stages:4 stages:1
//     stage". A plain number is in the key's base unit (Hz, dB, bits,
//     stages, or the plain ratio D). A unit written only after STEP applies
//     to the parts written without one ("1.92:3.84:0.64 MHz"), as in the
//     spec's band ranges.
//   - STEP must be above zero. TO is an inclusive bound: the values are FROM,
//     FROM+STEP, ... up to and including TO (within a relative 1e-9), and a
//     TO that the steps do not land on is not itself a value. When FROM is
//     above TO the range runs downwards, FROM, FROM-STEP, ... down to TO,
//     and the values are run, tabulated and written in that order
//     ("90:70:10" is 90, 80, 70 dB); a negative STEP is refused with that
//     advice. Each value is rounded to 12 significant digits so that 0.1 dB
//     steps give 0.3 dB, not 0.30000000000000004. Bits, stages and the
//     decimation take whole numbers only.
//   - At most MaxValues values.
//   - Each value must lie in the key's own domain (frequencies above 0 Hz,
//     ripple in (0, 10] dB, rejection in (0, 150] dB, widths and stages as
//     above, decimation from 2 to 2147483647); otherwise the whole range is
//     refused with an *Error naming the key, the value and the rule (the
//     command exits with status 2).
//
// Values that pass those checks but make the spec inconsistent as a whole
// (a passband beyond half the output rate, a non-integer ratio of the input
// and output rates, a decimation whose output rate leaves no room for the
// passband, ...) are not refused up front: each such value is a row of
// sweep.csv with status "invalid" and the spec's own message, and the sweep
// goes on with the other values; the figure marks them with a cross on the
// axis. When every value is invalid the command refuses the range (exit
// status 2); when no value gives a chain it fails (exit status 1) and leaves
// the output folder as it was.
//
// A value is applied by rewriting the spec text (the TOML key is set or
// added; ApplyAll, SpecWith) and parsing it again with the command line's
// spec parser. Only the swept keys are written: every edge the spec leaves
// to its default is worked out again from the new values (protected =
// passband, stopband = output_rate - protected), so sweeping the passband
// of a spec without protected moves the protected edge with it, and
// sweeping output_rate or decimation moves a defaulted stopband. An edge the
// spec sets is kept as written; a value it conflicts with (a passband above
// a set protected edge, a stopband beyond output_rate - protected) is an
// invalid row whose detail names that edge and its rule.
//
// Statuses (sweep.csv's status column): "ok"; "partial" (the time limit came
// during the search: the front is the best found so far; or during its
// word lengths, which its report.json, marked partial, then lacks for some
// chains); "invalid" (the value
// makes the spec inconsistent); "infeasible" (searched, no chain meets the
// spec; detail gives the drop counts); "stopped" (the time limit or an
// interrupt came before any chain); "error" (the search failed).
//
// A chain that meets a value's spec meets it at every looser value of
// rejection (a lower target), ripple (a larger budget) or max_stages (more
// stages allowed). So in a one-key sweep of those, each value's front also
// holds the front chains of every stricter value's own search, and for
// rejection and ripple those of a looser value whose measured figures
// (float and, with a fixed width, rounded) meet it by the verdict's rule;
// a value whose search found no chain is then "ok" if it gained one. The
// front is taken again and the recommendation made again by the spec's
// rule (optimize.WithChains); the reports are made afterwards, each for its
// own value's spec (word lengths, bit-true runs, verdicts), and the
// value's detail, a note under the table and its report.json's reason name
// the chains that came from other values. At a coefficient width near the target's own, whether a
// design's rounded taps meet is all but chance: an invented 72 to 6 MS/s
// receiver with 10-bit taps swept over 60 to 72 dB recommended 15, 15, 21,
// 15, 23, 21, 15, 16, 24, 15, 25, 25 and 27 multiplies per output; with
// the chains of the other values it is 15 up to 71 dB and 25 at 72 dB.
// A chain designed at another value just as this value's search designed
// it (the same stages and taps) is not added twice. A grid (two keys) does
// not do this, and a "partial" value (stopped by the time limit) neither
// gives nor takes chains. So a value's front in a sweep can hold chains
// that a plan of that value alone would not find: it is the best of what
// the whole sweep designed.

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
// "stepdown.report/1") and the recommended chain's coefficient files. In
// report.json, vary.from, vary.to and vary.step are as typed (from above to
// for a downward range, step positive) and vary.values in the order run;
// vary.unit is "Hz", "dB", "bits", "stages" or "" (the decimation ratio);
// vary.spec_key is the spec key the sweep sets ("output_rate" for
// decimation).
//
// Grids (Grid, NewGrid, GridFiles). Two ranges make a grid: every value of
// the first (the rows) with every value of the second (the columns), at
// most MaxCells cells, two different keys that do not set the same spec
// key (decimation and output_rate both set output_rate). The cells run row
// by row (the first key's value outer) and every output lists them in that
// order:
//
//   - report.json has the schema "stepdown.sweep-grid/1": "vary" is the
//     first key (rows) and "vary_columns" the second (columns), both as
//     above; "values" holds one entry per cell, with the fields of a value
//     plus "column_value" and "column_value_text" (the second key's value
//     in its base unit and written with its unit), "row" and "column" (from
//     1, the indexes of the cell's values in vary.values and
//     vary_columns.values); "value" and "value_text" are the first key's.
//     A one-key report.json has none of these fields.
//   - sweep.csv has one row per cell: index, row, column, key, value,
//     value_text, column_key, column_value, column_value_text, then the
//     one-key columns from status on (GridCSVHeader).
//   - structure_changed is counted along a row: the cell's recommended
//     notation differs from that of the previous cell of the same row that
//     has a chain.
//   - sweep.svg and sweep.png are a heat map (plots.Heatmap) of the
//     recommended chain's multiplies per output, the second key across and
//     the first up (each axis rising, whatever the order swept), with a
//     colour bar; each cell carries its figure and a letter naming its
//     recommended structure (Structures: A, B, ... in order of first
//     appearance, keyed under the map), heavy lines separate neighbouring
//     cells whose structure differs, and cells without a chain are grey and
//     say why in a word (Status.Mark: "invalid", "no chain", "stopped",
//     "error").
//   - Each cell with a chain has its folder values/rRR-cCC/ (GridValueDir,
//     row and column from 01) with its report.json and coefficient files.
//
// Parallelism: Map runs values through a bounded pool of goroutines, each
// writing its result into the slot of its index, so the outputs are the same
// bytes whatever GOMAXPROCS or the pool size is, provided each run is
// deterministic (the search is).
//
// The recommended chain's structure is its notation (stage kinds, factors,
// CIC order and delay, FIR variant; not the tap counts). A row is marked
// "changed" when its recommended notation differs from that of the previous
// row that has a chain (in the order run, downwards for a downward range);
// the figure, whose axis always rises, marks with a vertical line and the
// new notation each value whose notation differs from that of the value
// with a chain to its left. The figures themselves are plots.Sweep and
// plots.Heatmap: this package only converts its results into
// plots.SweepData (NewFigureData) and plots.HeatmapData (NewHeatmapData).
package sweep
