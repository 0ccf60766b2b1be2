package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// The demo's steps run on the demo's own streams: on a terminal their
// tables are aligned like any command's, and piped they are
// tab-separated; their status lines go to stderr.
func TestDemoStepsKeepTheTerminal(t *testing.T) {
	t.Parallel()
	// check's derived-numbers table of the demo recipe, as its header row
	// starts on a terminal and in a pipe.
	const aligned, tsv = "│ step ", "step\tt0 min\t"
	for _, c := range []struct {
		name      string
		tty       bool
		want, not string
	}{
		{"terminal", true, aligned, tsv},
		{"pipe", false, tsv, aligned},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			dir := filepath.Join(t.TempDir(), "lab")
			code, out, errs := runStreams(t, c.tty, "demo", dir, "--runs", "10")
			if code != 0 {
				t.Fatalf("demo: exit %d: %s", code, errs)
			}
			if !strings.Contains(out, c.want) || strings.Contains(out, c.not) {
				t.Errorf("stdout on a %s: got tables starting %q, want %q", c.name, firstLineWith(out, "t0 min"), c.want)
			}
			if want := "wrote " + filepath.Join(dir, "params-fitted.yaml"); !strings.Contains(errs, want) || strings.Contains(out, want) {
				t.Errorf("status %q: got stderr %q; want it there and not on stdout", want, errs)
			}
		})
	}
}

// firstLineWith is the first line of s that contains sub, for messages.
func firstLineWith(s, sub string) string {
	for line := range strings.Lines(s) {
		if strings.Contains(line, sub) {
			return strings.TrimSpace(line)
		}
	}
	return ""
}
