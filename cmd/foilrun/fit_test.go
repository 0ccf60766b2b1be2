package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// fitLab writes a run log of n runs of the low-pressure template with the
// grow step at different temperatures, CH4 flows and times; outcomes are
// the model's prediction with DefaultParams (the truth) and noise σ = 0.1
// on cloglog coverage and ln density (seeded). It returns the database
// path and the folder holding the recipes and the furnace.
func fitLab(t *testing.T, n int, oneTemperature bool) (db, dir string) {
	t.Helper()
	dir = t.TempDir()
	tmpl, err := os.ReadFile("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	copyTemplates(t, dir, "furnace.yaml", "site.yaml")
	db = filepath.Join(dir, "runs.db")
	ctx := context.Background()
	l, err := sqlite.Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	rng := rand.New(rand.NewPCG(42, 1))
	truth := kinetics.DefaultParams()
	for i := range n {
		T := 960 + 100*rng.Float64()
		if oneTemperature {
			T = 1000
		}
		ch4 := 5 + 30*rng.Float64()
		h2 := 10 + 80*rng.Float64()
		minutes := 0.3 + 3*rng.Float64()
		text := strings.Replace(string(tmpl), "    temperature: 1000 C\n    duration: 15 min\n    flows: {H2: 20 sccm, CH4: 35 sccm}",
			fmt.Sprintf("    temperature: %.1f C\n    duration: %.2f min\n    flows: {H2: %.1f sccm, CH4: %.1f sccm}", T, minutes, h2, ch4), 1)
		path := filepath.Join(dir, fmt.Sprintf("r%02d.yaml", i))
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		plan := derivePlan(t, path, text)
		r, fu := plan.Recipe, plan.Furnace
		res, err := kinetics.Predict(plan, truth, kinetics.Options{})
		if err != nil {
			t.Fatal(err)
		}
		X := -math.Log1p(-res.Coverage) * math.Exp(0.1*rng.NormFloat64())
		cov := -math.Expm1(-X)
		den := res.NucleiDensity * 1e-6 * math.Exp(0.1*rng.NormFloat64())
		snap := store.NewSnapshot(r.Name, path, []byte(text))
		rec := store.RunRecord{Run: store.Run{Code: fmt.Sprintf("T-%02d", i+1), Status: store.Done, RecipeName: r.Name, Furnace: fu.Name},
			Params:   plan.Parameters(),
			Outcomes: []store.Outcome{{Metric: "coverage", Value: cov, Unit: "1"}, {Metric: "nuclei_density", Value: den, Unit: "1/mm2"}}}
		if _, err := l.CreateRun(ctx, rec, &snap); err != nil {
			t.Fatal(err)
		}
	}
	return db, dir
}

// copyTemplates copies the named files of templates/ into dir.
func copyTemplates(t *testing.T, dir string, names ...string) {
	t.Helper()
	for _, f := range names {
		b, err := os.ReadFile("../../templates/" + f)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// fit recovers the truth from the log (within 3 SE: the CLI test checks the
// wiring; kinetics.TestFitRecovery the statistics) and writes a params file
// that predict, window and suggest accept with its covariance.
func TestFitCommand(t *testing.T) {
	t.Parallel()
	db, dir := fitLab(t, 30, false)
	params := filepath.Join(dir, "fitted.yaml")
	plot := filepath.Join(dir, "parity.svg")
	code, out, errs := runCLI(t, "--db", db, "fit", "--output", "json", "-o", params, "--plot", plot)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var res fitResultJSON
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	truth := kinetics.DefaultParams()
	want := map[string]float64{"En": truth.En, "I0": math.Log(truth.I0), "a": truth.A, "b": truth.B, "Eg": truth.Eg, "G0": math.Log(truth.G0)}
	for _, e := range res.Estimates {
		if e.Value == nil {
			t.Fatalf("%s: no value", e.Short)
		}
		got, se := *e.Value, e.SE
		if e.LogValue != nil {
			got, se = *e.LogValue, e.LogSE
		}
		if se == nil || math.Abs(got-want[e.Short]) > 3**se {
			t.Errorf("%s: got %g ± %v, truth %g", e.Short, got, se, want[e.Short])
		}
	}
	if len(res.Runs) != 30 || res.Status != string(kinetics.Converged) || len(res.Residuals) != 60 {
		t.Errorf("got %d runs, status %s, %d residuals", len(res.Runs), res.Status, len(res.Residuals))
	}
	if !strings.Contains(errs, `furnace "tube-1" from `) || !strings.Contains(errs, "for 30 runs") {
		t.Errorf("stderr does not say which furnace was used: %s", errs)
	}
	p, err := kinetics.LoadParams(params)
	if err != nil {
		t.Fatal(err)
	}
	if p.Covariance == nil || p.Runs != 30 || p.Date == "" {
		t.Errorf("params file: covariance %v, runs %d, date %q", p.Covariance != nil, p.Runs, p.Date)
	}
	if info, err := os.Stat(plot); err != nil || info.Size() < 1000 {
		t.Errorf("parity plot: %v", err)
	}
	t.Run("predict", func(t *testing.T) { checkPredictInterval(t, dir, params) })
	t.Run("window", func(t *testing.T) { checkWindowIntervals(t, dir, params) })
	t.Run("suggest", func(t *testing.T) { checkSuggestConfidence(t, dir, params) })
}

// checkPredictInterval: predict with the fitted file reports a 90 %
// interval around its coverage.
func checkPredictInterval(t *testing.T, dir, params string) {
	code, out, errs := runCLI(t, "predict", filepath.Join(dir, "r00.yaml"), "--params", params, "--output", "json")
	if code != 0 {
		t.Fatalf("predict: exit %d: %s", code, errs)
	}
	var pr struct {
		Coverage float64       `json:"coverage"`
		Interval *intervalJSON `json:"interval"`
	}
	if err := json.Unmarshal([]byte(out), &pr); err != nil {
		t.Fatal(err)
	}
	if pr.Interval == nil || pr.Interval.Level != 0.9 || !(pr.Interval.Coverage[0] <= pr.Coverage && pr.Coverage <= pr.Interval.Coverage[1]) {
		t.Errorf("predict with fitted params: interval %+v around coverage %g", pr.Interval, pr.Coverage)
	}
}

// checkWindowIntervals: window with the fitted file gives every point an
// interval.
func checkWindowIntervals(t *testing.T, dir, params string) {
	code, out, errs := runCLI(t, "window", filepath.Join(dir, "r00.yaml"), "--params", params, "--output", "json",
		"--vary", "temperature=980C:1040C:3", "--vary", "CH4=5sccm:30sccm:2")
	if code != 0 {
		t.Fatalf("window: exit %d: %s", code, errs)
	}
	var win struct {
		Points []struct {
			Coverage float64       `json:"coverage"`
			Interval *intervalJSON `json:"interval"`
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(out), &win); err != nil {
		t.Fatal(err)
	}
	for i, pt := range win.Points {
		if pt.Interval == nil || !(pt.Interval.Coverage[0] <= pt.Coverage && pt.Coverage <= pt.Interval.Coverage[1]) {
			t.Errorf("window point %d: interval %+v around coverage %g", i, pt.Interval, pt.Coverage)
		}
	}
	if len(win.Points) != 6 {
		t.Errorf("window: %d points, want 6", len(win.Points))
	}
}

// checkSuggestConfidence: suggest --confidence plans so the interval's
// bound meets the target, and the recipe it writes to another folder
// passes check.
func checkSuggestConfidence(t *testing.T, dir, params string) {
	base := filepath.Join(dir, "r00.yaml")
	next := filepath.Join(dir, "next", "suggested.yaml")
	if err := os.MkdirAll(filepath.Dir(next), 0o755); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runCLI(t, "suggest", base, "--params", params, "--target", "coverage>=0.99", "--confidence", "0.9", "-o", next, "--output", "json")
	if code != 0 {
		t.Fatalf("suggest --confidence: exit %d: %s", code, errs)
	}
	var sg suggestResultJSON
	if err := json.Unmarshal([]byte(out), &sg); err != nil {
		t.Fatal(err)
	}
	if !sg.Met || sg.Candidates[0].Bounds[0] < 0.99 || sg.Candidates[0].Coverage <= sg.Candidates[0].Bounds[0] {
		t.Errorf("suggest --confidence: %+v", sg.Candidates)
	}
	if code, _, errs := runCLI(t, "check", next); code != 0 {
		t.Errorf("check of the suggested recipe (written to another folder): exit %d: %s", code, errs)
	}
}

// Bad input: the exit status is 2 and the message says what is wrong.
// Goldens: testdata/cli/fit/<case>.txt (stderr).
func TestFitCommandErrors(t *testing.T) {
	t.Parallel()
	db, dir := fitLab(t, 8, false)
	dbOne, dirOne := fitLab(t, 8, true)
	for _, c := range []struct {
		name string
		args []string
	}{
		{"no-eligible-runs", []string{"--db", db, "fit", "--where", "growth_temperature_c > 2000"}},
		{"one-temperature", []string{"--db", dbOne, "fit"}},
		{"unknown-fix", []string{"--db", db, "fit", "--fix", "Ea=1.2"}},
		{"bad-metric", []string{"--db", db, "fit", "--metric", "raman"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			code, _, errs := runCLI(t, c.args...)
			if code != 2 {
				t.Errorf("exit %d, want 2", code)
			}
			errs = strings.ReplaceAll(strings.ReplaceAll(errs, dirOne, "$DIR"), dir, "$DIR")
			golden(t, "fit/"+c.name+".txt", errs)
		})
	}
}

// suggest on the low-pressure template with the illustrative parameters:
// the table is pinned (testdata/cli/suggest/fastest.txt), the written
// recipe passes check, and an impossible target exits 2 naming the
// limits that bind (testdata/cli/suggest/impossible.txt).
func TestSuggestCommand(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	out := filepath.Join(dir, "fast.yaml")
	code, stdout, errs := runCLI(t, "suggest", "../../templates/recipe-lowpressure.yaml", "--target", "coverage>=0.99",
		"--vary", "temperature=950C:1050C,CH4,duration", "-o", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	golden(t, "suggest/fastest.txt", stdout)
	if code, _, errs := runCLI(t, "check", out); code != 0 {
		t.Errorf("check of the suggested recipe: exit %d: %s", code, errs)
	}
	written, _ := os.ReadFile(out)
	if !strings.Contains(string(written), "pretreatment: acetic acid dip 10 min") || !strings.Contains(string(written), "# pass figure") {
		t.Errorf("the written recipe lost the user's fields or comments:\n%s", written)
	}
	code, stdout, errs = runCLI(t, "suggest", "../../templates/recipe-lowpressure.yaml", "--target", "domain_size>=5mm")
	if code != 2 {
		t.Errorf("impossible target: exit %d, want 2", code)
	}
	golden(t, "suggest/impossible.txt", stdout+"--- stderr\n"+errs)
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"no target", []string{"suggest", "../../templates/recipe-lowpressure.yaml"}, "give at least one --target"},
		{"bad target", []string{"suggest", "../../templates/recipe-lowpressure.yaml", "--target", "coverage>=1.2"}, "strictly between 0 and 1"},
		{"bad minimize", []string{"suggest", "../../templates/recipe-lowpressure.yaml", "--target", "coverage>=0.9", "--minimize", "cost"}, `--minimize "cost": want time or methane`},
		{"confidence without fit", []string{"suggest", "../../templates/recipe-lowpressure.yaml", "--target", "coverage>=0.9", "--confidence", "0.9"}, "no covariance"},
	} {
		code, _, errs := runCLI(t, c.args...)
		if code != 2 || !strings.Contains(errs, c.want) {
			t.Errorf("%s: exit %d, stderr %q; want 2 and %q", c.name, code, errs, c.want)
		}
	}
}

// On a terminal the fit draws the one progress bar ("fitting") on stderr;
// piped, stderr holds only the status lines.
func TestFitProgressOnTerminal(t *testing.T) {
	t.Parallel()
	db, _ := fitLab(t, 8, false)
	for _, tty := range []bool{true, false} {
		var out, errb strings.Builder
		code := run([]string{"--db", db, "fit", "--output", "json"}, &streams{In: strings.NewReader(""), Out: &out, Err: &errb, ErrTTY: tty})
		if code != exitOK {
			t.Fatalf("terminal %v: exit %d: %s", tty, code, errb.String())
		}
		if got := strings.Contains(errb.String(), "fitting"); got != tty {
			t.Errorf("terminal %v: got a progress bar %v, want %v; stderr %q", tty, got, tty, errb.String())
		}
		if strings.Contains(out.String(), "fitting") {
			t.Errorf("terminal %v: the bar reached stdout", tty)
		}
	}
}
