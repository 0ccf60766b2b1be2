package outfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// files lists the names in dir, to catch temporary files left behind.
func files(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range es {
		names = append(names, e.Name())
	}
	return names
}

func write(t *testing.T, path, content string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(content), 0o640); err != nil {
		t.Fatal(err)
	}
}

func content(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func text(s string) func(io.Writer) error {
	return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
}

// TestWriteNew: a new file gets the content and 0666 less the umask (as
// os.Create gives), and nothing else is left in the folder.
func TestWriteNew(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := Write(path, Guard{}, text("hello\n")); err != nil {
		t.Fatal(err)
	}
	if got := content(t, path); got != "hello\n" {
		t.Errorf("got %q, want %q", got, "hello\n")
	}
	mask := syscall.Umask(0)
	syscall.Umask(mask)
	fi, _ := os.Stat(path)
	if want := os.FileMode(0o666 &^ mask); fi.Mode().Perm() != want {
		t.Errorf("mode %v, want %v", fi.Mode().Perm(), want)
	}
	if got := files(t, dir); len(got) != 1 {
		t.Errorf("folder holds %v, want only out.txt", got)
	}
}

// TestGuard: every refusal leaves the target as it was, with or without
// Force where the rule says so.
func TestGuard(t *testing.T) {
	dir := t.TempDir()
	existing := filepath.Join(dir, "existing.txt")
	write(t, existing, "old")
	input := filepath.Join(dir, "recipe.yaml")
	write(t, input, "recipe")
	hard := filepath.Join(dir, "hardlink.yaml")
	if err := os.Link(input, hard); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.txt")
	if err := os.Symlink(existing, link); err != nil {
		t.Fatal(err)
	}
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	in := []Input{{What: "recipe", Path: input}}
	tests := []struct {
		name, path string
		guard      Guard
		want       string
	}{
		{"existing without force", existing, Guard{}, "already exists"},
		{"symbolic link", link, Guard{Force: true}, "is a symbolic link"},
		{"the input", input, Guard{Force: true, Inputs: in}, "is the recipe this command reads"},
		{"a hard link to the input", hard, Guard{Force: true, Inputs: in}, "is the recipe this command reads"},
		{"a folder", dir, Guard{Force: true}, "is not a regular file (a folder)"},
		{"a fifo", fifo, Guard{Force: true}, "is not a regular file (a named pipe (FIFO))"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			before := files(t, dir)
			err := Write(tt.path, tt.guard, text("new"))
			var re *RefusedError
			if !errors.As(err, &re) || !errors.Is(err, ErrRefused) || !strings.Contains(err.Error(), tt.want) || re.Hint() == "" {
				t.Fatalf("got %v, want a refusal containing %q with a hint", err, tt.want)
			}
			if got := files(t, dir); strings.Join(got, " ") != strings.Join(before, " ") {
				t.Errorf("folder went from %v to %v", before, got)
			}
		})
	}
	for _, p := range []string{existing, input} {
		if got := content(t, p); got == "new" {
			t.Errorf("%s was replaced", p)
		}
	}
}

// TestForceReplaces: with Force an existing file is replaced and keeps
// its mode.
func TestForceReplaces(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	write(t, path, "old")
	if err := Write(path, Guard{Force: true}, text("new")); err != nil {
		t.Fatal(err)
	}
	if got := content(t, path); got != "new" {
		t.Errorf("got %q, want %q", got, "new")
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o640 {
		t.Errorf("mode %v, want the old file's 0640", fi.Mode().Perm())
	}
}

// failAfter is a producer that writes n bytes and then fails, as a full
// disk would.
type failAfter struct{ n int }

var errDiskFull = errors.New("no space left on device (simulated)")

func (f failAfter) produce(w io.Writer) error {
	if _, err := w.Write([]byte(strings.Repeat("x", f.n))); err != nil {
		return err
	}
	return errDiskFull
}

// TestFailedWriteKeepsOld: a write that fails part-way leaves the old
// file byte for byte and no temporary file.
func TestFailedWriteKeepsOld(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "keep.json")
	old := `{"runs": ["G26-0001"]}` + "\n"
	write(t, path, old)
	err := Write(path, Guard{Force: true}, failAfter{n: 3}.produce)
	if !errors.Is(err, errDiskFull) {
		t.Fatalf("got %v, want the producer's error", err)
	}
	if got := content(t, path); got != old {
		t.Errorf("old file now %q, want %q", got, old)
	}
	if got := files(t, dir); len(got) != 1 {
		t.Errorf("folder holds %v, want only keep.json", got)
	}
}

// TestCommitRechecks: a target that appears while the output is written
// is not replaced without Force.
func TestCommitRechecks(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	f, err := Create(path, Guard{})
	if err != nil {
		t.Fatal(err)
	}
	io.WriteString(f, "mine")
	write(t, path, "someone else's")
	if err := f.Commit(); !errors.Is(err, ErrRefused) {
		t.Fatalf("got %v, want a refusal", err)
	}
	if got := content(t, path); got != "someone else's" {
		t.Errorf("got %q, want the other file kept", got)
	}
	if got := files(t, dir); len(got) != 1 {
		t.Errorf("folder holds %v, want only out.txt", got)
	}
}

// TestReserve: the reserved path is fresh; Commit moves it into place and
// cleans up, Abort leaves nothing.
func TestReserve(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "backup.db")
	r, err := Reserve(path, Guard{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(r.Path); !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("reserved path %s exists (%v)", r.Path, err)
	}
	write(t, r.Path, "copy")
	if err := r.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := content(t, path); got != "copy" {
		t.Errorf("got %q, want %q", got, "copy")
	}
	if got := files(t, dir); len(got) != 1 {
		t.Errorf("folder holds %v, want only backup.db", got)
	}
	r, err = Reserve(filepath.Join(dir, "other.db"), Guard{})
	if err != nil {
		t.Fatal(err)
	}
	write(t, r.Path, "half")
	r.Abort()
	if got := files(t, dir); len(got) != 1 {
		t.Errorf("after Abort the folder holds %v, want only backup.db", got)
	}
	if _, err := Reserve(path, Guard{}); !errors.Is(err, ErrRefused) {
		t.Errorf("Reserve over an existing file without Force: got %v, want a refusal", err)
	}
}
