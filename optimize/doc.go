// Package optimize searches the ways to split a decimation ratio into CIC,
// half-band and FIR stages, designs the promising ones for real, and returns
// the Pareto front of the designed chains with one recommended chain
// (docs/design.md §8).
//
// Conventions are those of package chain: rates and frequencies in Hz,
// rejection and attenuation in positive dB, ripple peak-to-peak dB. Costs
// are those of package cost: multiplies per final output sample, memory in
// bits, latency in seconds. All three axes are smaller-is-better; the alias
// rejection margin over the target (larger is better) breaks exact ties.
//
// # Enumeration
//
// A candidate is an ordered factorisation of D into 1 to Settings.MaxStages
// factors of at least 2 and at most chain.MaxStageFactor, 2^20, which is as
// far as chain.Design goes (every order, not only decreasing ones), with a kind
// for each stage: a CIC only as the first stage (every order and delay in
// Settings.CICOrders and Settings.CICDelays), a half-band only for a factor
// of 2, a FIR stage anywhere in its multiband and lowpass layouts. Where the
// two layouts coincide (a factor of 2, or 2 fa >= Fi) only the multiband one
// is tried. Candidates are generated one at a time into a reused buffer in a
// fixed order; nothing is stored per candidate except what the tiers below
// keep. The search refuses, with an error and before any work, a space of
// more than MaxCandidates candidates (counted exactly beforehand; the error
// names the largest MaxStages whose space fits), so that it finishes or refuses within about 30 s for any D up to 2^20 on two
// cores.
//
// # Estimate tier
//
// Each candidate is scored from order estimates following package chain's
// rules (the ripple budget, less any CIC droop no FIR stage corrects, split
// equally in dB over the half-band and FIR stages; Herrmann-Rabiner-Chan
// lengths; half-bands rounded up to 4K-1) and priced by package cost's rules,
// so the figures equal those of chain.Estimate and cost.Price (a test checks
// this). Each stage's figures are cached by what they depend on (the
// product of the factors before it, its factor, kind, layout, CIC order and
// delay, its ripple share, the data width a CIC hands it), so scoring a
// candidate allocates nothing once its stages have been seen. A CIC's
// rejection is exact, read on its alias bands from its response; FIR and
// half-band stages meet the targets by construction. The estimates follow
// chain's stage-alone rule whatever Settings.Chain.StageAlone says: under
// the cascade rule (the default) real designs are often shorter, by what
// the earlier stages remove, so the estimates over-estimate them, and the
// two tiers agree exactly only under the stage-alone rule
// (TestTwoTierExact).
//
// A candidate is dropped, and counted under its reason in Result.Dropped,
// when a CIC misses the rejection at its factor, when its first null falls
// in the passband or its droop cannot be corrected nor afforded, when a
// half-band's edges do not fit, when a FIR stage is estimated under 3 taps
// or over the tap limit (Settings.MaxTaps), and when a CIC
// is beaten by another searched CIC of the same factor that needs no more
// memory (its registers as chain.NewCICStage prunes them), latency, droop
// at fp or output width and less of one: the rest of the chain being equal
// such a CIC gives a chain at least as cheap, on the one assumption that a compensator
// correcting less droop is no longer. That holds only while the beater's
// chain stands: when it fails to design or misses the spec (see below), the
// chains with the CICs it beats and the same later stages are taken back,
// unless a designed chain beats them even at the favourable end of their
// range. The assumption is the stage-alone rule's: under the cascade rule
// (the default) a CIC of higher order or delay removes more of the later
// stages' aliases, which are credited with it and can come out shorter,
// so the search ends by designing the beaten siblings of its front (see
// CIC siblings below). Reasons that hang on the first-stage
// CIC alone are counted for every candidate under it without walking them.
//
// # Limits
//
// Settings.Limits are the fabric's (zero: none). A first-stage CIC whose
// factor or widest pruned register (chain.PruneCIC) exceeds MaxCICFactor
// or MaxRegisterBits is dropped in the estimate tier, exactly, and never
// beats another CIC. A candidate whose memory, or whose multipliers at the
// clock, exceed MaxMemoryBits or MaxMultipliers even at the favourable end
// of its range is dropped there too (the multipliers bounded below by
// ceil(multiplies per second / clock) for each stage with multiplies, each
// stage having its own); the others are checked on their real figures
// after design and after every re-design. With a fixed coefficient width,
// MaxRegisterBits also bounds every FIR and half-band accumulator of the
// word-length plan, judged where the chain's rounded taps are
// (ReasonOverAccumulatorBits). Each is counted under its Reason; when the
// front is empty and a limit dropped candidates, Result.Reason names the
// one that dropped the most.
//
// # Multiplierless
//
// With Cost.Multiplierless the cost axis is the chains' hardware adders
// (cost.Figures.Adders: FIR and half-band stages as shared adder graphs
// plus their tap adders, CICs' integrators and combs; see package cost)
// in place of multiplies per output, everywhere the front, the band, the
// ranges, the recommendation and its reason use it. The estimate tier
// counts a FIR or half-band stage by cost.EstimateAdders (one graph adder
// per distinct tap, a labelled estimate that designed graphs come at or
// below) and takes half of it at the favourable end of its range, since
// taps rounded to zero or a power of two cost no adder; a CIC's adders
// are exact. A CIC beats another only with no more adders as well. With a
// fixed coefficient width, a chain that survives its rounded-taps check
// has its adders counted on its word-length plan's integers
// (cost.Figures.CountInts), the coefficients the report writes; with
// "auto" widths every designed chain is planned ("auto", as the report
// plans it) and counted likewise, so the front is ranked on the adders
// report.json states. There
// are no multipliers, so MaxMultipliers never binds.
//
// # Design tier
//
// The estimated front is taken over the feasible candidates. A band of
// candidates near it is kept: those within Settings.Tolerance (default 15%)
// of not being dominated on every axis, and not beaten by a front point even
// when every estimated stage the two do not share is given the favourable
// end of its range for the candidate and the unfavourable end for the front
// point. The range of a stage estimated at L taps is
// [L/(1+2 tol) - 2, L(1+tol) + 2] taps, wider below because a multiband
// design with don't-care bands often comes out shorter than the lowpass
// estimate (half-bands: K/(1+2 tol) - 1 to K(1+tol) + 1 in K); CIC figures
// are exact. The range is an allowance, not a bound: on the D = 4096
// benchmark 108 of the band's 599 FIR and half-band stages came out below
// its favourable end (FIRs decimating by 4 or more, at 0.44 to 0.6 of
// their estimated multiplies), so the second test could drop a chain that
// would beat the front; with it switched off, the fronts of the 46 specs
// of testdata/optimize/front_specs.py and testdata/specs were unchanged
// (it dropped 2 to 198 band candidates on 5 of them), measured.
//
// A stage's real design and price depend only on what its estimate depends
// on, plus the CIC whose droop it corrects; the search keys a stage on that
// CIC's factor but not its order and delay, which move a compensator by a
// tap or two and would multiply the designs needed. So designing one chain
// teaches the real figures of each of its stages for every candidate that
// contains them. Rounds of real designs (chain.Design, priced by
// cost.Price) cover every stage of the band.
//
// Each round takes, in band order, a representative chain for each stage
// not learnt yet, and designs it only up to the last stage it is taken
// for (chain.DesignPrefixContext, the stages after it estimated): a
// stage's design and price depend on the stages before it and the whole
// plan's requirements, never on the designs after it, and the later
// stages are learnt, or taken by another representative, already (a stage
// backing off after failures is designed too, as a whole design would
// design it). A chain whose designed stages are at risk from rounding
// (judged on rounded taps, see realDesigner.atRisk), or whose partial
// design fails, is designed whole (its failing stage is remembered, so
// that costs nothing twice), and so is one taken for its CIC (the stages
// after a CIC are keyed on its factor alone). The fabric's limits are checked on whole
// chains only. A representative designed in part is priced on its own
// stages and the learnt figures of the rest, which other chains taught;
// their earlier stages differ and credit them differently, so in this
// chain they may come out shorter (by 10 to 16% on each axis, measured,
// for a fir2 after a half-band at D = 96). Every such representative that
// the priced front would not beat (its front taken as settle takes it,
// real figures where designed) were its later stages shorter by
// Settings.Tolerance is designed whole before the front is settled. A
// representative counts as one design in Result.Designed and against the
// caps below however it is designed (taken, it is charged as a whole
// design). On the D = 4096 benchmark half the round's estimated design
// work lay after the last stage wanted; the plan takes 0.72 of the CPU
// time it did designing every representative whole (a D = 1000 spec with
// 18-bit taps 0.77), and report.json was byte-identical on the seven specs
// of testdata/optimize/speed_compare.sh when the change was measured.
//
// The band is then priced exactly from the stages
// learnt, and the front of that pricing is designed for real (most of it
// already was) and its members measured (cost.Evaluate, whose cascade
// analysis costs seconds at large ratios, so only front members get it). A
// chain that fails to design, or whose measured alias rejection or passband
// ripple misses the spec, is dropped with its reason counted and the front
// re-taken without it, until it stands. The band itself leant on the
// estimated front standing, so when a chain on it failed (or a beater's
// chain did, see above), the search runs again, keeping the failed chains
// off the estimated front and everything designed and learnt so far; and
// when one came out worse than its estimate by more than
// Settings.Tolerance on some axis, the search runs again with that point
// at its real figures (on each axis the worse of the two), since the
// candidates near the real point were left out of the band (on an
// invented 100 to 1 MS/s receiver, six front chains of lower latency
// than a point estimated at 1.73 us and measured at 2.24 us). The
// result's front holds only
// chains designed and measured for real: nothing on it is an estimate. A
// design failure never ends the search.
//
// Most stage designs of a search repeat a stage of another chain (the
// same bands, deviations and compensated CIC): Plan hands every design a
// chain.StageMemo (Settings.Chain.Memo, a fresh one when it is nil), so
// that each distinct stage is designed once per search. The memo changes
// no result, only the time; the caps below still count chain designs. A
// chain that shares a FIR or half-band stage not designed yet with a
// chain being designed waits for a chain that shares none (looking a few
// dozen ahead), so that no worker idles on another's design.
//
// Real designs cost 5 ms to 5 s each, so Settings.MaxDesigns (default 600)
// caps them, and so does a budget of design work counted, not timed, as
// the sum over the designed chains' stages of the estimated length squared
// (plus N R M for a CIC), Settings.MaxWork (default 4e7, about 5 s of
// designs on two cores).
// The band's nearest members come first, and Result.Unsettled counts the
// candidates the caps left undecided (zero means the front is that of
// every candidate within the model above). Both caps are counts, so the
// result does not depend on the machine's speed.
//
// # CIC siblings
//
// Once the passes are done, every chain on the front whose first stage is
// a recursive CIC is designed again with that CIC at each other order and
// delay searched (Settings.CICOrders, CICDelays) that is feasible but for
// the beaten rule, and the front is taken again over every chain designed
// (the new members measured, as in the design tier); the siblings of new
// members follow, at most four rounds. The siblings are designed whatever
// the caps, which the band may have spent (at most four times the front's
// size times the orders and delays searched, and counted in
// Result.Designed); siblings still undesigned when the rounds run out
// count in Result.Unsettled. A sibling designed stays counted under the
// beaten rule in Result.Dropped, and is not in the feasible count nor in
// the cloud. Only the front's siblings are designed: a beaten CIC under a
// chain off the front is not, so the front is complete only within the
// estimate tier's model. Measured against the exhaustive search
// (Settings.Exhaustive, every feasible candidate designed) under the
// cascade rule on 20 invented specs of D = 6 to 160, 14 fronts were the
// same and 6 missed 9 of the exhaustive fronts' 211 chains (2 at most on
// one; testdata/optimize/exhaustive_compare.txt); designing every
// representative whole gave the same fronts. The integer searches inside
// the fractional search (below) skip it: their fronts only seed its plans,
// which a front of near twins would crowd. On invented receivers the
// front without this step held chains that a sibling beat on every axis:
// cic3m1r12 > fir8 at 74 multiplies per output beside cic3m2r12 > fir8 at
// 70 with less memory and the same latency (96 MHz to 1 MHz), and at
// D = 4096 cic4m1r512 > fir8 (46 multiplies, 3296 bits) beside
// cic4m2r512 > fir8 (44, 3283, the same latency); fronts grow (D = 4096:
// 5 chains to 14, 32 more designs).
//
// # Tap limit
//
// Stages estimated over the tap limit are dropped before design. By
// default (MaxTaps zero) the limit is automatic: the search first runs with
// 511 taps, which keeps every design under a second or so; when that
// leaves the front empty and the limit dropped some candidate, it runs
// again with the limit raised along 1023, 2047, 4095, 8191, 16383 taps,
// going straight to the first step that keeps a candidate it dropped (a
// prime D with a demanding spec needs one FIR stage of a few thousand
// taps, for example). Later runs reuse the earlier runs' designs, and all
// of them draw on the same MaxDesigns and MaxWork, so a stage of more than
// about sqrt(MaxWork) taps (6 300 at the default) is left undesigned and
// counted in Result.Unsettled. Result.MaxTaps is the limit of the last run
// and Result.Reason says when it was raised. A positive MaxTaps is used as
// given.
//
// Stages are designed to absolute stopband limits, while a chain's alias
// rejection is measured relative to its gain at 0 Hz, which the passband
// ripple lets fall to 1 - dp: a chain with nothing to spare, a single long
// stage typically, can miss the target by up to the ripple. A front member
// that misses by no more than the ripple is designed again with the
// target raised by the shortfall plus 0.005 dB, later raises scaled by the
// margin the last one bought (at most four times the shortfall), and one
// whose ripple is over the budget by less than half of it with the budget
// cut by the excess plus a hundredth, at most three times before it is
// dropped; these re-designs are not counted in Result.Designed. When no
// chain is left, Result.Closest is the designed chain that missed by the
// least (Shortfall).
//
// With a fixed coefficient width the same holds of the chains' rounded
// taps (see Coefficient width); re-designs for rounding are not counted in
// Result.Designed either, but their work is charged to MaxWork.
//
// # Coefficient width
//
// When the spec fixes the coefficient width (chain.Spec.CoefBits > 0, at
// most fixed.MaxBits = 40 bits; wider, rounding lies below -200 dB and is
// not measured), the front and the recommendation hold only chains that
// meet the spec with their taps rounded to that width, as the report will
// build them: fixed.PlanChain, with Settings.Fixed, plans the word lengths,
// quantises every FIR and half-band stage and measures the cascade on the
// rounded taps, which is judged by the floating-point design's rule
// (chain.Analysis.Meets: the target reached, with no allowance). Candidate.Quantised holds that
// measurement and Candidate.MarginDB its rejection margin.
//
// The rounding error of each tap is uniform in +-q/2, q = 2^-Frac (Frac the
// largest that fits the largest tap in the width, package fixed's rule), so
// a stage of N rounded taps has a stopband error of about q sqrt(N/12) RMS
// (common practice), at most N q/2. A designed chain whose FIR stage has
// that floor above a quarter of its stopband limit is measured on its
// rounded taps as soon as it is designed, so that what the search learns
// from it is the chain as it will be built; the others are measured when
// they reach the front. A chain that misses is designed again: the
// rounding error is taken as the excess of the rounded chain's worst alias
// over the floating-point one's (linear deviations, which add at worst),
// and the rejection target is raised so that the floating-point deviation
// plus that excess meets the target, plus 1 dB (a passband ripple pushed
// over by rounding is tightened likewise); at most five times, and then
// once each at a few fixed margins (roundingLadder), since what rounding
// costs a design is all but chance at a width near the target's own. A
// re-designed chain is priced and measured again (cost.Evaluate), and the
// front is taken again with its new figures. The chain is dropped, counted
// under ReasonMissQuantised, when the tries run out, or at once when the
// rounding error of the chain as first designed alone reaches the target
// (a rounded chain 6 dB or more short, or an excess of the target's
// deviation), since a longer design rounds no better; after a re-design
// such a result may be that design's rounding, and the fixed margins are
// still tried for a chain whose rounded taps as first designed missed by
// under 3 dB (closeDB); a stage whose own rounding error exceeds its stopband
// limit is then given up in every chain. ReasonWordLengths counts chains
// whose word lengths fixed.PlanChain could not plan; where that was an
// accumulator wider than fixed.MaxAccumulatorBits (fixed.AccumulatorError,
// whose plan goes on through the chain's other stages),
// Result.AccumulatorExcess holds how many bits the closest chain must lose
// from the coefficient word, the input word or the word between stages,
// so that the caller can name the narrower words to try.
//
// No candidate is dropped on a predicted rounding floor (q sqrt(N/12),
// roundingFloor): it is an expectation, not a bound, and a short
// compensator after a large CIC rounds far better (on an invented 100 to
// 1.25 MS/s receiver, cic6m2r40 > fir2 meets 79 dB with 12-bit taps, where
// such a prune left a front of 19 multiplies per output against its 8;
// TestCheapChainNotPrunedByRoundingEstimate). Chains are judged on their
// rounded taps once designed, as above.
//
// Rounding siblings: after the passes and the front's CIC siblings (see
// CIC siblings below, which are then designed again for the front this
// step makes, so that the front can gain chains but not lose one), the
// chains dropped for their rounded taps, and those that met only after
// re-designs for rounding that raised their cost beyond Settings.Tolerance
// of their cost as first designed (priced as first designed: the
// re-designs are what rounding cost that design, and the search's learnt
// figures carry them to every chain sharing the stage; a dB of margin at a
// comfortable width, a tap or two, does not count), that the front does not beat on
// every axis (all of them when the front is empty) have their siblings
// designed: the same chain with each FIR stage whose two layouts differ in
// its other layout, every combination (of the last three such stages),
// and, when the first stage is a recursive CIC, each of those at every
// CIC order and delay searched, beaten or not. The estimate tier keeps
// neither the lowpass layout beside a cheaper multiband one nor a beaten
// CIC, yet at a width near the target's own what rounding costs a design
// is all but chance, and a sibling is another design of nearly the same
// cost: on an invented 50 to 2 MS/s receiver with 12-bit taps the search
// found no chain at 75, 77 or 79 dB, while cic4m2r5 > fir5L meets 77 dB,
// and a 72 to 6 MS/s one with 11-bit taps recommended 21 multiplies per
// output where cic6m2r6 > fir2 meets at 15, a sibling of cic6m1r6 > fir2,
// which met after six re-designs at 28 (TestRoundingSiblings). Parents are
// taken cheapest first (the cost
// axis), the first maxRoundingParents (4) with a sibling not designed yet
// (feasible by estimate), their siblings by estimated cost, at most
// maxRoundingSiblings (24) a round and two rounds, the front taken again
// after each (the new members measured). Siblings left when the rounds
// run out are not counted in Result.Unsettled, which is about the estimate
// tier's model, outside which they lie. Like the CIC siblings they are
// designed whatever the caps and counted in Result.Designed. On the 73
// invented specs of front_specs.py's family of widths near the target's
// own (testdata/optimize/rounding_siblings.txt), no chain of the front
// before beat one of the front after, chains of the front after beat some
// of the front before on 12, and 8 of the 12 specs that found no chain
// found one, for 0 to 1.0 s more per plan (0.23 s the median; the 73
// plans took 104 s instead of 84).
//
// When no chain meets at the width, Result.Reason says so and names the
// width that would: for the three cheapest chains dropped for their
// rounded taps (the front of their floating-point figures), the least
// width up to 32 bits at which each meets, re-designed as above, and
// Result.NeededCoefBits holds the least of them. The automatic tap limit
// is not raised then, since a longer stage rounds no better.
//
// Settings.Exhaustive designs every feasible candidate instead (and keeps
// the beaten CICs): it exists to check that the two tiers give the same
// front, which the package's tests show on D = 96, 120 and 180 with a fake
// designer whose figures lie within +-8% of the estimates (a compensator
// growing with the droop it corrects) and whose designs and measurements
// fail now and then.
//
// # Fractional ratios
//
// A spec whose ratio is a fraction num/den (chain.Spec.Fraction) is
// planned by planFractional (fractional.go): for at most six integer
// decimations d (fractionalSplits), the integer stages down to Fm = F0/d
// are searched as an integer chain of their own (chain.IntegerSpec), and
// their three cheapest front chains completed with a polyphase stage, or,
// ending in a lowpass FIR, with a Farrow stage. A polyphase stage is also
// placed just after the CIC (afterCICPlans): for each CIC that begins
// those front chains, the two smallest decimations Db after it that fit,
// the FIR and half-band stages after it searched on chain.TailSpec. Every
// plan is estimated and priced; they are designed in order of estimate,
// at most twelve, while the estimate is within twice the cheapest
// designed chain that meets; the front is taken over the designed ones.
// The designed set is decided one plan at a time, so it is the same for
// any Jobs. The fractional chains are ranked on their float designs; with
// chain.Spec.CoefBits set, a designed chain is then judged on its rounded
// taps as an integer chain is: designed again where rounding misses,
// dropped under ReasonMissQuantised where that fails (Result.Reason and
// NeededCoefBits then name the width from which one of the cheapest
// meets), and under ReasonWordLengths where its word lengths cannot be
// planned, its accumulator excess counted in Result.AccumulatorExcess.
//
// # Recommendation
//
// Knee (the default) normalises each axis by the front's best (after adding
// a floor of one multiply, one bit and one nanosecond, so a CIC-only chain
// with no multiplies stays finite) and picks the chain nearest the utopia
// point, where every normalised figure is 1, in Euclidean distance.
// WeightedCost picks the least sum of the normalised figures times
// Settings.WeightMultiplies, WeightMemory and WeightLatency. Result.Reason
// says which rule chose the chain and how it compares with the chain of
// fewest multiplies.
//
// # Determinism
//
// Designs run on Settings.Jobs goroutines (default GOMAXPROCS), each writing
// its own index-addressed slot; every sort is a total order, ties broken by
// the plan itself (stage count, then stage by stage factor, kind, CIC order,
// CIC delay, layout). The result is the same, byte for byte, whatever the
// number of goroutines. The faint cloud in Result.Feasible is thinned to
// CloudSize by keeping evenly spaced candidates in enumeration order.
//
// The estimate tier's two walks run on the same goroutines, one first
// stage of the enumeration at a time each, every goroutine with an
// estimator of its own (the caches are memos of figures that depend on
// their key alone); each first stage's counts, drops, local front, band
// and cloud members are merged in enumeration order as soon as the first
// stages before it are merged, so the tier's result is that of one walk.
//
// The context must not be nil (context.Background never stops). On
// cancellation of the context Plan stops starting designs and returns the
// front of the chains designed and measured so far, with Result.Partial set
// and no error (a caller tells a stop from a finished search by Partial,
// not by errors.Is(err, context.Canceled)). When none was measured yet but some were designed (a stop
// during the first round of designs), the front of the designed chains by
// their prices is measured, for at most 300 ms after the cancellation,
// members that miss dropped and the front taken again; only measured chains
// are returned, so the front may still be empty. A context with a deadline
// stops the designs early, min(1.5 s, 15% of the time left) before it, and
// that measurement then has the time up to the deadline instead
// (withMeasureReserve): a plan stopped by --timeout keeps the deadline and
// still measures what it designed. The context is checked every 4096
// candidates scored and before every design or measurement, and Progress is
// called before the next check. A design or measurement still running when
// the context is cancelled is abandoned: Plan returns without it, its
// result unread. The designs and word-length plans it abandons take the
// context too (chain.DesignContext, fixed.PlanChainContext) and stop within
// about 100 ms; a cascade measurement (cost.Evaluate, chain.Analyze) takes
// none and runs to its end on its own goroutine.
//
// The figures are planning data: sign-off belongs to a bit-true simulation
// of the RTL and the team's own review.
package optimize
