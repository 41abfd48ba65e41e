//go:build unix

package report

import (
	"os"
	"syscall"
)

// lockDir opens the folder at path and takes an exclusive, non-blocking
// flock on it, held until the returned file is closed or the process ends
// in any way (the kernel releases it, even after SIGKILL). It fails when
// another process holds it.
func lockDir(path string) (*os.File, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		f.Close()
		return nil, err
	}
	return f, nil
}

// locksHeld reports whether lockDir holds folders on this system: sweeping
// another run's temporary folder is safe only where a live run's lock can
// be seen.
const locksHeld = true
