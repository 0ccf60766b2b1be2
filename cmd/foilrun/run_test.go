package main

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
)

// Deviations from plan are results: run add and run finish print them on
// stdout, under the run's code (add) and after the status line on stderr
// (finish). The furnace log is the demo lab's short run, whose CH4 line
// reads 4.6 sccm against a set-point of 5 sccm (the demo's seeded noise).
func TestRunDeviationsOnStdout(t *testing.T) {
	t.Parallel()
	paths, err := demolab.Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	short, err := demolab.WriteShortRun(paths)
	if err != nil {
		t.Fatal(err)
	}
	dbFile := filepath.Join(paths.Dir, "log.db")
	db := "--db=" + dbFile
	const deviations = "run CODE: 1 deviations from plan\nstep\tquantity\tdeviation\n6 grow (growth)\tflow:CH4\tCH4 mean flow 4.6 sccm, set 5 sccm (±0.36 sccm)\n"

	// Status on stderr: which steps the log covers, then (finish) the run's state.
	covers := "furnace log " + short.FurnaceLog + ": log covers steps 1–9\n"
	code, out, errs := runPiped(t, db, "run", "add", short.Recipe, "--furnace-log", short.FurnaceLog)
	run, _, _ := strings.Cut(out, "\n")
	started := "started a new run log at " + dbFile + "\n" // the first run add makes the log
	if got, want := strings.ReplaceAll(out, run, "CODE"), "CODE\n"+deviations; code != 0 || got != want || errs != covers+started {
		t.Errorf("run add: got exit %d, stdout\n%s\nstderr %q; want exit 0, stdout\n%s\nstderr %q", code, got, errs, want, covers+started)
	}

	code, out, errs = runPiped(t, db, "run", "start", short.Recipe)
	if code != 0 {
		t.Fatalf("run start: exit %d: %s", code, errs)
	}
	run = strings.TrimSpace(out)
	code, out, errs = runPiped(t, db, "run", "note", run, "foil in the centre")
	if want := "run " + run + ": note added\n"; code != 0 || out != "" || errs != want {
		t.Errorf("run note: got exit %d, stdout %q, stderr %q; want exit 0, no stdout, stderr %q", code, out, errs, want)
	}
	code, out, errs = runPiped(t, db, "run", "finish", run, "--furnace-log", short.FurnaceLog)
	got := strings.ReplaceAll(out, run, "CODE")
	if want := covers + "run " + run + " done\n"; code != 0 || got != deviations || errs != want {
		t.Errorf("run finish: got exit %d, stdout\n%s\nstderr %q; want exit 0, stdout\n%s\nstderr %q", code, got, errs, deviations, want)
	}
}
