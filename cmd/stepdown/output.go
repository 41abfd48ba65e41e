package main

import (
	"errors"
	"path/filepath"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/stepdown-dsp/stepdown/plots/report"
)

// prepareOut checks the --out folder before any work (report.OpenFolder);
// a folder that cannot serve is a usage error, and so is one that holds a
// file of the user's that the command reads (the spec, --input): the run
// replaces the folder as a whole, and would delete it. A --front inside it
// is a plan's report.json, read whole before anything is written and
// replaced like the rest of the plan's output, as check replaces any
// output folder.
func prepareOut(c *cli.Context) (*report.Folder, error) {
	dir := c.String("out")
	type read struct{ what, path string }
	var reads []read
	if c.Args().Present() {
		reads = append(reads, read{"the spec file", c.Args().First()})
	}
	for _, f := range []string{"input"} {
		if p := c.String(f); p != "" {
			reads = append(reads, read{"the --" + f + " file", p})
		}
	}
	for _, r := range reads {
		if within(dir, r.path) {
			return nil, usagef("--out %q holds %s %q, which the run would delete when it replaces the folder; write the output elsewhere", clip(dir), r.what, clip(r.path))
		}
	}
	o, err := report.OpenFolder(dir, "--out")
	var fe *report.FolderError
	if errors.As(err, &fe) && fe.Misuse {
		return nil, usageError{err}
	}
	return o, err
}

// within reports whether path lies inside the folder dir, symbolic links
// followed where they resolve. Links are resolved before the paths are made
// absolute: "link/.." is where the link's target's parent is, which a
// textual clean would put beside the link.
func within(dir, path string) bool {
	resolve := func(p string) (string, bool) {
		if r, err := filepath.EvalSymlinks(p); err == nil {
			p = r
		}
		a, err := filepath.Abs(p)
		return a, err == nil
	}
	d, ok := resolve(dir)
	if !ok {
		return false
	}
	p, ok := resolve(path)
	if !ok {
		return false
	}
	rel, err := filepath.Rel(d, p)
	return err == nil && rel != "." && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}
