package main

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
)

func runArgs(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &streams{Out: &out, Err: &errb, In: strings.NewReader("")})
	return code, out.String(), errb.String()
}

// TestRunLogCommands drives the run-log commands on a real SQLite file.
func TestRunLogCommands(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	db := filepath.Join(dir, "runs.db")
	recipe := "../../templates/recipe-lowpressure.yaml"
	code, out, errs := runArgs(t, "--db", db, "run", "start", recipe, "--lot", "L-17", "--operator", "ana")
	if code != 0 || !strings.HasPrefix(out, "G") {
		t.Fatalf("run start: exit %d, out %q, err %q", code, out, errs)
	}
	run1 := strings.TrimSpace(out)
	steps := []struct {
		name string
		args []string
		exit int
		out  string // substring of stdout+stderr
	}{
		{"note", []string{"run", "note", run1, "foil looked dull"}, 0, ""},
		{"note unknown", []string{"run", "note", "G99-0001", "x"}, 2, `run "G99-0001": not found`},
		{"outcome", []string{"outcome", "add", run1, "coverage=93%", "domain_size=12um"}, 0, "2 outcomes added"},
		{"outcome wrong unit", []string{"outcome", "add", run1, "coverage=0.5", "domain_size=3ohm/sq"}, 2, `domain_size is in um, not "ohm/sq"`},
		{"finish", []string{"run", "finish", run1}, 0, "run " + run1 + " done"},
		{"finish again", []string{"run", "finish", run1}, 2, "is already done"},
		{"add", []string{"run", "add", recipe, "--outcome", "coverage=0.7", "--lot", "L-18"}, 0, "G"},
		{"list where", []string{"runs", "list", "--where", "coverage > 0.9", "--output", "csv"}, 0, run1 + ",done,low-pressure monolayer,tube-1,ana,L-17"},
		{"where syntax", []string{"runs", "list", "--where", "coverage >> 1"}, 2, "col 11"},
		{"injection", []string{"runs", "list", "--where", `x'; DROP TABLE runs; --`}, 2, "string starting with ' is not closed"},
		{"list after injection", []string{"runs", "list", "--output", "json"}, 0, `"code": "` + run1 + `"`},
		{"best", []string{"runs", "best", "--metric", "coverage", "--by", "growth_temperature_c", "--min", "0.9"}, 0, "share ≥ 0.9"},
		{"best unknown param", []string{"runs", "best", "--metric", "coverage", "--by", "growth_temp"}, 2, `parameter "growth_temp" has no logged values`},
		{"rank", []string{"runs", "rank", "--metric", "coverage", "--output", "json"}, 0, `"param": "growth_temperature_c"`},
		{"show", []string{"run", "show", run1}, 0, "foil looked dull"},
		{"check", []string{"db", "check"}, 0, "ok (schema version 8)"},
		{"backup", []string{"db", "backup", filepath.Join(dir, "copy.db")}, 0, "checked"},
		{"export", []string{"runs", "export", "--format", "json", "-o", filepath.Join(dir, "all.json")}, 0, "2 runs exported"},
		{"import", []string{"--db", filepath.Join(dir, "other.db"), "runs", "import", filepath.Join(dir, "all.json")}, 0, "2 runs imported"},
		{"import again", []string{"--db", filepath.Join(dir, "other.db"), "runs", "import", filepath.Join(dir, "all.json")}, 2, "nothing was imported"},
		{"postgres", []string{"--db", "postgres://u:secret@h/db", "runs", "list"}, 2, "postgres://u:***@h/db"},
	}
	for _, s := range steps {
		args := s.args
		if args[0] != "--db" {
			args = append([]string{"--db", db}, args...)
		}
		code, out, errs := runArgs(t, args...)
		if code != s.exit || !strings.Contains(out+errs, s.out) {
			t.Errorf("%s: exit %d, output %q%q; want exit %d containing %q", s.name, code, out, errs, s.exit, s.out)
		}
	}
}
