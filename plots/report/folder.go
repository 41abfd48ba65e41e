package report

import (
	"bufio"
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Folder writes a run's files into a temporary folder beside the output
// folder and renames it into place at the end, so that a run that fails or is
// interrupted leaves the output folder as it was.
//
// The temporary folder, and the name the previous output is moved to while
// the new one takes its place, are short fixed prefixes with a random
// suffix (.stepdown-run-*, .stepdown-old-*) in the same parent folder, so
// they fit wherever the output folder's own name fits and a rename stays
// within one file system.
//
// On Unix a run holds an flock on its temporary folder from its creation
// (made as .stepdown-new-*, locked, then renamed) to its end, however it
// ends: the kernel drops the lock of a killed process. A later run in the
// same parent removes the .stepdown-run-* folders whose lock it can take,
// the leftovers of runs killed outside stepdown's control (SIGKILL, a
// crash, a power cut), and .stepdown-new-* folders over ten minutes old
// that it can lock (a run holds that name for microseconds). It never
// touches a folder a live run holds, nor .stepdown-old-* (which can hold a
// previous output that a run killed in the middle of its rename did not
// put back), nor .stepdown-tmp-*: the temporaries of older stepdown
// versions, and of runs on a file system where the lock cannot be taken
// (NFS and CIFS emulate flock with byte-range locks, which a folder
// cannot hold), which go on unlocked under that name.
//
// Its zero value is not usable: OpenFolder makes one. Messages name the
// folder as role "dir" (the command line's role is "--out").
type Folder struct {
	dir    string // as the caller gave it
	role   string // what messages call it
	abs    string
	tmp    string
	lock   *os.File // the flock on tmp (nil where none is taken)
	exists bool
}

// A FolderError is an error about the output folder. Misuse says that the
// caller named a folder that cannot serve (a file, a symbolic link, a
// folder that is not stepdown's output), as opposed to a failure of the
// file system.
type FolderError struct {
	Misuse bool
	Err    error
}

func (e *FolderError) Error() string { return e.Err.Error() }
func (e *FolderError) Unwrap() error { return e.Err }

// Dir is the folder as the caller named it.
func (o *Folder) Dir() string { return o.dir }

// Existed reports whether the folder was there when the run opened it (a
// run that writes nothing then leaves it as it was; otherwise it leaves
// none).
func (o *Folder) Existed() bool { return o.exists }

// misuse and failure make FolderErrors.
func misuse(format string, args ...any) error {
	return &FolderError{Misuse: true, Err: fmt.Errorf(format, args...)}
}
func failure(format string, args ...any) error {
	return &FolderError{Err: fmt.Errorf(format, args...)}
}

// Prefixes of the temporary names beside the output folder.
const (
	birthPrefix    = ".stepdown-new-"
	tmpPrefix      = ".stepdown-run-"
	unlockedPrefix = ".stepdown-tmp-" // a temporary folder not locked: never swept
	oldPrefix      = ".stepdown-old-"
)

// staleBirth is the age past which an unlocked .stepdown-new-* folder is a
// leftover.
const staleBirth = 10 * time.Minute

// Seams for tests: the file-system calls whose failures commit handles,
// and the lock a run takes on its temporary folder.
var (
	removeAll  = os.RemoveAll
	rename     = os.Rename
	lockFolder = lockDir
)

// OpenFolder checks the output folder dir before any work, and creates the
// temporary folder beside it; role is what messages call the folder
// ("output folder" when empty). The folder need not exist; if it does, it
// must be empty or hold a previous output (one of Markers), and it will be
// replaced as a whole by Commit.
func OpenFolder(dir, role string) (*Folder, error) {
	if role == "" {
		role = "output folder"
	}
	if dir == "" {
		return nil, misuse("%s: empty; name a folder", role)
	}
	shown := units.Clip(dir, units.MaxEcho)
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, misuse("%s %q: %v", role, shown, err)
	}
	o := &Folder{dir: dir, role: role, abs: abs}
	parent := filepath.Dir(abs)
	if fi, err := os.Stat(parent); err != nil || !fi.IsDir() {
		return nil, misuse("%s %q: its parent folder %q does not exist", role, shown, units.Clip(parent, units.MaxEcho))
	}
	fi, err := os.Lstat(abs)
	switch {
	case errors.Is(err, os.ErrNotExist):
	case errors.Is(err, syscall.ENAMETOOLONG) && len(filepath.Base(abs)) > 255:
		return nil, misuse("%s %q: a name of %d bytes, longer than the file system takes (a folder name of at most 255 bytes on common systems); choose a shorter name", role, shown, len(filepath.Base(abs)))
	case errors.Is(err, syscall.ENAMETOOLONG):
		return nil, misuse("%s %q: a path of %d bytes, longer than the system takes (4096 bytes on common systems); choose a folder nearer the root", role, shown, len(abs))
	case err != nil:
		return nil, failure("%s %q: %v", role, shown, unwrapPath(err))
	case fi.Mode()&os.ModeSymlink != 0:
		return nil, misuse("%s %q: is a symbolic link; it would be replaced as a whole, so give the folder itself", role, shown)
	case !fi.IsDir():
		return nil, misuse("%s %q: is a file, not a folder; remove it or choose another folder", role, shown)
	default:
		o.exists = true
		entries, err := os.ReadDir(abs)
		if err != nil {
			return nil, failure("%s %q: cannot be read: %v", role, shown, unwrapPath(err))
		}
		if len(entries) > 0 && !hasMarker(abs) {
			return nil, misuse("%s %q: exists and is not a stepdown output folder (no report.json or simulate.json); it would be replaced as a whole, so choose another folder", role, shown)
		}
		// The folder will be replaced and the previous output removed:
		// make sure both can be done before the search.
		if err := checkRemovable(abs); err != nil {
			return nil, failure("%s %q: the previous output could not be replaced, so nothing was run (%v); fix its permissions or choose another folder", role, shown, err)
		}
	}
	birth, err := os.MkdirTemp(parent, birthPrefix+"*")
	if err != nil {
		return nil, failure("%s %q: cannot make a folder in %q (the system refused: %v); choose a folder you can write to", role, shown, units.Clip(parent, units.MaxEcho), unwrapPath(err))
	}
	o.tmp = birth
	// MkdirTemp makes the folder private; the output is an ordinary folder.
	if err := os.Chmod(birth, 0o755); err != nil {
		o.Discard()
		return nil, failure("%s %q: %v", role, shown, unwrapPath(err))
	}
	// Locked before it takes the name that later runs sweep. Where the
	// lock cannot be taken (a network file system that emulates flock
	// with byte-range locks refuses one on a folder), the run goes on
	// under the name no run sweeps.
	prefix := tmpPrefix
	if o.lock, err = lockFolder(birth); err != nil {
		o.lock, prefix = nil, unlockedPrefix
	}
	tmp := filepath.Join(parent, prefix+strings.TrimPrefix(filepath.Base(birth), birthPrefix))
	if err := rename(birth, tmp); err != nil {
		o.Discard()
		return nil, failure("%s %q: cannot make a folder in %q (the system refused: %v); choose a folder you can write to", role, shown, units.Clip(parent, units.MaxEcho), unwrapPath(err))
	}
	o.tmp = tmp
	sweepStale(parent)
	return o, nil
}

// sweepStale removes, best effort, the temporary folders in parent left by
// runs that ended without cleaning up (see Folder): those no live run
// holds locked.
func sweepStale(parent string) {
	if !locksHeld {
		return
	}
	entries, err := os.ReadDir(parent)
	if err != nil {
		return
	}
	for _, e := range entries {
		name := e.Name()
		run, born := strings.HasPrefix(name, tmpPrefix), strings.HasPrefix(name, birthPrefix)
		if !e.IsDir() || !(run || born) {
			continue
		}
		p := filepath.Join(parent, name)
		if born {
			if fi, err := e.Info(); err != nil || time.Since(fi.ModTime()) < staleBirth {
				continue
			}
		}
		f, err := lockDir(p)
		if err != nil {
			continue // a live run holds it, or it is gone
		}
		_ = removeAll(p)
		f.Close()
	}
}

// Markers are the files one of which every stepdown output folder holds:
// report.json (plan, check, sweep) or simulate.json (simulate).
var Markers = []string{"report.json", "simulate.json"}

// hasMarker reports whether the folder dir holds one of Markers.
func hasMarker(dir string) bool {
	for _, m := range Markers {
		if _, err := os.Stat(filepath.Join(dir, m)); err == nil {
			return true
		}
	}
	return false
}

// checkRemovable reports whether every folder in the tree at dir lets a file
// be created and removed in it, which removing the tree needs.
func checkRemovable(dir string) error {
	return filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return unwrapPath(err)
		}
		if !d.IsDir() {
			return nil
		}
		probe, err := os.CreateTemp(p, ".stepdown-probe-*")
		if err != nil {
			rel, _ := filepath.Rel(dir, p)
			return fmt.Errorf("folder %q is not writable", units.Clip(rel, units.MaxEcho))
		}
		probe.Close()
		return os.Remove(probe.Name())
	})
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err
	}
	return err
}

// Write writes files into the temporary folder (names with / make
// subfolders); a file with Stream set is written through a buffer as
// Stream makes it, never held whole.
func (o *Folder) Write(files []File) error {
	return o.WriteContext(context.Background(), files)
}

// WriteContext is Write stopped by ctx: a stream's writes fail with ctx's
// error once it is done (each buffered write of 64 KiB looks at it), and
// no file starts after it. The caller then leaves the folder uncommitted.
func (o *Folder) WriteContext(ctx context.Context, files []File) error {
	for _, f := range files {
		if err := ctx.Err(); err != nil {
			return err
		}
		p := filepath.Join(o.tmp, filepath.FromSlash(f.Name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			return failure("writing %s: %v", f.Name, unwrapPath(err))
		}
		if f.Stream != nil {
			if err := writeStream(ctx, p, f.Stream); err != nil {
				if ctx.Err() != nil {
					return ctx.Err()
				}
				return failure("writing %s: %v", f.Name, unwrapPath(err))
			}
			continue
		}
		if err := os.WriteFile(p, f.Data, 0o644); err != nil {
			return failure("writing %s: %v", f.Name, unwrapPath(err))
		}
	}
	return nil
}

// writeStream creates the file p and writes into it what stream makes.
func writeStream(ctx context.Context, p string, stream func(io.Writer) error) error {
	fh, err := os.OpenFile(p, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(stopWriter{ctx, fh}, 1<<16)
	err = stream(bw)
	if err == nil {
		err = bw.Flush()
	}
	if cerr := fh.Close(); err == nil {
		err = cerr
	}
	return err
}

// stopWriter is w that fails once ctx is done.
type stopWriter struct {
	ctx context.Context
	w   io.Writer
}

func (s stopWriter) Write(p []byte) (int, error) {
	if err := s.ctx.Err(); err != nil {
		return 0, err
	}
	return s.w.Write(p)
}

// Commit puts the temporary folder in the output folder's place. On any
// error the output folder is as it was before the run, except in the one
// case the error says so: the new output is in place but the previous one,
// moved aside, could not be removed.
func (o *Folder) Commit() error {
	err := o.commit()
	if err != nil && o.tmp != "" {
		// The run's files are not wanted now. A temporary folder that
		// cannot go (its parent made read-only during the run) is named,
		// so that nothing is left behind unsaid.
		if rerr := removeAll(o.tmp); rerr != nil {
			left := o.tmp
			o.tmp = ""
			o.unlock()
			return failure("%v; the run's temporary folder %q could not be removed either: remove it yourself (%v)", err, left, unwrapPath(rerr))
		}
		o.tmp = ""
		o.unlock()
	}
	return err
}

// commit is Commit but for the temporary folder of a failed commit.
func (o *Folder) commit() error {
	shown := units.Clip(o.dir, units.MaxEcho)
	if !o.exists {
		if err := rename(o.tmp, o.abs); err != nil {
			if fi, serr := os.Lstat(o.abs); serr == nil && fi.IsDir() {
				return failure("%s %q: another run created it first; nothing was written", o.role, shown)
			}
			return failure("%s %q: cannot create it: %v", o.role, shown, unwrapPath(err))
		}
		o.tmp = ""
		o.unlock()
		return nil
	}
	old, err := unusedName(filepath.Dir(o.abs), oldPrefix)
	if err != nil {
		return failure("%s %q: cannot replace it: %v", o.role, shown, err)
	}
	if err := rename(o.abs, old); err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return failure("%s %q: another run moved or removed it meanwhile; nothing was written", o.role, shown)
		}
		return failure("%s %q: cannot replace it: %v", o.role, shown, unwrapPath(err))
	}
	if err := rename(o.tmp, o.abs); err != nil {
		// Put the previous output back.
		if rerr := rename(old, o.abs); rerr != nil {
			return failure("%s %q: cannot replace it (%v), and the previous output could not be put back: it is in %q", o.role, shown, unwrapPath(err), old)
		}
		if fi, serr := os.Lstat(o.abs); serr == nil && fi.IsDir() && errors.Is(err, os.ErrExist) {
			return failure("%s %q: another run replaced it first; nothing was written", o.role, shown)
		}
		return failure("%s %q: cannot replace it: %v", o.role, shown, unwrapPath(err))
	}
	o.tmp = ""
	o.unlock()
	if err := removeAll(old); err != nil {
		return failure("%s %q: the new output is in place, but the previous one could not be removed: remove %q yourself (%v)", o.role, shown, old, unwrapPath(err))
	}
	return nil
}

// unusedName returns a path in parent, prefix and 16 random hex digits, that
// does not exist yet (os.Rename will not move a folder onto another).
func unusedName(parent, prefix string) (string, error) {
	for range 16 {
		var b [8]byte
		if _, err := rand.Read(b[:]); err != nil {
			return "", err
		}
		p := filepath.Join(parent, prefix+hex.EncodeToString(b[:]))
		if _, err := os.Lstat(p); errors.Is(err, os.ErrNotExist) {
			return p, nil
		}
	}
	return "", errors.New("no unused temporary name")
}

// Discard removes the temporary folder of a run that did not commit; it
// does nothing after Commit, or on a nil Folder.
func (o *Folder) Discard() {
	if o != nil && o.tmp != "" {
		_ = removeAll(o.tmp)
		o.tmp = ""
	}
	o.unlock()
}

// unlock releases the temporary folder's lock, if held.
func (o *Folder) unlock() {
	if o != nil && o.lock != nil {
		o.lock.Close()
		o.lock = nil
	}
}
