// Package infile is the one way foilrun reads a file it is given: regular
// files only, each kind of input with a size limit.
//
// A path that names a FIFO, a device, a socket or a folder is refused
// before it is opened (a FIFO would block the open, /dev/zero never ends),
// with a message that names the path and what it is. The file is then
// opened without blocking and checked again, so a FIFO swapped in between
// the two looks cannot hang the reader either. A file larger than its
// kind's limit is refused from its size, and a file that grows past the
// limit while it is read stops with the same error.
//
// Entry points: ReadFile for inputs read whole (recipe, furnace, site and
// parameter files), Open for inputs read as a stream (furnace logs,
// micrographs, exports to import). The package imports nothing of
// foilrun's, so every package may use it.
package infile

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"os"
	"syscall"
)

// Kind names a kind of input (as messages say it) and bounds its size.
type Kind struct {
	Name string // "recipe", "furnace log", ...
	Max  int64  // largest size accepted, in bytes
}

// Size limits. YAML files written by people are a few kilobytes, so 1 MiB
// leaves ample room; a controller log sampled every second for a week is
// about 50 MB, so 1 GiB holds years of logging; a JSON export is about
// 3 kB per run with its recipe snapshots shared, so 1 GiB holds some
// 300,000 runs, more than a lab logs in a working life. An image's bytes
// are bounded here; its pixels by the micrograph decoder.
const (
	MiB = 1 << 20
	GiB = 1 << 30
)

// The kinds of input foilrun reads.
var (
	Recipe     = Kind{"recipe", MiB}
	Furnace    = Kind{"furnace", MiB}
	Site       = Kind{"site", MiB}
	Params     = Kind{"params", MiB}
	FurnaceLog = Kind{"furnace log", GiB}
	Import     = Kind{"import", GiB}
	Image      = Kind{"image", GiB}
)

// ErrNotRegular is wrapped by every error for a path that is not a
// regular file; ErrTooLarge by every error for a file over its limit.
var (
	ErrNotRegular = errors.New("not a regular file")
	ErrTooLarge   = errors.New("file too large")
)

// NotRegularError is a path that names something other than a regular
// file (a folder, a FIFO, a device, a socket).
type NotRegularError struct {
	Kind Kind
	Path string
	Type string // "a folder", "a named pipe (FIFO)", "a character device", ...
}

func (e *NotRegularError) Error() string {
	return fmt.Sprintf("%q is %s, not a regular file", e.Path, e.Type)
}

// Hint says what to give instead.
func (e *NotRegularError) Hint() string {
	return "give the path of a " + e.Kind.Name + " file; foilrun does not read from pipes, devices or folders"
}

// Unwrap returns ErrNotRegular.
func (e *NotRegularError) Unwrap() error { return ErrNotRegular }

// TooLargeError is a file over its kind's size limit.
type TooLargeError struct {
	Kind Kind
	Path string
	Size int64 // the file's size, or the bytes read before the limit was hit
}

func (e *TooLargeError) Error() string {
	return fmt.Sprintf("%q is %s, over the %s limit for a %s file", e.Path, FormatSize(e.Size), FormatSize(e.Kind.Max), e.Kind.Name)
}

// Hint says what to do.
func (e *TooLargeError) Hint() string {
	return "check that this is the " + e.Kind.Name + " file meant; split it or trim it below the limit"
}

// Unwrap returns ErrTooLarge.
func (e *TooLargeError) Unwrap() error { return ErrTooLarge }

// FormatSize writes a byte count for people: "512 B", "1 MiB", "3.2 MiB",
// "4.1 TiB".
func FormatSize(n int64) string {
	switch {
	case n >= 1<<40:
		return fmt.Sprintf("%.1f TiB", float64(n)/(1<<40))
	case n >= GiB && n%GiB == 0:
		return fmt.Sprintf("%d GiB", n/GiB)
	case n >= GiB:
		return fmt.Sprintf("%.1f GiB", float64(n)/GiB)
	case n >= MiB && n%MiB == 0:
		return fmt.Sprintf("%d MiB", n/MiB)
	case n >= MiB:
		return fmt.Sprintf("%.1f MiB", float64(n)/MiB)
	case n >= 1<<10:
		return fmt.Sprintf("%.1f KiB", float64(n)/(1<<10))
	}
	return fmt.Sprintf("%d B", n)
}

// Describe names what kind of file a mode is, for messages: "a regular
// file", "a folder", "a named pipe (FIFO)", "a character device", ...
func Describe(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a folder"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	case m.IsRegular():
		return "a regular file"
	}
	return "a special file (" + m.Type().String() + ")"
}

// File is an input opened by Open: reads stop with a *TooLargeError once
// more than the kind's limit has been read, and every byte read is
// hashed.
type File struct {
	f    *os.File
	kind Kind
	path string
	left int64 // bytes still allowed
	sum  hash.Hash
}

// Open opens path for reading as an input of kind k: it must be a
// regular file (symbolic links are followed) no larger than k.Max.
func Open(path string, k Kind) (*File, error) {
	fi, err := os.Stat(path)
	if err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			pe.Op = "open" // as os.Open says it: "open r.yaml: no such file or directory"
		}
		return nil, err
	}
	if err := k.check(path, fi); err != nil {
		return nil, err
	}
	// O_NONBLOCK: should a FIFO be swapped in after the Stat, the open
	// returns at once instead of waiting for a writer.
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	if fi, err = f.Stat(); err == nil {
		err = k.check(path, fi)
	}
	if err != nil {
		f.Close()
		return nil, err
	}
	return &File{f: f, kind: k, path: path, left: k.Max, sum: sha256.New()}, nil
}

func (k Kind) check(path string, fi fs.FileInfo) error {
	if !fi.Mode().IsRegular() {
		return &NotRegularError{Kind: k, Path: path, Type: Describe(fi.Mode())}
	}
	if fi.Size() > k.Max {
		return &TooLargeError{Kind: k, Path: path, Size: fi.Size()}
	}
	return nil
}

// Read reads from the file; past the kind's limit it returns a
// *TooLargeError.
func (f *File) Read(p []byte) (int, error) {
	if f.left <= 0 {
		var one [1]byte
		if n, _ := f.f.Read(one[:]); n > 0 {
			return 0, &TooLargeError{Kind: f.kind, Path: f.path, Size: f.kind.Max + 1}
		}
		return 0, io.EOF
	}
	if int64(len(p)) > f.left {
		p = p[:f.left]
	}
	n, err := f.f.Read(p)
	f.left -= int64(n)
	f.sum.Write(p[:n])
	return n, err
}

// SHA256 reads the rest of the file (within the limit) and returns the
// hex SHA-256 of its whole content: the digest of exactly the bytes the
// caller read.
func (f *File) SHA256() (string, error) {
	if _, err := io.Copy(io.Discard, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(f.sum.Sum(nil)), nil
}

// Stat returns the file's information, as os.File.Stat does: a reader
// may size its buffers from the file's size (the micrograph decoder does).
func (f *File) Stat() (fs.FileInfo, error) { return f.f.Stat() }

// Close closes the file.
func (f *File) Close() error { return f.f.Close() }

// ReadFile reads the whole of path as an input of kind k (see Open).
func ReadFile(path string, k Kind) ([]byte, error) {
	f, err := Open(path, k)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return io.ReadAll(f)
}
