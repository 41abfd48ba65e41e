// Package chain describes decimation and interpolation chains (CIC,
// half-band and FIR stages),
// derives each stage's requirements from the user's spec, designs or
// estimates the stages, and measures the truth of the cascade in the
// frequency domain (Analyze) and the time domain (Run).
//
// # Conventions
//
// Rates and frequencies are in Hz. Attenuation and rejection are positive
// dB; passband ripple is peak-to-peak dB, ripple_db = 20 log10((1+dp)/(1-dp)),
// rejection_db = -20 log10(ds) (docs/design.md §2). F0 is the input rate, Fi the
// output rate of stage i, FK the final output rate, D = F0/FK an integer.
// Every dB figure is bounded by MaxFigureDB so that exact nulls never become
// infinities; no result is ever NaN.
//
// # Stage kinds
//
// The set of stage kinds is closed, and Kinds (the list kinds in chain.go)
// is the one place that lists it: CIC, a CICStage; HalfBand and FIR, both
// FIRStages, told apart by FIRStage.HalfBand. Stage has an unexported
// method, so only this package's types implement it, and Chain.Stages holds
// their values. The code that switches on a stage's type has a case for
// each and, for anything else, an error naming the stage: Analyze (its
// bounds and its estimate), package fixed (FromChain), package cost and
// package plots/report; Run, which returns no error, and fixed's
// QuantisedChain panic instead. A kind added later (a resampler, an
// interpolator) goes into that list with a type of its own implementing
// Stage (a flag on FIRStage, as HalfBand is, would reach those switches'
// FIR cases unnoticed), then into those switches and the plan's switches on
// StagePlan.Kind (Kind.String, Notation, ParseNotation, Requirements,
// Design), and into the spec file's search.kinds and the optimiser (its
// Settings.Kinds check, enumeration and estimates). The tests of this
// package, fixed, cost and plots/report run a stage of every kind in Kinds
// through that code and fail when the invented plans they use no longer
// cover the list.
//
// # Spec
//
// Spec.Normalize fills defaults (Protected = Passband, Stopband = FK - fa,
// InputBits 16, OutputBits 24, CoefBits 0 = floating) and refuses, with a
// *SpecError naming field, value and rule: rates that are not finite and
// positive, an InputRate above MaxRateHz (1e30 Hz) or an OutputRate below
// MinRateHz (1e-30 Hz), where float64 arithmetic no longer carries every
// figure (2 pi f overflows near 1e308 Hz; the cascade analysis went wrong
// beyond about 1e60 Hz and below 1e-60 Hz); an interpolation ratio that
// is not an integer within 1e-9 (the error gives the two nearest integer
// ratios and their output rates), an integer ratio below 2, a decimation
// ratio that is no fraction within the ratio tolerance (see Fractional
// stages), a RatioTolerancePPM outside [0, 1000];
// fp outside (0, FK/2); fa outside [fp, FK/2]; fs outside (fp, FK - fa];
// ripple not above 0; rejection outside (0, 150] dB; word lengths outside
// 2..64 when set (InputBits may be 1 with NoiseShaped: a sigma-delta
// modulator's codes, package sigmadelta, which also derives the
// RejectionMask; NoiseShaped is refused on an interpolation spec).
//
// # Stage requirements (docs/design.md §4)
//
// Requirements turns spec and plan into one Requirement per stage, on the
// stage's own input axis:
//
//   - Multiband FIR: stopbands [k Fi - fa, k Fi + fa], k = 1..floor(Di/2),
//     clipped to [0, F(i-1)/2] and merged where they touch; the rest is
//     don't-care, however narrow the gap between two bands: the engine
//     designs with such slivers, and closing them would buy nothing, since
//     the gap folds outside [0, fa], later stages remove it, and a filter
//     that cannot use it pays nothing for leaving it free (in 265 invented
//     designs with fa between 0.45 and 0.5 FK, 71 had such gaps; closing
//     them gave the same lengths in 70 and one tap more in one). As the
//     last stage the first band starts at fs (which
//     Normalize keeps <= FK - fa, so this is min(fs, FK - fa)): the
//     output is then also a lowpass at fs on the final stage's own axis.
//   - Lowpass FIR: one stopband [Fi - fa, F(i-1)/2]; as the last stage
//     [fs, F(i-1)/2]. With fa = FK - fs this is Crochiere and Rabiner's
//     (1975) rule "stage i's stopband starts at Fi - fs".
//   - Half-band (Di = 2 only): edges symmetric about F(i-1)/4. Its passband
//     edge is p = max(fp, fa) (its stopband [F(i-1)/2 - p, F(i-1)/2] must
//     cover the alias band [Fi - fa, Fi]); as the last stage p = max(fp,
//     FK - fs) so that its stopband starts at fs. It is feasible when p <
//     Fi/2. A last half-band is not limited to fs >= FK - fp (the case
//     p = fp): a wider p is accepted too, which keeps the passband flat
//     further out and meets the same bands.
//   - CIC: no design; its rejection is read on the same alias bands, its droop
//     must be corrected by a later FIR stage. A CIC may stand anywhere in a
//     plan (first is the usual place). Its registers are planned by
//     PruneCIC for an output as wide as spec.OutputBits (NewCICStage, see
//     CIC registers below); its input is spec.InputBits wide when it is
//     first, spec.OutputBits wide after another stage.
//
// Ripple budget: the CIC droop that no later stage corrects, -20 log10
// |H_cic(fp)| (the passband lies in the CIC's main lobe, where it falls
// monotonically; a plan whose CIC has a null inside [0, fp] is refused), is
// taken off the budget first; what is left is split, in dB, among the
// FIR and half-band stages (equally under the stage-alone rule; see
// Cascade requirements for the default), and each share is turned into dp_i by inverting
// ripple_db = 20 log10((1+dp)/(1-dp)). Equal dB shares add up to the budget
// because a cascade's max/min ratio is at most the product of its stages'.
// The compensating stage is the last FIR (not half-band) stage after the
// first CIC; it corrects every CIC before it, with desired gain 1/prod|H_cic|
// on [0, fp] and error weight prod|H_cic|/dp_i (against its stopbands'
// 1/ds), so its error is relative
// (|A H_cic - 1| <= dp_i): its leftover droop is inside its own share.
// Under the stage-alone rule (Settings.StageAlone) every stage meets the
// full rejection target on its own bands; a half-band is designed for
// min(dp_i, ds_i) on both bands. The default is the cascade rule below.
//
// # Cascade requirements
//
// Under the cascade rule (the zero value of Settings.StageAlone) Design
// credits a FIR stage with what the stages before it, already designed,
// remove. An input g in stage i's alias bands reaches the output through
// the earlier stages too, at their own rates; stage i sees every
// g = m F(i-1) +- x, 0 <= g <= F0/2, at the same x on its input axis. Its
// absolute limit becomes
//
//	ds_i(x) = min(MaxCreditedLimit, Ds'_i / c_i(x) * l_i(x))
//	c_i(x)  = max over those g of prod_{j<i} |H_j(g)| / |H_j(0)|
//	Ds'_i   = ds (1 - dp_i) prod_{j>i} (1 - dp_j)/(1 + dp_j)
//
// where the earlier stages' passband factors of StopbandScale are replaced
// by their real responses in c_i, and the later stages' are kept. l_i(x),
// 1 unless a compensator comes later, is prod |H_cic(min(x', fp))| over the
// CICs it corrects, x' being x folded at stage i's output: an alias that
// stage i lets through lands at x' in [0, fa], where the compensator lifts
// it by up to 1/|H_cic|. The cap MaxCreditedLimit (0.5, -6 dB) keeps every
// stage a filter on its own bands however much the earlier stages remove.
// The design engine takes the limit as a stopband weight 1/ds_i(x) against
// a MaxError of 1 (Requirement.Bands, StopbandLimitFunc). c_i is an upper
// bound, never below the truth: it is tabulated on 256 to 8192 cells of
// [0, F(i-1)/2] (32 cells to the finest feature of the earlier stages),
// each cell's value a rigorous bound over the whole cell from the stages'
// bounders (bound.go), a node taking the larger of its two cells, and
// interpolated linearly between nodes. Only earlier stages are credited,
// and they are designed first, so no iteration is needed. The credit
// lives in the requirement (its table built on first use), so package
// fixed's check of rounded taps holds each stage to the same limits, and
// StageMemo keys a stage on the earlier stages as designed. A cell's bound
// depends only on the earlier stages and the cell, so the chains designed
// through one StageMemo share the cells and bounders of equal earlier
// stages: the same values, computed once.
//
// The compensator gets one band more: its transition (fp, fa], where the
// CICs' own aliases land (g = m F(i-1) +- x, m >= 1) and where it lifts
// them, is bounded by the CICs' limit over the earlier stages' gain at
// those aliases (at most 60 dB above the passband; 0.1 % of the band left
// free at each end). When even the aliases landing just above fp ask for
// less than the passband's own gain there, no compensator can help, the
// band is left out and Analyze reports the shortfall. This closes, under
// the cascade rule, the known gap of the CIC's own bands (Stopband limits).
//
// Half-bands keep the stage-alone rule's flat limit: the single-band
// design (remez.MinHalfBand) takes no weight function. The ripple budget
// left after the uncorrected droop is split where it buys most: a
// half-band gets the ripple of the target's ds, DevToRipple(ds) (it is
// designed for min(dp, ds), so more buys it nothing), or the equal share
// when that is less; the rest goes to the FIR stages, equally or with one
// FIR given 1/2, 3/4 or 9/10 of it, whichever split's Herrmann-Rabiner-Chan
// estimates (unrounded, at the flat limits the split gives) cost the
// fewest multiplies per output, the equal split on a tie. The shares add
// up to the budget, so the ripple bound holds as before. Estimate, and the
// optimiser's estimate tier, keep the stage-alone rule's limits: a safe
// over-estimate of the cascade rule's lengths.
//
// Analyze remains the judge. In TestCascadeRuleMeets (80 seeded invented
// chains: CIC > FIR, CIC > hb > FIR, CIC > FIR > FIR, FIR > FIR,
// FIR > hb > FIR) the cascade rule meets the target on Analyze in 76, the
// stage-alone rule in 74, and the cascade chains have 4 % fewer taps times
// rate; eight are checked against the brute-force reference.
//
// # Stopband limits
//
// docs/design.md §7 measures rejection relative to the whole cascade's gain at 0 Hz,
// |H(0)| = prod_j |H_j(0)|, and each ripple-bearing stage (FIR, half-band,
// the compensator counted with the CICs it corrects) may sit anywhere in
// [1 - dp_j, 1 + dp_j] there. An input g in one of stage i's alias bands
// reaches the output through the other stages too: the later ones see it
// already folded into [0, fa], in their passband, where their gain may be up
// to 1 + dp_j; the earlier ones see it in their transition or don't-care
// region, below their passband edge's gain for a lowpass or half-band, and
// through the CIC's main lobe or sidelobes, which never exceed the CIC's gain
// at the folded frequency that its compensator corrects. So the worst ratio is
//
//	|H_i(g)| prod_{j != i} (1 + dp_j) / prod_j (1 - dp_j)
//
// and stage i is designed to the absolute limit
//
//	ds_i = ds prod_j (1 - dp_j) / prod_{j != i} (1 + dp_j)
//
// (Requirement.StopbandScale; the stage-alone rule, and the cascade rule's
// starting point). Its own factor is 1 - dp_i, not
// (1 - dp_i)/(1 + dp_i): its gain at g is ds_i itself. Dividing by its own
// 1 - dp_i alone (ds (1 - dp_i)) is not enough when other stages' passband
// gains can lift the alias; prod_j (1 - dp_j) alone covers the denominator
// but not a later stage's 1 + dp_j at the folded frequency. The price is
// small: the limit drops by about the ripple budget in dB (0.75 dB for two
// 0.5 dB shares, 0.05 dB for one 0.1 dB stage), about 1 % of the taps at
// 70 dB; in exchange a chain with nothing to spare measures at or above the
// target without a re-design (fir101 at 90 dB: 89.957 dB before, 90.012 dB
// now). Not covered by the bound: a multiband stage's don't-care gain above
// 1 + dp_j and a later stage's transition gain on (fp, fa]; Analyze remains
// the judge. A CIC is not designed: its Ds is informational and its
// rejection is read on its bands as it is, in absolute terms. Known gap: the
// compensator lifts an alias that lands at x in [0, fp] by about
// 1/|H_cic(x)|, so a chain whose worst band is the CIC's own measures below
// the CIC's figure (in 60 invented CIC > FIR chains with the target set at
// the CIC's own rejection, by up to 1.45 dB); reading a compensated CIC's
// rejection relative to its gain at the folded frequency would close it.
//
// # CIC registers
//
// PruneCIC (cicprune.go) owns the CIC register rule for the whole module:
// Hogenauer's (1981) pruning (register j drops B_j LSBs, chosen from its
// variance factor F_j^2 so that the 2N truncations add no more noise than
// the output's own), widened so that no input within the input word can
// wrap the output. Every register keeps the MSB of the full width; the
// output is right when (RM)^N 2^(Bin-1) plus the truncations' worst error
// (TruncationBound: each register's largest floor error times the L1 norm
// of its impulse response to the output) fits below 2^(FullBits-1). When it
// does not at Hogenauer's width Bin + ceil(N log2 RM), PruneCIC adds up to
// two guard bits (GuardBits; always one when (RM)^N is a power of two and
// something is pruned), and failing that prunes less. NewCICStage fills
// CICStage.RegisterBits, GuardBits and OutputBits from it, so report.json's
// register_bits, package cost's CIC memory, the optimiser's estimates and
// package fixed's data-path plan and bit-true run use the same widths.
// HogenauerPruning gives his plan alone, unguarded, for comparison.
//
// # Estimates and designs (docs/design.md §6)
//
// Estimate sizes FIR stages by remez.HerrmannLength(dp_i, ds_i, first
// stopband edge - passband edge, F(i-1)) and half-bands by the same formula
// for min(dp_i, ds_i) rounded up to a length 4K-1, the same limits Design
// uses. The estimated Analysis of such a chain is the least of its stages'
// relative rejections (Ds/StopbandScale: the target for each FIR, the CIC's
// computed exactly on its alias bands) and the sum of the ripple shares plus
// the uncorrected droop. Design uses remez.MinLength (type I or II, whichever
// is shorter) and remez.MinHalfBand, so every length is searched until the
// stage meets its bands on its real response. A design the engine refuses is
// not retried: the engine gives every band at least 16 grid points and
// MinHalfBand skips the k it cannot design, so the denser grids (4, 16 and
// 64 times) that short filters on very narrow bands once needed were never
// called on in the chain tests, the optimiser's and command's tests, the
// seeded sweep of designed chains (TestDesignedChainSweep, 138 chains) or
// a wider one (524 chains, D from 2 to 4096, primes 101 and 13 among them,
// Settings.MaxTaps 4095) whose only failures were three single-stage
// designs that need more than 4095 taps. Settings.MaxTaps bounds
// remez.MinLength's search, so such a design fails after the lengths up to
// the bound instead of running on to 65535 taps; half-bands, short and
// cheap, are checked against it once designed. Estimates are not bounded.
// DesignContext is Design stopped by a context: checked before every stage
// and inside every design (remez.MinLengthContext), it returns soon after
// cancellation (about 100 ms) with no chain and an error wrapping
// ctx.Err().
//
// # Analysis (docs/design.md §7)
//
// Analyze measures alias rejection and passband ripple as docs/design.md §7 defines
// them, and certifies both: a figure it returns is never on the optimistic
// side of the true response of the taps it was given.
//
// It works by branch and bound on rigorous bounds (bound.go). Each stage
// bounds its own |H| over any interval of input frequencies: a CIC from its
// closed form (the extremes of sine over an interval are known, and within
// the main lobe the response is monotone); a FIR from a Taylor expansion
// whose derivatives come from FFT grids at 16 points per tap (and, below a
// grid step, from direct sums at the interval's midpoint), with the
// remainder bounded by sum |h_n| |n - c|^6 and an explicit allowance for
// rounding. The cascade's bound over an interval is the product of its
// stages' bounds. The search keeps the alias bands (or the passband) as
// intervals ordered by bound, splits the one with the highest bound at its
// midpoint, where the direct response is evaluated, and stops when no
// interval's bound exceeds the best evaluated gain by more than 0.002 dB
// (1e-5 dB for the passband's maximum and minimum). Only evaluated gains
// become the running best and only rigorous bounds prune, so no band is
// skipped on an interpolated value, however narrow it is next to a grid
// step. The reported rejection is taken at the final upper bound and the
// ripple from the upper bound of the passband's maximum over the lower bound
// of its minimum: pessimistic by at most those tolerances, never
// optimistic. WorstAliasHz is where the largest alias gain was evaluated.
// When the search's step budget (2^18 splits per figure) runs out, or it
// holds 2^20 intervals at once (about 50 MB: at D = 2^30, whose 1 Hz
// output has 536 870 912 alias bands, taking them out of their groups one
// by one held 6 million), the figure is the bound reached: still safe,
// less tight.
//
// TestAnalyzeCertified holds both figures to a brute-force reference that
// shares no code with Analyze (exact DFT grids of every stage plus golden-
// section refinement on direct sums) on seeded random designed chains, half
// with rounded taps: never optimistic, at most 0.01 dB pessimistic (0.05 dB
// for figures beyond 200 dB, where the stages' own rounding is within 100 dB
// of the figure). 60 chains by default, 500 with STEPDOWN_LONG=1.
//
// # Time domain
//
// Run and RunComplex run the real chain on a signal: polyphase FIR
// decimators in float64, CICs as integrators and combs in wrapping integer
// arithmetic (see Run for why), so tests can check the frequency analysis
// against what the structure actually computes. An interpolation chain runs
// in signal order as polyphase FIR interpolators (each phase a short filter
// over the input history, the taps times L) and CIC interpolators (combs,
// zeros, integrators), checked against SciPy's upfirdn
// (testdata/interp/gen_upfirdn.py). TestInterpolationAnalyzeBruteForce holds
// Analyze's image rejection and ripple to the impulse response of the real
// interpolating structure (never optimistic, within 0.01 dB) on 150 random
// designed interpolation chains (1000 with STEPDOWN_LONG=1).
//
// # Rejection mask
//
// Spec.RejectionMask replaces the flat target with a Mask over the input
// band: the alias of input frequency g landing in [0, fa] must lie at least
// mask(g) below the gain at 0 Hz, mask(g) linear in dB between its points,
// flat beyond its ends, the larger side at a step. Normalize sets
// RejectionDB to the mask's largest rejection R. Analyze then runs the
// certified search on the weighted gain |H(g)| 10^((mask(g) - R)/20) (its
// bound over an interval is the gain's bound times the weight's largest
// value there, at the interval's ends or the mask's points inside), so
// AliasRejectionDB is R plus the worst margin over the mask and
// WorstAliasHz where it lies; Meets and every margin over the target read
// as with a flat target. TestAnalyzeMask holds it to a brute-force
// reference on random chains and masks. Designs follow the mask under the
// cascade rule (Cascade requirements): every FIR stage's stopband limit
// at x is the least, over the input frequencies g it sees at x, of the
// mask's limit 10^(-mask(g)/20) (times the passband factors) over the
// earlier stages' gain at g, the first FIR included; a half-band, a CIC's
// estimate and the stage-alone rule keep the flat R, the mask's largest
// rejection (the safe side). TestAnalyzeMask also checks that a chain
// designed to the mask meets it wherever the same plan designed to the
// flat R meets R, with no more taps.
//
// # Interpolation
//
// A Spec whose OutputRate is L times its InputRate is an interpolation
// spec (Direction Interpolate): the chain takes the channel's samples up to
// a DAC's rate. Its band edges are on the channel side, the input: [0, fp]
// flat within the ripple, and the images of [0, fa] at k F_in +- fa,
// k >= 1, up to F_out/2, attenuated by the rejection target relative to the
// gain at 0 Hz (the image rejection); fs, at most F_in - fa, is where the
// output's attenuation begins.
//
// An interpolation chain is the transpose of a decimation chain: the same
// filters at the same rates in the opposite order (a FIR interpolating by L
// is zero stuffing followed by its filter at the high rate, the transpose
// of the filter followed by keeping one sample in L; a CIC interpolator's
// combs, zeros and integrators are the transpose of the decimator's
// integrators, rate change and combs). Input frequency g at the high rate
// passes the decimator with gain prod_i |H_i(g)|; the interpolator's output
// at g, the image of the channel frequency g folded into [0, F_in/2], is
// the same product. One input differs: a real chain's DC input (a
// transmitter's baseband offset) is one real component, not the two
// halves of a tone, and its image at k F_in and the image's mirror make an
// output tone of twice the product, relative to the DC's own output
// (amplitudes; at F_out/2 the image is its own mirror). Analyze counts the
// images of a DC input at twice their gain (dcImagesDoubled; for a
// fractional chain, path k of the input frequencies n FK - k Fm), and
// build designs a real interpolation chain 20 log10 2 dB deeper
// throughout (its fractional stage then needs no margin of its own for
// paths that meet, since no point has both). TestRunInterpolationTones,
// TestInterpolationAnalyzeBruteForce and TestFractionalInterpolationTones
// run DC inputs. A complex chain's DC is one complex component: no
// mirror. So every rule above holds for both directions on the
// spec's DecimationView (rates swapped), which is how the package works:
// Requirements, Design, Estimate and Analyze take an interpolation spec,
// plan, design and measure its transpose, and return a Chain with
// Direction Interpolate that holds the transpose (Plan and Stages from the
// high rate down, InputRate the high rate). Its AliasRejectionDB and
// WorstAliasHz are the image rejection and the worst image's frequency at
// the output; SignalOrder and SignalRates give the stages as the signal
// meets them. Direction.Notation and Direction.ParseNotation write and read
// a plan in signal order ("fir2 > hb > cic4m1r16"), so the compensating
// FIR, the last FIR after the CIC in the transpose, is the first stage of
// the interpolation chain: its droop correction is a pre-correction.
//
// What is not shared is the structure: the CIC interpolator
// (NewCICInterpolator, CICStage.Interpolator) has Hogenauer's (1981)
// interpolator register widths (InterpolatorCICBits), unpruned, its
// RegisterBits in signal order (combs, then integrators); it takes the
// words between stages (spec.OutputBits) unless it is the whole chain.
// The non-recursive form is for decimation only. Run runs the real
// polyphase interpolators.
//
// # Notation
//
// Notation and ParseNotation write and read a chain's plan in a compact form
// of our own, stages joined by " > " in signal order:
//
//	cic5m1r16 > hb > hb > fir8 > fir2L
//
// is a CIC of order 5, differential delay 1, factor 16, two half-bands, a
// multiband FIR decimating by 8 and a lowpass FIR decimating by 2. A CIC
// built non-recursively carries the suffix "nr": cic5m1r16nr.
//
// # Non-recursive CIC
//
// CICStage.Form (and StagePlan.CICForm) chooses how a CIC is built; the
// zero value, Recursive, is Hogenauer's integrators and combs. NonRecursive
// builds a CIC of M = 1 and R = 2^k as k sub-stages (1 + z^-1)^N, each
// decimating by 2, at full precision (sub-stage i is Bin + N i bits wide).
// Any other M or R is refused (NonRecursiveOK says why). The transfer
// function is the recursive CIC's, so Gain, the requirements and Analyze's
// bounds are shared unchanged; the time-domain model of the form is package
// fixed's, its price package cost's.
//
// # Fractional stages
//
// A Spec whose ratio (the high rate over the channel rate, F0/FK of its
// DecimationView) is not an integer is written exactly
// as a reduced fraction num/den from the two rates (Fraction: 100 MHz over
// 3.84 MHz is 625/24; within 1e-9 of the ratio, denominator at most
// MaxFractionDen), or, with RatioTolerancePPM set, as the fraction with the
// smallest denominator within that many ppm, which the chain then realises
// exactly (its output rate differs from the spec's by at most the
// tolerance). Decimation and Ratio return 0 for such a spec. An
// interpolation spec's fractional chain is, as any interpolation chain,
// the transpose of the decimation chain planned on its DecimationView:
// the fractional stage comes first in signal order and changes the rate
// by Down/Up there (Direction.Notation writes it "poly<Down>/<Up>"); Run
// runs the transposes (the polyphase stage up Down, the same prototype,
// down Up; the Farrow structure transposed, each input sample scattered
// over the outputs around its time), whose paths have the same gains,
// as TestFractionalInterpolationTones measures through them.
//
// Its chain is integer stages down to Fm = F0/d, then one fractional stage
// from Fm to FK = Fm Up/Down, the last of Stages and Plan (an integer
// ratio may end in one too: fir21 > poly21/53 for D = 53), or a polyphase
// stage just after a leading CIC (see After the CIC below). The kinds
// (FractionalKinds, not in Kinds):
//
//   - Polyphase (PolyphaseStage, "poly<L>/<M>", L = Up, M = Down): zeros
//     between the samples raise the rate L times, one prototype lowpass at
//     L Fm (Taps, unit gain at 0 Hz; the data path multiplies by L) filters,
//     every M-th sample is kept. An output costs one phase, ceil(N/L)
//     multiplies. L is at most 256 and the prototype's estimated length at
//     most 8192 taps.
//   - Farrow (FarrowStage, "farrow<L>/<M>"): a Farrow structure (package
//     farrow) evaluated at each output's time m Down/Up input samples: its
//     P+1 subfilters of N taps on the input, combined by Horner's rule in
//     the fractional delay mu; (P+1) N + P multiplies per output whatever
//     L. It is a continuous-time filter H(f/Fm) sampled at the output
//     times (farrow.Convention); L is at most 1024 (see below).
//
// The paths of a tone. A real tone at input frequency g leaves the integer
// stages at g with gain A(g) = prod_j |H_j(g)| (each periodic at its own
// rate, so the folding by Fm is in the gains). The fractional stage turns
// it into one tone per path k: at g + k Fm, for k = 0 .. L-1 (L = Up),
// with gain A(g) |P(g + k Fm)|, P the prototype at L Fm. A polyphase
// stage's prototype is its Taps. A Farrow stage is a continuous-time
// filter H sampled at its output times m Down/Up, which are multiples of
// 1/L input samples: at those times it is exactly the polyphase L/M stage
// whose prototype is its impulse response sampled at 1/L
// (FarrowPrototype, L N taps), and that is how it is analysed. Its
// continuous paths k and k + L land on the same output frequency at every
// input frequency and add, which per-path figures of H would miss (an
// independent review measured 8 dB on a farrow2/5 stage); the sampled
// prototype sums them. So a Farrow stage has at most 1024 phases
// (MaxFarrowUp) and L N at most 65536 taps; a ratio with a larger
// denominator needs
// ratio_tolerance_ppm. The output rate folds each path to
// y = fold(g + k Fm mod FK). A path is an alias when y lies in the
// protected band [0, fa] and it is not the tone itself (k = 0 and g <= fa).
// Analyze searches every path with the certified branch and bound of the
// integer analysis (the stage bounders of the integer stages at g, the
// prototype's FIR bounder at g + k Fm): the rejection is the worst path
// over A(0) P(0), never optimistic, at most aliasCertifyDB pessimistic;
// the passband ripple is the path k = 0's over [0, fp]. PathGains lists
// the paths of one tone. In a real chain two paths of one tone can land
// on the same output frequency, path k1 at +y and path k2 at -y, where
// 2 g = n FK - (k1 + k2) Fm: only at multiples of Fm / (2 M) (FK = Fm L/M,
// L and M coprime; two paths never land together at +y). There they add,
// up to the sum of their gains for some phase of the tone: a tone at
// 0 Hz (an ADC's offset) makes its images at multiples of FK/L with twice
// each path's gain. Analyze evaluates the sums at every such point
// (coincidentPaths; past 2^24 points times paths it takes twice the worst
// path instead, 6 dB on the safe side), and a real chain's fractional stage
// is designed 20 log10 2 dB deeper for it. A complex chain's paths never
// meet. TestFractionalAnalyzeBruteForce and TestFarrowAnalyzeBruteForce
// hold Analyze to a dense scan of every input frequency and path that does
// not use these band formulas (0.002 dB at most, never optimistic), and
// TestFractionalTones and TestFractionalInterpolationTones measure the
// worst alias through Run, the running structures, within 0.002 dB of it,
// for Farrow stages of 2 to 41 phases among them.
//
// Requirements. The ripple budget is split in half between the integer
// stages and the fractional stage (all of it when there are no integer
// stages). The integer stages are designed as an integer chain to Fm
// (IntegerSpec) with the same fp and fa, the rejection target raised by
// the fractional stage's ripple share, and their multiband FIRs' don't-care
// bands held to unit gain (Requirement.GapLimit): the fractional stage
// carries frequencies from those bands into [0, fa] through its stopband,
// so a don't-care gain of 60 dB there (as an unheld design showed) would
// cost 60 dB of rejection. Then:
//
//   - before a polyphase stage, only the integer stages' aliases into
//     [0, fa] count (stopband edge Fm - fa), and the prototype is the
//     lowpass: passband [0, fp] within its dp, one stopband from
//     Stop = min(fs, min(Fm, FK) - fa) to L Fm/2 below ds less the integer
//     stages' ripple share. Every image of every input lies at or above
//     Fm/2 >= Stop or in the passband, and everything between fa and Stop
//     lands outside [0, fa];
//   - before a Farrow stage, the integer stages end in a lowpass FIR
//     (fir<D>L) whose stopband edge is Keep = Stop, below Fm/2: it holds the
//     whole band above Keep, and the structure need only hold the images of
//     [0, Keep], the bands [k Fm - Keep, k Fm + Keep] for every k >= 1
//     (farrow.MinDesign: the cheapest degree and length, least squares
//     refined toward minimax, certified).
//
// After the CIC. A polyphase stage may instead come just after the
// chain's first stage, a CIC of decimation R: cic > poly<L>/<M> > FIR and
// half-band stages of decimation Db (in signal order an interpolation
// chain's comes just before its CIC). Db shares no factor with L, so
// that, as at the end, two paths of a tone never land together at +y
// (fractionalPlan refuses the plan otherwise). Fm is then the CIC's
// output rate F1 and the polyphase stage's output rate is F2 = Db FK. A
// path k's gain is A(g) |P(g + k F1)| |T(g + k F1)|, T the cascade of the
// stages after it (periodic at F2): Analyze bounds T with their own
// bounders, and a real chain's paths meet at multiples of F1 / (2 M Db).
// Its requirements (buildAfterCIC): the polyphase stage compensates the
// CIC's droop, 1/|H_cic(f)| within its half of the ripple budget on
// [0, fp], held flat at 1/|H_cic(fp)| on (fp, fa] (the CIC's own aliases
// land there: a free compensator lifted them by up to 6 dB on seeded
// random chains), a lowpass to Stop = F2 - fa (what lands in [0, fa] at
// F2), and its gain over the last three quarters of its transition held
// to 1 (FractionalRequirement.GapLimit: a wide transition left free rose
// 44 dB). The stages after it are an integer chain from F2 to FK on the
// spec's bands (TailSpec): the other half of the ripple, the rejection
// raised by the polyphase stage's ripple share, by 20 log10 2 dB for a
// real chain (two paths of one real tone can meet through their
// stopbands) and by what the CIC times the designed prototype rises above
// 1 on its transition. The CIC is the plan's: its aliases into [0, fa]
// at F1 are its own to reject, lifted by up to 1/|H_cic(fp)|. The
// checks above (brute force, tones through Run, DC spurs) cover these
// chains too (TestAfterCICAnalyzeBruteForce). Package optimize offers the
// placement alongside the other (its doc); package fixed plans its word
// lengths and bit-true run.
//
// Run runs both kinds: Resample (SciPy's upfirdn times L,
// TestResampleSciPy) and farrow.Filter.Run at FarrowTimes. Package fixed
// plans a fractional stage in fixed point, a decimation chain's and,
// transposed, an interpolation chain's (its doc, Fractional stages); the
// hand-off to RTL is for integer chains only.
package chain
