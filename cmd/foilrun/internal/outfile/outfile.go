// Package outfile is the one way foilrun writes a file: guarded and
// atomic.
//
// Guarded: before anything is written, and again just before the file
// takes its place, the target is refused when it is a symbolic link, not
// a regular file (a folder, a device, a FIFO), one of the command's own
// inputs or the run log (compared with os.SameFile, so another name or a
// hard link to the same file is caught too), or an existing file when
// the caller did not force it.
//
// Atomic: the content goes to a temporary file in the target's folder,
// is flushed to disk (fsync), and is renamed over the target; the folder
// is then synced so the rename survives a power cut. A write that fails
// part-way (disk full, a file-size limit, an error of the producer)
// removes the temporary file and leaves the old target byte for byte as
// it was.
//
// Entry points: Check (the guard alone, for a command to refuse early,
// before long work), Write (produce and commit in one call), Create (a
// *File to write to, then Commit or Abort) and Reserve (a fresh temporary
// path for a writer that takes a path, such as a database backup).
package outfile

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/foilrun/foilrun/recipe/infile"
)

// ErrRefused is wrapped by every error for a target the guard refuses.
var ErrRefused = errors.New("output refused")

// Input is a file the command reads, which its outputs must not replace.
type Input struct {
	What string // "recipe", "run log", "micrograph", ...
	Path string
}

// Guard says what an output may replace.
type Guard struct {
	// Force lets an existing regular file be replaced (never an input).
	Force bool
	// Inputs are the command's inputs and the run log; an entry with an
	// empty Path, or one that does not exist, is skipped.
	Inputs []Input
}

// RefusedError is a target the guard refuses.
type RefusedError struct {
	Path   string
	Reason string // "is a symbolic link", "already exists", "is the recipe this command reads", ...
	hint   string
}

func (e *RefusedError) Error() string {
	return fmt.Sprintf("write %q: the file %s", e.Path, e.Reason)
}

// Hint says what to do instead.
func (e *RefusedError) Hint() string { return e.hint }

// Unwrap returns ErrRefused.
func (e *RefusedError) Unwrap() error { return ErrRefused }

// Check applies the guard to path without writing anything. It returns
// nil for a path that may be written: one that does not exist yet, or a
// regular file that is no input when g.Force is set.
func Check(path string, g Guard) error {
	refuse := func(reason, hint string) error { return &RefusedError{Path: path, Reason: reason, hint: hint} }
	fi, err := os.Lstat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("write %q: %w", path, err)
	}
	switch {
	case fi.Mode()&fs.ModeSymlink != 0:
		return refuse("is a symbolic link; foilrun does not write through links", "give the path of the file itself, or a new name")
	case !fi.Mode().IsRegular():
		return refuse("is not a regular file ("+infile.Describe(fi.Mode())+")", "give the path of a new file")
	}
	for _, in := range g.Inputs {
		if in.Path == "" {
			continue
		}
		if ii, err := os.Stat(in.Path); err == nil && os.SameFile(fi, ii) {
			return refuse(fmt.Sprintf("is the %s this command reads (%s); foilrun never writes over an input", in.What, in.Path), "write to a new file name")
		}
	}
	if !g.Force {
		return refuse("already exists", "pass --force to replace it, or give a new file name")
	}
	return nil
}

// File is an output being written: a temporary file beside the target.
// Commit puts it in place; Abort (safe after Commit) removes it.
type File struct {
	tmp    *os.File
	target string
	guard  Guard
	done   bool
}

// Create checks the guard and opens a temporary file in path's folder.
// The file has the mode of the file it replaces, else 0666 less the
// umask, as os.Create would give.
func Create(path string, g Guard) (*File, error) {
	if err := Check(path, g); err != nil {
		return nil, err
	}
	perm := fs.FileMode(0o666)
	if fi, err := os.Stat(path); err == nil {
		perm = fi.Mode().Perm()
	}
	dir, base := filepath.Split(path)
	for range 100 {
		name := filepath.Join(dir, "."+base+".tmp-"+randomSuffix())
		f, err := os.OpenFile(name, os.O_WRONLY|os.O_CREATE|os.O_EXCL, perm)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("write %q: %w", path, err)
		}
		if perm != 0o666 {
			if err := f.Chmod(perm); err != nil {
				f.Close()
				os.Remove(name)
				return nil, fmt.Errorf("write %q: %w", path, err)
			}
		}
		return &File{tmp: f, target: path, guard: g}, nil
	}
	return nil, fmt.Errorf("write %q: no free temporary name in its folder", path)
}

func randomSuffix() string {
	var b [6]byte
	rand.Read(b[:])
	return hex.EncodeToString(b[:])
}

// Write writes to the temporary file.
func (f *File) Write(p []byte) (int, error) { return f.tmp.Write(p) }

// Name is the target's path.
func (f *File) Name() string { return f.target }

// Commit flushes the temporary file to disk, checks the guard once more
// and renames the file over the target. On any error the temporary file
// is removed and the target left as it was.
func (f *File) Commit() error {
	if f.done {
		return fmt.Errorf("write %q: already committed or aborted", f.target)
	}
	f.done = true
	if err := place(f.tmp, f.target, f.guard); err != nil {
		os.Remove(f.tmp.Name())
		return err
	}
	return nil
}

// place flushes tmp to disk, closes it, checks the guard once more and
// renames tmp over target, then syncs target's folder. It leaves the
// removal of tmp, on an error, to the caller.
func place(tmp *os.File, target string, g Guard) error {
	err := tmp.Sync()
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		if err = Check(target, g); err != nil {
			return err
		}
		err = os.Rename(tmp.Name(), target)
	}
	if err != nil {
		return fmt.Errorf("write %q: %w", target, err)
	}
	syncDir(filepath.Dir(target))
	return nil
}

// Abort removes the temporary file, leaving the target as it was. It
// does nothing after Commit.
func (f *File) Abort() {
	if f.done {
		return
	}
	f.done = true
	f.tmp.Close()
	os.Remove(f.tmp.Name())
}

// Write checks the guard, lets produce write the content and commits it;
// when produce fails, or writing, flushing or renaming does, the target is
// left as it was and no temporary file remains.
func Write(path string, g Guard, produce func(io.Writer) error) error {
	f, err := Create(path, g)
	if err != nil {
		return err
	}
	if err := produce(f); err != nil {
		f.Abort()
		return err
	}
	return f.Commit()
}

// syncDir flushes a folder's entries (the rename) to disk. Best effort:
// some file systems refuse fsync on a folder, and the data is safe by
// then; only the rename could be lost in a power cut.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// Reserved is a temporary path beside a target, for a writer that takes
// a path rather than an io.Writer (a database backup). It lies in a fresh
// private folder inside the target's folder, so nothing else uses the
// name and the rename stays on one file system.
type Reserved struct {
	// Path is where the writer should write; it does not exist yet.
	Path   string
	dir    string
	target string
	guard  Guard
}

// Reserve checks the guard and returns a fresh temporary path beside
// path. Commit renames what was written there over path; Abort removes
// it. Should the process be killed in between, the target is untouched
// and only a hidden ".NAME.tmp-…" folder remains.
func Reserve(path string, g Guard) (*Reserved, error) {
	if err := Check(path, g); err != nil {
		return nil, err
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.MkdirTemp(dir, "."+base+".tmp-")
	if err != nil {
		return nil, fmt.Errorf("write %q: %w", path, err)
	}
	return &Reserved{Path: filepath.Join(tmp, base), dir: tmp, target: path, guard: g}, nil
}

// Commit flushes the written file, checks the guard again and renames the
// file over the target; the temporary folder is removed either way.
func (r *Reserved) Commit() error {
	defer os.RemoveAll(r.dir)
	f, err := os.OpenFile(r.Path, os.O_RDWR, 0)
	if err != nil {
		return fmt.Errorf("write %q: %w", r.target, err)
	}
	return place(f, r.target, r.guard)
}

// Abort removes the temporary folder and whatever was written in it.
func (r *Reserved) Abort() { os.RemoveAll(r.dir) }
