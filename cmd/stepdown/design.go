package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"math/bits"
	"sort"

	"github.com/urfave/cli/v2"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/remez"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

func designCommand() *cli.Command {
	return &cli.Command{
		Name:  "design",
		Usage: "design one Parks-McClellan lowpass or multiband filter",
		UsageText: "stepdown design --rate HZ --pass LO:HI --stop LO:HI [--stop LO:HI ...] --ripple DB --atten DB [--taps N] [--grid N] [--json]\n\n" +
			"Frequencies take plain Hz or units (\"45\", \"45 Hz\", \"1.2 MHz\"); a unit after HI applies to LO too.\n" +
			"Without --taps the shortest filter that meets --ripple (peak-to-peak) and --atten is found.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "rate", Usage: "sample rate (Hz or with a unit)"},
			&cli.StringFlag{Name: "pass", Usage: "passband LO:HI (gain 1)"},
			&cli.StringSliceFlag{Name: "stop", Usage: "stopband LO:HI (gain 0); repeat for a multiband design"},
			&cli.StringFlag{Name: "ripple", Usage: "passband ripple, peak-to-peak dB"},
			&cli.StringFlag{Name: "atten", Usage: "stopband attenuation, positive dB"},
			&cli.IntFlag{Name: "taps", Usage: "design this length instead of the shortest that meets the targets"},
			&cli.IntFlag{Name: "grid", Value: 16, Usage: "grid density: points per expected extremum"},
			&cli.BoolFlag{Name: "json", Usage: "print one JSON object on stdout"},
		},
		Action: runDesign,
	}
}

// maxDesignTaps bounds --taps and the minimum-length search.
const maxDesignTaps = 65535

type designBand struct {
	Kind   string  `json:"kind"` // "pass" or "stop"
	LoHz   float64 `json:"lo_hz"`
	HiHz   float64 `json:"hi_hz"`
	Weight float64 `json:"weight"`
}

type designOutput struct {
	RateHz           float64      `json:"rate_hz"`
	Bands            []designBand `json:"bands"`
	TargetRippleDB   float64      `json:"target_ripple_db"`
	TargetAttenDB    float64      `json:"target_atten_db"`
	Taps             int          `json:"taps"`
	Coefficients     []float64    `json:"coefficients"`
	PassbandRippleDB float64      `json:"passband_ripple_db"`
	StopbandAttenDB  float64      `json:"stopband_atten_db"`
	// PeakGainDB is the largest gain anywhere in [0, rate/2], measured on
	// a dense grid (16 points per tap, the largest refined); PeakGainHz is
	// where. Between the bands (transitions and don't-care gaps) no target
	// holds the response, and a wide gap can let it rise far above the
	// passband.
	PeakGainDB   float64 `json:"peak_gain_db"`
	PeakGainHz   float64 `json:"peak_gain_hz"`
	MeetsTargets bool    `json:"meets_targets"`
	Converged    bool    `json:"converged"`
	Iterations   int     `json:"iterations"`
	GridDensity  int     `json:"grid_density"`
	Caution      string  `json:"caution"`
}

func runDesign(c *cli.Context) error {
	if c.Args().Present() {
		return usagef("design: unexpected argument %q (all inputs are flags)", c.Args().First())
	}
	need := func(name string) (string, error) {
		v := c.String(name)
		if v == "" {
			return "", usagef("--%s: missing; it is required", name)
		}
		return v, nil
	}
	rs, err := need("rate")
	if err != nil {
		return err
	}
	rate, err := units.ParseFrequency(rs)
	if err != nil {
		return usagef("--rate %v", err)
	}
	if !(rate > 0) {
		return usagef("--rate %q: must be above 0 Hz", rs)
	}
	if rate < chain.MinRateHz || rate > chain.MaxRateHz {
		// The spec's rates' range: beyond it float64 arithmetic no longer
		// carries every band edge.
		return usagef("--rate %q: lies outside the supported range: rates lie in [%s, %s] Hz", clip(rs), units.FormatNumber(chain.MinRateHz, -1), units.FormatNumber(chain.MaxRateHz, -1))
	}
	ps, err := need("pass")
	if err != nil {
		return err
	}
	stops := c.StringSlice("stop")
	if len(stops) == 0 {
		return usagef("--stop: missing; give at least one stopband LO:HI")
	}
	ripS, err := need("ripple")
	if err != nil {
		return err
	}
	ripple, err := units.ParseLevel(ripS)
	if err != nil {
		return usagef("--ripple %v", err)
	}
	if !(ripple > 0) {
		return usagef("--ripple %q: must be above 0 dB (peak-to-peak)", ripS)
	}
	attS, err := need("atten")
	if err != nil {
		return err
	}
	atten, err := units.ParseLevel(attS)
	if err != nil {
		return usagef("--atten %v", err)
	}
	if !(atten > 0) || atten > chain.MaxRejectionDB {
		return usagef("--atten %q: must lie in (0, %d] dB", attS, chain.MaxRejectionDB)
	}
	grid := c.Int("grid")
	if grid < 1 || grid > 1024 {
		return usagef("--grid %d: must lie in [1, 1024]", grid)
	}
	taps := c.Int("taps")
	if c.IsSet("taps") && (taps < 3 || taps > maxDesignTaps) {
		return usagef("--taps %d: must lie in [3, %d]", taps, maxDesignTaps)
	}

	dp := chain.RippleToDev(ripple)
	ds := chain.RejectionToDev(atten)
	type edge struct {
		flag   string
		text   string
		lo, hi float64
		pass   bool
	}
	var edges []edge
	lo, hi, err := units.ParseRange(ps, units.Frequency)
	if err != nil {
		return usagef("--pass %v", err)
	}
	edges = append(edges, edge{"--pass", ps, lo, hi, true})
	for _, s := range stops {
		lo, hi, err := units.ParseRange(s, units.Frequency)
		if err != nil {
			return usagef("--stop %v", err)
		}
		edges = append(edges, edge{"--stop", s, lo, hi, false})
	}
	for _, e := range edges {
		if e.lo < 0 || e.hi <= e.lo || e.hi > rate/2 {
			return usagef("%s %q: must satisfy 0 <= LO < HI <= rate/2 = %s", e.flag, e.text, units.FormatFrequency(rate/2))
		}
	}
	sort.SliceStable(edges, func(i, j int) bool { return edges[i].lo < edges[j].lo })
	for i := 1; i < len(edges); i++ {
		if edges[i].lo < edges[i-1].hi {
			return usagef("%s %q: overlaps %s %q; bands must not overlap", edges[i].flag, edges[i].text, edges[i-1].flag, edges[i-1].text)
		}
		if edges[i].lo == edges[i-1].hi && edges[i].pass != edges[i-1].pass {
			// A passband touching a stopband: no length can make the
			// jump between them, so no search is started.
			return usagef("%s %q: starts where %s %q ends; a filter needs a transition band between a passband and a stopband (leave a gap between them)", edges[i].flag, edges[i].text, edges[i-1].flag, edges[i-1].text)
		}
	}

	out := designOutput{RateHz: rate, TargetRippleDB: ripple, TargetAttenDB: atten, GridDensity: grid, Caution: report.Caution}
	var bands []remez.Band
	for _, e := range edges {
		b := designBandOf(e.lo, e.hi, e.pass, dp, ds)
		kind := "pass"
		if !e.pass {
			kind = "stop"
		}
		bands = append(bands, b)
		out.Bands = append(out.Bands, designBand{Kind: kind, LoHz: e.lo, HiHz: e.hi, Weight: b.Weight})
	}
	if min(dp, ds) <= remez.RoundingLevel(3) {
		// No length levels an error below the rounding of the shortest sum.
		return roundingFailure(c.Context, nil, designFlags{rate: rate, bands: bands, dp: dp, ds: ds, ripple: ripple, atten: atten, taps: taps, grid: grid})
	}
	if taps == 0 {
		// A filter far beyond the longest length searched would cost
		// minutes of designs before failing: refused at once, with the
		// attenuation and the transition that would fit.
		de := make([]designEdge, len(edges))
		for i, e := range edges {
			de[i] = designEdge{e.lo, e.hi, e.pass}
		}
		if err := checkDesignSize(de, dp, ds, atten, rate); err != nil {
			return err
		}
	}
	settings := remez.Settings{Density: grid}
	if taps > 0 {
		// The engine refuses a grid over remez.MaxGridPoints (designs near
		// that size peaked at 360 to 658 MB: 65535 taps at --grid 63,
		// 32767 at 127, 16383 at 255, /usr/bin/time %M);
		// say so in the flags' words before designing.
		if most := remez.MaxDensity(taps, rate, bands); grid > most {
			return usagef("--grid %d with --taps %d: the design grid would exceed %d points (up to about 660 MB); use --grid %d or less at this length, or fewer taps", grid, taps, remez.MaxGridPoints, most)
		}
	}
	// Ctrl-C or SIGTERM cancel c.Context (main's signal.NotifyContext): the
	// engine checks it every iteration and returns within about 100 ms.
	ctx := c.Context
	var res *remez.Result
	if taps > 0 {
		res, err = remez.DesignContext(ctx, taps, rate, bands, settings)
	} else {
		res, err = remez.MinLengthContext(ctx, rate, bands, 0, maxDesignTaps, settings)
	}
	if ctx.Err() != nil {
		return errors.New("design: interrupted; no filter was designed")
	}
	if err != nil {
		return designFailure(ctx, err, designFlags{rate: rate, bands: bands, dp: dp, ds: ds, ripple: ripple, atten: atten, taps: taps, grid: grid, res: res})
	}
	if len(res.Deviations) != len(bands) {
		return fmt.Errorf("design: engine returned %d band deviations for %d bands", len(res.Deviations), len(bands))
	}
	// The engine measures its taps at its own extrema; chain/fixed's
	// measurement (a dense grid with every peak refined, or rigorous
	// bounds) is the other view, and the figures are the worse of the two:
	// on seeded 866-tap multiband designs the engine's stopband read up to
	// 1.7e-4 (relative) below an independent dense scan.
	dense, err := fixed.DeviationsContext(ctx, res.Taps, rate, bands, 0)
	if ctx.Err() != nil {
		return errors.New("design: interrupted; no filter was designed")
	}
	if err != nil {
		return fmt.Errorf("design: measuring the taps: %v", err)
	}
	passDev, stopDev := 0.0, 0.0
	for i, b := range bands {
		d := math.Max(res.Deviations[i], dense[i])
		if b.Gain == 1 {
			passDev = math.Max(passDev, d)
		} else {
			stopDev = math.Max(stopDev, d)
		}
	}
	out.Taps = len(res.Taps)
	out.Coefficients = res.Taps
	out.PassbandRippleDB = rippleOf(passDev)
	out.StopbandAttenDB = attenOf(stopDev)
	out.PeakGainHz, out.PeakGainDB = peakGain(res.Taps, rate)
	out.MeetsTargets = passDev <= dp && stopDev <= ds
	out.Converged = res.Converged
	out.Iterations = res.Iterations
	if c.Bool("json") {
		return writeJSON(c.App.Writer, out)
	}
	printDesign(c.App.Writer, out)
	return nil
}

// designBandOf is the design command's band from lo to hi Hz: a passband
// of gain 1 within dp, or a stopband within ds weighted dp/ds, so that one
// levelled error meets both targets.
func designBandOf(lo, hi float64, pass bool, dp, ds float64) remez.Band {
	if pass {
		return remez.Band{Lo: lo, Hi: hi, Gain: 1, Weight: 1, MaxError: dp}
	}
	return remez.Band{Lo: lo, Hi: hi, Weight: dp / ds, MaxError: ds}
}

// designFlags are what designFailure needs of the command line.
type designFlags struct {
	rate          float64
	bands         []remez.Band
	dp, ds        float64
	ripple, atten float64
	taps, grid    int
	res           *remez.Result // Design's best result, when it gave one
}

// designFailure turns an error of remez.DesignContext or
// remez.MinLengthContext into the command line's words: exit 2 where a
// flag must change (a limit below double precision's rounding, no length
// within the tap limit, a grid too large), 1 where the exchange failed.
// No package or function names reach the user.
func designFailure(ctx context.Context, err error, f designFlags) error {
	var se *remez.SearchError
	isSearch := errors.As(err, &se)
	switch {
	case errors.Is(err, remez.ErrRoundingLevel) && errors.Is(err, remez.ErrNotConverged) && f.taps > 0:
		// Only a lower bound is known: the exchange broke down from every
		// start with its levelled error at rounding level.
		return usagef("--taps %d: the exchange broke down from every start with its error at the rounding level of double precision (below %.1g), as it does at lengths far beyond what the bands need; use fewer taps, or leave --taps out to find the shortest filter that meets them", f.taps, remez.RoundingLevel(f.taps))
	case errors.Is(err, remez.ErrRoundingLevel) && f.taps > 0:
		return usagef("--taps %d: more than these bands need: the response meets them to the rounding level of double precision (below %.1g), where the exchange cannot level its error; use fewer taps, or leave --taps out to find the shortest filter", f.taps, remez.RoundingLevel(f.taps))
	case errors.Is(err, remez.ErrRoundingLevel) && isSearch && se.Met > 0 && min(f.dp, f.ds) <= roundingCause*remez.RoundingLevel(se.Met):
		return roundingFailure(ctx, se, f)
	case errors.Is(err, remez.ErrRoundingLevel) && isSearch && se.Fail == 0 && se.Met <= remez.LeastTaps(len(f.bands))+2:
		// The shortest length that can shape so many bands at all (one
		// coefficient a band) is already far beyond what they need.
		return usagef("--stop: %d bands (--pass and --stop together) need at least %d taps, one coefficient a band, and at that length the response meets them to the rounding level of double precision, where the exchange cannot level its error; merge neighbouring --stop bands or drop some", len(f.bands), remez.LeastTaps(len(f.bands)))
	case errors.Is(err, remez.ErrTooManyBands) && f.taps == 0 && remez.LeastTaps(len(f.bands)) > maxDesignTaps:
		return usagef("--stop: %d bands (--pass and --stop together) need at least %d taps, one coefficient a band, more than the %d allowed; merge neighbouring --stop bands or drop some", len(f.bands), remez.LeastTaps(len(f.bands)), maxDesignTaps)
	case errors.Is(err, remez.ErrRoundingLevel) && isSearch:
		// Limits far above rounding: the exchange broke down at the
		// length that should meet (seen with wide don't-care regions
		// beside a passband not from 0), not the user's limits.
		return fmt.Errorf("design: the search for the shortest filter ended without an answer: %d taps fail and the design of %d taps broke down (its error fell to rounding level, which --ripple %g dB and --atten %g dB do not explain): design a length with --taps", se.Fail, se.Met, f.ripple, f.atten)
	case errors.Is(err, remez.ErrTooManyBands) && f.taps > 0:
		return usagef("--taps %d: %d bands (--pass and --stop together) are more than a %d-tap filter can shape, at most %d; use fewer --stop bands or at least %d --taps", f.taps, len(f.bands), f.taps, (f.taps+1)/2, remez.LeastTaps(len(f.bands)))
	case errors.Is(err, remez.ErrGridTooLarge) && isSearch:
		return usagef("--grid %d: no filter up to %d taps, the longest whose grid fits in memory at this density, meets --ripple and --atten; lower --grid (16 fits every length up to %d taps)", f.grid, se.Limit, maxDesignTaps)
	case errors.Is(err, remez.ErrGridTooLarge):
		return usagef("--grid %d: the design grid would not fit in memory; lower --grid", f.grid)
	case errors.Is(err, remez.ErrNoLength) && isSearch:
		return usagef("--ripple %g dB and --atten %g dB: no filter up to %d taps meets them over these bands; widen the transitions between --pass and --stop, or relax --ripple or --atten", f.ripple, f.atten, se.Limit)
	case isSearch && se.Met == 0 && se.Fail > 0:
		return fmt.Errorf("design: the search for the shortest filter ended without an answer: %d taps fail and no longer length it designed met the targets (the error did not fall with the length): check --pass and --stop, or design a length with --taps", se.Fail)
	case isSearch:
		return fmt.Errorf("design: the search for the shortest filter ended without an answer between %d and %d taps: design a length with --taps", se.Fail, se.Met)
	case f.taps > 0 && f.res != nil && !f.res.Converged:
		return fmt.Errorf("design: the exchange did not converge at %d taps in %d iterations (levelled deviation %.3g): try another --taps or wider transitions", f.taps, f.res.Iterations, f.res.Delta)
	case f.taps > 0 && f.res == nil && errors.Is(err, remez.ErrNotConverged):
		return fmt.Errorf("design: %d taps break down numerically (no finite coefficients): use fewer --taps or wider transitions", f.taps)
	}
	return fmt.Errorf("design: %v", err)
}

// roundingCause is how far above the rounding level of n taps
// (remez.RoundingLevel) the smaller deviation may lie for a search that
// met n taps only to rounding level to be blamed on it: --ripple 1e-10 dB
// (13 times the level at 86 taps) failed so and 1e-9 dB (144 times, 80
// taps) designed, on 0:0.2 and 0.3:0.5 at 40 dB; 1e4 covers both with
// room, and a limit further above is not the cause.
const roundingCause = 1e4

// roundingFailure is the error of a length search whose shortest meeting
// length is met only to rounding level: the smaller of the passband and
// stopband deviations is too small for double precision. The limit is
// relaxed tenfold (--ripple) or by 20 dB (--atten) up to six times, and
// the least value that designs is named; each trial is a length search of
// about the same length, stopped by Ctrl-C like the first.
func roundingFailure(ctx context.Context, se *remez.SearchError, f designFlags) error {
	flag, value, dev, unit := "--ripple", f.ripple, f.dp, "a passband deviation"
	if f.ds < f.dp {
		flag, value, dev, unit = "--atten", f.atten, f.ds, "a stopband deviation"
	}
	var msg string
	start := value
	if se != nil {
		msg = fmt.Sprintf("%s %g dB: %s of %.2g is too small for double precision to level over the %d taps these bands need (a sum of them rounds near %.1g)", flag, value, unit, dev, se.Met, remez.RoundingLevel(se.Met))
	} else {
		// Below the rounding of the shortest filter: no length can level
		// it, so the trials start where the deviation is ten times that.
		of := fmt.Sprintf("of %.2g", dev)
		if dev == 0 {
			of = "so small that it rounds to 0" // 1e-300 dB
		}
		msg = fmt.Sprintf("%s %g dB: %s %s is below %.0e, the least double precision can level in a filter of any length", flag, value, unit, of, remez.RoundingLevel(3))
		start = math.Pow(10, math.Ceil(math.Log10(chain.DevToRipple(10*remez.RoundingLevel(3)))))
	}
	first := 1 // trials: start relaxed by one step, two, ...
	if se == nil {
		first = 0 // start itself first
	}
	try, prev := value, value
	for k := first; k < first+6; k++ {
		prev = try
		if flag == "--ripple" {
			try = start * math.Pow(10, float64(k))
		} else {
			try = start - 20*float64(k)
		}
		if try > 10 || try <= 0 {
			break
		}
		dp, ds := f.dp, f.ds
		if flag == "--ripple" {
			dp = chain.RippleToDev(try)
		} else {
			ds = chain.RejectionToDev(try)
		}
		bands := make([]remez.Band, len(f.bands))
		for i, b := range f.bands {
			bands[i] = designBandOf(b.Lo, b.Hi, b.Gain == 1, dp, ds)
		}
		_, err := remez.MinLengthContext(ctx, f.rate, bands, 0, maxDesignTaps, remez.Settings{Density: f.grid})
		if ctx.Err() != nil {
			return usagef("%s; raise it", msg)
		}
		if err == nil {
			rule := fmt.Sprintf("raise it: %.3g dB designs (%.3g dB does not)", try, prev)
			if k == 0 {
				rule = fmt.Sprintf("raise it: %.3g dB designs", try)
			}
			if flag == "--atten" {
				rule = fmt.Sprintf("lower it: %.3g dB designs (%.3g dB does not)", try, prev)
			}
			return usagef("%s; %s", msg, rule)
		}
		if !errors.Is(err, remez.ErrRoundingLevel) {
			break
		}
	}
	if flag == "--atten" {
		return usagef("%s; lower it", msg)
	}
	return usagef("%s; raise it", msg)
}

// designEdge is a band of the design command: its edges, Hz, and whether
// it is the passband.
type designEdge struct {
	lo, hi float64
	pass   bool
}

// lowpassLengthRatio is the least ratio of the true minimum length to
// Herrmann's estimate that checkDesignSize assumes for a lowpass (one
// passband from 0, one stopband to rate/2) of ripple at most 3 dB and
// attenuation at least 20 dB: on 200 seeded random lowpass specs (ripple
// 0.001 to 3.16 dB, attenuation 20 to 150 dB, 300 to 2500 taps;
// TestDesignLengthRatio) the worst measured was 0.956, at about 3 dB of
// ripple and 120 to 140 dB; 0.9 leaves more than twice that shortfall. A
// lowpass is refused when 0.9 of its estimate still exceeds maxDesignTaps.
const lowpassLengthRatio = 0.9

// otherLengthRatio is the same for every other shape (several stopbands,
// a passband not from 0, a stopband short of rate/2) and for ripple or
// attenuation outside the measured range, where don't-care bands or the
// edges of Herrmann's fit can make the filter shorter than the estimate
// and no measurement bounds the ratio: refused only when 0.8 of the
// estimate exceeds maxDesignTaps, as before.
const otherLengthRatio = 0.8

// checkDesignSize refuses a minimum-length design whose sharpest
// pass-to-stop transition (edges sorted, not overlapping) is estimated by
// Herrmann's formula (remez.HerrmannLength) so long that, reduced by the
// shape's length ratio (lowpassLengthRatio or otherLengthRatio), it still
// exceeds maxDesignTaps, naming the largest --atten and the narrowest
// transition that would be estimated within maxDesignTaps.
func checkDesignSize(edges []designEdge, dp, ds, atten, rate float64) error {
	worst, wi := 0, -1
	for i := 0; i+1 < len(edges); i++ {
		a, b := edges[i], edges[i+1]
		if a.pass == b.pass {
			continue
		}
		if n := remez.HerrmannLength(math.Min(dp, 0.5), math.Min(ds, 0.5), b.lo-a.hi, rate); n > worst {
			worst, wi = n, i
		}
	}
	ratio := otherLengthRatio
	if len(edges) == 2 && edges[0].pass && edges[0].lo == 0 && edges[1].hi == rate/2 && dp <= chain.RippleToDev(3) && atten >= 20 {
		ratio = lowpassLengthRatio
	}
	if wi < 0 || ratio*float64(worst) <= maxDesignTaps {
		return nil
	}
	tr := edges[wi+1].lo - edges[wi].hi
	fits := func(at, t float64) bool {
		n := remez.HerrmannLength(math.Min(dp, 0.5), math.Min(chain.RejectionToDev(at), 0.5), t, rate)
		return n > 0 && n <= maxDesignTaps
	}
	lo, hi := 0.0, atten // the largest attenuation that fits at tr
	for range 60 {
		if mid := (lo + hi) / 2; fits(mid, tr) {
			lo = mid
		} else {
			hi = mid
		}
	}
	tlo, thi := tr, rate/2 // the narrowest transition that fits at atten
	for range 60 {
		if mid := (tlo + thi) / 2; fits(atten, mid) {
			thi = mid
		} else {
			tlo = mid
		}
	}
	// Three significant figures, rounded up so that the width named fits.
	step := math.Pow(10, math.Floor(math.Log10(thi))-2)
	advice := fmt.Sprintf("widen that transition to at least %s", units.FormatComputedFrequency(math.Ceil(thi/step)*step))
	if room := edges[wi+1].hi - edges[wi].lo; !fits(atten, thi) || thi >= room {
		// No width the two bands leave room for will do: the rate is too
		// high for this filter.
		advice = "no transition the band edges leave room for is wide enough at this rate: lower --rate (plan takes such a ratio down in stages)"
	}
	if lo > 0 && fits(lo, tr) {
		advice = fmt.Sprintf("lower --atten to %.1f dB or less, or %s", math.Floor(lo*10)/10, advice)
	}
	taps := fmt.Sprintf("about %d taps", worst)
	if worst >= math.MaxInt32 {
		taps = "over 2 billion taps"
	}
	return usagef("--atten %g dB over the %s transition from %s to %s: %s (Herrmann's estimate; the shortest filter is at least %.2g of it), more than the %d this command designs; %s",
		atten, units.FormatDifference(edges[wi+1].lo, edges[wi].hi), units.FormatFrequency(edges[wi].hi), units.FormatFrequency(edges[wi+1].lo), taps, ratio, maxDesignTaps, advice)
}

// rippleOf is the peak-to-peak ripple of a passband deviation; a deviation of
// 1 or more has no finite ripple, so it is capped to keep NaN out of results.
func rippleOf(dp float64) float64 {
	if dp >= 1 {
		dp = 1 - 1e-12
	}
	return chain.DevToRipple(dp)
}

// attenOf is the attenuation of a stopband deviation, bounded as every dB
// figure is (chain.DevToRejection) so that no infinity reaches the output.
func attenOf(ds float64) float64 { return chain.DevToRejection(ds) }

func printDesign(w io.Writer, o designOutput) {
	kind := "type I (odd length)"
	if o.Taps%2 == 0 {
		kind = "type II (even length)"
	}
	fmt.Fprintf(w, "designed %d taps, %s, at %s\n", o.Taps, kind, units.FormatFrequency(o.RateHz))
	for _, b := range o.Bands {
		fmt.Fprintf(w, "  %-4s %s to %s, weight %.4g\n", b.Kind, units.FormatFrequency(b.LoHz), units.FormatFrequency(b.HiHz), b.Weight)
	}
	fmt.Fprintf(w, "passband ripple  %.4f dB peak-to-peak (target %.4g dB)\n", o.PassbandRippleDB, o.TargetRippleDB)
	fmt.Fprintf(w, "stopband atten.  %.2f dB (target %.4g dB)\n", o.StopbandAttenDB, o.TargetAttenDB)
	verdict := "meets both targets"
	if !o.MeetsTargets {
		verdict = "does NOT meet the targets"
	}
	conv := "converged"
	if !o.Converged {
		conv = "did NOT converge"
	}
	fmt.Fprintf(w, "%s; exchange %s in %d iterations (grid density %d)\n", verdict, conv, o.Iterations, o.GridDensity)
	if over := o.PeakGainDB - 20*math.Log10(1+chain.RippleToDev(o.TargetRippleDB)); over > gapRiseDB {
		fmt.Fprintf(w, "WARNING: the response rises to %+.1f dB at %s, between the bands, where no target holds it: add a --stop there or narrow the gap (measured on a dense grid)\n", o.PeakGainDB, units.FormatFrequency(math.Round(o.PeakGainHz)))
	}
	fmt.Fprintln(w, "coefficients: use --json")
}

// gapRiseDB is how far the peak gain may lie above the passband's top
// before the text output warns of it.
const gapRiseDB = 1

// peakGain returns where in [0, rate/2] the filter h has its largest gain,
// and that gain in dB: the largest of an FFT grid of at least 16 points
// per tap, refined by golden-section search on the direct sum
// (remez.Amplitude) between its neighbours.
func peakGain(h []float64, rate float64) (hz, db float64) {
	points := 1 << bits.Len(uint(16*len(h)))
	mag := remez.NewSpectrum(points+1).Magnitude(make([]float64, points+1), h)
	best := 0
	for k, v := range mag {
		if v > mag[best] {
			best = k
		}
	}
	step := rate / 2 / float64(points)
	lo, hi := math.Max(0, float64(best-1)*step), math.Min(rate/2, float64(best+1)*step)
	g := func(f float64) float64 { return math.Abs(remez.Amplitude(h, f, rate)) }
	x, v := remez.GoldenMax(g, lo, hi, 60, 0)
	if mag[best] > v {
		x, v = float64(best)*step, mag[best]
	}
	return x, 20 * math.Log10(v)
}

func writeJSON(w io.Writer, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return fmt.Errorf("encoding JSON: %v", err)
	}
	_, err = w.Write(append(b, '\n'))
	return err
}
