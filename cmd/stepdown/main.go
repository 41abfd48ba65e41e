// Command stepdown plans multistage decimation and interpolation chains
// (CIC, half-band, FIR, polyphase and Farrow stages) for digital receiver
// and transmitter front ends. See the README for the spec file,
// the chain notation and how to read the outputs.
//
// Exit status: 0 on success, 2 for a usage or spec error, 1 for a runtime
// failure. Every error is one line on stderr naming the field, the value and
// the rule it breaks.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"regexp"
	"runtime/debug"
	"slices"
	"strings"
	"syscall"
	"unicode"

	"github.com/urfave/cli/v2"

	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// Exit codes.
const (
	exitOK      = 0
	exitRuntime = 1
	exitUsage   = 2
)

// usageError marks an error the user can fix by changing the command line or
// the spec; it exits with status 2.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

func usagef(format string, args ...any) error {
	return usageError{fmt.Errorf(format, args...)}
}

// softMemoryLimit is the heap size at which the garbage collector works
// hardest (debug.SetMemoryLimit), well under the 1 GiB that no input may
// make stepdown use: the largest working sets (a simulated recording of
// 2^24 I/Q samples, a plan's files in memory) stay under it, and the
// collector keeps the heap's growth between collections from carrying the
// process over. GOMEMLIMIT, when set, takes its place.
const softMemoryLimit = 640 << 20

// gcPercent lets the heap grow to five times what is live between
// collections (the default, 100, is twice). A plan's live heap is tens of
// MB, and collecting it at the default pace cost a tenth of the built-in
// example's wall time; softMemoryLimit still bounds the heap, since the
// collector works harder as it nears that limit whatever the percentage.
// GOGC, when set, takes its place.
const gcPercent = 400

func main() {
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(softMemoryLimit)
	}
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(gcPercent)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	go func() {
		// The first Ctrl-C asks for a clean stop; restoring the default
		// handling lets a second one end the process at once.
		<-ctx.Done()
		stop()
	}()
	code := run(ctx, os.Args, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// run executes the command line args and returns the exit status.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	args, err := reorderArgs(app, args)
	if err == nil && len(args) > 2 && slices.Contains([]string{"--version", "-version", "-v"}, args[1]) {
		// The version takes nothing after it: a word there is a mistake
		// (a command put after the flag), not something to drop.
		err = usagef("%s takes nothing after it (got %q): run stepdown %s alone", args[1], clip(args[2]), args[1])
	}
	if err == nil {
		err = app.RunContext(ctx, args)
	}
	if err == nil {
		return exitOK
	}
	fmt.Fprintln(stderr, "stepdown: "+oneLine(err.Error()))
	var ue usageError
	if errors.As(err, &ue) {
		return exitUsage
	}
	return exitRuntime
}

// oneLine keeps an error message to a single line on stderr, and to
// maxMessage characters: the values a message repeats are cut where it is
// written (clip), and this is the backstop.
func oneLine(s string) string {
	s = strings.TrimSpace(s)
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = strings.TrimSpace(s[:i])
	}
	return units.Clip(s, maxMessage)
}

// maxMessage bounds an error line, in characters.
const maxMessage = 800

// clip cuts a value the user gave to units.MaxEcho characters for an error
// message.
func clip(s string) string { return units.Clip(s, units.MaxEcho) }

// The flag package's messages, rewritten by flagError.
var (
	reUndefined = regexp.MustCompile(`^flag provided but not defined: -+(.*)$`)
	reNoValue   = regexp.MustCompile(`^flag needs an argument: -+(.*)$`)
	reBadValue  = regexp.MustCompile(`^invalid value "(.*)" for flag -+([^:]*): (.*)$`)
	reBadBool   = regexp.MustCompile(`^invalid boolean (?:value "(.*)" for|flag) -*([^: ]*):? ?(.*)$`)
	reBadSyntax = regexp.MustCompile(`^bad flag syntax: (.*)$`)
)

// flagError says a flag parsing error in the command line's own words: the
// flag as the user writes it (--name), the value, and what is wanted.
func flagError(cmd *cli.Command, err error) error {
	msg := err.Error()
	name := "stepdown"
	if cmd != nil && cmd.Name != "" && cmd.Name != name {
		// The app's own flags come with a command named after the app.
		name = "stepdown " + cmd.Name
	}
	if m := reUndefined.FindStringSubmatch(msg); m != nil {
		return usagef("--%s: not a flag of %s (see %s --help)", clip(m[1]), name, name)
	}
	if m := reNoValue.FindStringSubmatch(msg); m != nil {
		return usagef("--%s: missing its value", clip(m[1]))
	}
	if m := reBadBool.FindStringSubmatch(msg); m != nil {
		flag := clip(m[2])
		return usagef("--%s takes no value (or --%s=true / --%s=false): got %q", flag, flag, flag, clip(m[1]))
	}
	if m := reBadValue.FindStringSubmatch(msg); m != nil {
		value, flag := m[1], m[2]
		return usagef("--%s %q: %s", flag, clip(value), wantOf(cmd, flag, value, m[3]))
	}
	if m := reBadSyntax.FindStringSubmatch(msg); m != nil {
		word := m[1]
		if name := strings.TrimLeft(word, "-"); name != "" && !strings.HasPrefix(name, "=") {
			return usagef("%s: flags are written with two dashes, e.g. --%s", clip(word), clip(name))
		}
		return usagef("%s: not a flag (flags are written with two dashes and a name, e.g. --out)", clip(word))
	}
	return usageError{err}
}

// wantOf says what a flag's value must look like, by the flag's type;
// why is the flag package's reason ("parse error" or "value out of range").
func wantOf(cmd *cli.Command, flag, value, why string) string {
	if cmd != nil {
		for _, f := range cmd.Flags {
			if !slices.Contains(f.Names(), flag) {
				continue
			}
			switch f.(type) {
			case *cli.DurationFlag:
				if strings.ContainsFunc(value, unicode.IsLetter) {
					// It has a unit: too long, or not a unit at all.
					return `want a duration of at most 2562047h (about 292 years) in the units ns, us, ms, s, m and h, e.g. "30s", "5m" or "1h30m"`
				}
				return `a duration needs a unit, e.g. "30s", "5m" or "1h30m"`
			case *cli.IntFlag:
				if strings.Contains(why, "range") {
					return "too large: want a whole number of at most 18 digits"
				}
				return "want a whole number, in decimal digits (no fraction or exponent)"
			case *cli.BoolFlag:
				return "want true or false"
			}
		}
	}
	return "not a valid value"
}

func newApp(stdout, stderr io.Writer) *cli.App {
	onUsage := func(c *cli.Context, err error, _ bool) error {
		var ue usageError
		if errors.As(err, &ue) {
			return err
		}
		var cmd *cli.Command
		if c != nil {
			cmd = c.Command
		}
		return flagError(cmd, err)
	}
	app := &cli.App{
		Name:  "stepdown",
		Usage: "plan multistage decimation and interpolation chains (CIC, half-band, FIR, polyphase, Farrow) for receiver and transmitter front ends",
		Description: "The figures stepdown prints are planning data, each measured on the designed taps or\n" +
			"labelled an estimate: confirm them by a bit-true simulation of the RTL and the team's own\n" +
			"sign-off before committing hardware.",
		Version:                   report.ToolVersion(),
		Writer:                    stdout,
		ErrWriter:                 stderr,
		DisableSliceFlagSeparator: true,
		OnUsageError:              onUsage,
		ExitErrHandler:            func(*cli.Context, error) {},
		Action: func(c *cli.Context) error {
			if c.Args().Present() {
				return usagef("command %q: unknown (want design, plan, check, simulate or sweep)", c.Args().First())
			}
			return cli.ShowAppHelp(c)
		},
		Commands: []*cli.Command{designCommand(), planCommand(), checkCommand(), simulateCommand(), sweepCommand()},
	}
	for _, c := range app.Commands {
		c.OnUsageError = onUsage
	}
	return app
}

// reLeadingZeros is a whole number written with leading zeros, which the
// flag library would read as octal.
var reLeadingZeros = regexp.MustCompile(`^([-+]?)0+([0-9]+)$`)

// decimal returns the value v of the whole-number flag name as the flag
// library reads it in decimal: leading zeros are dropped ("010" is ten, not
// eight), and hexadecimal, octal and binary forms and digit separators,
// which the library would take, are refused as in the spec.
func decimal(name, v string) (string, error) {
	if m := reLeadingZeros.FindStringSubmatch(v); m != nil {
		return m[1] + m[2], nil
	}
	t := strings.TrimLeft(v, "+-")
	if strings.Contains(t, "_") || len(t) > 1 && t[0] == '0' && strings.ContainsRune("xXoObB", rune(t[1])) {
		return "", usagef("--%s %q: want a whole number in decimal digits (hexadecimal, octal, binary and _ separators are not taken)", name, clip(v))
	}
	return v, nil
}

// reorderArgs moves a command's flags in front of its positional arguments,
// because the standard flag parser stops at the first positional argument and
// users write "stepdown check spec.toml --chain ...". A flag that takes a
// value takes the next word, wherever it stands; a flag left without one (the
// last word, or followed by another of the command's flags) is a usage
// error, never a folder named "--".
func reorderArgs(app *cli.App, args []string) ([]string, error) {
	if len(args) < 2 {
		return args, nil
	}
	var cmd *cli.Command
	for _, c := range app.Commands {
		if c.HasName(args[1]) {
			cmd = c
		}
	}
	if cmd == nil {
		return args, nil
	}
	takesValue, isInt := map[string]bool{}, map[string]bool{}
	// once maps each name of a flag that takes one value to its first
	// name: given twice, the flag package would keep the last silently.
	once := map[string]string{}
	for _, f := range cmd.Flags {
		_, isBool := f.(*cli.BoolFlag)
		_, isI := f.(*cli.IntFlag)
		_, isSlice := f.(*cli.StringSliceFlag)
		for _, n := range f.Names() {
			takesValue[n], isInt[n] = !isBool, isI
			if !isSlice {
				once[n] = f.Names()[0]
			}
		}
	}
	seen := map[string]bool{}
	// repeated refuses a flag of one value given a second time.
	repeated := func(name string) error {
		c, ok := once[name]
		if !ok {
			return nil
		}
		if seen[c] {
			return usagef("--%s: given more than once; give it once (see stepdown %s --help)", c, cmd.Name)
		}
		seen[c] = true
		return nil
	}
	// isFlag reports whether a word names one of the command's flags.
	isFlag := func(a string) bool {
		if a == "--" {
			return true
		}
		if len(a) < 2 || a[0] != '-' {
			return false
		}
		name, _, _ := strings.Cut(strings.TrimLeft(a, "-"), "=")
		_, known := takesValue[name]
		return known || name == "help" || name == "h"
	}
	var flags, pos []string
	rest := args[2:]
	for i := 0; i < len(rest); i++ {
		a := rest[i]
		if a == "--" {
			pos = append(pos, rest[i+1:]...)
			break
		}
		if len(a) < 2 || a[0] != '-' {
			pos = append(pos, a)
			continue
		}
		name := strings.TrimLeft(a, "-")
		bare, _, _ := strings.Cut(name, "=")
		if err := repeated(bare); err != nil {
			return nil, err
		}
		if n, v, ok := strings.Cut(name, "="); ok {
			if isInt[n] {
				d, err := decimal(n, v)
				if err != nil {
					return nil, err
				}
				a = "--" + n + "=" + d
			}
			flags = append(flags, a)
			continue
		}
		flags = append(flags, a)
		if !takesValue[name] {
			continue
		}
		if i+1 >= len(rest) || isFlag(rest[i+1]) {
			return nil, usagef("--%s: missing its value (see stepdown %s --help)", name, cmd.Name)
		}
		i++
		v := rest[i]
		if isInt[name] {
			d, err := decimal(name, v)
			if err != nil {
				return nil, err
			}
			v = d
		}
		flags = append(flags, v)
	}
	out := append([]string{}, args[:2]...)
	out = append(out, flags...)
	if len(pos) > 0 {
		out = append(out, "--")
		out = append(out, pos...)
	}
	return out, nil
}

// untouched says what a run that wrote nothing left of its output folder:
// the folder as it was, or, when there was none, none.
func untouched(o *report.Folder) string {
	if o.Existed() {
		return clip(o.Dir()) + " left as it was"
	}
	return clip(o.Dir()) + " not created"
}
