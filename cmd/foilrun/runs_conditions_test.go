package main

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// conditionsLab logs, on the template recipe and furnace, run "low"
// planned to grow at 1000 °C whose furnace log shows the grow step 20 K
// below (980 °C; the log written from that plan with thermocouple noise of
// 1 K, seeded), coverage 0.5, and run "plan" planned and run at 990 °C
// without a log, coverage 0.9. low is logged by run add, or, with
// finish, by run start and run finish. It returns the database path.
func conditionsLab(t *testing.T, finish bool) string {
	t.Helper()
	dir := t.TempDir()
	copyTemplates(t, dir, "furnace.yaml", "site.yaml")
	tmpl, err := os.ReadFile("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const growLine = "    name: growth\n    temperature: 1000 C\n"
	if !strings.Contains(string(tmpl), growLine) {
		t.Fatalf("the template has no grow step %q", growLine)
	}
	write := func(name, text string) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	low := write("low.yaml", string(tmpl))
	at990 := write("plan.yaml", strings.Replace(string(tmpl), growLine, "    name: growth\n    temperature: 990 C\n", 1))
	truth := derivePlan(t, low, strings.Replace(string(tmpl), growLine, "    name: growth\n    temperature: 980 C\n", 1))
	log := filepath.Join(dir, "low.csv")
	writeTrueLog(t, log, truth, rand.New(rand.NewPCG(14, 20)))
	db := filepath.Join(dir, "runs.db")
	run := func(args ...string) string {
		t.Helper()
		code, out, errs := runCLI(t, append([]string{"--db", db}, args...)...)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", strings.Join(args, " "), code, errs)
		}
		return out
	}
	if finish {
		code := strings.TrimSpace(strings.Split(run("run", "start", low), "\n")[0])
		run("run", "finish", code, "--furnace-log", log)
		run("outcome", "add", code, "coverage=0.5")
	} else {
		run("run", "add", low, "--started", "2026-03-01T09:30:00Z", "--furnace-log", log, "--outcome", "coverage=0.5")
	}
	run("run", "add", at990, "--started", "2026-03-02T09:30:00Z", "--outcome", "coverage=0.9")
	return db
}

// TestBestConditions: runs best --by growth_temperature_c --bins 2 bins
// the low run by its logged grow temperature (980 °C, below the other
// run's 990 °C) with --conditions logged, the default, and by its planned
// 1000 °C (above) with planned; the output counts the runs on each. The
// logged temperature is the mean of 90 samples with σ 1 K noise, so it
// lies within 0.5 K of 980 °C (about 5 standard errors, 1/√90 K each).
func TestBestConditions(t *testing.T) {
	t.Parallel()
	for _, finish := range []bool{false, true} {
		name := map[bool]string{false: "run add", true: "run finish"}[finish]
		t.Run(name, func(t *testing.T) {
			db := conditionsLab(t, finish)
			cases := []struct {
				conds          string
				lowBin         int     // bin of the low run (coverage 0.5)
				lo, hi         float64 // °C, the range of the two runs
				logged, onPlan int
			}{
				{"logged", 0, 980, 990, 1, 1},
				{"planned", 1, 990, 1000, 0, 2},
			}
			for _, c := range cases {
				code, out, errs := runCLI(t, "--db", db, "runs", "best", "--metric", "coverage", "--by", "growth_temperature_c", "--bins", "2", "--conditions", c.conds, "--output", "json")
				if code != 0 {
					t.Fatalf("%s: exit %d: %s", c.conds, code, errs)
				}
				var got bestJSON
				if err := json.Unmarshal([]byte(out), &got); err != nil {
					t.Fatal(err)
				}
				if got.Conditions != c.conds || got.RunsLogged != c.logged || got.RunsPlanned != c.onPlan || len(got.Bins) != 2 {
					t.Fatalf("%s: got conditions %q, %d logged, %d on the plan, %d bins; want %q, %d, %d, 2 bins", c.conds, got.Conditions, got.RunsLogged, got.RunsPlanned, len(got.Bins), c.conds, c.logged, c.onPlan)
				}
				b := got.Bins[c.lowBin]
				if b.Count != 1 || b.Mean != 0.5 {
					t.Errorf("%s: bin %d holds %d runs of mean coverage %g, want the low run alone (0.5)", c.conds, c.lowBin, b.Count, b.Mean)
				}
				if lo, hi := got.Bins[0].Lo[0], got.Bins[1].Hi[0]; math.Abs(lo-c.lo) > 0.5 || math.Abs(hi-c.hi) > 0.5 {
					t.Errorf("%s: bins span %.2f–%.2f °C, want %g–%g °C ± 0.5 K", c.conds, lo, hi, c.lo, c.hi)
				}
			}
			// The twin is a parameter of the query language.
			code, out, errs := runCLI(t, "--db", db, "runs", "list", "--where", "growth_temperature_c_logged < 985", "--output", "json")
			var runs []struct {
				Recipe string `json:"recipe_name"`
			}
			if code != 0 || json.Unmarshal([]byte(out), &runs) != nil || len(runs) != 1 {
				t.Errorf("runs list --where growth_temperature_c_logged < 985: exit %d, %s %s; want the low run alone", code, out, errs)
			}
			// rank counts per parameter the runs on logged values and
			// does not rank the twins themselves.
			code, out, errs = runCLI(t, "--db", db, "runs", "rank", "--metric", "coverage", "--output", "json")
			var rows []rankJSON
			if code != 0 || json.Unmarshal([]byte(out), &rows) != nil {
				t.Fatalf("runs rank: exit %d: %s %s", code, out, errs)
			}
			for _, r := range rows {
				if strings.HasSuffix(r.Param, "_logged") {
					t.Errorf("rank lists the twin %s", r.Param)
				}
				if r.Param == "growth_temperature_c" && (r.N != 2 || r.Logged != 1) {
					t.Errorf("rank growth_temperature_c: %d runs, %d logged; want 2 and 1", r.N, r.Logged)
				}
			}
		})
	}
	code, _, errs := runCLI(t, "runs", "best", "--metric", "coverage", "--by", "growth_temperature_c", "--conditions", "measured")
	if code != 2 || !strings.Contains(errs, `--conditions "measured": want logged or planned`) {
		t.Errorf("got exit %d, stderr %q; want 2 naming the flag and the choices", code, errs)
	}
}
