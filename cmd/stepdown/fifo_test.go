//go:build unix

package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// Files that would block or never end are refused or read at once, never
// waited on: a named pipe with no writer as the spec, as --input and as
// --front, and /dev/zero as --front (it used to be read whole, past any
// memory). Each ends with one line and exit 2.
func TestPathsThatWouldBlock(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skip("no named pipes here:", err)
	}
	spec := filepath.Join(dir, "rx.toml")
	must(t, os.WriteFile(spec, []byte(goodSpec), 0o644))
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", fifo, "--out", "o1"}, "missing"},
		{[]string{"check", spec, "--chain", "fir32", "--front", fifo, "--out", "o2"}, "not a regular file"},
		{[]string{"check", spec, "--chain", "fir32", "--front", "/dev/zero", "--out", "o3"}, "not a regular file"},
		{[]string{"simulate", spec, "--input", fifo, "--format", "int16", "--out", "o4"}, "not a regular file"},
	} {
		r := runBinary(t, dir, nil, tc.args...)
		if r.code != 2 || strings.Count(r.stderr, "\n") != 1 || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%v: exit %d, %q; want exit 2 and one line saying %q", tc.args, r.code, r.stderr, tc.want)
		}
	}
}
