package safety_test

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/safety and testdata/site")

const root = "../.."

// analyzeFile loads a recipe with the furnace and site it names and
// analyses it.
func analyzeFile(tb testing.TB, path string) (*recipe.Plan, *recipe.Site, *safety.Report) {
	tb.Helper()
	r, err := recipe.LoadRecipe(path)
	if err != nil {
		tb.Fatal(err)
	}
	return analyzeRecipe(tb, r)
}

// analyzeRecipe resolves a loaded recipe's furnace and site, applies the
// edits to the site and analyses it (the plan carries the site).
func analyzeRecipe(tb testing.TB, r *recipe.Recipe, edits ...func(*recipe.Site)) (*recipe.Plan, *recipe.Site, *safety.Report) {
	tb.Helper()
	f, s, err := recipe.Resolve(r, "", "")
	if err != nil {
		tb.Fatal(err)
	}
	for _, e := range edits {
		e(s)
	}
	p := recipe.Derive(r, f)
	p.Site = s
	rep, err := safety.Analyze(p, s, safety.Options{})
	if err != nil {
		tb.Fatal(err)
	}
	return p, s, rep
}

// compareGolden compares got with the file, rewriting it under -update.
func compareGolden(t *testing.T, path, got string) {
	t.Helper()
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (go test ./recipe/safety -update creates it)", err)
	}
	if got != string(want) {
		t.Errorf("differs from %s\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}

func listing(fs []safety.Finding) string {
	var b strings.Builder
	for _, f := range fs {
		fmt.Fprintf(&b, "%s step %d %s: %s\n  -> %s\n", f.Severity, f.Step, f.Rule, f.Message, f.Action)
	}
	return b.String()
}

// Each invented bad recipe must produce its stop-level finding; the whole
// list is pinned in testdata/safety/<case>/findings.txt.
func TestStopCases(t *testing.T) {
	cases := []struct {
		dir  string
		step int
		rule string
	}{
		{"h2-before-leak-check", 2, "sequence.leak-check"},
		{"h2-before-leak-check", 2, "sequence.inert-purge"},
		{"vent-hot", 7, "sequence.vent-hot"},
		{"vent-hot", 7, "sequence.purge-before-vent"},
		{"exhaust-over-limit", 5, "exhaust.dilution"},
	}
	seen := map[string]bool{}
	for _, c := range cases {
		t.Run(c.dir+"/"+c.rule, func(t *testing.T) {
			dir := filepath.Join(root, "testdata", "safety", c.dir)
			_, _, rep := analyzeFile(t, filepath.Join(dir, "recipe.yaml"))
			found := false
			for _, f := range rep.Findings {
				if f.Severity == safety.Stop && f.Rule == c.rule && f.Step == c.step {
					found = true
				}
			}
			if !found {
				t.Errorf("got no stop-level %s at step %d; findings:\n%s", c.rule, c.step, listing(rep.Findings))
			}
			if !safety.HasStop(rep.Findings) || strings.Contains(rep.Verdict, "no stop-level") {
				t.Errorf("verdict %q, want stop-level findings reported", rep.Verdict)
			}
			if !seen[c.dir] {
				seen[c.dir] = true
				compareGolden(t, filepath.Join(dir, "findings.txt"), listing(rep.Findings))
			}
		})
	}
}

// The exhaust case by hand: 100 sccm H2 + 40 sccm CH4, LFL_mix by Le
// Chatelier from NFPA 497 (4 %, 5 %) = 1/(0.714/0.04 + 0.286/0.05) =
// 4.24 %; 25 % of it is 1.06 %, so 140 sccm of fuel needs 13.2 slm in all,
// 13.1 slm of dilution.
func TestExhaustByHand(t *testing.T) {
	_, _, rep := analyzeFile(t, filepath.Join(root, "testdata", "safety", "exhaust-over-limit", "recipe.yaml"))
	st := rep.Steps[4]
	lfl := 1 / ((100.0/140)/0.04 + (40.0/140)/0.05)
	near(t, "LFL_mix", st.LFL, lfl, 1e-12)
	near(t, "dilution slm", st.DilutionSLM, (140/(0.25*lfl)-140)/1000, 1e-9)
	near(t, "outlet share of LFL", st.Exhaust, 140.0/(140+2000)/lfl, 1e-9)
}

// The template recipes on the template furnace and site have no
// stop-level findings (their figures are pinned by the checklist goldens
// in testdata/checklist).
func TestTemplatesHaveNoStops(t *testing.T) {
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		t.Run(name, func(t *testing.T) {
			_, _, rep := analyzeFile(t, filepath.Join(root, "templates", "recipe-"+name+".yaml"))
			if safety.HasStop(rep.Findings) {
				t.Errorf("got stop-level findings:\n%s", listing(rep.Findings))
			}
			if !strings.HasPrefix(rep.Verdict, "no stop-level findings") {
				t.Errorf("verdict %q, want it to start with \"no stop-level findings\"", rep.Verdict)
			}
		})
	}
}

// No output may call a set-up safe or OK.
func TestNeverSaysSafe(t *testing.T) {
	_, _, rep := analyzeFile(t, filepath.Join(root, "templates", "recipe-atmospheric.yaml"))
	text := strings.ToLower(listing(rep.Findings) + rep.Verdict)
	for _, w := range []string{" is safe", "set-up is safe", " ok", "safe to run"} {
		if strings.Contains(text, w) {
			t.Errorf("output contains %q", w)
		}
	}
	if !strings.Contains(rep.Disclaimer, "does not replace") && !strings.Contains(rep.Disclaimer, "do not replace") {
		t.Errorf("disclaimer %q does not say it does not replace the review", rep.Disclaimer)
	}
}

// A site whose room is released into at a flow that the ventilation cannot
// hold below 25 % of LFL is a stop (hand calculation: 30 slm H2 at 20 °C
// is 5.37e-4 m3/s; into 20 m3 at 2 air changes/h, Q = 0.0111 m3/s, C_ss =
// 4.83 % — above the LFL itself).
func TestRoomLeakStop(t *testing.T) {
	r, err := recipe.LoadRecipe(filepath.Join(root, "templates", "recipe-lowpressure.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	f, s, err := recipe.Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	s.Room.Volume = recipe.MustParse("20 m3", recipe.Volume)
	s.Room.AirChanges = recipe.MustParse("2 /h", recipe.Frequency)
	rep, err := safety.Analyze(recipe.Derive(r, f), s, safety.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, rel := range rep.Releases {
		if rel.Gas == "H2" && rel.Source == "site max_release" {
			want := 30e-3 / 60 * (101325.0 / recipe.Kelvin(0) * recipe.Kelvin(20) / 101325) / (2 * 20.0 / 3600)
			near(t, "H2 steady state", rel.Steady, want, 1e-6)
		}
	}
	if !safety.HasStop(rep.Findings) {
		t.Errorf("got no stop for a release above 25 %% of LFL:\n%s", listing(rep.Findings))
	}
}

func TestAnalyzeNeedsSite(t *testing.T) {
	r, err := recipe.LoadRecipe(filepath.Join(root, "templates", "recipe-lowpressure.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := recipe.Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := safety.Analyze(recipe.Derive(r, f), nil, safety.Options{}); err != safety.ErrNoSite {
		t.Errorf("got %v, want ErrNoSite", err)
	}
}

// Bad site files are refused by the loader with a clear message, pinned in
// testdata/site/<case>/error.txt beside the file.
func TestBadSites(t *testing.T) {
	for _, c := range []string{"no-ventilation", "zero-volume", "alarm-above-lfl", "oxygen-above-air"} {
		t.Run(c, func(t *testing.T) {
			dir := filepath.Join(root, "testdata", "site", c)
			data, err := os.ReadFile(filepath.Join(dir, "site.yaml"))
			if err != nil {
				t.Fatal(err)
			}
			_, err = recipe.ParseSite("site.yaml", data)
			if err == nil {
				t.Fatalf("got no error, want one")
			}
			compareGolden(t, filepath.Join(dir, "error.txt"), err.Error()+"\n")
		})
	}
}

func BenchmarkAnalyzeLowPressure(b *testing.B) {
	p, s, _ := analyzeFile(b, filepath.Join(root, "templates", "recipe-lowpressure.yaml"))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := safety.Analyze(p, s, safety.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
