// Package rtl writes a Verilog reference model of a planned decimation or
// interpolation chain (a fixed.Cascade with its fixed.Widths) and a
// self-checking testbench that runs it on vector files. The sections
// below describe a decimation chain; Interpolation chains says what
// differs for one.
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
// # Interpolation chains
//
// An interpolation cascade (fixed.Cascade.Interpolate: stages in signal
// order from the channel rate up, each raising the rate by its factor L)
// gets a model of the interpolation contract's data path, fixed.Model's
// bit for bit, with a streaming interface, since a stage gives L outputs
// per input. A decimation chain's files are byte-identical to those
// written before interpolation chains were supported (a test holds them
// to a snapshot).
//
// Ports. Every stage module, and P_chain for the chain, has valid/ready
// streams at both ends:
//
//	clk, rst                  clock (rising edge) and synchronous reset, active high
//	in_valid, in_ready, in_i [, in_q]      the input; in_ready is an output
//	out_valid, out_ready, out_i [, out_q]  the output; out_ready is an input
//
// and P_chain brings out each stage's output stream as s<k>_valid,
// s<k>_ready (stage k+1's in_ready, or out_ready for the last) and
// s<k>_i [, s<k>_q]. A sample passes on a rising edge where its valid and
// ready are both high; out_valid and the data hold until the sample is
// taken.
//
// Timing. A stage takes an input when in_valid and in_ready are high, then
// gives its L phases 0 .. L-1 in order, the first on the next clock and
// one a clock while its output is taken; in_ready is high when it has no
// phase left to give or is giving its last this clock (so in_ready
// depends on out_ready within the clock: a combinational path from the
// chain's out_ready back to its in_ready, through every stage). A stage
// can thus give one output every clock, and the chain's output keeps up
// with out_ready high on every clock once its inputs arrive in time; to
// pace it by a DAC, drive out_ready with the DAC's sample strobe. Reset
// clears every register, history, phase counter and output.
//
// Arithmetic. An FIR (or half-band) interpolator keeps its last ceil(T/L)
// inputs (T taps) and computes phase p of input n, y[nL + p] = sum_k
// h[p + Lk] x[n - k], exact in its accumulator of StageWidths
// .AccumulatorBits (the widest phase's; modular, as the decimating FIR's),
// skipping zero taps, then rounds half up at OutputShift (the decimating
// FIR's less floor(log2 L)) or shifts left, and saturates to OutputBits;
// a half-band's centre phase, whose one tap is 2^(Frac-1), is written as
// the input shifted, with no multiply. A CIC interpolator
// (fixed.CICInterpolation) runs its N combs on each input taken, each
// register wrapping at its width, holds the newest comb output, and on
// each output given runs its N integrators on that comb output at phase
// 0 and on zero at phases 1 .. L-1 (the zero stuffing), each integrator
// taking its input sign-extended (or wrapped) to its width and wrapping
// there; the output keeps the top OutputBits of the last integrator,
// truncated (floor).
//
// Testbench. For each signal it resets the chain, offers each input after
// 0 to Options.MaxIdle idle clocks (in_valid low, junk on the data lines)
// and holds it until the chain takes it; it stalls the chain's output
// (out_ready low) for 0 to Options.MaxIdle clocks before each output
// sample (a second LFSR); and it compares every stage's output, on every
// clock where its valid and ready are high, with the next line of its
// file. After the last input it waits for the chain's output to reach the
// inputs' count times L; a chain that gives fewer within a bound of
// clocks, or does not take an input within it, FAILs with
//
//	FAIL: signal <s>, output (vectors/<s>.out.txt): the chain gave <n> of the <m> samples its <k> inputs make within <c> clocks of the last input
//	FAIL: signal <s>, input (vectors/<s>.in.txt), sample <i>: the chain did not take it within <c> clocks
//
// The PASS and the other FAIL lines are the decimation testbench's.
//
// # Limits
//
// CIC registers up to MaxCICBits (127) bits (a non-recursive CIC's
// sub-stages up to MaxBits, 63, as fixed.Model runs them in int64), FIR accumulators and data
// words up to MaxBits (63) bits, as fixed.Model holds them (int128 and
// int64); up to MaxTaps taps per FIR; R up to 2^24; a CIC of
// order up to 32 with M up to 64; an interpolation chain's L up to 2^40.
package rtl
