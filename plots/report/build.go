package report

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"sort"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots"
)

// The input-frequency grid of response.svg has three parts, because at large
// ratios one even grid over [0, F0/2] leaves the output band and its first
// alias bands with a point or two: an even grid over the whole span, a dense
// even grid over the near panel's [0, nearSpan*FK], and a geometric grid from
// there to F0/2 for the log-frequency view.
const (
	spanPoints = 20001
	nearPoints = 8001
	logPoints  = 12001
	nearSpan   = 2.5 // output rates; the plots package's default near panel
)

// responseGrid returns the sorted, duplicate-free grid described above.
func responseGrid(f0, fk float64) []float64 {
	half := f0 / 2
	near := math.Min(nearSpan*fk, half)
	g := make([]float64, 0, spanPoints+nearPoints+logPoints)
	for k := 0; k < spanPoints; k++ {
		g = append(g, half*float64(k)/float64(spanPoints-1))
	}
	for k := 0; k < nearPoints; k++ {
		g = append(g, near*float64(k)/float64(nearPoints-1))
	}
	if near < half {
		r := math.Log(half / near)
		for k := 0; k < logPoints; k++ {
			g = append(g, near*math.Exp(r*float64(k)/float64(logPoints-1)))
		}
	}
	sort.Float64s(g)
	out := g[:1]
	for _, v := range g[1:] {
		if v > out[len(out)-1] && v <= half {
			out = append(out, v)
		}
	}
	return out
}

// Files renders every file a plan or check writes, in memory, in the order
// written: report.json, front.svg and .png, response.svg and .png,
// stages.svg and .png, then the recommended chain's coefficient files (see
// CoefficientFiles) and its hand-off (HandoffFiles). rep is NewContext's
// or NewForFiles's report of res for spec; the recommended chain's files
// that NewForFiles started are collected here. The figures are drawn at
// once, each format on its own goroutine. ctx stops it, returning
// ctx.Err() at once (a figure being drawn is abandoned: the command is
// about to exit).
func Files(ctx context.Context, rep *Report, res *optimize.Result, spec *specfile.Spec) ([]File, error) {
	js, err := rep.Marshal()
	if err != nil {
		return nil, err
	}
	files := []File{{Name: "report.json", Data: js}}
	rec := rep.Recommended
	rf := rep.early
	if rf == nil || rf.rec != rec {
		rf = startRecommended(rep, res, spec)
	}

	// A multiplierless plan's cost axis is its adders as built: the
	// figure's x axis holds them (plots.FrontData.Adders).
	ml := rep.Spec.Hardware.Multiplierless
	fd := plots.FrontData{Recommended: rec, FeasibleTotal: res.FeasibleAll, Adders: ml, PerInput: rep.Spec.Interpolates()}
	for _, ch := range rep.Front {
		// The rejection the verdict is judged on: the rounded taps' when
		// they are planned.
		rej, _ := ch.BuiltFigures()
		x := ch.MultipliesPerOutput
		if ml && ch.Adders != nil {
			x = float64(*ch.Adders)
		}
		fd.Front = append(fd.Front, plots.Point{
			Multiplies: x, MemoryBits: float64(ch.MemoryBits),
			LatencyS: ch.LatencyS, RejectionDB: rej, Label: ch.Notation,
		})
	}
	for _, c := range res.Feasible {
		f := c.Figures
		x := f.MultipliesPerOutput
		if ml {
			x = float64(f.Adders)
		}
		if finite(x) && x >= 0 && f.MemoryBits >= 0 {
			fd.Candidates = append(fd.Candidates, plots.Point{Multiplies: x, MemoryBits: float64(f.MemoryBits)})
		}
	}
	fd.TargetDB = rep.Spec.RejectionDB
	if rep.Command == "check" && len(fd.Front) == 1 {
		// The chain named is drawn as a cross over the front it was
		// compared with (its chains that meet the spec), or alone.
		named := fd.Front[0]
		fd.Checked, fd.Recommended = &named, -1
		fd.Title = "Chain named by --chain"
		if cw := rep.ComparedWith; cw != nil {
			var front []plots.Point
			for _, f := range cw.Front {
				x := f.MultipliesPerOutput
				if ml {
					if f.Adders == nil {
						continue // a front of another cost axis: not drawn against adders
					}
					x = float64(*f.Adders)
				}
				if f.MeetsTargets {
					front = append(front, plots.Point{Multiplies: x, MemoryBits: float64(f.MemoryBits),
						LatencyS: f.LatencyS, Label: f.Notation})
				}
			}
			if len(front) > 0 {
				fd.Front = front
				fd.Title = "Chain named by --chain, against " + cw.Source
			}
		}
	}
	// The cloud holds the feasible candidates whose figures can be drawn,
	// of which FeasibleAll counts all.
	fd.FeasibleTotal = max(fd.FeasibleTotal, len(fd.Candidates))
	frontFig, err := plots.Front(fd)
	if err != nil {
		return nil, fmt.Errorf("front plot: %v", err)
	}
	front, err := renderAll(ctx, []figureFiles{{"front", frontFig, []string{"svg", "png"}}})
	if err != nil {
		return nil, err
	}
	files = append(files, front...)
	select {
	case <-rf.done:
	case <-ctx.Done():
		return nil, ctx.Err()
	}
	if rf.err != nil {
		return nil, rf.err
	}
	files = append(files, rf.files...)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	// The hand-off: absent where the chain has no word-length plan, which
	// report.json's word_lengths_error already explains, or a fractional
	// stage (NoHandoff, said on the terminal).
	return append(files, rf.handoff...), nil
}

// recommended holds the files of the recommended chain that need nothing
// of the rest of the front, made on their own goroutines: the response and
// stages figures and the coefficient files (files, in the order written)
// and the hand-off. Once done is closed, err is their first error, or the
// files are set.
type recommended struct {
	rec     int
	done    chan struct{}
	files   []File
	handoff []File
	err     error
}

// startRecommended starts making the recommended chain's files
// (recommended) from rep.Front[rep.Recommended] as it is now: its word
// lengths must be planned (or have failed) and it must no longer change,
// except in the fields that AddAdders and NewResources set, which these
// files do not read (a copy of its stages is taken).
func startRecommended(rep *Report, res *optimize.Result, spec *specfile.Spec) *recommended {
	rec := rep.Recommended
	ch := rep.Front[rec]
	ch.Stages = append([]Stage(nil), ch.Stages...)
	cand := res.Front[rec]
	perInput := rep.Spec.Interpolates()
	rf := &recommended{rec: rec, done: make(chan struct{})}
	go func() {
		defer close(rf.done)
		rf.files, rf.handoff, rf.err = recommendedFiles(ch, cand, spec, perInput)
	}()
	return rf
}

// recommendedFiles makes the files of recommended for chain ch, the
// report's view of cand.
func recommendedFiles(ch Chain, cand optimize.Candidate, spec *specfile.Spec, perInput bool) (files, handoff []File, err error) {
	// The hand-off runs the chain bit-true for its vectors: beside the
	// figures.
	var hf []File
	hdone := make(chan struct{})
	go func() {
		defer close(hdone)
		hf, _ = HandoffFiles(ch)
	}()
	defer func() { <-hdone }()

	sd := plots.StagesData{Title: "Cost by stage: " + ch.Notation, PerInput: perInput}
	for i, st := range ch.Stages {
		// The report's stages are in signal order, the plan's from the
		// high rate down.
		sd.Names = append(sd.Names, stageName(cand, ch.reportIndex(i, len(cand.Plan))))
		sd.Multiplies = append(sd.Multiplies, st.MultipliesPerOutput)
		sd.MemoryBits = append(sd.MemoryBits, float64(st.MemoryBits))
	}
	stFig, stErr := plots.Stages(sd)
	var stages func() ([]File, error)
	if stErr == nil {
		// Drawn while the response is sampled.
		stages = startAll(context.Background(), []figureFiles{{"stages", stFig, []string{"svg", "png"}}})
	}
	rd, err := responseData(cand, spec, ch)
	if err != nil {
		return nil, nil, err
	}
	respFig, err := plots.Response(rd)
	if err != nil {
		return nil, nil, fmt.Errorf("response plot: %v", err)
	}
	if stErr != nil {
		return nil, nil, fmt.Errorf("stages plot: %v", stErr)
	}
	resp, err := renderAll(context.Background(), []figureFiles{{"response", respFig, []string{"svg", "png"}}})
	if err != nil {
		return nil, nil, err
	}
	st, err := stages()
	if err != nil {
		return nil, nil, err
	}
	cf, err := CoefficientFiles(ch, spec.CoefMode() != "float")
	if err != nil {
		return nil, nil, err
	}
	<-hdone
	return append(append(resp, st...), cf...), hf, nil
}

// figureFiles is one figure and the formats it is written in, as
// NAME.FORMAT.
type figureFiles struct {
	name    string
	fig     *plots.Figure
	formats []string
}

// renderAll draws the figures, each format of each on its own goroutine,
// and returns their files in the order given, so the bytes do not depend
// on which finishes first.
func renderAll(ctx context.Context, figs []figureFiles) ([]File, error) {
	return startAll(ctx, figs)()
}

// startAll starts renderAll's drawing and returns the call that waits for
// its files.
func startAll(ctx context.Context, figs []figureFiles) func() ([]File, error) {
	type job struct {
		name string
		wait func() ([]byte, error)
	}
	var jobs []job
	for _, f := range figs {
		for _, ext := range f.formats {
			jobs = append(jobs, job{f.name + "." + ext, render(ctx, f.fig, ext)})
		}
	}
	return func() ([]File, error) {
		files := make([]File, 0, len(jobs))
		for _, j := range jobs {
			b, err := j.wait()
			if err != nil {
				if ctx.Err() != nil {
					return nil, ctx.Err()
				}
				return nil, fmt.Errorf("%s: %v", j.name, err)
			}
			files = append(files, File{Name: j.name, Data: b})
		}
		return files, nil
	}
}

// render starts drawing f in format on its own goroutine and returns the
// call that waits for its bytes. A PNG of a dense response takes a good
// fraction of a second, so once ctx is done the wait returns ctx.Err() at
// once, abandoning the drawing: the command is about to exit.
func render(ctx context.Context, f *plots.Figure, format string) func() ([]byte, error) {
	type result struct {
		b   []byte
		err error
	}
	done := make(chan result, 1)
	if err := ctx.Err(); err != nil {
		done <- result{nil, err}
	} else {
		go func() {
			// The plotting library panics on some ranges (a log axis
			// past float64's); a figure that cannot be drawn is an
			// error of the run, which then leaves no output behind.
			defer func() {
				if r := recover(); r != nil {
					done <- result{nil, fmt.Errorf("could not be drawn: %v", r)}
				}
			}()
			var buf bytes.Buffer
			err := f.Render(&buf, format, 0, 0)
			done <- result{buf.Bytes(), err}
		}()
	}
	return func() ([]byte, error) {
		select {
		case r := <-done:
			return r.b, r.err
		case <-ctx.Done():
			return nil, ctx.Err()
		}
	}
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// responseData samples the recommended cascade's gain, and each stage's, on
// a grid from 0 to half the input rate, through the library's Gain methods:
// with its taps rounded (the report's coefficients_int, as the verdict
// judges them) when the spec sets a coefficient width or "auto", as designed
// otherwise.
func responseData(cand optimize.Candidate, spec *specfile.Spec, ch Chain) (plots.ResponseData, error) {
	c := cand.Chain
	// The response of an interpolation chain is its transpose's, on the
	// output-frequency axis, with the images of the protected band shaded.
	cs := spec.Chain.DecimationView()
	title := "Cascade response: " + ch.Notation
	if spec.CoefMode() != "float" {
		if q := roundedChain(c, ch); q != nil {
			c = q
			title += " (taps rounded)"
		}
	}
	f0 := c.InputRate
	rd := plots.ResponseData{
		Mask:         maskPoints(cs.RejectionMask),
		Images:       cs.Direction() == chain.Interpolate,
		Title:        title,
		TargetDB:     cs.RejectionDB,
		PassbandHz:   cs.Passband,
		OutputRateHz: cs.OutputRate,
	}
	rates := c.Rates()
	dc := c.Gain(0)
	if !(dc > 0) || !finite(dc) {
		return rd, fmt.Errorf("response plot: the chain's DC gain is %v", dc)
	}
	rd.FreqHz = responseGrid(f0, cs.OutputRate)
	var parts fractionalParts
	frac := Fractional(c)
	if frac {
		// A fractional chain: the kept path and the largest alias (see
		// fractionalCurves), on a grid thinned when the stage's L makes
		// each point dear.
		var err error
		if parts, err = splitChain(c); err != nil {
			return rd, err
		}
		rd.FreqHz = thinGrid(rd.FreqHz, parts.work())
		rd.OutputRateHz = c.OutputRate()
		rd.Title += " (kept path and largest alias)"
	}
	n := len(rd.FreqHz)
	rd.TotalDB = make([]float64, n)
	// The stages' curves in signal order, each at its high rate.
	order := c.SignalOrder()
	rd.Stages = make([]plots.Series, len(c.Stages))
	for j, i := range order {
		rd.Stages[j] = plots.Series{Name: stageName(cand, i), DB: make([]float64, n)}
	}
	for k, g := range rd.FreqHz {
		if !frac {
			rd.TotalDB[k] = db(c.Gain(g) / dc)
		}
		for j, i := range order {
			rd.Stages[j].DB[k] = db(c.Stages[i].Gain(g, rates[i]))
		}
	}
	if frac {
		// The paths of a tone through a fractional stage land on every
		// input frequency within fa of a multiple of FK/L: the alias bands
		// would shade nearly all of the axis, so the largest alias is
		// drawn as a curve of its own instead.
		kept, alias, err := fractionalCurves(c, cs.Protected, rd.FreqHz)
		if err != nil {
			return rd, err
		}
		rd.TotalDB, rd.AliasDB = kept, alias
		rd.TotalName = "kept path (K = 0)"
		rd.AliasName = "largest alias into [0, " + units.FormatFrequency(cs.Protected) + "]"
		return rd, nil
	}
	// The bands that fold onto the protected band at the output (docs/design.md §7).
	rd.AliasBands = plots.AliasShading(f0, cs.OutputRate, cs.Protected)
	return rd, nil
}

// roundedChain returns a copy of c whose FIR and half-band taps are the
// report's rounded coefficients (coefficients_int x 2^-coefficient_frac), or
// nil when the report has none for some stage.
func roundedChain(c *chain.Chain, ch Chain) *chain.Chain {
	if len(ch.Stages) != len(c.Stages) {
		return nil
	}
	q := *c
	q.Stages = append([]chain.Stage(nil), c.Stages...)
	for i, s := range q.Stages {
		st, ok := s.(chain.FIRStage)
		if !ok {
			continue
		}
		sr := ch.Stages[ch.reportIndex(i, len(q.Stages))].StageReport
		if sr == nil || sr.CoefficientFrac == nil || len(sr.CoefficientsInt) != len(st.Taps) {
			return nil
		}
		taps := make([]float64, len(sr.CoefficientsInt))
		for k, v := range sr.CoefficientsInt {
			taps[k] = math.Ldexp(float64(v), -*sr.CoefficientFrac)
		}
		st.Taps = taps
		q.Stages[i] = st
	}
	return &q
}

// stageName is stage i's own notation, such as "cic4m1r8" or "hb".
func stageName(cand optimize.Candidate, i int) string {
	if i < len(cand.Plan) {
		return chain.Notation(cand.Plan[i : i+1])
	}
	return fmt.Sprintf("stage %d", i+1)
}

// db is 20 log10 of a magnitude; an exact null is -Inf, which the plots draw
// at their floor.
func db(v float64) float64 {
	if !(v > 0) {
		return math.Inf(-1)
	}
	return 20 * math.Log10(v)
}
