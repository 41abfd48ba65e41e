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
//	stage<i>_<kind>_int.csv   index,integer,value: the stage's coefficients_int
//	                          from the word-length plan; value = integer * 2^-frac
//	stage<i>_<kind>.hex       for $readmemh: one two's-complement word per line,
//	                          ceil(bits/4) hex digits, no comments
//
// The integer files are written only when the spec sets a coefficient width
// or "auto".
//
// Fractional ratios (a spec whose input_rate/output_rate is not an
// integer, chain.Spec.Fractional): spec.ratio is the ratio as a string in
// every report, "256" for an integer spec and the reduced fraction
// "625/24" for a fractional one, whose spec.decimation (a decimation
// spec) or spec.interpolation (an interpolation spec) is then 0 (no
// integer ratio; the other stays 1); spec.ratio_tolerance_ppm is
// written when the spec sets it. Such a chain's last stage has kind
// "polyphase" or "farrow", with interpolation (L) and decimation (M) in
// signal order (an interpolation chain's first stage): its output rate is
// its input rate x L/M (input_rate_hz and output_rate_hz as
// chain.Chain.Rates gives them). A polyphase stage's coefficients are its
// prototype lowpass at L x its input rate with unit gain at 0 Hz, as the
// chain holds it (the data path multiplies by L), taps its length and
// phase_taps ceil(taps/L), its multiplies per output (in an interpolation
// chain, held and priced as its transpose, ceil(taps/M), its multiplies
// per input sample); a Farrow stage's farrow_coefficients are
// chain/farrow's Filter.Coef, one row of taps per power of mu, lowest
// first (farrow_degree+1 rows), and farrow_convention is the sentence
// farrow.Convention. A chain with a fractional stage, decimation or
// interpolation, gets word lengths and bit-true figures as any other
// (AddWordLengths; package chain/fixed, Fractional stages): the fractional
// stage's coefficients_int are its prototype times L, its interpolation
// in signal order (polyphase), or its Farrow rows one after the other,
// coefficient_rows of them (row p multiplies mu^p; in an interpolation
// chain times L/M, the transpose's gain), at one scale; a Farrow stage
// adds mu_bits and horner_bits (in an interpolation chain the register of
// its mu products), and both phase_dc_gain_min_db and
// phase_dc_gain_max_db (dc_gain_db is the mean over the phases);
// accumulator_bits is the widest phase's or branch's. It has no hand-off
// (NoHandoff). Its coefficient files
// are stage<i>_polyphase.csv (index,coefficient, like a FIR's) or
// stage<i>_farrow.csv (FarrowCSV: '#' comment lines that say it is
// planning data and give the convention, then index,mu0,...,muP and one
// row per tap), with coefficients/README.txt (FractionalReadme). Its
// response figure draws, over input frequency, the kept path (K = 0) and
// the largest gain of any other path that lands in [0, fa] (the paths of
// chain.PathGains), without alias shading, which would cover the axis.
//
// With a clock, each chain carries resources (NewResources): its bill of
// fabric resources at the clock, per stage and in total (parallel_lanes,
// multipliers, adders, adder_bits, register_bits, block_memory_bits), a
// planning estimate whose rules Resources states.
//
// With hardware.multiplierless, each chain and stage carries its adders
// (adders, coefficient_adders, structural_adders; package cost's rules),
// counted by AddAdders on the coefficients_int it writes, each FIR and
// half-band stage's adder graph proved by evaluating it (an error, never a
// count, when it fails); the front table's first figure is then adders and
// the resource table splits them into graph and tap adders.
//
// search.dropped counts the candidates set aside, keyed by the stable name
// of each reason (optimize.Reason: "cic_rejection_below_target",
// "fir_over_tap_limit", "misses_with_rounded_taps", ...; optimize.Reason.Text
// says each in words).
//
// A check's report holds the one chain named, and compares it with a plan's
// front (Report.Compare): compared_with gives the front's source, its
// chains' figures (notation, multiplies_per_output, memory_bits, latency_s,
// meets_targets), on_front and the chain's rank on it (0 when not on it);
// beaten_by lists, in the front's order, every chain of it that meets the
// targets and is at least as good on all three axes and better on one, with
// rank, notation and its saving on each axis in percent of the checked
// chain's figure (multiplies_saving_pct, memory_saving_pct,
// latency_saving_pct); an empty list when none beats it. A plan's report has
// neither field.
//
// Word lengths: every chain of the front goes through package chain/fixed
// (fixed.Evaluate, then Result.Report), and its figures are flattened into
// the chain (bittrue_snr_db, bittrue_enob, quantised_alias_rejection_db, ...)
// and into each stage (coefficient_bits, coefficient_frac, coefficients_int,
// accumulator_bits, output_bits, dropped_bits, rounding_points,
// multiplier_size, hardware_multipliers, ...), with accumulator_over_limit
// on each stage whose accumulator passes hardware.max_register_bits and
// over_limits on the chain, the [hardware] limits it breaks as built
// (optimize.BuiltOverLimits owns the rule; the search holds chains to
// them only with a fixed coefficient width). The coefficient width is the
// spec's words.coefficients, or, for "auto" and when it is absent, the
// narrowest per stage that meets the stage's bands; with it absent the
// figures are for information and the files stay floating point. The integer
// files hold exactly coefficients_int: fixed's local search may move a tap off
// plain rounding (coefficients_adjusted counts them). When only the bit-true
// run fails (a CIC register beyond the integer model's 127 bits) the stages keep their
// widths, the chain has no bit-true fields and word_lengths_error says why; a
// chain the planner cannot take carries word_lengths_error alone (for an
// accumulator over 63 bits, with the words that would fit it,
// specfile.WordsToTry), and its figures are its float design's (Unjudged). On the built-in example the
// whole front (six chains) costs about 0.1 s with 18-bit coefficients and
// 0.35 s with "auto" on two cores, so every chain is evaluated.
package report
