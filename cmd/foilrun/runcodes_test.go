package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestRunCodePrefix: run add gives codes with the prefix the recipe's
// site file sets (the furnace's own before the site's, G when it sets
// nothing), the two digits of the year the run started and a sequence
// per prefix and year.
func TestRunCodePrefix(t *testing.T) {
	tests := []struct {
		name, runCodes string
		started        []string
		want           []string
	}{
		{"site sets nothing", "", []string{"2025-03-04T09:30:00Z", "2026-01-02T09:30:00Z"}, []string{"G25-0001", "G26-0001"}},
		{"site prefix", "run_codes:\n  prefix: T\n", []string{"2025-03-04T09:30:00Z", "2025-03-05T09:30:00Z"}, []string{"T25-0001", "T25-0002"}},
		{"furnace prefix", "run_codes:\n  prefix: T\n  furnaces:\n    tube-1: T2\n", []string{"2024-12-31T23:00:00Z", "2025-01-01T00:30:00Z"}, []string{"T224-0001", "T225-0001"}},
		{"another furnace's prefix", "run_codes:\n  furnaces:\n    tube-9: T9\n", []string{"2025-03-04T09:30:00Z"}, []string{"G25-0001"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			dir := t.TempDir()
			copyTemplates(t, dir, "furnace.yaml", "site.yaml", "recipe-lowpressure.yaml")
			site := filepath.Join(dir, "site.yaml")
			b, err := os.ReadFile(site)
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(site, append(b, tt.runCodes...), 0o644); err != nil {
				t.Fatal(err)
			}
			db := filepath.Join(dir, "runs.db")
			for i, started := range tt.started {
				code, out, errs := runArgs(t, "--db", db, "run", "add", filepath.Join(dir, "recipe-lowpressure.yaml"), "--started", started)
				if code != 0 {
					t.Fatalf("run add: exit %d: %s", code, errs)
				}
				if got := strings.TrimSpace(strings.Split(out, "\n")[0]); got != tt.want[i] {
					t.Errorf("run %d started %s: got code %q, want %q", i+1, started, got, tt.want[i])
				}
			}
		})
	}
}

// TestRunCodePrefixRefused: a prefix that would not read back is an error
// at the site file's line.
func TestRunCodePrefixRefused(t *testing.T) {
	dir := t.TempDir()
	copyTemplates(t, dir, "furnace.yaml", "site.yaml", "recipe-lowpressure.yaml")
	site := filepath.Join(dir, "site.yaml")
	b, err := os.ReadFile(site)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(site, append(b, "run_codes:\n  prefix: t-2\n"...), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runArgs(t, "--db", filepath.Join(dir, "runs.db"), "run", "add", filepath.Join(dir, "recipe-lowpressure.yaml"))
	if code != 2 || !strings.Contains(errs, `run-code prefix "t-2"`) || !strings.Contains(errs, "site.yaml\": line ") {
		t.Errorf("got exit %d, stderr %q; want 2 and the prefix named at site.yaml's line", code, errs)
	}
}
