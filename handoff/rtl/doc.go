// Package rtl writes a Verilog reference model of a planned decimation
// chain (a fixed.Cascade with its fixed.Widths) and a self-checking
// testbench that runs it on vector files.
//
// The model is a REFERENCE: its arithmetic is fixed.Model's, the integer
// data path of the bit-true run, bit for bit, so that an implementation of
// the chain can be proved bit-exact against it and against the vector
// files. It is behavioural (every product of an FIR output in one clock)
// and is not a product for synthesis or sign-off: the team's own bit-true
// simulation of its RTL and its sign-off remain the reference. Both files
// say so in their header, with the stage list and every width.
//
// # Files
//
// Model returns the model, conventionally rtl/stepdown_chain.v; Testbench
// the testbench, rtl/stepdown_tb.v. The testbench reads vectors/ beside
// rtl/, and is run with Icarus Verilog 11 or later, from inside rtl/:
//
//	iverilog -g2012 -o sim *.v && vvp sim
//
// or from the folder that holds rtl/ and vectors/:
//
//	iverilog -g2012 -o sim rtl/*.v && vvp sim
//
// The model is Verilog-2005 and compiles under iverilog -g2012; Verilator 5
// lints it (--lint-only -Wall) without a warning but UNUSEDSIGNAL (the bits
// a truncation drops) and DECLFILENAME (one file, many modules). The
// testbench uses SystemVerilog strings and $sformatf, which Icarus Verilog
// 11 accepts with -g2012.
//
// # Modules and ports
//
// With P the prefix (Options.Prefix, default "stepdown"), stage k (from 1)
// is module P_s<k>_cic, P_s<k>_hb or P_s<k>_fir, and P_chain chains them:
//
//	clk, rst                  clock (rising edge) and synchronous reset, active high
//	in_valid, in_i [, in_q]   an input sample when in_valid is high
//	s<k>_valid, s<k>_i [, s<k>_q]   stage k's outputs
//	out_valid, out_i [, out_q]      the chain's outputs (the last stage's)
//
// The _q ports exist for a complex (I/Q) cascade only: two identical real
// data paths sharing the control. Every data port is a signed
// two's-complement code as wide as its word: the input Widths.InputBits,
// stage k's output Widths.Stages[k-1].OutputBits. Each stage module has the
// same ports, named in_valid, in_i, in_q, out_valid, out_i, out_q.
//
// # Timing
//
// A stage takes one input sample on each clock with in_valid high, and any
// number of idle clocks may separate inputs. Its outputs are due with the
// inputs numbered 0, R, 2R, ... after reset (fixed.Model's convention: the
// first output is taken at input sample 0); the output is registered, so
// out_valid is high for one clock, the clock after the input that
// completes the sample. A chain of S stages therefore gives its output S
// clocks after the input that completes it. Reset (rst high on a rising
// edge) clears every register, delay line, phase counter and output.
//
// # Arithmetic
//
// A CIC's integrators and combs are registers of chain.PruneCIC's widths
// (CICPruning.RegisterBits), each taking its input truncated (floor) to its
// unit 2^Dropped[j] and wrapping at its width; the output keeps the
// OutputBits above Dropped[2N].
//
// A non-recursive CIC (StageWidths.NonRecursive, chain.NonRecursive) is
// written as its own structure, with no integrator: log2 R sub-stages in a
// row, sub-stage i taking every output of the one before, keeping its last
// N inputs in a delay line of their width and, with the inputs numbered 0,
// 2, 4, ... of its own stream, computing y_i[m] = sum_j C(N, j) x_i[2m - j]
// exactly in StageWidths.SubStageBits[i-1] = Bin + N i bits (the sum taken
// modulo that width, which holds it). Every sub-stage of one input runs in
// the same clock, so the stage's timing is the recursive CIC's; the output
// keeps the top OutputBits of the last sub-stage, truncated (floor). Its
// module is P_s<k>_cic too.
//
// An FIR (or half-band) computes y[m] = sum_k h[k] x[mR-k] with the
// quantised taps, exact in an accumulator of StageWidths.AccumulatorBits
// (modular; the accumulator holds every sum the input word can make, which
// Model checks), skipping zero taps and folding symmetric pairs through a
// pre-adder, then rounds half up at OutputShift (or shifts left when it is
// negative) and saturates to OutputBits. The expressions spell out every
// shift and wrap as part-selects of sign-extended vectors, so nothing
// depends on Verilog's rules for signed operands or expression widths.
//
// # Vector files
//
// For each signal name s given to Testbench (letters, digits, '_', '-',
// '.'), the testbench reads:
//
//	vectors/s.in.txt          the input, one sample a line
//	vectors/s.stage<k>.txt    stage k's expected outputs (k from 1)
//	vectors/s.out.txt         the chain's expected outputs
//
// A line holds one decimal integer for a real chain and two, "I Q",
// separated by a space, for a complex one. Files are read to their end. The
// testbench opens ../vectors/ (run from rtl/) and, failing that, vectors/
// (run from the folder above).
//
// For each signal in turn the testbench resets the chain, feeds the inputs
// with 0 to Options.MaxIdle idle clocks before each (a 16-bit LFSR pattern,
// the same on every run; the data lines carry junk while in_valid is low),
// and compares every output of every stage, as it appears, with the next
// line of its file. It prints one line per signal and, when all match,
//
//	PASS: <signals> signals, <inputs> inputs; compared stage 1: <n>, ..., output: <n> samples, bit-exact
//
// and otherwise stops at the first difference with
//
//	FAIL: signal <s>, stage <k> (vectors/<s>.stage<k>.txt), sample <i>: expected <e>, got <g>
//
// (sample i counted from 0; "output (vectors/<s>.out.txt)" for the chain's
// output). A missing file, a malformed line, an input outside the input
// word, an output beyond the end of its file, or a file holding more
// samples than the chain gave is a FAIL too, naming the file.
//
// # Limits
//
// CIC registers up to MaxCICBits (127) bits (a non-recursive CIC's
// sub-stages up to MaxBits, 63, as fixed.Model runs them in int64), FIR accumulators and data
// words up to MaxBits (63) bits, as fixed.Model holds them (int128 and
// int64); up to MaxTaps taps per FIR; R up to 2^24; a CIC of
// order up to 32 with M up to 64.
package rtl
