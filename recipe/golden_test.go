package recipe

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite golden files")

func loadTestFurnace(t testing.TB) *Furnace {
	t.Helper()
	f, err := LoadFurnace("../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// badResult returns what foilrun reports for a broken input: the load
// error, or for a recipe that loads, the error findings of its check.
func badResult(t *testing.T, dir string) string {
	t.Helper()
	for _, kind := range []string{"recipe", "furnace", "site"} {
		path := filepath.Join(dir, kind+".yaml")
		if _, err := os.Stat(path); err != nil {
			continue
		}
		name := filepath.ToSlash(filepath.Join(filepath.Base(dir), kind+".yaml"))
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		switch kind {
		case "recipe":
			r, err := ParseRecipe(name, data)
			if err != nil {
				return err.Error()
			}
			r.File = path
			f, _, err := Resolve(r, "", "")
			if err != nil {
				return err.Error()
			}
			var b strings.Builder
			for _, fd := range Check(Derive(r, f)) {
				if fd.Severity == Error {
					fmt.Fprintf(&b, "error: step %s: %s: %s\n  hint: %s\n", fd.StepName, fd.Rule, fd.Message, fd.Hint)
				}
			}
			if b.Len() == 0 {
				return "no errors"
			}
			return strings.TrimSuffix(b.String(), "\n")
		case "furnace":
			if _, err := ParseFurnace(name, data); err != nil {
				return err.Error()
			}
			return "no errors"
		case "site":
			if _, err := ParseSite(name, data); err != nil {
				return err.Error()
			}
			return "no errors"
		}
	}
	t.Fatalf("%s holds no recipe.yaml, furnace.yaml or site.yaml", dir)
	return ""
}

// TestBadInputs checks the exact message for every broken file under
// testdata/bad/<case>/ against want.txt beside it (go test -update
// rewrites them).
func TestBadInputs(t *testing.T) {
	dirs, err := filepath.Glob("../testdata/bad/*")
	if err != nil || len(dirs) < 15 {
		t.Fatalf("want at least 15 bad-input cases, found %d (%v)", len(dirs), err)
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			got := badResult(t, dir) + "\n"
			wantFile := filepath.Join(dir, "want.txt")
			if *update {
				if err := os.WriteFile(wantFile, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(wantFile)
			if err != nil {
				t.Fatalf("%v (run go test -update to create it)", err)
			}
			if got != string(want) {
				t.Errorf("message differs\n got: %s\nwant: %s", got, want)
			}
			if strings.TrimSpace(got) == "no errors" {
				t.Errorf("a bad input must be reported")
			}
		})
	}
}

// TestTemplatesPassCheck: every recipe template checks clean of errors
// against the furnace template.
func TestTemplatesPassCheck(t *testing.T) {
	paths, _ := filepath.Glob("../templates/recipe-*.yaml")
	if len(paths) < 3 {
		t.Fatalf("want at least 3 recipe templates, found %d", len(paths))
	}
	if _, err := LoadSite("../templates/site.yaml"); err != nil {
		t.Fatal(err)
	}
	for _, p := range paths {
		r, err := LoadRecipe(p)
		if err != nil {
			t.Fatal(err)
		}
		f, _, err := Resolve(r, "", "")
		if err != nil {
			t.Fatal(err)
		}
		for _, fd := range Check(Derive(r, f)) {
			if fd.Severity == Error {
				t.Errorf("%s: %s: %s", p, fd.Rule, fd.Message)
			}
		}
	}
}

func FuzzParseRecipe(f *testing.F) {
	fuzzLoader(f, "recipe", func(b []byte) error { _, err := ParseRecipe("f.yaml", b); return err })
}
func FuzzParseFurnace(f *testing.F) {
	fuzzLoader(f, "furnace", func(b []byte) error { _, err := ParseFurnace("f.yaml", b); return err })
}
func FuzzParseSite(f *testing.F) {
	fuzzLoader(f, "site", func(b []byte) error { _, err := ParseSite("f.yaml", b); return err })
}

// fuzzLoader seeds from the templates and testdata/bad and requires that
// a loader never panics, and that an accepted recipe derives and checks
// without panicking.
func fuzzLoader(f *testing.F, kind string, load func([]byte) error) {
	seeds, _ := filepath.Glob("../templates/" + kind + "*.yaml")
	bad, _ := filepath.Glob("../testdata/bad/*/" + kind + ".yaml")
	for _, p := range append(seeds, bad...) {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	furnace := loadTestFurnace(f)
	f.Fuzz(func(t *testing.T, b []byte) {
		err := load(b)
		if err != nil && kind == "recipe" && !strings.HasPrefix(err.Error(), "load recipe") {
			t.Fatalf("error without context: %v", err)
		}
		if err == nil && kind == "recipe" {
			r, _ := ParseRecipe("f.yaml", b)
			Check(Derive(r, furnace))
		}
	})
}

func BenchmarkCheck12Steps(b *testing.B) {
	r, err := LoadRecipe("../testdata/recipes/twelve-steps.yaml")
	if err != nil {
		b.Fatal(err)
	}
	f := loadTestFurnace(b)
	if len(r.Steps) != 12 {
		b.Fatalf("want 12 steps, got %d", len(r.Steps))
	}
	b.ReportAllocs()
	for b.Loop() {
		Check(Derive(r, f))
	}
}

func BenchmarkLoadAndCheck12Steps(b *testing.B) {
	data, err := os.ReadFile("../testdata/recipes/twelve-steps.yaml")
	if err != nil {
		b.Fatal(err)
	}
	f := loadTestFurnace(b)
	b.ReportAllocs()
	for b.Loop() {
		r, err := ParseRecipe("twelve-steps.yaml", data)
		if err != nil {
			b.Fatal(err)
		}
		Check(Derive(r, f))
	}
}
