// Package simulate runs a recorded signal through a planned chain, bit-true
// and in floating point, and measures its levels: what `stepdown simulate`
// reports.
//
// # Conventions
//
// The input is integer codes (package signalio reads them from WAV, raw and
// CSV files): a b-bit code w stands for w / 2^(b-1) of full scale. Run
// plans the chain's word lengths exactly as report.json's are planned
// (fixed.PlanChainContext with the spec's settings) and moves the codes to
// the chain's input word: a narrower recording is shifted up (exact), a
// wider one is rounded to nearest (halves away from zero) and saturated, as
// an ADC of the chain's width would (fixed.ADC), and the saturated samples
// are counted. The sample rate must be the spec's input_rate (within one
// part in 10^9). A real recording into a complex chain runs as I with Q
// zero; two channels into a real chain are refused.
//
// Both data paths are fixed.RunCodes's: the integer chain of the plan
// (fixed.Model, the one the test vectors and the Verilog reference model
// are proven against) and the float chain of the same structure and gains
// with unrounded taps. The input is at most MaxSamples (2^24) per channel.
//
// # Levels
//
// Levels are in dBFS, 0 dBFS being a full-scale sine (real) or complex
// tone (I/Q), measured on Welch spectra (signalio.Welch, 4-term
// Blackman-Harris window, segments of up to 4096 points overlapping by
// half, at most a quarter of the signal so that several average): the
// power in a band is the sum of its bins' powers times the bin spacing over
// the bin's noise bandwidth, so a tone reads its level whatever the window
// and noise reads its power in the band. The bands: the passband [0, fp];
// the alias bands, the input frequencies within fa of a nonzero multiple of
// the output rate (those that fold onto the protected band [0, fa]); the
// output's protected band. For an I/Q signal each band holds its mirror
// image too (|f|). The bit-true error is the mean square of the bit-true
// output less the float one over every output sample, in dBFS of the
// output word.
package simulate
