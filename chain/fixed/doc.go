// Package fixed turns a designed decimation or interpolation chain into
// word lengths: quantised coefficients, accumulator and output widths, CIC
// registers (a decimator's pruned by Hogenauer's method, chain.PruneCIC; an
// interpolator's at Hogenauer's interpolator widths, chain.NewCICInterpolator),
// a bit-true integer run of the chain against the floating-point chain, and
// the hardware cost that follows from the widths. The sections below state
// the decimation chain's rules; Interpolation states what differs for an
// interpolation chain.
//
// The figures are planning data for hardware, ahead of RTL: the team's own
// bit-true simulation of the RTL and its sign-off remain the reference.
//
// # Conventions
//
// Frequencies and rates are in Hz. Rejections and noise levels are positive
// dB below the reference (the chain's DC gain); signal levels are dBFS, the
// amplitude of a sine relative to full scale. SNR is in dB, ENOB in bits by
// the common-practice rule ENOB = (SNR - 1.76) / 6.02.
//
// Numbers are two's complement. A b-bit data word w is the fraction
// w / 2^(b-1) of full scale. A coefficient set (Coefficients) has a width Bits
// and a scale 2^Frac: tap k is Ints[k] / 2^Frac, with |Ints[k]| <=
// 2^(Bits-1) - 1 (the most negative code is unused). Quantize picks the largest
// Frac that fits the largest tap, so taps in [1/2, 1) give Q1.(Bits-1), smaller
// taps gain fractional bits and taps of 1 or more take integer headroom. A
// half-band's centre 1/2 becomes 2^(Frac-1) and its zero taps stay zero.
//
// # Coefficient widths
//
// MinCoefBits returns the narrowest width whose quantised response meets every
// band's MaxError (the remez.Band convention: | |H(f)| - D(f) | * w(f), w the
// band's WeightFunc or 1), measured on a dense grid with local maxima refined
// (Deviations; for a long filter, a peak that rigorous Taylor bounds of the
// amplitude, or of the magnitude of a filter that is not symmetric, over
// FFT cells show to lie below a value already measured is skipped, which
// changes no bit of the result, and the measurements of a filter are
// remembered within the process, bounded to 2^21 taps; a caller stopped
// while it waits for another's measurement of the same filter stops
// waiting). A width search
// that only needs the verdict at a trial width asks for it alone
// (meetsBands: a band whose bounds stay within its limit is met without
// being measured, one is missed at its first value above it).
// Before a bit is added, a local search (QuantSettings.Budget trial moves,
// default 64) tries the other rounding of the taps with the largest rounding
// error, one symmetric pair at a time, keeping moves that lower the worst
// band's error relative to its limit (each tap's cosines on the grid, which
// a move adds, are kept for all the widths tried: at most 8 MiB for one
// call and 64 MiB for all calls at once, beyond which they are computed
// again, the same values). Coefficients.Adjusted (the report's
// coefficients_adjusted) counts the taps moved off plain rounding, both
// members of a symmetric pair.
//
// Per-stage widths do not by themselves make the chain meet its spec, so
// PlanChain checks the whole quantised chain with chain.Analyze when the
// widths are "auto" (Words.CoefBits zero): while its rejection falls short
// of spec.RejectionDB or its ripple exceeds spec.RippleDB, it adds one bit
// to the FIR stage whose rounding costs the most (the one whose float taps
// would lower the response at the worst alias the most, or with the largest
// relative rounding error of its amplitude over the passband) and plans
// again, up to the stage's width limit (QuantSettings.MaxBits) and 24 bits in
// all. Where the float chain itself misses the spec, its own figures are the
// target: no width can do better than the taps.
//
// # Data path
//
// Plan fixes every width from the input word, the coefficient width and the
// stage gain, and states each rounding point in StageWidths.Points:
//   - input: the ADC word, rounded to nearest and saturated (ADC);
//   - CIC: the register plan is chain.PruneCIC's (CICPruning is an alias of
//     chain.CICPruning): the chain package owns the rule, and the widths
//     here are the ones chain.CICStage.RegisterBits, report.json's
//     register_bits and package cost's CIC memory show. Hogenauer's (1981)
//     pruning; register j truncates (drops, floor) Dropped[j] LSBs at its
//     input and wraps modulo its width, which is exact for the output
//     because every register keeps the same MSB; the output keeps the top
//     OutputBits of the FullBits-bit result, so its gain is (RM)^N /
//     2^(FullBits - Bin) <= 1 (StageWidths.Gain);
//   - CIC, no wrap: FullBits is Bin + ceil(N log2 RM) (Hogenauer's Bmax + 1)
//     plus GuardBits, chosen so that no input within the input word can wrap
//     the output. Without truncations |output| <= (RM)^N 2^(Bin-1); each
//     floor at register j moves it by less than its largest error (2^B_j less
//     the LSB of the value it receives) times the L1 norm of the impulse
//     response from register j to the output, and the sum of those terms
//     (CICPruning.TruncationBound) must fit in 2^(FullBits-1) - (RM)^N
//     2^(Bin-1). When (RM)^N is a power of two that room is zero, so a pruned
//     CIC gets one guard bit and its gain halves (1/2 instead of 1); the
//     gain correction (Settings.UnityGain) can restore it. chain.PruneCIC
//     tries 0, 1 and 2 guard bits and otherwise prunes less (very narrow
//     output words);
//   - FIR and half-band: exact products and sum in an accumulator of
//     AccumulatorBits: the narrowest two's-complement width that holds the
//     largest and the smallest sum any input can make, the full-scale input
//     of each tap's sign and of the opposite sign (worst case); that is at
//     most Bin + floor(log2 sum|h_int|) + 1 bits, the symmetric bound
//     2^(Bin-1) sum|h_int|, and one bit less when the extremes allow. The
//     output is rounded half up at OutputShift and saturated. An
//     accumulator over MaxAccumulatorBits (63) is refused with an
//     AccumulatorError; the plan still goes through the other FIR and
//     half-band stages, and the error says by how many bits the first stage
//     (fed by the input word) and the later ones are over;
//   - gain: each stage's DC gain from input full scale to output full scale
//     (StageWidths.Gain, dc_gain_db) is a CIC's (RM)^N / 2^(FullBits - Bin)
//     or an FIR's sum of quantised taps; the chain's (Widths.DCGain) is their
//     product. Settings.UnityGain folds 1 / (the chain's DC gain before
//     correction) into the taps of the last FIR that is not a half-band,
//     before it is quantised, and scales that stage's bands (gains and
//     MaxError) by the same factor, so that the chain's DC gain is 1 within
//     the rounding of those taps while every band is held to the same
//     relative accuracy. A half-band keeps its centre 1/2 exact (a shift)
//     because it is corrected only when the chain has no other FIR: its zeros
//     then stay zero and its centre becomes an ordinary coefficient with a
//     multiply of its own. The factor is Widths.GainCorrection
//     (gain_correction);
//   - words between stages are Words.DataBits wide (default: the output width,
//     as the chain package prunes its CICs), the last stage's Words.OutputBits.
//
// # Bit-true run
//
// BitTrue runs the cascade in integer arithmetic and in float64 with the same
// structure and gains on a test signal (Signal: tones plus white Gaussian noise
// at a stated level), and on one tone at the quantised cascade's worst alias
// (chain.Analyze's: the chain package owns the response of a cascade).
// It reports SNR, ENOB, the DC offset of the truncations, the alias rejection
// measured bit-true after the transients, and the same figure from the
// frequency response at the tone, with a flag saying whether the
// quantisation noise in that bin is at least 20 dB below the alias.
//
// An integer chain's alias tone is at the worst alias itself, and its
// output is measured by a least-squares fit of a constant, a cosine and a
// sine at the tone's output frequency, which needs no whole number of
// cycles in the window. Moving the tone to whole cycles, as a projection
// needs, can take it out of its alias band when the worst alias sits at
// the band's edge (at D = 4096 with 512 output samples at 30 kHz: to
// 19980.47 Hz, beside a band from 20 kHz, where the chain rejects 1.8 dB
// less, a figure below the spec's target that says nothing about the
// band). And the window can start short: at a sixteenth of the SNR's
// window, no shorter than the transient, doubled until it holds eight
// cycles of the tone and of its distance to Nyquist; kept when the noise
// in the alias's bin is 40 dB below the alias (an RMS error of the figure
// under 0.1 dB), otherwise lengthened to the window that noise says it
// takes (3 dB a doubling), up to the SNR's; from the SNR's window on, four
// times longer while the noise masks the alias, up to 16 times the SNR's
// window and 2^22 input samples (the whole-cycle runs' rule too). On the
// D = 4096 spec of testdata/optimize/speed_compare.sh a plan takes 0.87 of
// the time the SNR-length alias windows took. A tone too near 0 Hz or
// Nyquist for eight cycles in the longest window moves to whole cycles of
// the SNR's window instead (wholeCycles, which keeps a tone inside the
// protected band when a bin fits in it); a tone so moved out of the band,
// which a band narrower than a bin leaves no other way, makes the run
// invalid (AliasValid false): its figure says nothing about the band. So
// does a figure better than the rounded taps' response at the tone
// (AliasResponseDB) by more than the noise in its bin and 0.1 dB of
// measurement slack explain: the data path's rounding, correlated with
// this tone at this level and phase, has partly cancelled the alias, and
// another tone could add it instead (seen 4 to 5 dB above the response).
//
// The run streams: the test signal is generated and both chains run a
// block of 2^15 input samples at a time, keeping only the filters' state
// and the measured output window, so its memory (a few MB) does not grow
// with the decimation or the window (the whole signal would take 277 MB
// for one chain at D = 65536). The run's length, and so its time, is
// bounded at 2^25 input samples (2^22 with the default window, which
// shrinks to as few as 256 output samples to stay within it).
//
// Chains evaluated on one signal (a plan's front: one input rate, input
// word, channel and window) may share an InputMemo (Settings.Inputs):
// the first run's input, its samples and ADC codes, is then generated and
// quantised once, up to 2^22 samples (64 MiB), and every run measures the
// same as it would alone, bit for bit (the input's sums, the clip count and
// the noise generator's state after the run are carried to the sample).
// The alias run's tone is each chain's own, so it makes its own input.
//
// The integer chain runs CIC registers of up to 63 bits in int64 and wider
// ones, up to MaxModelBits (127), in two's-complement 128-bit arithmetic
// with the same truncations and wraps; Model exposes it. A pruning whose
// registers all keep the full width's MSB and only drop bits (Hogenauer's,
// as chain.PruneCIC plans them) runs one integrator over 2048 input
// samples, then the next, unwrapped but for the last (see msbAligned): the
// same sums in the same order for every register as sample by sample, and
// the combs at the output samples only. Any other pruning runs sample by
// sample.
//
// PlanChainContext, BitTrueContext and EvaluateContext take a context,
// checked before the plan, before every measurement of the quantised chain
// and every bit the "auto" widths add, and between the bit-true run's
// blocks (milliseconds apart); once it is done they return an error
// wrapping ctx.Err(). PlanChain, BitTrue and Evaluate use
// context.Background().
//
// The default test signal is scaled to the input word: the tone is at
// -1 dBFS or lower, so that the tone plus four times the noise RMS (one LSB)
// stays within the largest code. A word too narrow for that (2 and 3 bits)
// is run at half its largest code and its SNR is marked: SNRValid is false
// and SNRNote says why, as it does when the input clipped more than one
// sample in a thousand or the DC offset is over ten times the RMS of the
// error the SNR measures. Every figure stays finite.
//
// A noise-shaped converter (Signal.Shaper, or Settings.Shaper, which
// Evaluate passes on; package sigmadelta's modulator) replaces the ADC: its
// encoder makes the input codes (a 1-bit input word is allowed then), both
// runs are fed through it, the test tone is its own (a -6 dBFS tone of the
// modulator, at 0.4 fp) with no added noise, and the SNR is taken in
// [0, fp] at the output from a Blackman-Harris periodogram of the error
// against the float chain, 8192 output samples by default (bitTrueShaped).
// PredictedSNRDB carries the converter's prediction for the rounded taps
// beside it. The converter's constant offset (half a code) does not
// invalidate the SNR.
//
// Evaluate returns an error only when the chain cannot be planned. When the
// bit-true run cannot be made (a CIC register over MaxModelBits, 127), the Result
// still carries the widths and the quantised chain's figures, and
// Result.BitTrueErr says why; Result.Report then gives the quantised
// figures, the DC gains and every stage's widths, with the bit-true figures
// zero and marked (bittrue_error set, bittrue_snr_valid and
// bittrue_alias_valid false, bittrue_snr_note saying why).
//
// # Headroom
//
// Evaluate adds a "headroom:" point to each stage (StageWidths.Points,
// report.json's rounding_points) whose output an input tone at the input
// word's largest code, in the channel's band [0, fa] (the protected edge,
// or the passband's), can drive past its own largest code less two LSBs
// (the rounding the bound leaves out): where, by how much, and how far
// below full scale the input must stay there. The figure is the stages'
// gain at 0 Hz up to that output times their responses on the rounded
// taps at the tone, summed in an interpolation chain over the tone and
// each image the stages up to it leave (the tone and its images can peak
// together; at 0 Hz an image's two lines meet and both count; past 4096
// images of a CIC, as at L = 1024000, the rest are bounded by the CIC's
// 1/x^N envelope and each earlier stage's absolute tap sum, and the
// figure is at most the bound at the CIC's input times its gain at 0 Hz,
// its taps being positive), maximised
// over the band on a grid of eight points to each ripple of those stages,
// every local maximum within 1% of the best refined by golden section. A
// stage whose input an earlier stage clips first at that tone gets no
// point: the earlier stage's says it. A cascade with a fractional stage
// gets none, and its bit-true tones are lowered by the gains at 0 Hz: the
// bound does not follow a fractional stage's paths (its images are not at
// multiples of the input rate, and its prototype may lift the band), where
// it read 14 dB high and 0.25 dB low. The data path saturates there as
// planned; the point says when it does. In an interpolation chain the compensator comes before the CIC
// whose droop it corrects and lifts the band's edge by up to that droop
// (16.9 dB for an order-7 CIC with M = 2 at 2.5 MS/s to a 1 MHz edge); with
// UnityGain the passband ripple lifts the last stage's output a little
// past full scale at the ripple's peaks. The points cover tones only: an
// input of another shape (a full-scale square wave or step, say) can drive
// a stage's output up to its path's L1 gain, the sum of the absolute
// values of the impulse response up to it, which the accumulators are
// sized for and the output words are not; such an output saturates.
//
// # Interpolation
//
// An interpolation chain (chain.Chain with Direction chain.Interpolate,
// which the chain package holds as its transpose, from the high rate down)
// becomes an interpolation cascade (Cascade.Interpolate, each
// Stage.Interpolate): FromChain lists its stages in signal order,
// c.SignalOrder(), the channel first, from InputRate = the channel rate,
// each raising the rate by its R. Widths.Stages follow the cascade; a
// stage's taps and bands are the transpose's, at its high (output) rate,
// so coefficient quantisation, MinCoefBits and PlanChain's "auto" widening
// against chain.Analyze work on them unchanged. Stage numbers in messages
// count in signal order. The data path is the interpolation contract: every
// package that models the chain (chain/fixed, handoff) implements exactly
// this:
//   - words: the first stage takes Words.InputBits, the words between
//     stages are Words.DataBits wide (default the output width), the last
//     stage delivers Words.OutputBits; a CIC's output is narrower when its
//     last integrator is;
//   - FIR and half-band interpolator by L: the input zero-stuffed by L (each
//     sample, then L-1 zeros) and filtered by the integer taps, y[m] = sum_j
//     h_int[j] u[m - j]; equivalently the L polyphase phases, y[nL + p] =
//     sum_k h_int[p + Lk] x[n - k], inputs before the first zero. Products
//     and sums are exact in an accumulator of the widest phase's
//     AccumulatorBits. Each phase's DC gain is about 1/L, so the output is
//     the sum times 2^floor(log2 L) / 2^Frac in the output word's units:
//     rounded half up at OutputShift, the decimating FIR's shift less
//     floor(log2 L) (a left shift when negative), and saturated. Its gain
//     is 2^floor(log2 L) sum(h_int) / 2^Frac / L: 1 within the taps'
//     rounding for L a power of two, in (1/2, 1] otherwise. A half-band's
//     centre phase passes the input exactly (a shift);
//   - CIC interpolator (order N, delay M, factor R): N combs at the input
//     rate, c_j[n] = c_(j-1)[n] - c_(j-1)[n-M], the rate raised by R (each
//     comb output, then R-1 zeros), N integrators at the output rate; every
//     register unpruned at Hogenauer's interpolator width (CICInterpolation:
//     combs then integrators, chain.InterpolatorCICBits), wrapping in two's
//     complement at it (never, by construction); the output keeps the top
//     OutputBits of the last integrator's W_2N bits, truncated (floor). Its
//     gain is (RM)^N / R / 2^(W_2N - Bin) <= 1. Registers up to 63 bits run
//     in int64, wider ones up to MaxModelBits in 128-bit arithmetic;
//   - the chain's output sample m, at the high rate, starts from zero
//     state; every stage gives R outputs per input sample, the first with
//     its first input, and the chain adds no delay;
//   - Settings.UnityGain corrects the stage the transpose would: the first
//     FIR that is not a half-band in signal order, the one that corrects
//     the CIC droop (chain.Compensator), else the first half-band. The
//     correction then comes before the stages whose gain it makes up for:
//     when a later stage loses gain (a CIC whose (RM)^N / R is not a power
//     of two, an FIR whose L is not), the corrected stage's output carries
//     a gain above 1, and an input above 1 / that gain of full scale
//     saturates there. The bit-true run lowers its default tones by that
//     gain (see below).
//
// The float chain has the same structure and gains: an FIR's float taps
// times 2^floor(log2 L), a CIC as its equivalent filter (N boxcars of RM
// ones) times 2^-(W_2N - Bin), both on the zero-stuffed input.
//
// The bit-true run of an interpolation cascade puts the test signal at the
// input (channel) rate and measures the output at the high rate, over a
// window of whole input samples (2048 by default, halved down to 256 while
// the run would need more than 4 Mi output samples; at most 32 Mi), so
// that every image k F_in +- f of a tone also makes whole cycles in it. It
// measures as it streams (running sums), so its memory does not grow with
// the interpolation or the window. The SNR leaves out the error's mean and
// its component at each tone and at every image of it (the coefficients'
// passband and image gain errors, judged on the quantised response). The
// default tones are also lowered by the largest gain from the input to a
// stage's output at the tone's frequency when it is above 1 (gainModel.at:
// the stages' gains at 0 Hz times their shape at the tone, summed over the
// tone and every image the stages up to that output leave in it, since a
// compensator before its CIC lifts the passband by up to the CIC's droop
// and a stage that leaves images to the CIC after it lets them add to the
// tone's peak), the image test's tone likewise at its own frequency (near
// the band's edge, where a compensator lifts most), and a stage before the
// last that saturates more than one output in a thousand makes the SNR
// invalid (SNRNote names it). The alias test becomes an image test: g is
// the quantised cascade's worst image (chain.Analyze's WorstAliasHz, at
// the output rate) or Signal.AliasHz, and the input tone is at f, g folded into
// [0, F_in/2] (moved to whole cycles, g with it); the output is measured at
// g and at f by projection after the transients, and the bit-true image
// rejection is 20 log10(A(f) / A(g)), the response's H(f) / H(g) beside it.
// In BitTrueResult and report.json's alias fields (the names stay):
// AliasHz (bittrue_alias_hz) is g, AliasOutHz is f, AliasRejectionDB
// (bittrue_alias_rejection_db) the bit-true image rejection,
// AliasResponseDB (quantised_alias_response_db) the response's at f and g,
// WorstAliasResponseDB and Result.Quantised.AliasRejectionDB
// (quantised_alias_rejection_db) chain.Analyze's image rejection relative
// to DC, and AliasValid (bittrue_alias_valid) says the noise in g's bin is
// 20 dB below the image and the bit-true figure no better than the
// response's by more than that noise explains (as for an alias).
//
// # Fractional stages
//
// A decimation chain that ends in a fractional stage (chain.PolyphaseStage
// or chain.FarrowStage, L = Up, M = Down) gets word lengths, the bit-true
// run and the quantised analysis as any other; an interpolation chain
// that begins with one gets them too, for its transpose (Interpolation,
// below); so does a chain whose polyphase stage follows its CIC (chain
// package, After the CIC; an interpolation chain's then comes just before
// its CIC), whose stages run as a stream like any other's (the polyphase
// stage's outputs feed the FIRs after it) and whose bit-true transient
// counts each stage's span at its own rate, Down/Up input samples per
// sample after the polyphase stage. The stage's Stage has
// R = 1, Up and Down set, and Bands: its (equivalent) prototype's, at
// L Fm (Fm its input rate): chain.FractionalRequirement.Bands, as the
// chain package designs the polyphase prototype (unit gain within Dp on
// [0, fp] and chain.PolyphaseBands within Ds; after the CIC, the CIC's
// compensation held flat to fa, and the transition held to unit gain).
// Its rules:
//   - polyphase L/M: the coefficients are the prototype times L (the data
//     path's gain L in the taps), quantised as an FIR's (Quantize: one
//     width and scale for the stage; "auto" by MinCoefBits on the bands
//     scaled by L, its search started from an estimate of the width near
//     the answer, since every width of a long prototype is dear to try,
//     and stepped down while the next narrower width meets; PlanChain's
//     whole-chain check widens it as an FIR's, the rounding's cost judged
//     on the worst alias's path). Output m, at input sample
//     b = floor(m M / L) of phase r = m M mod L, is sum_s h[r + L s]
//     x[b - s] (inputs before the first zero), exact, in an accumulator of
//     the FIR rule's width taken over every phase (the widest phase's
//     AccumulatorBits), rounded half up at OutputShift = Frac + Bin - Bout
//     and saturated. It is made as soon as input b arrives: ceil(n L / M)
//     outputs for n inputs, as chain.Resample counts them. Each phase's DC
//     gain is its sum of quantised taps over 2^Frac; they differ, so
//     StageWidths.Gain (dc_gain_db) is their mean (the path k = 0's gain at
//     0 Hz, the analysis's) and PhaseGainMin/Max their range. The
//     accumulator holds every phase's worst case, so no DC gain above the
//     mean can overflow it; the output saturates as an FIR's does. Cost:
//     ceil(N/L) multiplies per output, no pre-adder, half the coefficients
//     stored (the prototype's symmetry pairs phase r with phase
//     (N-1-r) mod L read backwards), ceil(N/L) input words of data;
//   - Farrow (P+1 rows c_p of N taps, farrow.Convention): the whole matrix
//     is quantised at one width and one scale 2^-Frac (Quantize on its
//     rows one after the other), so that the branches add in Horner's rule
//     in one unit with no alignment shifts; a scale per row would save a
//     bit or two in the smaller rows at the cost of a shifter per branch.
//     "auto" takes the narrowest width at which the quantised stage's
//     prototype (below) meets the bands. Output m is at time m M / L input
//     samples; mu is an unsigned word of MuBits (Settings.MuBits, else the
//     coefficient width, at least ceil(log2 L), at most 32): for phase
//     k = m mod L, r = k M mod L, mu_q = round(r 2^MuBits / L) (halves up)
//     / 2^MuBits, exact when L is a power of two not above 2^MuBits; when
//     it rounds to 1 the time moves to the next input sample with mu 0.
//     With b the input sample of the (rounded) time, branch p is
//     v_p = sum_n c_p[n] x[b - N/2 + 1 + n], exact, in an accumulator of
//     the FIR rule's width (the widest row's AccumulatorBits); the output
//     is made once input b + N/2 arrives (the hardware's N/2 samples of
//     delay). Horner's rule from the top row: acc = v_P, then
//     acc = round(acc mu_int / 2^MuBits) + v_p (halves up) for
//     p = P-1 .. 0: each product rounded to the branch sums' LSB, the
//     guard bits below the output's LSB being OutputShift (Frac + Bin -
//     Bout). The Horner register (HornerBits) holds the sum over the rows
//     of each row's largest |v_p| (mu < 1 and a product so rounded is at
//     most its operand in magnitude). When that register times the mu
//     word would pass 63 bits, the branch sums are first rounded half up
//     to drop HornerDrop LSBs (then at least two guard bits must remain).
//     The output is acc rounded half up at OutputShift - HornerDrop and
//     saturated. Gain and phase gains as the polyphase stage's, phase r's
//     DC gain being sum_p (sum_n c_p[n]) mu_q(r)^p / 2^Frac. Cost:
//     (P+1) N + P multiplies per output (farrow.Cost), the branch
//     products Bin x coefficient bits, every coefficient stored, N input
//     words of data.
//
// The quantised stage's response. At its rounded output times the Farrow
// stage is exactly an L-phase polyphase L/M filter whose prototype is
// p[j] = h_q(floor(j/L) - 1 - N/2 + mu_q(j mod L)) / L, h_q its impulse
// response with the integer rows (one input sample of delay, so that a
// phase whose mu rounds to 1 has its taps; a delay changes no gain);
// with exact mu it is chain.FarrowPrototype's. QuantisedChain (and the
// bit-true run's analysis) therefore holds the fractional stage as a
// chain.PolyphaseStage of the quantised prototype: a polyphase stage's
// integer taps over 2^Frac L, a Farrow stage's p above. chain.Analyze
// measures that never optimistically; the Horner roundings are not a
// response but noise, which the bit-true SNR measures (the float chain
// runs the unrounded rows at the exact times, so the error also holds
// mu's rounding).
//
// The bit-true run of such a chain runs num/den = D M / L input samples
// per output (D the integer stages' decimation), its window rounded up to
// a multiple of L output samples: every path k Fm of a tone on the
// window's grid then lands on the grid too, so the projections over the
// window are exact with no taper. The alias test tone is at the
// quantised chain's worst alias on its path (chain.Analysis.WorstPath,
// or the path of Signal.AliasHz with the largest gain into [0, fa],
// chain.PathGains), moved so that its output lands on a bin of the
// window (as above, its projection needs whole cycles); the other
// paths of the tone are removed from the window (least squares, each on
// its own bin) before the noise in the alias's bin is measured. When two
// paths of the tone land in the alias's bin (a real tone's paths to +y
// and -y, at multiples of Fm / (2 M)) what comes out depends on the
// tone's phase: the run is made twice, a quarter cycle apart, which
// separates the two paths' complex amplitudes c1 and c2, and the bit-true
// figure is the worst phase's, |c1| + |c2| (up to 6 dB above one path);
// AliasResponseDB is then the two paths' sum too, as chain.Analyze's
// figure is. A
// noise-shaped input (Signal.Shaper) is refused. Model and RunCodes run
// the fractional stage too.
//
// In an interpolation chain the fractional stage comes first in signal
// order and is the transpose of the chain's L/M stage: it raises the rate
// by M/L. Its Stage has Up = M and Down = L (its own rate change; the
// bands stay the prototype's at L Fm). Its rules, which every model of it
// implements exactly:
//   - polyphase: chain.Run's transpose, the M/L resampler of the same
//     prototype (chain.Resample up M, down L): the rules above with L and
//     M swapped, the coefficients the prototype times M. Priced as the
//     transpose, as package cost prices it: ceil(N/L) multiplies per input
//     sample into as many partial sums (its data memory);
//   - Farrow: the coefficient matrix times M/L (the transpose's gain),
//     quantised as above, MuBits as above. Input m sits at m M / L output
//     samples, rounded as the decimation stage's output m is (b whole
//     samples, mu_q; mu rounding to 1 moves it to b + 1 with mu 0). Its
//     mu products are w_0 = x 2^G and w_p = round(w_(p-1) mu_int /
//     2^MuBits) (halves up), G = max(2, Bout - Bin + 4) (HornerGuard): four
//     bits below the output's LSB (our choice). Output k = b - N/2 + 1 + n
//     (n = 0..N-1) gains sum_p c_p[n] w_p, exact; an output is final once
//     no later input reaches it (inputs m with floor(m M / L) - N/2 + 1 >
//     k); its sum, in an accumulator sized for the worst case of each of
//     the M output phases (each product's extreme over the input word,
//     w_p being monotone in the input), is rounded half up at OutputShift =
//     Frac + G + Bin - Bout and saturated. HornerBits is the mu products'
//     register, Bin + G. Each output phase's DC gain (PhaseGainMin/Max, the
//     mean Gain) is its sum of c_p[n] mu_q^p over 2^Frac: its inputs are
//     sparser than its outputs, so these differ widely (the images the
//     later stages remove), and an input above 1 / PhaseGainMax of full
//     scale saturates the highest phase (a rounding point says so). Cost:
//     (P+1) N + P multiplies per input sample, N partial sums of data.
//
// The quantised stage, with the mu products exact, is the transpose of the
// decimation structure of the same rows and mu, so QuantisedChain holds it
// as a chain.PolyphaseStage of that structure's prototype reversed in time
// (a delay changes no gain; chain.Analyze takes an interpolation chain's
// paths from the transpose's), over M/L. The bit-true run puts the test
// tones at the channel rate; the output repeats its phases every P = R M
// output samples, L input samples (R the integer stages' interpolation),
// and every image of a tone at f lies at +-f + j F_in / L: its window spans
// a multiple of 2L input samples (at least 32 L), the SNR leaves out each
// tone's family (the signals Re(c_(j mod P) e^(i 2 pi f j / F_out)), which
// span exactly those frequencies), and the noise it removed with them is
// made up for by taking the noise per dimension left. The image test's
// tone is at y, where the quantised chain's worst image g (chain.Analysis'
// WorstAliasHz through WorstPath, in the decimation view) comes from,
// moved to the window's grid with g; where two paths of the real tone
// meet at g (at multiples of F_in / (2 L)) it is run twice a quarter cycle
// apart and the worst phase's figure taken, as the decimation run does.
// The default tones are lowered by the largest DC gain of any phase.
//
// # Cost
//
// Data memory: an FIR stores its taps' count of input words; a CIC one word
// per integrator and M words per comb (a comb of differential delay M,
// y[n] = x[n] - x[n-M], stores its M past inputs), each as wide as its
// register.
//
// Per stage: the multiplier size a x b bits (data x coefficient, data + 1 bits
// after the pre-adder when symmetry is folded), multiplies per output sample of
// that stage, coefficient and data memory in bits, and, given a native
// multiplier size and a clock, the hardware multipliers
// ceil(multiplies per second / clock) x native blocks per product
// (NativeMultipliers). A complex (I/Q) chain doubles data memory and
// multiplies, not coefficient memory. An interpolating FIR's figures are
// the transpose's, as package cost prices an interpolation chain: its
// multiplies per input sample (its low rate), each input sample multiplied
// once by every distinct coefficient (a symmetric pair's product serves
// both taps, so no pre-adder widens the data operand), its data memory its
// taps' count of input words; a CIC interpolator's memory M words per comb
// and one per integrator, each as wide as its register.
//
// # Zero values
//
// Words, Settings, QuantSettings and Signal are plain structs whose zero
// values are the documented defaults: 16-bit input, 24-bit output, data words
// as wide as the output, coefficient widths "auto" (the narrowest that meets
// the bands), symmetry folded, no gain correction, no hardware multiplier
// figures, one -1 dBFS tone at 0.4 fp (lower for a narrow input word) with
// one input LSB of noise, 2048 output samples measured.
package fixed
