package report

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"sort"
	"sync"

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
// CoefficientFiles). rep is NewContext's report of res for spec. ctx stops
// it between figures (each takes a fraction of a second), returning
// ctx.Err().
func Files(ctx context.Context, rep *Report, res *optimize.Result, spec *specfile.Spec) ([]File, error) {
	js, err := rep.Marshal()
	if err != nil {
		return nil, err
	}
	files := []File{{Name: "report.json", Data: js}}
	rec := rep.Recommended

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
	cand := res.Front[rec]
	rd, err := responseData(cand, spec, rep.Front[rec])
	if err != nil {
		return nil, err
	}
	respFig, err := plots.Response(rd)
	if err != nil {
		return nil, fmt.Errorf("response plot: %v", err)
	}

	sd := plots.StagesData{Title: "Cost by stage: " + rep.Front[rec].Notation, PerInput: rep.Spec.Interpolates()}
	for i, st := range rep.Front[rec].Stages {
		// The report's stages are in signal order, the plan's from the
		// high rate down.
		sd.Names = append(sd.Names, stageName(cand, rep.Front[rec].reportIndex(i, len(cand.Plan))))
		sd.Multiplies = append(sd.Multiplies, st.MultipliesPerOutput)
		sd.MemoryBits = append(sd.MemoryBits, float64(st.MemoryBits))
	}
	stFig, err := plots.Stages(sd)
	if err != nil {
		return nil, fmt.Errorf("stages plot: %v", err)
	}

	figs, err := renderAll(ctx, []figureFiles{
		{"front", frontFig, []string{"svg", "png"}},
		{"response", respFig, []string{"svg", "png"}},
		{"stages", stFig, []string{"svg", "png"}},
	})
	if err != nil {
		return nil, err
	}
	files = append(files, figs...)

	cf, err := CoefficientFiles(rep.Front[rec], spec.CoefMode() != "float")
	if err != nil {
		return nil, err
	}
	files = append(files, cf...)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	// The hand-off: absent where the chain has no word-length plan, which
	// report.json's word_lengths_error already explains, or a fractional
	// stage (NoHandoff, said on the terminal).
	hf, _ := HandoffFiles(rep.Front[rec])
	return append(files, hf...), nil
}

// figureFiles is one figure and the formats it is written in, as
// NAME.FORMAT.
type figureFiles struct {
	name    string
	fig     *plots.Figure
	formats []string
}

// renderAll draws the figures at once, one goroutine each (a figure's
// formats in turn), and returns their files in the order given, so the
// bytes do not depend on which finishes first.
func renderAll(ctx context.Context, figs []figureFiles) ([]File, error) {
	out := make([][]File, len(figs))
	errs := make([]error, len(figs))
	var wg sync.WaitGroup
	for i, f := range figs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for _, ext := range f.formats {
				b, err := render(ctx, f.fig, ext)
				if err != nil {
					errs[i] = fmt.Errorf("%s.%s: %v", f.name, ext, err)
					return
				}
				out[i] = append(out[i], File{Name: f.name + "." + ext, Data: b})
			}
		}()
	}
	wg.Wait()
	var files []File
	for i := range figs {
		if errs[i] != nil {
			return nil, errs[i]
		}
		files = append(files, out[i]...)
	}
	return files, nil
}

// render draws f in format. A PNG of a dense response takes up to about a
// second, so the drawing runs on its own goroutine and an interrupt (ctx)
// returns at once, abandoning it: the command is about to exit.
func render(ctx context.Context, f *plots.Figure, format string) ([]byte, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	type result struct {
		b   []byte
		err error
	}
	done := make(chan result, 1)
	go func() {
		var buf bytes.Buffer
		err := f.Render(&buf, format, 0, 0)
		done <- result{buf.Bytes(), err}
	}()
	select {
	case r := <-done:
		if r.err != nil {
			return nil, r.err
		}
		return r.b, nil
	case <-ctx.Done():
		return nil, ctx.Err()
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
