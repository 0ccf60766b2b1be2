package infile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestRefused: a folder, a FIFO, /dev/zero and a file over the limit are
// refused quickly, naming the path and what it is; a FIFO never blocks the
// open (the test would hang if it did).
func TestRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.yaml")
	if err := os.WriteFile(big, []byte(strings.Repeat("x", 2000)), 0o644); err != nil {
		t.Fatal(err)
	}
	small := Kind{Name: "recipe", Max: 1000}
	tests := []struct {
		name, path string
		kind       Kind
		sentinel   error
		want       string
	}{
		{"folder", dir, Recipe, ErrNotRegular, "is a folder, not a regular file"},
		{"fifo", fifo, Furnace, ErrNotRegular, "is a named pipe (FIFO), not a regular file"},
		{"dev zero", "/dev/zero", FurnaceLog, ErrNotRegular, `"/dev/zero" is a character device, not a regular file`},
		{"over the limit", big, small, ErrTooLarge, "is 2.0 KiB, over the 1000 B limit for a recipe file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			start := time.Now()
			data, err := ReadFile(tt.path, tt.kind)
			if took := time.Since(start); took > time.Second {
				t.Errorf("took %v, want under 1 s", took)
			}
			if !errors.Is(err, tt.sentinel) || !strings.Contains(err.Error(), tt.want) || !strings.Contains(err.Error(), tt.path) {
				t.Fatalf("got %d bytes, %v; want an error wrapping %v containing %q and the path", len(data), err, tt.sentinel, tt.want)
			}
			if h, ok := err.(interface{ Hint() string }); !ok || h.Hint() == "" {
				t.Errorf("error %v has no hint", err)
			}
		})
	}
}

// TestLimitWhileReading: a file that is larger than the limit by the time
// it is read stops with ErrTooLarge (a file checked by Stat is cut at the
// limit when read as a stream through a smaller Kind).
func TestLimitWhileReading(t *testing.T) {
	path := filepath.Join(t.TempDir(), "log.csv")
	if err := os.WriteFile(path, []byte("0123456789"), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := Open(path, Kind{Name: "furnace log", Max: 10})
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	f.left = 4 // as if the file had grown by 6 bytes after the Stat
	_, err = io.ReadAll(f)
	if !errors.Is(err, ErrTooLarge) {
		t.Errorf("got %v, want ErrTooLarge", err)
	}
}

// TestReadAndHash: a regular file (also through a symbolic link) reads
// whole, and SHA256 is the digest of the whole content however much the
// caller read. The digest of "abc" is the example of FIPS 180-2,
// appendix B.1.
func TestReadAndHash(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.txt")
	if err := os.WriteFile(path, []byte("abc"), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.txt")
	if err := os.Symlink(path, link); err != nil {
		t.Fatal(err)
	}
	data, err := ReadFile(link, Recipe)
	if err != nil || string(data) != "abc" {
		t.Fatalf("ReadFile through a link: got %q, %v; want \"abc\"", data, err)
	}
	f, err := Open(path, Image)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err != nil || fi.Size() != 3 || !fi.Mode().IsRegular() {
		t.Fatalf("Stat: got %v, %v; want a regular file of 3 bytes", fi, err)
	}
	one := make([]byte, 1)
	if _, err := f.Read(one); err != nil {
		t.Fatal(err)
	}
	const want = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" // FIPS 180-2 B.1
	if got, err := f.SHA256(); err != nil || got != want {
		t.Errorf("SHA256 after reading 1 byte: got %s, %v; want %s", got, err, want)
	}
}

func TestFormatSize(t *testing.T) {
	tests := []struct {
		n    int64
		want string
	}{{512, "512 B"}, {1536, "1.5 KiB"}, {MiB, "1 MiB"}, {3*MiB + MiB/5, "3.2 MiB"}, {GiB, "1 GiB"}, {GiB + GiB/2, "1.5 GiB"}, {4 << 40, "4.0 TiB"}}
	for _, tt := range tests {
		if got := FormatSize(tt.n); got != tt.want {
			t.Errorf("FormatSize(%d): got %q, want %q", tt.n, got, tt.want)
		}
	}
}
