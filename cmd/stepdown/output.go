package main

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/cmd/stepdown/internal/report"
	"github.com/stepdown-dsp/stepdown/cmd/stepdown/internal/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots"
)

// outDir writes a run's files into a temporary folder beside the output
// folder and renames it into place at the end, so that a run that fails or is
// interrupted leaves the output folder as it was.
//
// The temporary folder, and the name the previous output is moved to while
// the new one takes its place, are short fixed prefixes with a random
// suffix (.stepdown-tmp-*, .stepdown-old-*) in the same parent folder, so
// they fit wherever the output folder's own name fits and a rename stays
// within one file system.
type outDir struct {
	dir    string // as the user gave it
	abs    string
	tmp    string
	exists bool
}

// Prefixes of the temporary names beside the output folder.
const (
	tmpPrefix = ".stepdown-tmp-"
	oldPrefix = ".stepdown-old-"
)

// Seams for tests: the file-system calls whose failures commit handles.
var (
	removeAll = os.RemoveAll
	rename    = os.Rename
)

// prepareOut checks the output folder before any work, and creates the
// temporary folder beside it.
func prepareOut(dir string) (*outDir, error) {
	if dir == "" {
		return nil, usagef("--out: empty; name a folder")
	}
	shown := clip(dir)
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, usagef("--out %q: %v", shown, err)
	}
	o := &outDir{dir: dir, abs: abs}
	parent := filepath.Dir(abs)
	if fi, err := os.Stat(parent); err != nil || !fi.IsDir() {
		return nil, usagef("--out %q: its parent folder %q does not exist", shown, clip(parent))
	}
	fi, err := os.Lstat(abs)
	switch {
	case errors.Is(err, os.ErrNotExist):
	case err != nil:
		return nil, fmt.Errorf("--out %q: %v", shown, unwrapPath(err))
	case fi.Mode()&os.ModeSymlink != 0:
		return nil, usagef("--out %q: is a symbolic link; it would be replaced as a whole, so give the folder itself", shown)
	case !fi.IsDir():
		return nil, usagef("--out %q: is a file, not a folder; remove it or choose another --out", shown)
	default:
		o.exists = true
		entries, err := os.ReadDir(abs)
		if err != nil {
			return nil, fmt.Errorf("--out %q: cannot be read: %v", shown, unwrapPath(err))
		}
		if len(entries) > 0 {
			if _, err := os.Stat(filepath.Join(abs, "report.json")); err != nil {
				return nil, usagef("--out %q: exists and is not a stepdown output folder (no report.json); it would be replaced as a whole, so choose another --out", shown)
			}
		}
		// The folder will be replaced and the previous output removed:
		// make sure both can be done before the search.
		if err := checkRemovable(abs); err != nil {
			return nil, fmt.Errorf("--out %q: the previous output could not be removed after the run (%v); fix its permissions or choose another --out", shown, err)
		}
	}
	tmp, err := os.MkdirTemp(parent, tmpPrefix+"*")
	if err != nil {
		return nil, fmt.Errorf("--out %q: cannot write in %q: %v", shown, clip(parent), unwrapPath(err))
	}
	o.tmp = tmp
	// MkdirTemp makes the folder private; the output is an ordinary folder.
	if err := os.Chmod(tmp, 0o755); err != nil {
		o.cleanup()
		return nil, fmt.Errorf("--out %q: %v", shown, unwrapPath(err))
	}
	return o, nil
}

// checkRemovable reports whether every folder in the tree at dir lets a file
// be created and removed in it, which removing the tree needs.
func checkRemovable(dir string) error {
	return filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return unwrapPath(err)
		}
		if !d.IsDir() {
			return nil
		}
		probe, err := os.CreateTemp(p, ".stepdown-probe-*")
		if err != nil {
			rel, _ := filepath.Rel(dir, p)
			return fmt.Errorf("folder %q is not writable", clip(rel))
		}
		probe.Close()
		return os.Remove(probe.Name())
	})
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err
	}
	return err
}

func (o *outDir) write(files []report.File) error {
	for _, f := range files {
		p := filepath.Join(o.tmp, filepath.FromSlash(f.Name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			return fmt.Errorf("writing %s: %v", f.Name, unwrapPath(err))
		}
		if err := os.WriteFile(p, f.Data, 0o644); err != nil {
			return fmt.Errorf("writing %s: %v", f.Name, unwrapPath(err))
		}
	}
	return nil
}

// commit puts the temporary folder in the output folder's place. On any
// error the output folder is as it was before the run, except in the one
// case the error says so: the new output is in place but the previous one,
// moved aside, could not be removed.
func (o *outDir) commit() error {
	shown := clip(o.dir)
	if !o.exists {
		if err := rename(o.tmp, o.abs); err != nil {
			if fi, serr := os.Lstat(o.abs); serr == nil && fi.IsDir() {
				return fmt.Errorf("--out %q: another run created it first; nothing was written", shown)
			}
			return fmt.Errorf("--out %q: cannot create it: %v", shown, unwrapPath(err))
		}
		o.tmp = ""
		return nil
	}
	old, err := unusedName(filepath.Dir(o.abs), oldPrefix)
	if err != nil {
		return fmt.Errorf("--out %q: cannot replace it: %v", shown, err)
	}
	if err := rename(o.abs, old); err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("--out %q: another run moved or removed it meanwhile; nothing was written", shown)
		}
		return fmt.Errorf("--out %q: cannot replace it: %v", shown, unwrapPath(err))
	}
	if err := rename(o.tmp, o.abs); err != nil {
		// Put the previous output back.
		if rerr := rename(old, o.abs); rerr != nil {
			return fmt.Errorf("--out %q: cannot replace it (%v), and the previous output could not be put back: it is in %q", shown, unwrapPath(err), old)
		}
		if fi, serr := os.Lstat(o.abs); serr == nil && fi.IsDir() && errors.Is(err, os.ErrExist) {
			return fmt.Errorf("--out %q: another run replaced it first; nothing was written", shown)
		}
		return fmt.Errorf("--out %q: cannot replace it: %v", shown, unwrapPath(err))
	}
	o.tmp = ""
	if err := removeAll(old); err != nil {
		return fmt.Errorf("--out %q: the new output is in place, but the previous one could not be removed: remove %q yourself (%v)", shown, old, unwrapPath(err))
	}
	return nil
}

// unusedName returns a path in parent, prefix and 16 random hex digits, that
// does not exist yet (os.Rename will not move a folder onto another).
func unusedName(parent, prefix string) (string, error) {
	for range 16 {
		var b [8]byte
		if _, err := rand.Read(b[:]); err != nil {
			return "", err
		}
		p := filepath.Join(parent, prefix+hex.EncodeToString(b[:]))
		if _, err := os.Lstat(p); errors.Is(err, os.ErrNotExist) {
			return p, nil
		}
	}
	return "", errors.New("no unused temporary name")
}

// cleanup removes the temporary folder of a run that did not commit.
func (o *outDir) cleanup() {
	if o != nil && o.tmp != "" {
		_ = removeAll(o.tmp)
		o.tmp = ""
	}
}

func sortedKeys(m map[string]int) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

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

// buildFiles renders every output file in memory, report.json first. ctx
// (an interrupt) stops it between figures, each of which takes a fraction
// of a second.
func buildFiles(ctx context.Context, rep *report.Report, res *optimize.Result, spec *specfile.Spec) ([]report.File, error) {
	js, err := rep.Marshal()
	if err != nil {
		return nil, err
	}
	files := []report.File{{Name: "report.json", Data: js}}
	rec := rep.Recommended

	fd := plots.FrontData{Recommended: rec}
	for _, ch := range rep.Front {
		// The rejection the verdict is judged on: the rounded taps' when
		// they are planned.
		rej, _ := ch.BuiltFigures()
		fd.Front = append(fd.Front, plots.Point{
			Multiplies: ch.MultipliesPerOutput, MemoryBits: float64(ch.MemoryBits),
			RejectionDB: rej, Label: ch.Notation,
		})
	}
	for _, c := range res.Feasible {
		f := c.Figures
		if finite(f.MultipliesPerOutput) && f.MultipliesPerOutput >= 0 && f.MemoryBits >= 0 {
			fd.Candidates = append(fd.Candidates, plots.Point{Multiplies: f.MultipliesPerOutput, MemoryBits: float64(f.MemoryBits)})
		}
	}
	if rep.Command == "check" {
		fd.Title = "Chain named by --chain"
	}
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

	sd := plots.StagesData{Title: "Cost by stage: " + rep.Front[rec].Notation}
	for i, st := range rep.Front[rec].Stages {
		sd.Names = append(sd.Names, stageName(cand, i))
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
		{"stages", stFig, []string{"svg"}},
	})
	if err != nil {
		return nil, err
	}
	files = append(files, figs...)

	cf, err := report.CoefficientFiles(rep.Front[rec], spec.CoefMode() != "float")
	if err != nil {
		return nil, err
	}
	return append(files, cf...), nil
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
func renderAll(ctx context.Context, figs []figureFiles) ([]report.File, error) {
	out := make([][]report.File, len(figs))
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
				out[i] = append(out[i], report.File{Name: f.name + "." + ext, Data: b})
			}
		}()
	}
	wg.Wait()
	var files []report.File
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
func responseData(cand optimize.Candidate, spec *specfile.Spec, ch report.Chain) (plots.ResponseData, error) {
	c := cand.Chain
	cs := spec.Chain
	title := "Cascade response: " + ch.Notation
	if spec.CoefMode() != "float" {
		if q := roundedChain(c, ch); q != nil {
			c = q
			title += " (taps rounded)"
		}
	}
	f0 := c.InputRate
	rd := plots.ResponseData{
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
	n := len(rd.FreqHz)
	rd.TotalDB = make([]float64, n)
	rd.Stages = make([]plots.Series, len(c.Stages))
	for i := range c.Stages {
		rd.Stages[i] = plots.Series{Name: stageName(cand, i), DB: make([]float64, n)}
	}
	for k, g := range rd.FreqHz {
		rd.TotalDB[k] = db(c.Gain(g) / dc)
		for i, st := range c.Stages {
			rd.Stages[i].DB[k] = db(st.Gain(g, rates[i]))
		}
	}
	// The bands that fold onto the protected band at the output (docs/design.md §7).
	fk, fa := cs.OutputRate, cs.Protected
	// The first 64 bands, which the near panel shows, are drawn as they are;
	// later ones closer than a 4096th of the axis to the previous one join
	// it (they would share a pixel anyway), so a chain with millions of
	// bands hands the figure a few thousand.
	minGap := f0 / 2 / 4096
	for k := 1; float64(k)*fk-fa < f0/2; k++ {
		lo, hi := float64(k)*fk-fa, math.Min(float64(k)*fk+fa, f0/2)
		if n := len(rd.AliasBands); k > 64 && n > 0 && lo-rd.AliasBands[n-1][1] < minGap {
			rd.AliasBands[n-1][1] = hi
			continue
		}
		rd.AliasBands = append(rd.AliasBands, [2]float64{lo, hi})
	}
	return rd, nil
}

// roundedChain returns a copy of c whose FIR and half-band taps are the
// report's rounded coefficients (coefficients_int x 2^-coefficient_frac), or
// nil when the report has none for some stage.
func roundedChain(c *chain.Chain, ch report.Chain) *chain.Chain {
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
		sr := ch.Stages[i].StageReport
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
