// Command stepdown plans multistage decimation chains (CIC, half-band and FIR
// stages) for digital receiver front ends. See the README for the spec file,
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
	"strings"
	"syscall"

	"github.com/urfave/cli/v2"
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

func main() {
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
	err := app.RunContext(ctx, reorderArgs(app, args))
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

// oneLine keeps an error message to a single line on stderr.
func oneLine(s string) string {
	s = strings.TrimSpace(s)
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = strings.TrimSpace(s[:i])
	}
	return s
}

func newApp(stdout, stderr io.Writer) *cli.App {
	onUsage := func(_ *cli.Context, err error, _ bool) error {
		return usageError{err}
	}
	app := &cli.App{
		Name:  "stepdown",
		Usage: "plan multistage decimation chains (CIC, half-band, FIR) for receiver front ends",
		Description: "The figures stepdown prints are planning estimates: confirm them by a bit-true\n" +
			"simulation of the RTL and the team's own sign-off before committing hardware.",
		Writer:                    stdout,
		ErrWriter:                 stderr,
		HideVersion:               true,
		DisableSliceFlagSeparator: true,
		OnUsageError:              onUsage,
		ExitErrHandler:            func(*cli.Context, error) {},
		Action: func(c *cli.Context) error {
			if c.Args().Present() {
				return usagef("command %q: unknown (want design, plan, check or sweep)", c.Args().First())
			}
			return cli.ShowAppHelp(c)
		},
		Commands: []*cli.Command{designCommand(), planCommand(), checkCommand(), sweepCommand()},
	}
	for _, c := range app.Commands {
		c.OnUsageError = onUsage
	}
	return app
}

// reorderArgs moves a command's flags in front of its positional arguments,
// because the standard flag parser stops at the first positional argument and
// users write "stepdown check spec.toml --chain ...".
func reorderArgs(app *cli.App, args []string) []string {
	if len(args) < 2 {
		return args
	}
	var cmd *cli.Command
	for _, c := range app.Commands {
		if c.HasName(args[1]) {
			cmd = c
		}
	}
	if cmd == nil {
		return args
	}
	takesValue := map[string]bool{}
	for _, f := range cmd.Flags {
		_, isBool := f.(*cli.BoolFlag)
		for _, n := range f.Names() {
			takesValue[n] = !isBool
		}
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
		flags = append(flags, a)
		name := strings.TrimLeft(a, "-")
		if strings.Contains(name, "=") {
			continue
		}
		if takesValue[name] && i+1 < len(rest) {
			i++
			flags = append(flags, rest[i])
		}
	}
	out := append([]string{}, args[:2]...)
	out = append(out, flags...)
	if len(pos) > 0 {
		out = append(out, "--")
		out = append(out, pos...)
	}
	return out
}
