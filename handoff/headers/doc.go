// Package headers writes the fixed-point plan of a decimation or
// interpolation chain (fixed.Plan's Widths for a fixed.Cascade) as source
// files that hardware and firmware include: a C header, a VHDL package and
// a Verilog / SystemVerilog include, with the coefficients and widths of
// every stage.
//
// The files are planning data for hardware, ahead of RTL: the team's own
// bit-true simulation of the RTL and its sign-off remain the reference.
// Each file says so in its header comment, with the chain's notation when
// Options.Notation gives it. The bytes depend only on the input: no
// timestamps, no host names.
//
// # Files
//
// With the default prefix "stepdown" (the zero Options):
//   - stepdown_chain.h (C): C99, include guard STEPDOWN_CHAIN_H, <stdint.h>;
//     scalars are #defines (negative ones parenthesised), arrays static const
//     and marked unused (STEPDOWN_UNUSED, __attribute__((unused)) under GCC
//     and Clang, common practice) so that a file including the header without using them
//     compiles under -Wall -Wextra -Werror. Coefficients are int32_t when
//     their word is at most 32 bits and int64_t (INT64_C literals) above;
//     STEPDOWN_Sn_COEFS_TYPE names the type. Other arrays are int.
//   - stepdown_chain_pkg.vhd (VHDL): package stepdown_chain_pkg, valid
//     VHDL-93 and VHDL-2008, using ieee.numeric_std. Scalars are integer
//     constants. A VHDL integer is only guaranteed to hold
//     -(2^31 - 1) .. 2^31 - 1 (IEEE 1076 before its 2019 revision, from
//     memory), so coefficients come in two forms: Sn_COEFS,
//     an integer array (type STEPDOWN_INTEGER_ARRAY, index 0 first), only
//     when the coefficient word is at most 32 bits (every code then fits,
//     since the most negative code is unused); and always Sn_COEFS_SIGNED,
//     of type Sn_COEFS_ARRAY, an array of signed(COEF_BITS - 1 downto 0)
//     written as bit strings, the one form for any width.
//   - stepdown_chain.svh (Verilog-2005 / SystemVerilog): localparams, to be
//     included inside a module, interface or package (no include guard: each
//     including scope needs its own copy). Scalars are localparam integer.
//     An array is one flat vector with element k in bits [k*W +: W] (Icarus
//     Verilog 11 rejects unpacked parameter arrays, tried here): coefficients with
//     W = Sn_COEF_BITS, two's complement, read with $signed(...); the CIC's
//     register and sub-stage arrays with W = STEPDOWN_FIELD_BITS (8),
//     unsigned.
//
// # Names
//
// Every name is PREFIX_ then the constant's name below, in upper case in
// all three languages (Options.Prefix, default "stepdown", upper-cased;
// file and package names take it in lower case). Stages are numbered from 1
// in signal order: Sn_ is stage n. Widths are in bits; data words and
// coefficients are two's complement.
//
// Chain:
//   - NUM_STAGES: number of stages;
//   - INPUT_BITS, OUTPUT_BITS: the chain's input (ADC) and output words;
//   - COMPLEX: 1 for complex (I/Q) data, two identical real data paths, 0
//     for real;
//   - KIND_CIC, KIND_FIR, KIND_HALFBAND, KIND_CIC_NONRECURSIVE: the codes
//     0, 1, 2, 3 of Sn_KIND.
//
// Every stage:
//   - Sn_KIND: the stage's kind code;
//   - Sn_R: its decimation factor;
//   - Sn_INPUT_BITS, Sn_OUTPUT_BITS: its input and output words;
//   - Sn_OUTPUT_SHIFT: LSBs removed from the accumulator (CIC: the full
//     register; a non-recursive CIC: its last sub-stage) to make the
//     output; an FIR rounds half up and saturates, a CIC truncates (floor);
//     negative means a left shift;
//   - Sn_ACC_BITS: an FIR's accumulator, the worst-case width of the exact
//     sum of products; a CIC's full register width, Hogenauer's Bmax + 1
//     plus its guard bits; a non-recursive CIC's last sub-stage,
//     Bin + N log2 R.
//
// FIR and half-band stages:
//   - Sn_NUM_TAPS: the number of coefficients, the full impulse response
//     with a half-band's zeros;
//   - Sn_COEF_BITS: the coefficient word;
//   - Sn_COEF_FRAC: fractional bits: tap k is Sn_COEFS[k] / 2^Sn_COEF_FRAC
//     (may be negative, or exceed COEF_BITS - 1 for small taps);
//   - Sn_COEFS: the quantised coefficients as integers, tap 0 first
//     (VHDL also Sn_COEFS_SIGNED; C also Sn_COEFS_TYPE).
//
// CIC stages (fixed.CICPruning):
//   - Sn_ORDER, Sn_DELAY: the order N and the comb's differential delay M;
//   - Sn_GUARD_BITS: guard bits, included in Sn_ACC_BITS;
//   - Sn_NUM_REGS: 2 N registers, integrators 1..N then combs 1..N;
//   - Sn_REG_BITS: each register's width (index 0: integrator 1);
//   - Sn_REG_DROPPED: LSBs truncated (floor) at each register's input. The
//     output's own truncation is Sn_OUTPUT_SHIFT.
//
// Non-recursive CIC stages (KIND_CIC_NONRECURSIVE; chain.NonRecursive,
// M = 1, R = 2^k): no integrators, combs or pruning, so none of the
// recursive CIC's register constants, but
//   - Sn_ORDER: the order N, each sub-stage being (1 + z^-1)^N;
//   - Sn_NUM_SUBSTAGES: k = log2 R sub-stages, each decimating by 2;
//   - Sn_SUBSTAGE_BITS: each sub-stage's output width, exact (full
//     precision), Bin + N i bits for sub-stage i (index 0: sub-stage 1).
//
// # Interpolation chains
//
// An interpolation cascade (fixed.Cascade.Interpolate: stages in signal
// order from the channel rate up, each raising the rate by its factor L;
// the data path of the interpolation contract that package fixed
// documents) is written with these differences; a decimation chain's files
// are unchanged, byte for byte (a test holds them to a snapshot):
//   - the header comment says "an interpolation chain", and the chain's
//     section adds INTERPOLATE (1; only interpolation chains declare it)
//     and INTERPOLATION, the chain's L, the product of the Sn_L;
//   - every stage declares Sn_L, its interpolation factor (output samples
//     per input sample), in place of Sn_R; the kind codes are the same;
//   - an FIR or half-band interpolator: Sn_COEFS are the full impulse
//     response at its output rate, polyphase phase p (output nL + p)
//     taking COEFS[p], COEFS[p + L], ... against x[n], x[n - 1], ...;
//     Sn_PHASE_TAPS is ceil(NUM_TAPS / L); Sn_ACC_BITS the widest phase's
//     accumulator; Sn_GAIN_SHIFT is floor(log2 L): each phase's DC gain is
//     about 1/L, so the phase sum is taken times 2^GAIN_SHIFT, which
//     Sn_OUTPUT_SHIFT, the LSBs rounded half up before saturation, already
//     takes off (it is the decimating FIR's shift less GAIN_SHIFT);
//     Sn_NUM_TAPS, Sn_COEF_BITS and Sn_COEF_FRAC are as above;
//   - a CIC interpolator (fixed.CICInterpolation): Sn_ORDER and Sn_DELAY;
//     Sn_COMB_BITS, the widths of combs 1..N at its input rate, and
//     Sn_INTEG_BITS, of integrators 1..N at its output rate (arrays of
//     Sn_ORDER elements, index 0 first), every register full width and
//     wrapping, nothing truncated inside; Sn_FULL_BITS, the last
//     integrator's width, whose top Sn_OUTPUT_BITS are the output,
//     truncated (floor) by Sn_OUTPUT_SHIFT = FULL_BITS - OUTPUT_BITS;
//     Sn_ACC_BITS, the widest register (a comb when R is small). No
//     GUARD_BITS, NUM_REGS, REG_BITS or REG_DROPPED.
//
// Each section's comments add, for the reader, the rates in Hz, the stage's
// DC gain (input full scale to output full scale), any gain correction
// folded into its taps and the rounding points the plan states
// (fixed.StageWidths.Points).
//
// # Checks
//
// The package's tests compile the files of seeded random planned chains
// (fixed.Plan) and of a hand-made chain at the limits (32-bit words holding
// +-(2^31 - 1), 40- and 64-bit words, one tap, 63-bit CIC registers), of
// chains with non-recursive CICs (order 1 to 6, R = 2 to 256) and of
// interpolation chains (random ones, a CIC interpolator with registers up
// to 94 bits, and two designed from invented transmit specs) with gcc
// -std=c99 -Wall -Wextra -Werror -pedantic, GHDL (--std=08 and
// --std=93c) and Icarus Verilog -g2012, run a program or testbench printing
// every constant and compare it with the plan, every coefficient exact;
// Verilator -Wall lints the Verilog when installed.
//
// # Errors
//
// C, VHDL, Verilog and Files return an error, never panic, when the widths
// do not belong to the cascade (stage count, kinds, factors, a CIC's order
// and delay, tap counts), when a value is out of what the files can carry
// (a coefficient outside its word, a word over 64 bits, a CIC register
// over 255 bits, a factor over 2^31 - 1), or when Options.Prefix or
// Options.Notation break their rules.
package headers
