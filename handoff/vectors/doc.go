// Package vectors writes the test vectors of a planned chain: stimuli and
// the bit-true model's output of every stage, for the RTL team to prove an
// implementation against, sample for sample.
//
// # Stimuli
//
// Six stimuli (Signals), each a whole run from reset of the chain's integer
// model (fixed.Model), in the input word's codes:
//
//   - impulse: one sample of the largest positive code, then zeros;
//   - step_pos and step_neg: the largest positive and the most negative
//     code throughout (full-scale steps of both signs);
//   - tone_pass: a -1 dBFS tone at 0.4 times the passband edge;
//   - tone_alias: a -1 dBFS tone at Options.AliasHz, the rounded chain's
//     worst alias (the caller passes chain.Analysis.WorstAliasHz of the
//     rounded taps);
//   - noise: uniform random codes over the whole input word, seeded.
//
// A complex (I/Q) chain has two identical real data paths; its Q stimulus
// differs from I so that both are proven: the opposite sign for the impulse
// and the steps, the sine where I has the cosine, another random stream.
// Tones are rounded to the input word as the bit-true run's ADC does
// (fixed.ADC: nearest, halves away from zero).
//
// # Length
//
// Every stimulus is as long as the chain's impulse response in input
// samples (its settling: the sum over stages of (L - 1) times the
// decimation before the stage, plus one, L a stage's length, N(RM - 1) + 1
// for a CIC) plus Options.TailOutputs output samples (32 by default),
// rounded up to a whole number of output samples, and at most
// MaxInputSamples (2^20). A chain whose settling exceeds the cap gets
// vectors of the cap's length, and Vectors.Settled and the README say so.
//
// # Files
//
// Under vectors/: README.txt (widths, scaling, latency, the stimuli and the
// order of the files), then per stimulus NAME.in.txt, NAME.stage1.txt ...
// NAME.stageK.txt and NAME.out.txt, one sample per line as a decimal
// integer, I and Q as two columns separated by a space. The bytes are
// deterministic for a given plan.
package vectors
