package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"slices"
	"strings"
	"sync"
	"time"
	"unicode"

	"github.com/schollz/progressbar/v3"
	"github.com/urfave/cli/v2"
	"golang.org/x/term"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots/htmlreport"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

const defaultOut = "stepdown-out"

func outFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "out", Value: defaultOut, Usage: "output folder (replaced as a whole, atomically)"},
		&cli.BoolFlag{Name: "resources", Usage: "also print the recommended (or checked) chain's bill of resources at the clock", DefaultText: "off"},
		&cli.BoolFlag{Name: "json", Usage: "print report.json on stdout as well (the table goes to stderr)", DefaultText: "off"},
		&cli.BoolFlag{Name: "quiet", Usage: "print nothing but errors (and --json output)", DefaultText: "off"},
	}
}

func planCommand() *cli.Command {
	return &cli.Command{
		Name:      "plan",
		Usage:     "search every split of the decimation ratio and recommend a chain",
		ArgsUsage: "[SPEC.toml]",
		UsageText: "stepdown plan [SPEC.toml] [--out DIR] [--json] [--max-stages N] [--jobs N] [--quiet] [--timeout DUR] [--html] [--resources]\n\n" +
			"Without SPEC.toml the built-in example is planned.",
		Flags: append(outFlags(),
			&cli.IntFlag{Name: "max-stages", Usage: "override search.max_stages (1..12)", DefaultText: "the spec's"},
			&cli.IntFlag{Name: "jobs", Usage: "parallel designs (at most 4 per CPU run at once)", DefaultText: "the number of CPUs"},
			&cli.DurationFlag{Name: "timeout", Usage: "stop after this long with the best front so far, marked partial (e.g. 30s)", DefaultText: "none"},
			&cli.BoolFlag{Name: "html", Usage: "also write report.html, one self-contained page for sharing and printing"},
		),
		Action: runPlan,
	}
}

func checkCommand() *cli.Command {
	return &cli.Command{
		Name:      "check",
		Usage:     "evaluate a chain you name against the spec (same figures, plots and files as plan)",
		ArgsUsage: "[SPEC.toml]",
		UsageText: "stepdown check [SPEC.toml] --chain CHAIN [--front REPORT.json] [--out DIR] [--json] [--quiet] [--html] [--jobs N] [--resources]\n\n" +
			"CHAIN is the notation plan prints, e.g. \"cic4m1r8 > hb > fir4\". Without SPEC.toml the built-in example is used.\n" +
			"The chain is compared with the plan's front (the spec is planned again, or --front names a plan's report.json).",
		Flags: append(outFlags(),
			&cli.StringFlag{Name: "chain", Usage: "the chain, in the notation plan prints"},
			&cli.StringFlag{Name: "front", Usage: "compare with the front in this report.json of a plan of the same spec, instead of planning it again"},
			&cli.BoolFlag{Name: "html", Usage: "also write report.html, one self-contained page for sharing and printing"},
			&cli.IntFlag{Name: "jobs", Usage: "parallel designs when planning the spec to compare", DefaultText: "the number of CPUs"},
		),
		Action: runCheck,
	}
}

// loadSpec reads the spec named by the first argument, or the built-in
// example, and returns it with its name and its text (read once, within
// specfile.MaxFileSize).
func loadSpec(c *cli.Context) (*specfile.Spec, string, []byte, error) {
	if c.Args().Len() > 1 {
		return nil, "", nil, usagef("%s: unexpected argument %q (give at most one spec file)", c.Command.Name, clip(c.Args().Get(1)))
	}
	if !c.Args().Present() {
		s, err := specfile.Example()
		if err != nil {
			return nil, "", nil, fmt.Errorf("built-in example: %v", err)
		}
		return s, specfile.ExampleName, []byte(specfile.ExampleText), nil
	}
	path := c.Args().First()
	s, text, err := specfile.LoadText(path)
	if err != nil {
		return nil, "", nil, usageError{err}
	}
	return s, path, text, nil
}

// job holds what a plan or check needs to write its outputs.
type job struct {
	c       *cli.Context
	spec    *specfile.Spec
	source  string
	out     *report.Folder
	quiet   bool
	json    bool
	started time.Time
	compare *report.Comparison // check: the front the chain is compared with
	// compareNote says why check has no comparison, when it has none.
	compareNote string
	// limitNote says which [hardware] limit the checked chain breaks.
	limitNote string
	// hints are plan's cheaper ways to the channel (optimize.Hints).
	hints []optimize.Hint
}

func newJob(c *cli.Context) (*job, error) {
	spec, source, _, err := loadSpec(c)
	if err != nil {
		return nil, err
	}
	out, err := prepareOut(c)
	if err != nil {
		return nil, err
	}
	return &job{c: c, spec: spec, source: source, out: out, quiet: c.Bool("quiet"), json: c.Bool("json"), started: time.Now()}, nil
}

// human is where the table goes: stdout, or stderr when stdout carries JSON.
func (j *job) human() io.Writer {
	if j.quiet {
		return io.Discard
	}
	if j.json {
		return j.c.App.ErrWriter
	}
	return j.c.App.Writer
}

// checkSearchFlags checks the search flags plan and sweep share: --max-stages,
// --jobs and --timeout.
func checkSearchFlags(c *cli.Context) error {
	if c.IsSet("max-stages") {
		if n := c.Int("max-stages"); n < 1 || n > specfile.MaxStages {
			return usagef("--max-stages %d: must lie in [1, %d]", n, specfile.MaxStages)
		}
	}
	if n := c.Int("jobs"); n < 0 || n > 1024 {
		return usagef("--jobs %d: must lie in [1, 1024] (0 or absent: the number of CPUs)", n)
	}
	if c.IsSet("timeout") && c.Duration("timeout") <= 0 {
		return usagef("--timeout %v: must be above zero", c.Duration("timeout"))
	}
	return nil
}

func runPlan(c *cli.Context) error {
	// Flag checks come before any file is touched.
	if err := checkSearchFlags(c); err != nil {
		return err
	}
	j, err := newJob(c)
	if err != nil {
		return err
	}
	defer j.out.Discard()

	if c.IsSet("max-stages") {
		// The override goes into the spec so that report.json records it.
		j.spec.MaxStages = c.Int("max-stages")
	}
	set := j.spec.SearchSettings()
	set.Jobs = c.Int("jobs")
	prog := newProgress(c.App.ErrWriter, j.quiet)
	set.Progress = prog.update
	set.Scoring = prog.scoring

	sigCtx := c.Context
	ctx := sigCtx
	if c.IsSet("timeout") {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(sigCtx, c.Duration("timeout"))
		defer cancel()
	}
	res, err := optimize.Plan(ctx, j.spec.Chain, set)
	prog.finish()
	if sigCtx.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		return planError(c, err)
	}
	if res.Partial && len(res.Front) == 0 {
		what := "before any chain was designed"
		if res.Designed > 0 {
			what = fmt.Sprintf("after designing %s, before any could be measured against the spec", units.Count(res.Designed, "chain", "chains"))
		}
		return fmt.Errorf("--timeout %v: stopped %s; %s (allow more time)", c.Duration("timeout"), what, untouched(j.out))
	}
	if len(res.Front) == 0 {
		return emptyFront(res, j.spec.Chain, set.Kinds, j.spec.UnityGain, untouched(j.out))
	}
	if !res.Partial {
		// A ratio with a large prime factor: nearby ratios and the
		// fractional route, planned beside it. A hint cut short by
		// --timeout is left out.
		hs := set
		hs.Progress, hs.Scoring = nil, nil
		if h, err := optimize.Hints(ctx, j.spec.Chain, hs, res); err == nil && ctx.Err() == nil {
			j.hints = h
		}
		if sigCtx.Err() != nil {
			return fmt.Errorf("interrupted; %s", untouched(j.out))
		}
	}
	return j.finish(ctx, "plan", res)
}

// planError is the error of an optimize.Plan that refused the search: a
// search larger than the optimiser scores is a spec error (status 2), whose
// message names the most search.max_stages that fits and the keys that
// narrow it; anything else is a runtime failure.
func planError(c *cli.Context, err error) error {
	msg := flagTerms(c, specfile.InFileTerms(err.Error()))
	if searchTooLarge(msg) {
		return usagef("plan: %s", msg)
	}
	return fmt.Errorf("plan: %s", msg)
}

// accumulatorHint is emptyFront's advice on the words, given what would fit
// the closest designed chains' accumulators (optimize.Result.
// AccumulatorExcess; zero when none passed): the coefficient bits to drop,
// the widest input word (a chain whose first stage alone passes) and the
// widest words.output, the word between stages (a chain whose later stages
// alone pass). The widths are those of the chains as designed: the rounded
// taps must still meet the spec.
func accumulatorHint(a optimize.AccumulatorExcess, spec chain.Spec) string {
	ways := specfile.WordsToTry(a, spec)
	if len(ways) == 0 {
		return "narrow words.coefficients, words.input or words.output (check --chain on one names the widths)"
	}
	bits := "bits"
	if a.Least() == 1 {
		bits = "bit"
	}
	return fmt.Sprintf("the closest is %d %s over: try %s (estimated from its taps as designed; check --chain on one names the widths)", a.Least(), bits, strings.Join(ways, " or "))
}

// reMaxStagesFlag is the flag InFileTerms names beside search.max_stages.
var reMaxStagesFlag = regexp.MustCompile(` \(or --max-stages(?: \d+)?\)| or --max-stages`)

// flagTerms drops the --max-stages flag from msg when the command has no
// such flag (check, simulate): the spec key alone is named.
func flagTerms(c *cli.Context, msg string) string {
	if c != nil && c.Command != nil {
		for _, f := range c.Command.Flags {
			if slices.Contains(f.Names(), "max-stages") {
				return msg
			}
		}
	}
	return reMaxStagesFlag.ReplaceAllString(msg, "")
}

// searchTooLarge reports whether msg is optimize's refusal of the search the
// spec asks for: larger than optimize.MaxCandidates, or empty (no stage
// count, prime factor or kinds that make the ratio).
func searchTooLarge(msg string) bool {
	return (strings.Contains(msg, "candidates, more than the") && strings.Contains(msg, "this search scores")) ||
		strings.Contains(msg, "gives no candidate") || strings.Contains(msg, "no chain of integer stages makes it")
}

// emptyFront is the error of a search that left the front empty: the
// optimiser's reason (which names the design budget when that was the cause)
// and the counts of dropped candidates; folder says what became of the
// output folder (untouched). kinds are the search's stage kinds
// (nil: all): the CIC register limit is named only where a CIC can be in
// a chain; unity is words.unity_gain, whose correction can fail too.
func emptyFront(res *optimize.Result, spec chain.Spec, kinds []chain.Kind, unity bool, folder string) error {
	msg := "no chain meets the spec"
	reason := res.Reason
	if n := res.Dropped[optimize.ReasonWordLengths]; n > 0 {
		// Named first: a budget or a target would otherwise take the
		// blame for words the data path cannot hold.
		limits := fmt.Sprintf("an accumulator over %d bits", fixed.MaxAccumulatorBits)
		if kinds == nil || slices.Contains(kinds, chain.CIC) {
			limits += fmt.Sprintf(" or a CIC register over %d bits", chain.MaxCICBits)
		}
		if res.AccumulatorExcess.Least() == 0 && unity {
			// No accumulator is known to be too wide: the gain
			// correction may have had no gain at 0 Hz to correct (taps
			// rounded to a few bits can sum to zero).
			limits += ", or words.unity_gain with no gain at 0 Hz to correct"
		}
		msg += fmt.Sprintf(": the word lengths of %s could not be planned (%s): ", units.Count(n, "designed chain", "designed chains"), limits)
		msg += accumulatorHint(res.AccumulatorExcess, spec)
		if strings.HasPrefix(reason, "No chain was designed within the design budget") {
			// Said short, to keep the line readable.
			reason = ""
			if res.Unsettled > 0 {
				reason = fmt.Sprintf("the design budget left %s undesigned", units.Count(res.Unsettled, "candidate", "candidates"))
			}
		}
	}
	if r := strings.Join(strings.Fields(specfile.InFileTerms(reason)), " "); r != "" {
		r = strings.TrimSuffix(r, ".")
		switch l := strings.ToLower(r); {
		case msg != "no chain meets the spec" && strings.HasPrefix(l, "no chain met the spec"):
			// The words were named already; the dropped counts follow.
		case msg != "no chain meets the spec":
			msg += "; " + strings.ToLower(r[:1]) + r[1:] // mid-sentence
		case strings.HasPrefix(l, msg) || strings.HasPrefix(l, "no chain met the spec"):
			msg = strings.ToLower(r[:1]) + r[1:] // the reason already says it
		default:
			msg += ": " + r
		}
	}
	if c := res.Closest; c != nil && res.NeededCoefBits == 0 && res.Dropped[optimize.ReasonWordLengths] == 0 {
		msg += "; " + optimize.ClosestText(c, spec)
	}
	return fmt.Errorf("%s (dropped: %s); %s", msg, optimize.DroppedText(res.Dropped, ", "), folder)
}

func runCheck(c *cli.Context) error {
	plan, err := parseChainFlag(c)
	if err != nil {
		return err
	}
	if err := checkSearchFlags(c); err != nil {
		return err
	}
	j, err := newJob(c)
	if err != nil {
		return err
	}
	defer j.out.Discard()
	set := j.spec.SearchSettings()
	// A --front that does not fit the spec is refused before the chain is
	// designed (seconds, for a long one).
	var cmp *report.Comparison
	if path := c.String("front"); path != "" {
		if cmp, err = report.ReadComparison(path, j.spec); err != nil {
			return usageError{err}
		}
	}
	cand, why, err := j.designNamed(plan, set)
	if why.OverLimit() {
		j.limitNote = "beyond the fabric's limits: " + why.Text()
	}
	if err != nil {
		return err
	}
	res := &optimize.Result{
		Candidates: 1, Designed: 1, Dropped: map[optimize.Reason]int{},
		Front: []optimize.Candidate{cand}, Recommended: 0, FeasibleAll: 1,
	}
	if cmp == nil {
		if cmp, err = j.planFront(c, set); err != nil {
			return err
		}
	}
	j.compare = cmp
	// finish states the verdict once the report has judged the chain
	// (report.CheckReason): on its rounded taps when they are planned.
	return j.finish(c.Context, "check", res)
}

// parseChainFlag parses --chain, which check needs and simulate takes,
// into its stages in signal order (designNamed turns them into the
// library's order).
func parseChainFlag(c *cli.Context) ([]chain.StagePlan, error) {
	notation := c.String("chain")
	if notation == "" {
		return nil, usagef("--chain: missing; name the chain in the notation plan prints, e.g. \"cic4m1r8 > hb > fir4\"")
	}
	plan, err := chain.ParseNotation(notation)
	if err != nil {
		var ne *chain.NotationError
		if errors.As(err, &ne) {
			found := "the end"
			if ne.Pos < len(ne.Input) {
				found = fmt.Sprintf("%q", units.Clip(ne.Input[ne.Pos:], 12))
			}
			return nil, usagef("--chain %q: at byte %d: expected %s, found %s", clip(notation), ne.Pos, ne.Expected, found)
		}
		return nil, usagef("--chain %q: %s", clip(notation), specfile.InFileTerms(err.Error()))
	}
	return plan, nil
}

// designNamed designs and measures the chain named by --chain (plan)
// exactly as plan's search does (optimize.Check), so that the notation
// plan prints gives the same figures. Its factors must multiply to the
// spec's ratio. The Reason says why the search would drop the chain, if
// it would.
func (j *job) designNamed(plan []chain.StagePlan, set optimize.Settings) (optimize.Candidate, optimize.Reason, error) {
	notation := j.c.String("chain")
	// The product is checked stage by stage against D, so that it cannot
	// overflow: every factor is at least 2.
	dir := j.spec.Chain.Direction()
	want, ratio := j.spec.Chain.Ratio(), "input_rate/output_rate"
	if dir == chain.Interpolate {
		ratio = "output_rate/input_rate"
	}
	fractional := j.spec.Chain.Fractional() || slices.ContainsFunc(plan, func(p chain.StagePlan) bool { return p.Kind.Fractional() })
	d := 1
	for i, p := range plan {
		if fractional {
			// The library checks a fractional plan's stages against the
			// ratio (a *chain.PlanError below, in the user's terms).
			break
		}
		if d > want/p.Factor {
			return optimize.Candidate{}, "", usagef("--chain %q: its factors multiply to more than %s = %d (the first %d of its %d stages already do)", clip(notation), ratio, want, i+1, len(plan))
		}
		d *= p.Factor
	}
	if d != want && !fractional {
		return optimize.Candidate{}, "", usagef("--chain %q: its factors multiply to %d, but %s = %d", clip(notation), d, ratio, want)
	}
	// The library holds an interpolation chain from the high rate down
	// (chain.Chain): the written order reversed, and a fractional stage's
	// L/M turned round (chain.Direction.ParseNotation).
	written := plan
	if dir == chain.Interpolate {
		var err error
		if plan, err = dir.ParseNotation(notation); err != nil {
			return optimize.Candidate{}, "", usagef("--chain %q: %s", clip(notation), specfile.InFileTerms(err.Error()))
		}
	}
	cand, why, err := optimize.Check(j.c.Context, j.spec.Chain, plan, set)
	if j.c.Context.Err() != nil {
		return cand, why, fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		var pe *chain.PlanError
		if errors.As(err, &pe) {
			where := ""
			if pe.Stage >= 0 && pe.Stage < len(plan) {
				k := pe.Stage
				if dir == chain.Interpolate {
					k = len(plan) - 1 - k
				}
				stage := chain.Notation(written[k : k+1])
				where = fmt.Sprintf("stage %d (%s): ", k+1, stage)
				if r := rateChangeRule(pe.Rule, stage); r != "" {
					pe.Rule = r
				}
			}
			return cand, why, usagef("--chain %q: %s%s", clip(notation), where, specfile.InFileTerms(pe.Rule))
		}
		return cand, why, fmt.Errorf("check: %s", specfile.InFileTerms(err.Error()))
	}
	return cand, why, nil
}

// reRateChange is the library's rule for a fractional stage whose L/M
// does not give the spec's ratio.
var reRateChange = regexp.MustCompile(`^rate change (\d+)/(\d+): (?:with the integer stages' (\d+) )?the ratio \d+/\d+ needs (\d+)/(\d+)$`)

// rateChangeRule says the library's rule for a fractional stage of the
// wrong L/M in the notation's own terms: what the stage does, what the
// spec needs from it and how to write that; "" for any other rule. The
// library says L/M as written, for an interpolation chain too.
func rateChangeRule(rule, stage string) string {
	m := reRateChange.FindStringSubmatch(rule)
	if m == nil {
		return ""
	}
	l, mm, nl, nm := m[1], m[2], m[4], m[5]
	kind := strings.TrimRightFunc(stage, func(r rune) bool { return r == '/' || unicode.IsDigit(r) })
	if i := strings.IndexFunc(stage, unicode.IsDigit); i >= 0 {
		kind = stage[:i]
	}
	others := ""
	if m[3] != "" {
		others = fmt.Sprintf(" beside the other stages' factor %s", m[3])
	}
	return fmt.Sprintf("%s changes the rate by %s/%s (up %s, down %s), but the spec's rates need up %s, down %s from this stage%s: write %s%s/%s",
		stage, l, mm, l, mm, nl, nm, others, kind, nl, nm)
}

// planFront is the front check compares its chain with when --front names
// none: that of a plan of the spec run now, judged by its report as plan
// would.
func (j *job) planFront(c *cli.Context, set optimize.Settings) (*report.Comparison, error) {
	set.Jobs = c.Int("jobs")
	prog := newProgress(c.App.ErrWriter, j.quiet)
	set.Progress, set.Scoring = prog.update, prog.scoring
	res, err := optimize.Plan(c.Context, j.spec.Chain, set)
	prog.finish()
	if c.Context.Err() != nil {
		return nil, fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		// The chain is still checked; only the comparison is left out.
		j.compareNote = "not compared with a plan's front: planning the spec failed: " + flagTerms(c, specfile.InFileTerms(err.Error()))
		return nil, nil
	}
	rep, err := report.NewContext(c.Context, "plan", j.spec, res)
	if err != nil {
		return nil, err
	}
	if c.Context.Err() != nil {
		return nil, fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	return report.NewComparison("a plan of the same spec", rep), nil
}

// finish builds the report, writes every file and prints the summary.
// finish writes the report and files of res. ctx stops the word-length
// plans (a plan's time limit or an interrupt); an interrupt (j.c.Context)
// then leaves the output folder as it was.
func (j *job) finish(ctx context.Context, command string, res *optimize.Result) error {
	rep, err := report.NewForFiles(ctx, command, j.spec, res)
	if err != nil {
		return err
	}
	if j.c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	// --timeout may also end the word lengths (and so the bit-true runs
	// and the hand-off they feed): the report is partial then too. The
	// files are still written, without what was not planned.
	cut := ctx.Err() != nil && !res.Partial
	if cut {
		rep.Partial = true
	}
	for _, h := range j.hints {
		rep.Hints = append(rep.Hints, report.Hint{Text: h.Text, OutputRateHz: h.OutputRateHz, Ratio: h.Ratio,
			Chain: h.Chain, MultipliesPerOutput: h.MultipliesPerOutput})
	}
	if command == "check" && len(rep.Front) == 1 {
		rep.Reason = report.CheckReason(rep.Front[0], rep.Spec)
		rep.Compare(j.compare)
	}
	files, err := report.Files(j.c.Context, rep, res, j.spec)
	if j.c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		return err
	}
	if j.c.Bool("html") {
		if files, err = htmlreport.AddPlanPage(j.source, rep, files); err != nil {
			return err
		}
	}
	if j.c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err := j.out.Write(files); err != nil {
		return err
	}
	if err := j.out.Commit(); err != nil {
		return err
	}
	if j.json {
		if _, err := j.c.App.Writer.Write(files[0].Data); err != nil {
			return err
		}
	}
	printSummary(j.human(), j, rep, files, cut)
	return nil
}

// progress shows a bar on stderr for searches that take over about a second,
// and only when stderr is a terminal: one while the candidates are scored,
// then one while chains are designed.
type progress struct {
	mu    sync.Mutex
	w     io.Writer
	on    bool
	start time.Time
	bar   *progressbar.ProgressBar
	phase string // what bar counts
}

func newProgress(w io.Writer, quiet bool) *progress {
	p := &progress{w: w, start: time.Now()}
	if f, ok := w.(*os.File); ok && !quiet && term.IsTerminal(int(f.Fd())) {
		p.on = true
	}
	return p
}

// update is optimize.Settings.Progress: designs done of total.
func (p *progress) update(done, total int) { p.set("designing chains", int64(done), int64(total)) }

// scoring is optimize.Settings.Scoring: candidates scored of total.
func (p *progress) scoring(done, total int64) { p.set("scoring candidates", done, total) }

func (p *progress) set(phase string, done, total int64) {
	if !p.on {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil && p.phase != phase {
		_ = p.bar.Finish()
		_ = p.bar.Clear()
		p.bar = nil
	}
	if p.bar == nil {
		if time.Since(p.start) < time.Second {
			return
		}
		p.phase = phase
		p.bar = progressbar.NewOptions64(total,
			progressbar.OptionSetWriter(p.w),
			progressbar.OptionSetDescription(phase),
			progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionThrottle(100*time.Millisecond),
			progressbar.OptionClearOnFinish(),
		)
	}
	if p.bar.GetMax64() != total {
		p.bar.ChangeMax64(total)
	}
	_ = p.bar.Set64(done)
}

func (p *progress) finish() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		_ = p.bar.Finish()
		_ = p.bar.Clear()
	}
}

// printSummary prints the run's summary; cut says that --timeout ended the
// word lengths after a complete search.
func printSummary(w io.Writer, j *job, rep *report.Report, files []report.File, cut bool) {
	s := rep.Spec
	fmt.Fprintf(w, "stepdown %s: %s\n", rep.Command, j.source)
	ratio := fmt.Sprintf("decimation %d", s.Decimation)
	if s.Interpolates() {
		ratio = fmt.Sprintf("interpolation %d", s.Interpolation)
	}
	if strings.Contains(s.Ratio, "/") {
		ratio = "fractional ratio " + s.Ratio
	}
	if s.RatioErrorPPM != nil {
		ratio += fmt.Sprintf(": output %s, %+.3g ppm within %g", units.FormatFrequency(math.Round(s.RealisedOutputRateHz*1e3)/1e3), *s.RatioErrorPPM, s.RatioTolerancePPM)
	}
	fmt.Fprintf(w, "  %s -> %s (%s), %s signal; passband %s, protected %s, stopband %s\n",
		units.FormatFrequency(s.InputRateHz), units.FormatFrequency(s.OutputRateHz), ratio, s.Signal,
		units.FormatFrequency(s.PassbandHz), units.FormatFrequency(s.ProtectedHz), units.FormatFrequency(s.StopbandHz))
	if len(s.RejectionMask) > 0 {
		fmt.Fprintf(w, "  ripple %g dB peak-to-peak, rejection mask of %d points up to %.2f dB (a chain's rejection is %.2f dB plus its worst margin over the mask)\n", s.RippleDB, len(s.RejectionMask), s.RejectionDB, s.RejectionDB)
	} else {
		fmt.Fprintf(w, "  ripple %g dB peak-to-peak, rejection %g dB\n", s.RippleDB, s.RejectionDB)
	}
	if rep.Command == "plan" {
		fmt.Fprintf(w, "  searched %s: %d feasible by estimate, %d designed, %d on the front\n",
			units.Count(rep.Search.Candidates, "candidate", "candidates"), rep.Search.Feasible, rep.Search.Designed, len(rep.Front))
	}
	if n := rep.Search.LeftUndesigned; n > 0 && rep.Command == "plan" {
		fmt.Fprintf(w, "  DESIGN BUDGET REACHED: %s left undesigned near the front, so a cheaper chain may be missing (lower search.max_stages or narrow search.kinds or search.cic_orders to design them all)\n", units.CountWere(n, "candidate", "candidates"))
	}
	switch {
	case rep.Partial && cut:
		fmt.Fprintln(w, "  PARTIAL: stopped by --timeout after the search; the front below is complete, but word lengths, bit-true figures and files marked \"not planned\" are missing")
	case rep.Partial:
		fmt.Fprintln(w, "  PARTIAL: stopped by --timeout; the front below is the best found so far")
	}
	fmt.Fprintln(w)
	report.WriteTable(w, rep)
	fmt.Fprintln(w)
	switch {
	case len(rep.Front) == 0:
	case rep.Command == "check":
		fmt.Fprintf(w, "checked: %s\n  %s\n", rep.Front[0].Notation, rep.Reason)
		report.WriteComparison(w, rep)
		if j.limitNote != "" {
			fmt.Fprintf(w, "  It is %s, so plan would drop it.\n", j.limitNote)
		}
		if j.compareNote != "" {
			fmt.Fprintf(w, "  (%s)\n", j.compareNote)
		}
	default:
		fmt.Fprintf(w, "recommended: #%d %s\n  %s\n", rep.Recommended+1, rep.Front[rep.Recommended].Notation, rep.Reason)
	}
	for _, h := range rep.Hints {
		fmt.Fprintf(w, "hint: %s\n", h.Text)
	}
	if len(rep.Front) > 0 {
		report.WriteWordLengths(w, rep)
		if j.c.Bool("resources") {
			report.WriteResources(w, rep)
		}
	}
	fmt.Fprintf(w, "\nwrote %s/\n", j.out.Dir())
	vectors := 0
	for _, f := range files {
		// The vector files are named by vectors/README.txt: counted, not listed.
		if strings.HasPrefix(f.Name, "vectors/") && f.Name != "vectors/README.txt" {
			vectors++
			continue
		}
		fmt.Fprintf(w, "  %s\n", f.Name)
	}
	if vectors > 0 {
		fmt.Fprintf(w, "  vectors/: %d vector files (stimuli and every stage's output, named in vectors/README.txt)\n", vectors)
	}
	if len(rep.Front) > 0 && rep.Front[rep.Recommended].Fractional() {
		fmt.Fprintf(w, "\nNo hand-off%s.\n", strings.TrimPrefix(report.NoHandoff, "no hand-off"))
	}
	fmt.Fprintf(w, "\nCaution: %s.\n", report.Caution)
}
