//go:build !unix

package report

import "os"

// lockDir takes no lock where flock is not available; locksHeld says so,
// and no temporary folder is ever swept there.
func lockDir(string) (*os.File, error) { return nil, nil }

const locksHeld = false
