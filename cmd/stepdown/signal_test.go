package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"
	"time"
)

// A spec with a large search (D = 4096 over up to 12 stages), so that a plan
// is still running when the test interrupts it.
const slowSpec = `input_rate  = "409.6 MHz"
output_rate = "100 kHz"
passband    = "30 kHz"
ripple      = "0.1 dB"
rejection   = "90 dB"
[search]
max_stages = 12
cic_orders = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10]
cic_delays = [1, 2, 3, 4]
`

// Ctrl-C during a plan must leave the output folder as it was and no
// temporary folder behind.
func TestInterruptLeavesNoFiles(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "spec.toml"), []byte(slowSpec), 0o644))
	must(t, os.Mkdir(filepath.Join(dir, "out"), 0o755))
	must(t, os.WriteFile(filepath.Join(dir, "out", "report.json"), []byte("previous"), 0o644))
	before := snapshot(t, dir)

	cmd := exec.Command(binary, "plan", "spec.toml", "--out", "out")
	cmd.Dir = dir
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	must(t, cmd.Start())
	// Wait (not a timing assertion) until the run has created its temporary
	// folder, which happens after the spec is read and before the search.
	for i := 0; i < 600; i++ {
		if m, _ := filepath.Glob(filepath.Join(dir, ".stepdown-run-*")); len(m) > 0 {
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	must(t, cmd.Process.Signal(syscall.SIGINT))
	err := cmd.Wait()
	if err == nil {
		t.Skip("the plan finished before the interrupt arrived")
	}
	ee, ok := err.(*exec.ExitError)
	if !ok || ee.ExitCode() != 1 {
		t.Fatalf("exit %v, want status 1; stderr %q", err, stderr.String())
	}
	if !strings.Contains(stderr.String(), "interrupted") || strings.Count(stderr.String(), "\n") != 1 {
		t.Errorf("stderr %q, want one line saying interrupted", stderr.String())
	}
	if after := snapshot(t, dir); !reflect.DeepEqual(before, after) {
		t.Errorf("the folder changed:\nbefore %v\nafter  %v", before, after)
	}
}

// --timeout stops a plan with the best front so far, marked partial; if
// nothing was designed yet it fails and leaves the folder as it was.
func TestTimeout(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "spec.toml"), []byte(slowSpec), 0o644))
	before := snapshot(t, dir)
	r := runBinary(t, dir, nil, "plan", "spec.toml", "--out", "out", "--timeout", "1ns")
	switch r.code {
	case 1:
		if after := snapshot(t, dir); !reflect.DeepEqual(before, after) {
			t.Errorf("a failed run changed the folder")
		}
		if !strings.Contains(r.stderr, "--timeout") {
			t.Errorf("stderr %q does not name --timeout", r.stderr)
		}
	case 0:
		b, err := os.ReadFile(filepath.Join(dir, "out", "report.json"))
		must(t, err)
		var rep struct{ Partial bool }
		must(t, json.Unmarshal(b, &rep))
		if !rep.Partial || !strings.Contains(r.stdout, "PARTIAL") {
			t.Errorf("a timed-out plan is not marked partial")
		}
	default:
		t.Errorf("exit %d: %s", r.code, r.stderr)
	}
}

// A run killed outside stepdown's control (SIGKILL) leaves its temporary
// folder; the next run in the same folder removes it, since no live run
// holds its lock, and leaves a live run's alone.
func TestKilledRunSwept(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "spec.toml"), []byte(slowSpec), 0o644))
	start := func(out string) (*exec.Cmd, string) {
		cmd := exec.Command(binary, "plan", "spec.toml", "--out", out, "--quiet")
		cmd.Dir = dir
		must(t, cmd.Start())
		// Wait (not a timing assertion) for its temporary folder.
		for i := 0; i < 600; i++ {
			m, _ := filepath.Glob(filepath.Join(dir, ".stepdown-run-*"))
			for _, p := range m {
				if !strings.HasSuffix(p, "-seen") {
					return cmd, p
				}
			}
			time.Sleep(50 * time.Millisecond)
		}
		t.Fatal("no temporary folder appeared")
		return nil, ""
	}
	killed, dead := start("a")
	must(t, killed.Process.Kill())
	_ = killed.Wait()
	if _, err := os.Stat(dead); err != nil {
		t.Fatalf("the killed run's temporary folder is already gone: %v", err)
	}
	// Mark it so that start() below finds the live run's folder.
	must(t, os.Rename(dead, dead+"-seen"))
	dead += "-seen"
	live, held := start("b")
	defer func() { _ = live.Process.Kill(); _ = live.Wait() }()
	if _, err := os.Stat(dead); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the killed run's temporary folder is still there after another run started (%v)", err)
	}
	r := runBinary(t, dir, nil, "plan", "--out", "c", "--quiet") // the built-in example
	if r.code != 0 {
		t.Fatalf("plan: exit %d: %s", r.code, r.stderr)
	}
	if _, err := os.Stat(held); err != nil {
		t.Errorf("a third run removed the live run's temporary folder: %v", err)
	}
}
