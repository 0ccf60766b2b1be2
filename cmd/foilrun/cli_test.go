package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var updateGolden = flag.Bool("update", false, "rewrite golden files under testdata/cli")

// runCLI runs foilrun in-process as a person at a terminal sees it:
// stdout counts as a terminal (tables aligned), stderr is captured as a
// pipe (no progress bars). It returns the exit status, stdout and stderr.
func runCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	return runStreams(t, true, args...)
}

// runPiped runs foilrun with stdout piped, as a script sees it: tables
// are tab-separated.
func runPiped(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	return runStreams(t, false, args...)
}

func runStreams(t *testing.T, outTTY bool, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &streams{In: strings.NewReader(""), Out: &out, Err: &errb, OutTTY: outTTY})
	return code, out.String(), errb.String()
}

// golden compares got with testdata/cli/<name>, rewriting it under -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	goldenAt(t, filepath.Join("..", "..", "testdata", "cli", name), got)
}

// goldenAt compares got with a file under the repository's testdata,
// rewriting it under -update.
func goldenAt(t *testing.T, path, got string) {
	t.Helper()
	if *updateGolden {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (go test ./cmd/foilrun -run %s -update creates it)", err, t.Name())
	}
	if got != string(want) {
		t.Errorf("output differs from %s\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}
