// Package plots draws the figures of a stepdown report with gonum/plot:
// the Pareto front of the candidate chains (Front), the recommended
// cascade's response with its alias bands shaded (Response), each
// stage's share of the chain's cost (Stages), and how the recommended
// chain's figures move as one quantity of the specification is swept
// (Sweep), and a recording's input and output spectra through a chain
// (Spectra, for stepdown simulate). AliasShading gives the Response and
// Spectra figures the input-frequency bands that fold onto the protected
// band, merged where a figure could not tell them apart.
//
// The front is a front on three axes, multiplies per output, memory and
// latency, drawn on the first two: the chains no other beats on
// multiplies and memory alone are joined by their staircase (every cost
// pair above and right of it is matched or beaten by one of them), the
// other chains of the front, there for their lower latency, have a
// diamond marker, and every chain is coloured by its latency. The legend
// counts the feasible candidates in all and those drawn. The legend and
// the labels of the recommended and the checked chain are placed, once
// the figure's size is known, where they cover no marker, ring, cross or
// staircase segment, nor each other (dots of the faint cloud may lie under
// them); a label away from its chain gets a leader, bent once when a
// straight one would cross a mark; the memory axis is raised to make room
// above the data when no place is free.
//
// The package takes its own plain input types (FrontData, ResponseData,
// StagesData, SweepData, SpectraData) so that it depends on no other stepdown package;
// the command line converts its results into them. Every figure function
// validates its input and returns an error naming the offending field and
// value, never a panic, and never draws NaN. Each returns a *Figure: one
// or more panels plus their key, rendered with Figure.Render (to an
// io.Writer) or Figure.Save (to a file, atomically via a temporary file and
// a rename).
//
// Conventions:
//   - Frequencies are in Hz. Linear frequency axes pick Hz, kHz, MHz or GHz
//     from the largest frequency shown and say so in the axis label. When
//     the full span exceeds 200 output rates, the full-span panel of
//     Response uses a log frequency axis from a tenth of the output rate;
//     the near-region panel below it stays linear.
//   - Gains are in dB relative to the cascade's DC gain (0 dB is unity; a
//     stopband is negative). Rejection targets and achieved rejections are
//     positive dB, as everywhere in stepdown: a target of 85 dB is drawn as a
//     line at -85 dB. Gains below the figure's floor (60 dB under the
//     target, or -160 dB without one, raised to just under the deepest
//     value when that is shallower) are drawn at the floor, which the axis
//     label states; -Inf (an exact null) is allowed and drawn at the floor.
//   - Costs are multiplies per final output sample and memory in bits, as
//     the cost package defines them. A cost axis whose values are all
//     positive and span more than a factor of 20 is drawn on a log scale,
//     and its label says "log scale".
//   - Large inputs are reduced to what the figure can show, never sampled
//     at random: curves keep the minimum and maximum of each of 1500
//     columns (every peak and null survives); where a curve swings down and
//     back up more than twice within about 6 points of width, which would
//     draw as a solid block, the band between its peaks and nulls is filled
//     pale and only its upper edge, through the peaks, is drawn as the line
//     (the legend says so), so that the curves under it, the cascade above
//     all, stay visible; alias bands closer than a
//     1500th of the axis are drawn merged (without copying them when they
//     come in order, as a chain's D/2 alias bands do, millions at large
//     ratios), and candidates of the front's
//     cloud closer than a dot are drawn once. SVG files stay well under
//     2 MB.
//   - Colours come from the Okabe-Ito palette, which stays distinguishable
//     under the common forms of colour blindness; the front's latency key
//     uses a viridis-like map whose lightness rises monotonically (dark is
//     the least latency).
//   - Formats are SVG and PNG (150 dots per inch, 8-bit RGB packed for
//     speed: see encodePNG); the PNG draws the same
//     text with the Liberation fonts built into gonum/plot, so it reads the
//     same on any machine. The default figure size
//     is 8 x 5 inches (DefaultWidth, DefaultHeight); a zero width or height
//     given to Save or Render selects it. Sweep figures are meant for
//     SweepWidth x SweepHeight (8 x 7 inches), room for four panels. SVG
//     text names Liberation Sans with Arial, its metric twin, as fallback;
//     fonts are not embedded.
//   - Output is deterministic: the same input gives the same bytes (no
//     timestamps, no random identifiers, no map-order effects).
//
// The figures are planning aids drawn from the library's models of the
// filters; a bit-true simulation of the RTL and the team's own sign-off
// decide whether a chain is fit for hardware.
package plots
