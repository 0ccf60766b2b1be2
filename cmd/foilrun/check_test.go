package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const tmplDir = "../../templates/"

func TestCheckExitCodes(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		code int
		err  string // substring of stderr
	}{
		{"clean template", []string{"check", tmplDir + "recipe-lowpressure.yaml"}, 0, ""},
		{"findings with errors", []string{"check", "../../testdata/bad/recipe-above-copper-melting/recipe.yaml"}, 1, ""},
		{"invalid recipe", []string{"check", "../../testdata/bad/recipe-wrong-unit/recipe.yaml"}, 2, `flow "5 Torr" is a pressure`},
		{"missing file", []string{"check", "nosuch.yaml"}, 2, "no such file"},
		{"no argument", []string{"check"}, 2, "accepts 1 arg"},
		{"bad output flag", []string{"check", "--output", "xml", tmplDir + "recipe-lowpressure.yaml"}, 2, `--output "xml"`},
		{"furnace flag wins", []string{"check", "--furnace", "nosuch-furnace.yaml", tmplDir + "recipe-lowpressure.yaml"}, 2, "nosuch-furnace.yaml"},
		{"unknown command", []string{"frobnicate"}, 2, "unknown command"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, tt.args...)
			if code != tt.code {
				t.Errorf("exit %d, want %d; stderr: %s", code, tt.code, stderr)
			}
			if !strings.Contains(stderr, tt.err) {
				t.Errorf("stderr %q does not contain %q", stderr, tt.err)
			}
		})
	}
}

func TestCheckGolden(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		t.Run(name, func(t *testing.T) {
			code, out, stderr := runCLI(t, "check", tmplDir+"recipe-"+name+".yaml")
			if code != 0 {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			golden(t, "check/"+name+".txt", out)
		})
	}
}

func TestCheckJSON(t *testing.T) {
	t.Parallel()
	code, out, stderr := runCLI(t, "check", "--output", "json", "../../testdata/bad/recipe-above-copper-melting/recipe.yaml")
	if code != 1 {
		t.Fatalf("exit %d, want 1: %s", code, stderr)
	}
	var res checkResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	// One copper-melting error for the recipe, listing steps 5 and 6.
	if res.Errors != 1 || len(res.Steps) != 6 {
		t.Errorf("errors %d steps %d, want 1 and 6", res.Errors, len(res.Steps))
	}
	if res.Findings[0].Rule != "temperature.copper-melting" || res.Findings[0].Step != 5 {
		t.Errorf("first finding %+v, want temperature.copper-melting at step 5", res.Findings[0])
	}
}

func TestCheckCSV(t *testing.T) {
	t.Parallel()
	code, out, _ := runCLI(t, "check", "--output", "csv", tmplDir+"recipe-lowpressure.yaml")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if code != 0 || len(lines) != 10 || !strings.HasPrefix(lines[0], "step,") {
		t.Errorf("exit %d, %d lines, header %q; want 0, 10 lines (header + 9 steps)", code, len(lines), lines[0])
	}
}

func TestNewWritesTemplatesThatPassCheck(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	for _, kind := range []string{"furnace", "site"} {
		if code, _, e := runCLI(t, "new", kind, "-o", filepath.Join(dir, kind+".yaml")); code != 0 {
			t.Fatalf("new %s: exit %d: %s", kind, code, e)
		}
	}
	for _, from := range []string{"", "atmospheric", "largedomain"} {
		path := filepath.Join(dir, "r"+from+".yaml")
		args := []string{"new", "recipe", "-o", path}
		if from != "" {
			args = append(args, "--from", from)
		}
		if code, _, e := runCLI(t, args...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, e)
		}
		if code, out, e := runCLI(t, "check", path); code != 0 {
			t.Errorf("check of new recipe --from %q: exit %d\n%s%s", from, code, out, e)
		}
	}
	// Refuses to overwrite without --force.
	code, _, e := runCLI(t, "new", "site", "-o", filepath.Join(dir, "site.yaml"))
	if code != 2 || !strings.Contains(e, "already exists") {
		t.Errorf("overwrite: exit %d %q, want 2 and 'already exists'", code, e)
	}
	if _, err := os.Stat(filepath.Join(dir, "r.yaml")); err != nil {
		t.Error(err)
	}
}

func TestNewList(t *testing.T) {
	t.Parallel()
	code, out, _ := runCLI(t, "new", "--list")
	for _, want := range []string{"lowpressure", "atmospheric", "largedomain", "furnace", "site"} {
		if !strings.Contains(out, want) {
			t.Errorf("new --list lacks %q:\n%s", want, out)
		}
	}
	if code != 0 {
		t.Errorf("exit %d", code)
	}
	if code, _, e := runCLI(t, "new", "recipe", "--from", "nosuch"); code != 2 || !strings.Contains(e, "new --list") {
		t.Errorf("unknown template: exit %d %q", code, e)
	}
}
