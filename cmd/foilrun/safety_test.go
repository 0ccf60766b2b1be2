package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestSafetyExitCodes(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		args []string
		code int
		want string // in stdout (or stderr for errors)
	}{
		{"template", []string{"safety", "../../templates/recipe-lowpressure.yaml"}, 0, "no stop-level findings"},
		{"stop", []string{"safety", "../../testdata/safety/vent-hot/recipe.yaml"}, 1, "sequence.vent-hot"},
		{"csv", []string{"safety", "../../testdata/safety/exhaust-over-limit/recipe.yaml", "--output", "csv"}, 1, "stop,5,exhaust.dilution,"},
		{"json", []string{"safety", "../../templates/recipe-atmospheric.yaml", "--output", "json"}, 0, `"disclaimer": "These figures support`},
		{"bad output", []string{"safety", "../../templates/recipe-lowpressure.yaml", "--output", "xml"}, 2, "--output"},
		{"bad site", []string{"safety", "../../templates/recipe-lowpressure.yaml", "--site", "../../testdata/site/zero-volume/site.yaml"}, 2, "room volume \"0 m3\""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, out, errs := runCLI(t, c.args...)
			if code != c.code {
				t.Errorf("exit: got %d, want %d\nstderr: %s", code, c.code, errs)
			}
			if !strings.Contains(out+errs, c.want) {
				t.Errorf("got no %q in output:\n%s%s", c.want, out, errs)
			}
		})
	}
}

func TestSafetyNeedsSite(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	data, err := os.ReadFile("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	abs, _ := filepath.Abs("../../templates/furnace.yaml")
	text := strings.Replace(strings.Replace(string(data), "site: site.yaml\n", "", 1), "furnace: furnace.yaml", "furnace: "+abs, 1)
	path := filepath.Join(dir, "nosite.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, cmd := range []string{"safety", "checklist"} {
		code, _, errs := runCLI(t, cmd, path)
		if code != 2 || !strings.Contains(errs, "names no site file") || !strings.Contains(errs, "hint: add \"site: site.yaml\"") {
			t.Errorf("%s: got exit %d and %q, want 2 and a no-site error with a hint", cmd, code, errs)
		}
	}
}

// Each template recipe's checklist, in both formats, pinned in
// testdata/checklist/<name>.txt and .md; one printable page each.
func TestChecklistGoldens(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		for _, f := range []struct{ format, ext string }{{"text", ".txt"}, {"markdown", ".md"}} {
			t.Run(name+f.ext, func(t *testing.T) {
				code, out, errs := runCLI(t, "checklist", "../../templates/recipe-"+name+".yaml", "--format", f.format)
				if code != 0 {
					t.Fatalf("exit %d: %s", code, errs)
				}
				if n := strings.Count(out, "\n"); n > 60 {
					t.Errorf("checklist has %d lines, want at most 60 (one page)", n)
				}
				for _, want := range []string{"do not replace", "Operator", "Approved by", "5 mTorr/min"} {
					if !strings.Contains(out, want) {
						t.Errorf("got no %q in the checklist", want)
					}
				}
				goldenAt(t, filepath.Join("..", "..", "testdata", "checklist", name+f.ext), out)
			})
		}
	}
}

func TestChecklistFileAndStops(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "list.md")
	code, out, errs := runCLI(t, "checklist", "../../testdata/safety/h2-before-leak-check/recipe.yaml", "--format", "markdown", "-o", path)
	if code != 1 {
		t.Errorf("exit: got %d, want 1 for stop-level findings", code)
	}
	if out != "" || !strings.Contains(errs, "checklist written to") {
		t.Errorf("got stdout %q, stderr %q; want the file written and a status line", out, errs)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(data), "## Stop: resolve before the run") || !strings.Contains(string(data), "sequence.leak-check") {
		t.Errorf("checklist lacks the stop section:\n%s", data)
	}
	if code, _, _ := runCLI(t, "checklist", "../../templates/recipe-lowpressure.yaml", "--format", "pdf"); code != 2 {
		t.Errorf("--format pdf: got exit %d, want 2", code)
	}
}
