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
// file the command reads (the spec, --front, --input): the run replaces
// the folder as a whole, and would delete it.
func prepareOut(c *cli.Context) (*report.Folder, error) {
	dir := c.String("out")
	type read struct{ what, path string }
	var reads []read
	if c.Args().Present() {
		reads = append(reads, read{"the spec file", c.Args().First()})
	}
	for _, f := range []string{"front", "input"} {
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
// followed where they resolve.
func within(dir, path string) bool {
	d, err := filepath.Abs(dir)
	if err != nil {
		return false
	}
	p, err := filepath.Abs(path)
	if err != nil {
		return false
	}
	if r, err := filepath.EvalSymlinks(d); err == nil {
		d = r
	}
	if r, err := filepath.EvalSymlinks(p); err == nil {
		p = r
	}
	rel, err := filepath.Rel(d, p)
	return err == nil && rel != "." && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}
