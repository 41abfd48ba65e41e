// Package cost turns a decimation chain into the figures a hardware designer
// prices it by (docs/design.md §5): multiplies and adders per output sample, memory in
// words and bits, latency, and the multipliers needed at a given clock; and,
// through chain.Analyze, what the chain achieves (docs/design.md §7).
//
// # Conventions
//
// Rates in Hz, latency in seconds and in final output samples. Every count is
// per final output sample unless said otherwise: a stage's count per its own
// output is multiplied by the product of the later stages' factors
// D(i+1)...DK. Counts are of real operations; a complex (I/Q) chain runs two
// real filters, so multiplies, adders and data memory double while
// coefficient memory does not (docs/design.md §2).
//
// An interpolation chain (chain.Interpolate) is priced as the transpose it
// is held as: "per final output sample" is then per input sample, the
// channel side in both directions, so that the two directions compare on
// the same footing, and "a stage's output" is its low-rate side, its
// input. The counts below hold for the interpolating structures: a FIR
// interpolating by L is its L polyphase phases, each input sample
// multiplied once by every distinct coefficient (ceil(N/2) with symmetry,
// the transposed form, common practice) into N - 1 partial sums, counted as
// the decimator's N delay words; a half-band's second phase is the input
// itself; a CIC interpolator runs N combs at its input rate and N
// integrators at its output rate (R per input), the same N R + N adds.
// Words flow in signal order: each stage stores the word entering it (the
// input word for the first stage in signal order, the channel's for an
// interpolation chain), and a CIC interpolator's memory counts its
// integrators once per lane of its output rate and its combs M words each
// (CICMemoryBits), at its unpruned widths.
//
// # Formulas
//
// Stage i decimates by Di from F(i-1) to Fi; N is its number of taps.
//
// Multiplies per stage output:
//
//	FIR:        N, or ceil(N/2) with symmetry (the default; Settings.NoSymmetry off)
//	half-band:  4K-1 taps: 2K, or K with symmetry; the centre tap 1/2 is a shift
//	CIC:        0
//
// Adders per stage output:
//
//	FIR:        N-1 either way: with symmetry floor(N/2) pre-adds (tap pairs)
//	            plus ceil(N/2)-1 to sum the products
//	half-band:  2K either way: K pre-adds plus K to sum K products and the
//	            centre term, or 2K to sum 2K products and the centre term
//	CIC:        N R + N: N integrators at its input rate (R per output) and
//	            N combs at its output rate
//
// Memory, words and bits:
//
//	FIR:        N data words (the polyphase branches' delay lines together),
//	            plus N coefficient words, or ceil(N/2) with symmetry
//	half-band:  3K data words (the 2K-tap branch and the centre branch's
//	            K-word delay), plus 2K coefficient words, or K with symmetry
//	polyphase:  ceil(N/L) data words, plus ceil(N/2) coefficient words
//	            (the prototype's symmetry pairs phase r with phase
//	            (N-1-r) mod L read backwards), or N without symmetry
//	CIC:        N integrator registers plus N M comb delay words, each at its
//	            own pruned register width (CICStage.RegisterBits), no
//	            coefficients; with a clock below its input rate, the
//	            integrators once per lane (see Lanes below)
//
// A CIC's register widths are chain.PruneCIC's (NewCICStage fills
// CICStage.RegisterBits from it): Hogenauer's pruning with the guard bits
// that keep the truncations from wrapping the output, the widths package
// fixed plans and runs bit-true, so this memory and fixed_memory_bits agree
// on CICs. A CICStage without RegisterBits is priced at the unpruned width
// chain.CICRegisterWidth.
//
// Data words are as wide as the samples entering the stage: spec.InputBits
// for the first stage, the CIC's output width after a CIC (its register width
// or spec.OutputBits, whichever is smaller), spec.OutputBits after an FIR or
// half-band stage. Coefficient words are spec.CoefBits wide, or 18 bits when
// the coefficients are floating point (CoefBits 0): 18 bits is the common
// width of FPGA multiplier inputs (common practice).
//
// Latency: the sum of the stages' group delays, (N-1)/2 input samples for an
// FIR or half-band at its input rate and N (R M - 1)/2 input samples for a CIC,
// summed in samples at the chain's input rate F0 and divided by F0 once, so
// that two chains of the same delay have the same latency to the bit (the
// front compares latencies exactly); in output samples it is that times FK.
// A stage's own LatencyS is its delay over its own input rate.
//
// Multipliers at clock fclk (Settings.Clock): per stage ceil(m_i Fi / fclk)
// where m_i is the stage's multiplies per its own output (doubled for
// complex), summed over the stages: each stage has its own multipliers,
// time-shared within the stage only.
//
// Lanes at clock fclk: a stage whose input rate F(i-1) exceeds fclk takes
// P = ceil(F(i-1)/fclk) samples per clock cycle and is built as P parallel
// lanes (a polyphase decomposition of the same filter); StageFigures.Lanes
// is P, 1 at or below the clock or without one. A CIC so built registers
// each lane's running sum, so its N integrator registers count P times in
// its memory (CICMemoryBits); its combs run at its output rate and its
// adds per output are the same operations. A FIR or half-band stage's
// multipliers at the clock already follow its rate, and its delay line is
// shared by the lanes. This is a planning estimate of the structure:
// pipelining and the vendor's tools decide the rest.
//
// # Non-recursive CIC
//
// A CIC of Form chain.NonRecursive (M = 1, R = 2^k) is k sub-stages
// (1 + z^-1)^N, each decimating by 2, sub-stage i at F(i-1)/2^(i-1) with a
// Bin + N (i-1)-bit input and a Bin + N i-bit output (full precision). Each
// is priced in polyphase form, y[m] = sum_j C(N, j) x[2m - j]: the
// symmetric pairs of its N + 1 terms pre-added, each pair's binomial made
// by shifts and adds (its canonical signed digits less one; nothing is
// shared, each multiplies another sum), the products summed: N adds plus
// those (NonRecursiveAdds; N = 1..6 give 1, 2, 4, 5, 7, 9). Per stage:
//
//	adds per output:  NonRecursiveAdds(N) R/2^i summed over the sub-stages
//	memory:           N input words per sub-stage (its two phases' delay
//	                  lines), at its input width, shared by its lanes as
//	                  a FIR's delay line is
//	adders:           (Multiplierless) NonRecursiveAdds(N) per output lane
//	                  of each sub-stage, Lanes of its output rate
//	latency:          N (R - 1)/2 input samples, as the recursive CIC's
//
// StageFigures.SubStages lists them (SubStage). The published argument for
// the form, from memory: the non-recursive (and polyphase) comb decimator
// has no integrator at the input rate, so no wide register there and no
// feedback loop to close at the clock, and its adders at the highest rate
// are only Bin + 1 to Bin + N bits wide, widening only as the rate halves;
// power, which follows the bits switched per second, falls, and the
// structure pipelines freely (Y. Gao, L. Jia, J. Isoaho, H. Tenhunen, "A
// comparison design of comb decimators for sigma-delta analog-to-digital
// converters", Analog Integrated Circuits and Signal Processing 22(1),
// 2000; H. Aboushady, Y. Dumonteix, M.-M. Louërat, H. Mehrez, "Efficient
// polyphase decomposition of comb decimation filters in ΣΔ
// analog-to-digital converters", IEEE Trans. Circuits Syst. II 48(10),
// 2001). Here it shows in the memory axis: above the clock the recursive
// CIC registers each of its N integrators once per lane at up to its full
// width, the non-recursive one only its narrow delay lines (invented 2.4
// GS/s, 12-bit input, 400 MHz clock, 6 lanes: cic5m1r32 1 089 bits against
// 550 for cic5m1r32nr; without a clock 274 against 550), at more adders
// (35 against 56 as built). Power is not priced.
//
// # Multiplierless
//
// With Settings.Multiplierless (spec key hardware.multiplierless) every
// FIR and half-band stage is built without multipliers, in a transposed
// direct form: each input sample enters one shared adder graph that
// multiplies it by every tap (package chain/fixed/mcm, mcm.Build), and
// the products are summed along the delay line, a polyphase decimator
// routing each phase's products to its own branch. A block (one lane of
// one real filter) has
//
//	coefficient adders: the graph's adders (mcm.Graph.Adders) on the taps
//	                    rounded to the coefficient width (RoundTaps; the
//	                    spec's width, FloatCoefBits for "auto")
//	structural adders:  one per nonzero rounded tap after the first;
//	                    symmetric taps share a graph node, so there are no
//	                    pre-adders
//
// and the stage's Adders are the block's times its lanes and real filters.
// A CIC's Adders are its N integrators once per lane plus its N combs
// (CICAdders), times its real filters. Adders are hardware as built, not
// operations per output: constants wired into a graph are not
// time-shared. Multipliers at the clock are zero; multiplies, adds per
// output, data memory and latency are priced as without the mode (the
// multiplies are the constant products the graphs make); no coefficient
// memory is counted, the taps being wired into the graphs (package fixed
// counts likewise).
//
// Every graph is proved before its count is used: Eval reproduces every
// coefficient times 1, -1 and 3 exactly (ProveGraph), or Price returns an
// error. Graphs are cached by their coefficients (they depend on nothing
// else). A stage not yet designed (an estimate's length) is counted by
// EstimateAdders, one graph adder per distinct tap of a linear-phase
// response, AddersEstimated set. Figures.CountInts re-counts a chain from
// the integers it will be built with (a word-length plan's, whose local
// search may move a tap by a step), which the search does for every chain
// that survives its rounded-taps check.
//
// Measured on the stages stepdown designs (TestMeasureStages, behind
// STEPDOWN_LONG: the built-in example's chains cic5m1r16 > hb > fir2 and
// cic3m1r2 > fir32 and four invented specs, 15 FIR and half-band stages
// of 7 to 270 taps), the graphs need 306 adders against 930 for plain CSD
// at 16 bits (67% fewer) and 338 against 1104 at 18 bits (69% fewer); per
// stage 14% to 77%, least on short half-bands whose few taps share
// little. Counting the structural adders too, the 270-tap stage goes from
// 493 + 269 to 131 + 269 adders at 16 bits (47% fewer in all). Package
// mcm's doc has the random sets of Voronenko and Püschel (2007): 59% to
// 77% fewer than CSD.
package cost
