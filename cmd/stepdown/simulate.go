package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/optimize"
	"github.com/stepdown-dsp/stepdown/plots"
	"github.com/stepdown-dsp/stepdown/plots/report"
	"github.com/stepdown-dsp/stepdown/signalio"
	"github.com/stepdown-dsp/stepdown/simulate"
)

func simulateCommand() *cli.Command {
	return &cli.Command{
		Name:      "simulate",
		Usage:     "run a recorded signal through a chain, bit-true and in floating point",
		ArgsUsage: "[SPEC.toml]",
		UsageText: "stepdown simulate [SPEC.toml] --input FILE [--chain CHAIN] [--format F] [--rate HZ] [--out DIR] [--json] [--quiet] [--jobs N]\n\n" +
			"FILE is a WAV (16, 24 or 32-bit PCM, one channel real or two I/Q), raw interleaved little-endian\n" +
			"integers (.raw or .bin, --format int16 or int32) or CSV (one column, or I,Q). Without --chain the\n" +
			"spec is planned and its recommended chain is run. Without SPEC.toml the built-in example is used.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "input", Usage: "the recorded signal"},
			&cli.StringFlag{Name: "chain", Usage: "run this chain (the notation plan prints) instead of the recommended one"},
			&cli.StringFlag{Name: "format", Usage: "the file's format: wav, int16, int32 or csv (csvN: values held to N bits)", DefaultText: "from the extension"},
			&cli.StringFlag{Name: "rate", Usage: "the sample rate of a raw or CSV file, e.g. \"122.88 MHz\"", DefaultText: "the spec's input_rate"},
			&cli.IntFlag{Name: "channels", Usage: "channels of a raw file: 1 (real) or 2 (interleaved I/Q)", DefaultText: "2 for a complex spec, 1 for a real one"},
			&cli.StringFlag{Name: "out", Value: "stepdown-sim", Usage: "output folder (replaced as a whole, atomically)"},
			&cli.BoolFlag{Name: "json", Usage: "print simulate.json on stdout as well (the summary goes to stderr)", DefaultText: "off"},
			&cli.BoolFlag{Name: "quiet", Usage: "print nothing but errors (and --json output)", DefaultText: "off"},
			&cli.IntFlag{Name: "jobs", Usage: "parallel designs when planning the spec", DefaultText: "the number of CPUs"},
		},
		Action: runSimulate,
	}
}

// simReport is simulate.json.
type simReport struct {
	Schema      string  `json:"schema"`
	ToolVersion string  `json:"tool_version"`
	SpecSHA256  string  `json:"spec_sha256"`
	Caution     string  `json:"caution"`
	Chain       string  `json:"chain"`
	ChainSource string  `json:"chain_source"` // "recommended" or "named"
	Input       simFile `json:"input"`
	Output      simFile `json:"output"`
	// InputBits is the chain's input word; Rescaled says the file's codes
	// were moved to it, Clipped how many saturated doing so.
	InputBits    int       `json:"input_bits"`
	Rescaled     bool      `json:"rescaled"`
	Clipped      int       `json:"clipped_samples"`
	OutputBits   int       `json:"output_bits"`
	DCGainDB     float64   `json:"dc_gain_db"`
	Levels       simLevels `json:"levels"`
	Bands        simBands  `json:"bands_hz"`
	FloatFile    string    `json:"float_output"`
	SpectraFiles []string  `json:"spectra"`
	Notes        []string  `json:"notes"`
	Scaling      string    `json:"output_scaling"`
}

type simFile struct {
	File     string  `json:"file"`
	Format   string  `json:"format"`
	RateHz   float64 `json:"rate_hz"`
	Bits     int     `json:"bits"`
	Channels int     `json:"channels"`
	Samples  int     `json:"samples"`
}

// simLevels are simulate.Levels for JSON: dBFS, null where a band is empty.
type simLevels struct {
	InputDBFS           *float64 `json:"input_dbfs"`
	InputPassbandDBFS   *float64 `json:"input_passband_dbfs"`
	InputAliasDBFS      *float64 `json:"input_alias_bands_dbfs"`
	OutputDBFS          *float64 `json:"output_dbfs"`
	OutputPassbandDBFS  *float64 `json:"output_passband_dbfs"`
	OutputProtectedDBFS *float64 `json:"output_protected_dbfs"`
	BitTrueErrorDBFS    *float64 `json:"bittrue_error_dbfs"`
	BitTrueSNRDB        *float64 `json:"bittrue_snr_db"`
}

type simBands struct {
	Passband  float64 `json:"passband"`
	Protected float64 `json:"protected"`
	Output    float64 `json:"output_rate"`
}

func finiteOrNil(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	r := math.Round(v*1e4) / 1e4
	return &r
}

func runSimulate(c *cli.Context) error {
	input := c.String("input")
	if input == "" {
		return usagef("--input: missing; name the recorded signal (a .wav, .raw/.bin with --format int16 or int32, or .csv)")
	}
	var stated signalio.Format
	if f := c.String("format"); f != "" {
		var err error
		if stated, err = signalio.ParseFormat(f); err != nil {
			return usagef("--%s", err)
		}
	}
	format, err := signalio.Choose(input, stated)
	if err != nil {
		return usagef("--input: %s", err)
	}
	var plan []chain.StagePlan
	if c.IsSet("chain") {
		if plan, err = parseChainFlag(c); err != nil {
			return err
		}
	}
	if c.IsSet("channels") && (c.Int("channels") < 1 || c.Int("channels") > 2) {
		return usagef("--channels %d: must be 1 (real) or 2 (interleaved I/Q)", c.Int("channels"))
	}
	if n := c.Int("jobs"); n < 0 || n > 1024 {
		return usagef("--jobs %d: must lie in [1, 1024] (0 or absent: the number of CPUs)", n)
	}
	j, err := newJob(c)
	if err != nil {
		return err
	}
	defer j.out.Discard()
	cs := j.spec.Chain
	if cs.Direction() == chain.Interpolate {
		return usagef("%s: output_rate is above input_rate (an interpolation chain); simulate runs decimation chains only", clip(j.source))
	}

	rate := cs.InputRate
	if r := c.String("rate"); r != "" {
		if rate, err = units.ParseRate(r); err != nil {
			return usagef("--rate %v", err) // the error quotes the value, cut
		}
		if !(rate > 0) || math.IsInf(rate, 0) {
			return usagef("--rate %q: must be a rate above 0 Hz", clip(r))
		}
	}
	opt := signalio.Options{Format: format}
	switch format.Kind {
	case signalio.WAV:
		if c.IsSet("rate") {
			opt.RateHz = rate // must agree with the header
		}
	case signalio.CSV:
		opt.RateHz = rate
		if opt.Format.Bits == 0 {
			// Values are held to the chain's input word unless stated.
			opt.Format.Bits = cs.InputBits
		}
	default:
		opt.RateHz = rate
		// A raw file has no header: its channels are the spec's signal
		// (interleaved I/Q for a complex one) unless --channels says.
		opt.Format.Channels = 1
		if j.spec.Signal == "complex" {
			opt.Format.Channels = 2
		}
		if c.IsSet("channels") {
			opt.Format.Channels = c.Int("channels")
		}
	}
	set := j.spec.SearchSettings()
	set.Jobs = c.Int("jobs")
	var cand optimize.Candidate
	source := "named"
	if plan != nil {
		// A named chain is designed before the input is read, so that one
		// the spec refuses is refused at once, not after reading a
		// recording of hundreds of MB.
		if cand, _, err = j.designNamed(plan, set); err != nil {
			return err
		}
	}
	sig, format, err := signalio.ReadFileContext(c.Context, input, opt)
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		if opt.Format.Kind == signalio.CSV && stated.Bits == 0 && opt.Format.Bits == 1 && strings.Contains(err.Error(), "outside 1-bit") {
			// A single-bit modulator's codes are -1 and 0 as the chain
			// takes them; a bitstream written as -1 and +1 is a 2-bit one.
			return usagef("--input: %s; a single-bit modulator's codes are -1 and 0 here: give --format csv2 for values of -1 and +1 (taken by their sign)", err)
		}
		return usagef("--input: %s", err)
	}
	if !(math.Abs(sig.RateHz-cs.InputRate) <= 1e-9*cs.InputRate) {
		return usagef("--input %s: its sample rate is %s, but the spec's input_rate is %s", clip(filepath.Base(input)), units.FormatFrequency(sig.RateHz), units.FormatFrequency(cs.InputRate))
	}
	var notes []string
	if sig.Channels() == 1 && j.spec.Signal == "complex" {
		notes = append(notes, "one channel into a complex chain: run as I, with Q zero")
	}
	if sig.Channels() == 2 && j.spec.Signal != "complex" {
		return usagef("--input %s: two channels (I/Q), but the spec's signal is %q: set signal = \"complex\" or give one channel", clip(filepath.Base(input)), j.spec.Signal)
	}

	if plan == nil {
		source = "recommended"
		res, err := optimize.Plan(c.Context, cs, set)
		if c.Context.Err() != nil {
			return fmt.Errorf("interrupted; %s", untouched(j.out))
		}
		if err != nil {
			return planError(c, err)
		}
		if len(res.Front) == 0 {
			return errors.New(flagTerms(c, emptyFront(res, cs, set.Kinds, j.spec.UnityGain, untouched(j.out)).Error()))
		}
		cand = res.Front[res.Recommended]
	}
	if cand.Chain == nil || !cand.Chain.Designed {
		return fmt.Errorf("simulate: the chain %s could not be designed", j.spec.Chain.Direction().Notation(cand.Plan))
	}

	res, err := simulate.Run(c.Context, cs, cand.Chain, j.spec.FixedSettings(), simulate.Input{RateHz: sig.RateHz, Bits: sig.Bits, Paths: sig.Samples})
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		return fmt.Errorf("the chain %s cannot be simulated: %s", j.spec.Chain.Direction().Notation(cand.Plan), libMessage(err))
	}
	inSp, outSp, err := res.SpectraContext(c.Context)
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err != nil {
		return usagef("--input %s: %s", clip(filepath.Base(input)), libMessage(err))
	}
	// Each later phase takes seconds on long inputs: a stop is looked for
	// between them.
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	bands := simulate.Bands{PassbandHz: cs.Passband, ProtectedHz: cs.Protected, OutputRateHz: res.OutputRateHz}
	lv := res.Measure(inSp, outSp, bands)
	notation := j.spec.Chain.Direction().Notation(cand.Plan)
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}

	files, rep, err := simFiles(res, sig, format, inSp, outSp, bands, lv, notation, filepath.Base(input))
	if err != nil {
		return err
	}
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	rep.SpecSHA256, rep.ChainSource = j.spec.SHA256, source
	rep.Notes = append(notes, rep.Notes...)
	rep.Bands = simBands{Passband: cs.Passband, Protected: cs.Protected, Output: res.OutputRateHz}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false) // "cic5m1r16 > fir4", not "\u003e"
	enc.SetIndent("", "  ")
	if err := enc.Encode(rep); err != nil {
		return err
	}
	js := buf.Bytes()
	files = append([]report.File{{Name: "simulate.json", Data: js}}, files...)
	if err := j.out.WriteContext(c.Context, files); err != nil {
		if c.Context.Err() != nil {
			return fmt.Errorf("interrupted; %s", untouched(j.out))
		}
		return err
	}
	if c.Context.Err() != nil {
		return fmt.Errorf("interrupted; %s", untouched(j.out))
	}
	if err := j.out.Commit(); err != nil {
		return err
	}
	if j.json {
		if _, err := c.App.Writer.Write(js); err != nil {
			return err
		}
	}
	w := j.human()
	fmt.Fprintf(w, "stepdown simulate: %s through %s (%s chain)\n", filepath.Base(input), notation, source)
	fmt.Fprintf(w, "  in:  %s, %d samples at %s, %d-bit codes", format, sig.Frames(), units.FormatFrequency(sig.RateHz), sig.Bits)
	if res.Rescaled {
		fmt.Fprintf(w, " moved to the chain's %d-bit input word (%d clipped)", res.InputBits, res.Clipped)
	}
	fmt.Fprintf(w, "\n  out: %d samples at %s, %d-bit codes\n", len(res.Out[0]), units.FormatFrequency(res.OutputRateHz), res.OutputBits)
	for _, n := range notes {
		fmt.Fprintf(w, "  note: %s\n", n)
	}
	fmt.Fprintln(w)
	rows := [][]string{
		{"input", "whole band", dbfs(lv.InputDBFS)},
		{"input", "passband", dbfs(lv.InputPassbandDBFS)},
		{"input", "alias bands", dbfs(lv.InputAliasDBFS)},
		{"output", "whole band", dbfs(lv.OutputDBFS)},
		{"output", "passband", dbfs(lv.OutputPassbandDBFS)},
		{"output", "protected band", dbfs(lv.OutputProtectedDBFS)},
		{"bit-true - float", "error", dbfs(lv.BitTrueErrorDBFS)},
	}
	fmt.Fprintln(w, "  levels (0 dBFS: a full-scale tone)")
	report.WriteAligned(w, "    ", append([][]string{{"signal", "band", "level"}}, rows...), func(col int) bool { return col == 2 })
	fmt.Fprintf(w, "  bit-true SNR against the float chain: %s\n", strings.TrimSuffix(dbfs(lv.BitTrueSNRDB), "FS"))
	fmt.Fprintf(w, "\nwrote %s:\n", clip(j.out.Dir()))
	for _, f := range files {
		fmt.Fprintf(w, "  %s\n", f.Name)
	}
	fmt.Fprintf(w, "\nCaution: %s.\n", report.Caution)
	return nil
}

// libMessage is a library error in the command's words: without the
// package names the simulate and fixed packages put first.
func libMessage(err error) string {
	m := err.Error()
	for _, p := range []string{"simulate: ", "fixed: "} {
		m = strings.ReplaceAll(m, p, "")
	}
	return specfile.InFileTerms(m)
}

func dbfs(v float64) string {
	switch {
	case math.IsInf(v, -1):
		return "empty"
	case math.IsInf(v, 1):
		return "exact"
	case math.IsNaN(v):
		return "-"
	}
	return strconv.FormatFloat(v, 'f', 2, 64) + " dBFS"
}

// simFiles renders the output signal in the input's format, the float
// output, the spectra figure, and simulate.json's body.
func simFiles(res *simulate.Result, in *signalio.Signal, format signalio.Format, inSp, outSp *signalio.Spectrum, bands simulate.Bands, lv simulate.Levels, notation, name string) ([]report.File, *simReport, error) {
	out := &signalio.Signal{RateHz: res.OutputRateHz, Bits: res.OutputBits, Samples: res.Out}
	of := signalio.Format{Kind: format.Kind, Channels: len(res.Out)}
	var scaling, ext string
	switch format.Kind {
	case signalio.WAV:
		// WAV's full scale is its container's: the codes are moved up to
		// the smallest container that holds them (exact, a shift).
		of.Bits = 16
		for of.Bits < res.OutputBits {
			of.Bits += 8
		}
		// In place: a copy of a long output would cost as much memory
		// again, and nothing reads the codes after the files.
		for _, x := range res.Out {
			for i, v := range x {
				x[i] = v << uint(of.Bits-res.OutputBits)
			}
		}
		out = &signalio.Signal{RateHz: res.OutputRateHz, Bits: of.Bits, Samples: res.Out}
		scaling = fmt.Sprintf("the %d-bit output codes shifted up %d bits to fill %d-bit WAV samples (full scale is the container's)", res.OutputBits, of.Bits-res.OutputBits, of.Bits)
		ext = ".wav"
	case signalio.Raw:
		of.Bits = 16
		if res.OutputBits > 16 {
			of.Bits = 32
		}
		out.Bits = of.Bits
		scaling = fmt.Sprintf("the %d-bit output codes as they are, in int%d words (full scale 2^%d)", res.OutputBits, of.Bits, res.OutputBits-1)
		ext = ".raw"
	default:
		of.Bits = res.OutputBits
		scaling = fmt.Sprintf("the %d-bit output codes as they are (full scale 2^%d)", res.OutputBits, res.OutputBits-1)
		ext = ".csv"
	}
	// Both outputs are written as they are made: held whole, a long
	// input's would pass the memory bound.
	files := []report.File{
		{Name: "output" + ext, Stream: func(w io.Writer) error { return signalio.Encode(w, out, of) }},
		{Name: "output_float.csv", Stream: func(w io.Writer) error { return writeFloatCSV(w, res) }},
	}

	sd := plots.SpectraData{
		Title:      "Spectra through " + notation,
		In:         plots.Spectrum{Label: name, RateHz: inSp.RateHz, Hz: inSp.Hz, DB: inSp.DB, RBWHz: inSp.RBWHz},
		Out:        plots.Spectrum{Label: "bit-true output", RateHz: outSp.RateHz, Hz: outSp.Hz, DB: outSp.DB, RBWHz: outSp.RBWHz},
		PassbandHz: bands.PassbandHz,
		AliasBands: plots.AliasShading(res.InputRateHz, res.OutputRateHz, bands.ProtectedHz),
		Levels: []string{
			"in, passband: " + dbfs(lv.InputPassbandDBFS),
			"in, alias bands: " + dbfs(lv.InputAliasDBFS),
			"out, passband: " + dbfs(lv.OutputPassbandDBFS),
			"out, protected band: " + dbfs(lv.OutputProtectedDBFS),
		},
	}
	fig, err := plots.Spectra(sd)
	if err != nil {
		return nil, nil, fmt.Errorf("spectra figure: %v", err)
	}
	var png bytes.Buffer
	if err := fig.Render(&png, "png", 0, 0); err != nil {
		return nil, nil, fmt.Errorf("spectra figure: %v", err)
	}
	files = append(files, report.File{Name: "spectra.png", Data: png.Bytes()})

	rep := &simReport{
		Schema: "stepdown.simulate/1", ToolVersion: report.ToolVersion(), Caution: report.Caution,
		Chain: notation,
		Input: simFile{File: name, Format: format.String(), RateHz: in.RateHz, Bits: in.Bits, Channels: in.Channels(), Samples: in.Frames()},
		Output: simFile{File: files[0].Name, Format: of.String(), RateHz: res.OutputRateHz, Bits: of.Bits,
			Channels: len(res.Out), Samples: len(res.Out[0])},
		InputBits: res.InputBits, Rescaled: res.Rescaled, Clipped: res.Clipped, OutputBits: res.OutputBits,
		DCGainDB: math.Round(20*math.Log10(res.Widths.DCGain)*1e4) / 1e4,
		Levels: simLevels{
			InputDBFS: finiteOrNil(lv.InputDBFS), InputPassbandDBFS: finiteOrNil(lv.InputPassbandDBFS), InputAliasDBFS: finiteOrNil(lv.InputAliasDBFS),
			OutputDBFS: finiteOrNil(lv.OutputDBFS), OutputPassbandDBFS: finiteOrNil(lv.OutputPassbandDBFS), OutputProtectedDBFS: finiteOrNil(lv.OutputProtectedDBFS),
			BitTrueErrorDBFS: finiteOrNil(lv.BitTrueErrorDBFS), BitTrueSNRDB: finiteOrNil(lv.BitTrueSNRDB),
		},
		FloatFile:    "output_float.csv",
		SpectraFiles: []string{"spectra.png"},
		Scaling:      scaling,
		Notes:        []string{"levels are powers in the band from Welch spectra (segments overlapping by half, 4-term Blackman-Harris window), dBFS relative to a full-scale tone"},
	}
	return files, rep, nil
}

// writeFloatCSV writes to w the float chain's output: one line per sample, x or i,q,
// in fractions of full scale.
func writeFloatCSV(w io.Writer, res *simulate.Result) error {
	head := "# stepdown simulate: the float chain's output (same structure and gains as the bit-true one, unrounded taps), fractions of full scale; planning data\n"
	if len(res.Float) == 2 {
		head += "i,q\n"
	} else {
		head += "x\n"
	}
	if _, err := io.WriteString(w, head); err != nil {
		return err
	}
	b := make([]byte, 0, 64)
	for i := range res.Float[0] {
		b = b[:0]
		for p := range res.Float {
			if p > 0 {
				b = append(b, ',')
			}
			b = strconv.AppendFloat(b, res.Float[p][i], 'g', 12, 64)
		}
		b = append(b, '\n')
		if _, err := w.Write(b); err != nil {
			return err
		}
	}
	return nil
}
