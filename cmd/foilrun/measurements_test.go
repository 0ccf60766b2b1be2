package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// Two measurements of one metric are both kept: run show lists them and
// their mean and spread, and fit uses the mean and says how many runs had
// more than one. Values: the mean of 0.90 and 0.94 is 0.92; their sample
// standard deviation is |0.94 − 0.90|/√2 = 0.028284 (by hand).
func TestRepeatedMeasurements(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	db := filepath.Join(dir, "runs.db")
	snapLab(t, dir, db, "furnace.yaml", "tube-1", 7, 8)
	code, out, errs := runArgs(t, "--db", db, "run", "add", filepath.Join(dir, "tube-1-r00.yaml"), "--outcome", "coverage=0.90", "--outcome", "nuclei_density=100/mm2")
	if code != 0 {
		t.Fatalf("run add: %s", errs)
	}
	run := strings.TrimSpace(strings.SplitN(out, "\n", 2)[0])
	if code, _, errs := runArgs(t, "--db", db, "outcome", "add", run, "coverage=94%"); code != 0 {
		t.Fatalf("outcome add: %s", errs)
	}
	_, show, _ := runArgs(t, "--db", db, "run", "show", run, "--output", "table")
	want := "coverage\t2\t0.92\t0.0283\t1"
	if !strings.Contains(show, "Repeated measurements (fit uses the mean)") || !strings.Contains(show, want) {
		t.Errorf("run show %s: want the repeated-measurement line %q in\n%s", run, want, show)
	}
	_, errs = fitEstimates(t, "--db", db)
	if !strings.Contains(errs, "1 runs have more than one measurement of a fitted metric; the fit uses each run's mean") {
		t.Errorf("fit status: got %q, want the count of runs with repeated measurements", errs)
	}
}

// outcome add --replace corrects a mistaken entry; run show --history
// lists who replaced what, when; a metric the run lacks is refused.
func TestOutcomeReplace(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	db := filepath.Join(dir, "runs.db")
	code, out, errs := runArgs(t, "--db", db, "run", "add", "../../templates/recipe-lowpressure.yaml", "--outcome", "coverage=39%")
	if code != 0 {
		t.Fatalf("run add: %s", errs)
	}
	run := strings.TrimSpace(strings.SplitN(out, "\n", 2)[0])
	if code, _, errs := runArgs(t, "--db", db, "outcome", "add", run, "domain_size=12um", "--replace"); code != 2 || !strings.Contains(errs, "has no domain_size to replace") {
		t.Errorf("replace of a metric not logged: exit %d, %q; want 2 naming it", code, errs)
	}
	if code, _, errs := runArgs(t, "--db", db, "outcome", "add", run, "coverage=93%", "--replace", "--operator", "ana"); code != 0 || !strings.Contains(errs, "1 outcomes replaced") {
		t.Fatalf("replace: exit %d, %q", code, errs)
	}
	_, show, _ := runArgs(t, "--db", db, "run", "show", run, "--history")
	for _, want := range []string{"Corrected measurements", "ana\tcoverage\t39% (0.39)\t93% (0.93)\t1"} {
		if !strings.Contains(show, want) {
			t.Errorf("run show --history: want %q in\n%s", want, show)
		}
	}
	if strings.Contains(show, "coverage\t0.39") {
		t.Errorf("run show: the replaced value 0.39 is still listed as an outcome:\n%s", show)
	}
}
