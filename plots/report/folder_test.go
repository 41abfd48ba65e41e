package report

import (
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// runOut is one run's output step: prepare, write one report.json, commit.
func runOut(t *testing.T, dir, content string) error {
	t.Helper()
	o, err := OpenFolder(dir, "--out")
	if err != nil {
		return err
	}
	defer o.Discard()
	if err := o.Write([]File{{Name: "report.json", Data: []byte(content)}}); err != nil {
		return err
	}
	return o.Commit()
}

// litter lists what a run left beside the output folder.
func litter(t *testing.T, parent string) []string {
	t.Helper()
	entries, err := os.ReadDir(parent)
	must(t, err)
	var out []string
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".stepdown-") {
			out = append(out, e.Name())
		}
	}
	return out
}

func readString(t *testing.T, p string) string {
	t.Helper()
	b, err := os.ReadFile(p)
	must(t, err)
	return string(b)
}

// A folder name as long as the file system allows (255 bytes on Linux's
// common file systems, NAME_MAX) can be written and then replaced: the
// temporary names do not grow with it.
func TestOutLongName(t *testing.T) {
	parent := t.TempDir()
	for _, n := range []int{238, 250, 255} {
		dir := filepath.Join(parent, strings.Repeat("d", n))
		for run, content := range []string{"first", "second"} {
			if err := runOut(t, dir, content); err != nil {
				t.Fatalf("name of %d bytes, run %d: %v", n, run+1, err)
			}
			if got := readString(t, filepath.Join(dir, "report.json")); got != content {
				t.Errorf("name of %d bytes, run %d: report.json = %q", n, run+1, got)
			}
		}
	}
	if l := litter(t, parent); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

// A name longer than the file system takes is the user's to change: a
// misuse (exit status 2) saying so, before anything is written.
func TestOutNameTooLong(t *testing.T) {
	parent := t.TempDir()
	_, err := OpenFolder(filepath.Join(parent, strings.Repeat("d", 256)), "--out")
	var fe *FolderError
	if !errors.As(err, &fe) || !fe.Misuse || !strings.Contains(err.Error(), "256 bytes") || !strings.Contains(err.Error(), "shorter name") {
		t.Fatalf("OpenFolder(256-byte name) = %v, want a misuse naming the length", err)
	}
	if l := litter(t, parent); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

// A whole path longer than the system takes, every name in it short, is
// said as such, not blamed on the folder's name.
func TestOutPathTooLong(t *testing.T) {
	parent := t.TempDir()
	for len(parent) < 4000 {
		parent = filepath.Join(parent, strings.Repeat("p", min(200, 4000-len(parent))))
	}
	if err := os.MkdirAll(parent, 0o755); err != nil {
		t.Skipf("cannot make a %d-byte path here: %v", len(parent), err)
	}
	_, err := OpenFolder(filepath.Join(parent, strings.Repeat("d", 100)), "--out")
	var fe *FolderError
	if !errors.As(err, &fe) || !fe.Misuse || !strings.Contains(err.Error(), "a path of") || strings.Contains(err.Error(), "a name of") {
		t.Fatalf("OpenFolder(%d-byte path) = %v, want a misuse naming the path's length", len(parent)+101, err)
	}
}

// A previous output that cannot be removed once the new one is in place is
// an error naming what is left, never a silent success.
func TestOutOldNotRemoved(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "out")
	must(t, runOut(t, dir, "first"))
	defer func(f func(string) error) { removeAll = f }(removeAll)
	removeAll = func(p string) error {
		if strings.Contains(filepath.Base(p), oldPrefix) {
			return &os.PathError{Op: "unlinkat", Path: p, Err: os.ErrPermission}
		}
		return os.RemoveAll(p)
	}
	err := runOut(t, dir, "second")
	if err == nil || !strings.Contains(err.Error(), "previous one could not be removed") || !strings.Contains(err.Error(), oldPrefix) {
		t.Fatalf("commit = %v, want an error naming the folder left behind", err)
	}
	if got := readString(t, filepath.Join(dir, "report.json")); got != "second" {
		t.Errorf("report.json = %q, want the new output in place", got)
	}
}

// A previous output with a folder that cannot be written in is refused
// before the run, since it could not be removed after it. (Root can write
// anywhere, so the check is skipped there.)
func TestOutOldNotWritable(t *testing.T) {
	if os.Geteuid() == 0 {
		t.Skip("root can write in any folder")
	}
	parent := t.TempDir()
	dir := filepath.Join(parent, "out")
	must(t, runOut(t, dir, "first"))
	sub := filepath.Join(dir, "coefficients")
	must(t, os.Mkdir(sub, 0o755))
	must(t, os.WriteFile(filepath.Join(sub, "a.csv"), nil, 0o644))
	must(t, os.Chmod(sub, 0o555))
	defer os.Chmod(sub, 0o755)
	_, err := OpenFolder(dir, "--out")
	if err == nil || !strings.Contains(err.Error(), "could not be removed") {
		t.Fatalf("prepareOut = %v, want the previous output refused", err)
	}
}

// Two runs creating the same new folder: the second to finish says so in a
// sentence, writes nothing and leaves nothing.
func TestOutRace(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "out")
	a, err := OpenFolder(dir, "--out")
	must(t, err)
	b, err := OpenFolder(dir, "--out")
	must(t, err)
	defer a.Discard()
	defer b.Discard()
	must(t, a.Write([]File{{Name: "report.json", Data: []byte("a")}}))
	must(t, b.Write([]File{{Name: "report.json", Data: []byte("b")}}))
	must(t, a.Commit())
	err = b.Commit()
	if err == nil || !strings.Contains(err.Error(), "another run created it first; nothing was written") {
		t.Fatalf("second commit = %v", err)
	}
	b.Discard()
	if got := readString(t, filepath.Join(dir, "report.json")); got != "a" {
		t.Errorf("report.json = %q, want the first run's", got)
	}
	if l := litter(t, parent); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

// A failure while the new folder is moved into place puts the previous
// output back, untouched.
func TestOutCommitFailureRestores(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "out")
	must(t, runOut(t, dir, "first"))
	defer func(f func(string, string) error) { rename = f }(rename)
	rename = func(from, to string) error {
		if strings.HasPrefix(filepath.Base(from), tmpPrefix) {
			return &os.LinkError{Op: "rename", Old: from, New: to, Err: errors.New("injected failure")}
		}
		return os.Rename(from, to)
	}
	err := runOut(t, dir, "second")
	if err == nil || !strings.Contains(err.Error(), "cannot replace it: injected failure") {
		t.Fatalf("commit = %v", err)
	}
	if got := readString(t, filepath.Join(dir, "report.json")); got != "first" {
		t.Errorf("report.json = %q, want the previous output", got)
	}
	if l := litter(t, parent); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

// A commit that fails in a parent folder made read-only during the run
// (its rename, then the temporary folder's removal, refused) names the
// temporary folder it could not remove, rather than leaving it unsaid.
func TestOutCommitFailureNamesLeftover(t *testing.T) {
	for _, existed := range []bool{false, true} {
		parent := t.TempDir()
		dir := filepath.Join(parent, "out")
		if existed {
			must(t, runOut(t, dir, "first"))
		}
		denied := func(p string) bool { return strings.HasPrefix(filepath.Base(p), tmpPrefix) }
		oldRename, oldRemove := rename, removeAll
		rename = func(from, to string) error {
			if denied(from) {
				return &os.LinkError{Op: "rename", Old: from, New: to, Err: os.ErrPermission}
			}
			return os.Rename(from, to)
		}
		removeAll = func(p string) error {
			if denied(p) {
				return &os.PathError{Op: "unlinkat", Path: p, Err: os.ErrPermission}
			}
			return os.RemoveAll(p)
		}
		err := runOut(t, dir, "second")
		rename, removeAll = oldRename, oldRemove
		if err == nil || !strings.Contains(err.Error(), "temporary folder") || !strings.Contains(err.Error(), tmpPrefix) || !strings.Contains(err.Error(), "remove it yourself") {
			t.Errorf("existed %v: commit = %v, want an error naming the temporary folder left", existed, err)
		}
		if existed {
			if got := readString(t, filepath.Join(dir, "report.json")); got != "first" {
				t.Errorf("report.json = %q, want the previous output", got)
			}
		}
	}
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// OpenFolder sweeps the temporary folders no live run holds: a
// .stepdown-run-* whose lock it can take, a .stepdown-new-* over ten
// minutes old; it leaves a live run's, a fresh .stepdown-new-*, the
// .stepdown-old-* that may hold a previous output, and older versions'
// unlocked .stepdown-tmp-*.
func TestOpenFolderSweepsStale(t *testing.T) {
	if !locksHeld {
		t.Skip("no flock on this system: nothing is swept")
	}
	parent := t.TempDir()
	mk := func(name string, age time.Duration) string {
		p := filepath.Join(parent, name)
		if err := os.Mkdir(p, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(p, "report.json"), []byte("{}"), 0o644); err != nil {
			t.Fatal(err)
		}
		if age > 0 {
			old := time.Now().Add(-age)
			if err := os.Chtimes(p, old, old); err != nil {
				t.Fatal(err)
			}
		}
		return p
	}
	dead := mk(tmpPrefix+"dead", 0)
	staleBorn := mk(birthPrefix+"stale", time.Hour)
	keep := []string{mk(birthPrefix+"fresh", 0), mk(oldPrefix+"prev", time.Hour), mk(".stepdown-tmp-legacy", time.Hour)}
	live, err := OpenFolder(filepath.Join(parent, "a"), "")
	if err != nil {
		t.Fatal(err)
	}
	defer live.Discard()
	for _, p := range []string{dead, staleBorn} {
		if _, err := os.Stat(p); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s: not swept (%v)", filepath.Base(p), err)
		}
	}
	other, err := OpenFolder(filepath.Join(parent, "b"), "")
	if err != nil {
		t.Fatal(err)
	}
	defer other.Discard()
	for _, p := range append(keep, live.tmp, other.tmp) {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("%s: swept, want it kept (%v)", filepath.Base(p), err)
		}
	}
	// A committed run's lock goes with its temporary name: after Commit
	// and Discard nothing of the run is left but its output.
	if err := live.Write([]File{{Name: "report.json", Data: []byte("{}")}}); err != nil {
		t.Fatal(err)
	}
	if err := live.Commit(); err != nil {
		t.Fatal(err)
	}
	live.Discard()
	if live.lock != nil {
		t.Error("the lock is still held after Commit and Discard")
	}
}

// Where the lock cannot be taken (a network file system), a run goes on
// under .stepdown-tmp-, which no run sweeps, and commits as usual.
func TestOpenFolderWithoutLock(t *testing.T) {
	defer func(f func(string) (*os.File, error)) { lockFolder = f }(lockFolder)
	lockFolder = func(string) (*os.File, error) { return nil, errors.New("bad file descriptor") }
	parent := t.TempDir()
	o, err := OpenFolder(filepath.Join(parent, "out"), "")
	if err != nil {
		t.Fatal(err)
	}
	defer o.Discard()
	if !strings.HasPrefix(filepath.Base(o.tmp), unlockedPrefix) || o.lock != nil {
		t.Fatalf("temporary folder %q, lock %v: want %s* and no lock", filepath.Base(o.tmp), o.lock, unlockedPrefix)
	}
	lockFolder = lockDir
	other, err := OpenFolder(filepath.Join(parent, "b"), "")
	if err != nil {
		t.Fatal(err)
	}
	defer other.Discard()
	if _, err := os.Stat(o.tmp); err != nil {
		t.Fatalf("another run swept the unlocked temporary folder: %v", err)
	}
	if err := o.Write([]File{{Name: "report.json", Data: []byte("{}")}}); err != nil {
		t.Fatal(err)
	}
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(parent, "out", "report.json")); err != nil {
		t.Fatal(err)
	}
}

// A streamed file holds exactly what its Stream wrote, through writes of
// every size (the buffer's edges included); a Stream's error fails the
// run, naming the file, and leaves the output folder as it was.
func TestOutStream(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	must(t, runOut(t, dir, "before"))
	var want []byte
	for i := 0; len(want) < 3<<16+7; i++ {
		want = append(want, strings.Repeat(string(rune('a'+i%26)), i%4099)...)
	}
	o, err := OpenFolder(dir, "--out")
	must(t, err)
	err = o.Write([]File{{Name: "report.json", Data: []byte("{}")}, {Name: "big/stream.txt", Stream: func(w io.Writer) error {
		for rest := want; len(rest) > 0; {
			n := min(len(rest), 1+len(rest)%5003)
			if _, err := w.Write(rest[:n]); err != nil {
				return err
			}
			rest = rest[n:]
		}
		return nil
	}}})
	must(t, err)
	must(t, o.Commit())
	if got := readString(t, filepath.Join(dir, "big", "stream.txt")); got != string(want) {
		t.Errorf("streamed file: %d bytes, want %d", len(got), len(want))
	}

	o, err = OpenFolder(dir, "--out")
	must(t, err)
	defer o.Discard()
	err = o.Write([]File{{Name: "fails.csv", Stream: func(w io.Writer) error {
		w.Write([]byte("part"))
		return errors.New("disk full")
	}}})
	if err == nil || !strings.Contains(err.Error(), "fails.csv") || !strings.Contains(err.Error(), "disk full") {
		t.Fatalf("err = %v, want one naming fails.csv and its cause", err)
	}
	o.Discard()
	if _, err := os.Stat(filepath.Join(dir, "fails.csv")); err == nil {
		t.Error("a failed stream reached the output folder")
	}
	if got := readString(t, filepath.Join(dir, "big", "stream.txt")); got != string(want) {
		t.Error("a failed stream changed the output folder")
	}
}

// A stream stops once its context is done: the write after the
// cancellation fails with the context's error (within one 64 KiB buffer),
// the stream ends there, no later file is written, and the output folder
// is left as it was.
func TestOutStreamStops(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	must(t, runOut(t, dir, "before"))
	o, err := OpenFolder(dir, "--out")
	must(t, err)
	defer o.Discard()
	ctx, cancel := context.WithCancel(context.Background())
	written := 0
	later := false
	err = o.WriteContext(ctx, []File{{Name: "endless.csv", Stream: func(w io.Writer) error {
		line := []byte(strings.Repeat("1234567,", 127) + "\n")
		for {
			if written >= 1<<20 {
				cancel()
			}
			if written > 1<<20+3<<16 {
				return errors.New("the stream ran on after its context was cancelled")
			}
			n, err := w.Write(line)
			written += n
			if err != nil {
				return err
			}
		}
	}}, {Name: "later.txt", Stream: func(io.Writer) error { later = true; return nil }}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	if later {
		t.Error("a file after the stopped stream was written")
	}
	o.Discard()
	if got := readString(t, filepath.Join(dir, "report.json")); got != "before" {
		t.Errorf("output folder changed: marker %q", got)
	}
}
