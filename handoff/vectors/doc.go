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
//
// # Interpolation chains
//
// An interpolation cascade (fixed.Cascade.Interpolate, stages in signal
// order from the channel rate up) gets the same six stimuli at its input
// (channel) rate, run through fixed.Model's interpolating data path (the
// interpolation contract: zero stuffing and polyphase phases, each FIR's
// output rounded half up at its shift, floor(log2 L) less than the
// decimating FIR's, and saturated; a CIC interpolator's combs, zero
// stuffing and integrators at full width, its output truncated). Each
// stage's file holds its output at its own rate, L samples per input
// sample, the first with the input (no delay). What differs:
//
//   - tone_alias is the tone at the channel frequency f whose image is the
//     rounded chain's worst: Options.AliasHz is then the worst image g at
//     the output rate (chain.Analysis.WorstAliasHz of an interpolation
//     chain), folded into [0, F_in/2] (f = g mod F_in, or F_in less that
//     when it is above F_in/2); zero gives a 0 Hz tone;
//   - the settling is the chain's impulse response at the output rate,
//     1 + the sum over stages of (Length_i - 1) times the chain's output
//     samples per output sample of stage i (Vectors.SettlingOutput), and
//     that in input samples, rounded up (Vectors.Settling); each stimulus
//     runs the settling plus Options.TailOutputs output samples, rounded up
//     to whole input samples, at most Options.MaxInput input samples and
//     MaxOutputSamples (2^18) output samples (Vectors.OutputSamples); a
//     chain whose interpolation exceeds that cap is refused;
//   - the group delay counts each stage's (Length_i - 1) / 2 at its output
//     rate;
//   - the README states the direction and every rate, each stage's widths
//     and rounding rules as above, the files' order and lengths, and the
//     latency.
//
// A decimation chain's files are byte-identical to those written before
// interpolation chains were supported (a test holds them to a snapshot).
package vectors
