package main

import (
	"errors"

	"github.com/stepdown-dsp/stepdown/plots/report"
)

// prepareOut checks the --out folder before any work (report.OpenFolder);
// a folder that cannot serve is a usage error.
func prepareOut(dir string) (*report.Folder, error) {
	o, err := report.OpenFolder(dir, "--out")
	var fe *report.FolderError
	if errors.As(err, &fe) && fe.Misuse {
		return nil, usageError{err}
	}
	return o, err
}
