// Package plots draws the figures of a stepdown report with gonum/plot:
// the Pareto front of the candidate chains, the recommended cascade's
// response with its alias bands shaded, and each stage's share of the
// chain's cost.
//
// The package takes its own plain input types (FrontData, ResponseData,
// StagesData) so that it depends on no other stepdown package; the command
// line converts its results into them. Every figure function validates its
// input and returns an error naming the offending field, never a panic, and
// never draws NaN.
//
// Conventions:
//   - Frequencies are in Hz. Frequency axes pick Hz, kHz, MHz or GHz from the
//     largest frequency shown and say so in the axis label.
//   - Gains are in dB relative to the cascade's DC gain (0 dB is unity; a
//     stopband is negative). Rejection targets and achieved rejections are
//     positive dB, as everywhere in stepdown: a target of 80 dB is drawn as a
//     line at -80 dB. Gains below the figure's floor (-TargetDB-60 dB, or
//     -160 dB without a target) are drawn at the floor; -Inf (an exact null)
//     is allowed and is drawn at the floor too.
//   - Costs: multiplies per final output sample and memory in bits, as the
//     cost package defines them.
//   - An axis whose data span more than a factor of 20 and are all positive
//     is drawn on a log scale, and its label says "log scale".
//   - Colours come from the Okabe-Ito palette, which stays distinguishable
//     under the common forms of colour blindness; the rejection colour key of
//     the front uses a viridis-like map whose lightness rises monotonically.
//   - The default figure size is 8 x 5 inches (DefaultWidth, DefaultHeight);
//     a zero width or height given to Save or Render selects it.
//   - Output is deterministic: the same input gives the same bytes in every
//     format (no timestamps, no random identifiers, no map-order effects).
//
// The figures are planning aids: the numbers behind them come from the
// library's models of the filters, and a bit-true simulation of the RTL and
// the team's own sign-off decide whether a chain is fit for hardware.
package plots
