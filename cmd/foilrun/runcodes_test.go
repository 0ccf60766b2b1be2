package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// labWithRunCodes returns a folder with the template furnace, recipe and
// site, the site file ending in runCodes.
func labWithRunCodes(t *testing.T, runCodes string) string {
	t.Helper()
	dir := t.TempDir()
	copyTemplates(t, dir, "furnace.yaml", "site.yaml", "recipe-lowpressure.yaml")
	site := filepath.Join(dir, "site.yaml")
	b, err := os.ReadFile(site)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(site, append(b, runCodes...), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

// TestRunCodePrefix: run add gives codes with the prefix the recipe's
// site file sets (the furnace's own before the site's, G when it sets
// nothing), the two digits of the year the run started and a sequence
// per prefix and year.
func TestRunCodePrefix(t *testing.T) {
	t.Parallel()
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
			dir := labWithRunCodes(t, tt.runCodes)
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
	t.Parallel()
	dir := labWithRunCodes(t, "run_codes:\n  prefix: t-2\n")
	code, _, errs := runArgs(t, "--db", filepath.Join(dir, "runs.db"), "run", "add", filepath.Join(dir, "recipe-lowpressure.yaml"))
	if code != 2 || !strings.Contains(errs, `run-code prefix "t-2"`) || !strings.Contains(errs, "site.yaml\": line ") {
		t.Errorf("got exit %d, stderr %q; want 2 and the prefix named at site.yaml's line", code, errs)
	}
}

// TestRunsImportRenumber: two logs that both start at G26-0001, each
// with two runs, merge with runs import --renumber (JSON and CSV exports)
// into one of four runs; without --renumber the import is refused with a
// hint and changes nothing. Every old code resolves: run show OLD names
// the run it was renumbered to, and that run lists its old code.
func TestRunsImportRenumber(t *testing.T) {
	t.Parallel()
	for _, format := range []string{"json", "csv"} {
		t.Run(format, func(t *testing.T) {
			dir := t.TempDir()
			copyTemplates(t, dir, "furnace.yaml", "site.yaml", "recipe-lowpressure.yaml")
			recipePath := filepath.Join(dir, "recipe-lowpressure.yaml")
			dbA, dbB := filepath.Join(dir, "a.db"), filepath.Join(dir, "b.db")
			cli := func(wantExit int, args ...string) (string, string) {
				t.Helper()
				code, out, errs := runArgs(t, args...)
				if code != wantExit {
					t.Fatalf("%s: got exit %d, want %d: %s", strings.Join(args, " "), code, wantExit, errs)
				}
				return out, errs
			}
			for _, db := range []string{dbA, dbB} {
				for _, op := range []string{"first", "second"} {
					cli(0, "--db", db, "run", "add", recipePath, "--started", "2026-03-04T09:30:00Z", "--operator", filepath.Base(db)+"-"+op)
				}
			}
			export := filepath.Join(dir, "b."+format)
			cli(0, "--db", dbB, "runs", "export", "--format", format, "-o", export)
			_, errs := cli(2, "--db", dbA, "runs", "import", export, "--format", format)
			if !strings.Contains(errs, "nothing was imported") || !strings.Contains(errs, "add --renumber") {
				t.Errorf("import of clashing codes: got stderr %q, want nothing imported and the --renumber hint", errs)
			}
			_, errs = cli(0, "--db", dbA, "runs", "import", export, "--format", format, "--renumber")
			if !strings.Contains(errs, "2 runs imported") {
				t.Errorf("renumbered import: got stderr %q, want 2 runs imported", errs)
			}
			out, _ := cli(0, "--db", dbA, "runs", "list", "--output", "csv")
			if got := strings.Count(out, "\n") - 1; got != 4 {
				t.Errorf("runs list after the merge: got %d runs, want 2+2 = 4:\n%s", got, out)
			}
			for _, tt := range []struct{ old, renamed, operator string }{
				{"G26-0001", "G26-0003", "b.db-first"},
				{"G26-0002", "G26-0004", "b.db-second"},
			} {
				_, errs := cli(0, "--db", dbA, "run", "show", tt.old)
				if want := "note: " + tt.old + " is also the old code of " + tt.renamed; !strings.Contains(errs, want) {
					t.Errorf("run show %s: got stderr %q, want %q", tt.old, errs, want)
				}
				out, _ := cli(0, "--db", dbA, "run", "show", tt.renamed)
				if !strings.Contains(out, "was       "+tt.old) || !strings.Contains(out, "operator  "+tt.operator) {
					t.Errorf("run show %s: got\n%s\nwant its old code %s and operator %s", tt.renamed, out, tt.old, tt.operator)
				}
			}
		})
	}
}
