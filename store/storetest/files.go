package storetest

import (
	"bytes"
	"context"
	"fmt"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// SchemaVersion is the schema version the migrations of every back end
// reach.
const SchemaVersion = 8

// Furnace and site files of the snapshot test: two versions of one
// furnace (the pump speed halved between them) and a site.
var (
	testFurnaceA = []byte("name: tube-1\nvacuum:\n  pump_speed: 4 L/s\n")
	testFurnaceB = []byte("name: tube-1\nvacuum:\n  pump_speed: 2 L/s\n")
	testSite     = []byte("name: lab\n")
)

// testFileSnapshots: a run stores its furnace and site snapshots beside
// the recipe's, each kind kept; a run logged on the edited furnace gets a
// second furnace snapshot and the first run keeps its own; export and
// import keep them; a run naming a furnace snapshot the log lacks is
// refused.
func testFileSnapshots(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	recipe := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	fa := store.NewFileSnapshot(store.SnapshotFurnace, "tube-1", "tube.yaml", testFurnaceA)
	fb := store.NewFileSnapshot(store.SnapshotFurnace, "tube-1", "tube.yaml", testFurnaceB)
	site := store.NewFileSnapshot(store.SnapshotSite, "lab", "site.yaml", testSite)
	c1, err := l.CreateRun(ctx, store.RunRecord{Run: store.Run{Source: "old.csv, row 2"}}, &recipe, &fa, &site)
	must(t, err)
	c2, err := l.CreateRun(ctx, store.RunRecord{}, &recipe, &fb, nil)
	must(t, err)
	r1, err := l.Record(ctx, c1)
	must(t, err)
	r2, err := l.Record(ctx, c2)
	must(t, err)
	if r1.RecipeHash != recipe.SHA256 || r1.FurnaceHash != fa.SHA256 || r1.SiteHash != site.SHA256 || r1.Source != "old.csv, row 2" {
		t.Errorf("run 1: got recipe %.12s furnace %.12s site %.12s source %q; want %.12s %.12s %.12s \"old.csv, row 2\"",
			r1.RecipeHash, r1.FurnaceHash, r1.SiteHash, r1.Source, recipe.SHA256, fa.SHA256, site.SHA256)
	}
	if r2.FurnaceHash != fb.SHA256 || r2.SiteHash != "" {
		t.Errorf("run 2: got furnace %.12s site %q; want %.12s and no site", r2.FurnaceHash, r2.SiteHash, fb.SHA256)
	}
	for _, want := range []store.Snapshot{recipe, fa, fb, site} {
		got, err := l.Snapshot(ctx, want.SHA256)
		must(t, err)
		if got.Kind != want.Kind || !bytes.Equal(got.Content, want.Content) {
			t.Errorf("snapshot %.12s: got kind %q content %q; want %q %q", want.SHA256, got.Kind, got.Content, want.Kind, want.Content)
		}
	}
	if n := Count(t, l, "snapshots"); n != 4 {
		t.Errorf("snapshots: got %d, want 4 (one recipe, two furnaces, one site)", n)
	}

	var buf bytes.Buffer
	if _, err := store.WriteJSON(ctx, &buf, l, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	b, err := store.ReadJSON(&buf)
	must(t, err)
	if len(b.Snapshots) != 4 {
		t.Errorf("export: got %d snapshots, want 4", len(b.Snapshots))
	}
	dst := open(t)
	if _, err := dst.Import(ctx, b, nil); err != nil {
		t.Fatal(err)
	}
	got, err := dst.Record(ctx, c1)
	must(t, err)
	if got.FurnaceHash != fa.SHA256 || got.SiteHash != site.SHA256 || got.Source != r1.Source {
		t.Errorf("imported run 1: got furnace %.12s site %.12s source %q; want %.12s %.12s %q", got.FurnaceHash, got.SiteHash, got.Source, fa.SHA256, site.SHA256, r1.Source)
	}
	if sn, err := dst.Snapshot(ctx, fb.SHA256); err != nil || sn.Kind != store.SnapshotFurnace {
		t.Errorf("imported furnace snapshot: got kind %q, %v; want furnace", sn.Kind, err)
	}

	other := open(t)
	_, err = other.CreateRun(ctx, store.RunRecord{Run: store.Run{FurnaceHash: fa.SHA256}})
	if !errorsIs(err, store.ErrInvalid) || !strings.Contains(err.Error(), "furnace snapshot") {
		t.Errorf("run naming a missing furnace snapshot: got %v, want ErrInvalid naming the furnace snapshot", err)
	}
}

// testCodeYear: a new code takes the year the run started, so runs of
// 2025 logged in 2026 (one by one or in one import) get 2025 codes, each
// year its own sequence; a run with no start, or one outside 2000–2099,
// takes the year it is logged.
func testCodeYear(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	setClock(t, l, time.Date(2026, 5, 1, 8, 0, 0, 0, time.UTC))
	in2025 := time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)
	c1, err := l.CreateRun(ctx, store.RunRecord{Run: store.Run{Started: in2025}})
	must(t, err)
	c2, err := l.CreateRun(ctx, store.RunRecord{})
	must(t, err)
	b := store.Bundle{Runs: []store.RunRecord{
		{Run: store.Run{Status: store.Done, Started: in2025.AddDate(0, 1, 0)}},
		{Run: store.Run{Status: store.Done, Started: time.Date(1999, 12, 31, 0, 0, 0, 0, time.UTC)}},
		{Run: store.Run{Status: store.Done, Started: in2025.AddDate(0, 2, 0)}},
	}}
	if _, err := l.Import(ctx, b, nil); err != nil {
		t.Fatal(err)
	}
	runs, err := l.List(ctx, store.Filter{})
	must(t, err)
	var got []string
	for _, r := range runs {
		got = append(got, r.Code)
	}
	sort.Strings(got)
	want := []string{"G25-0001", "G25-0002", "G25-0003", "G26-0001", "G26-0002"}
	if c1 != "G25-0001" || c2 != "G26-0001" || strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("codes: got %s, %s and %v; want G25-0001, G26-0001 and %v", c1, c2, got, want)
	}
}

// testCorrections: outcome add --replace replaces every value of the
// metric, keeps each replaced one with who and when, all in one
// transaction; a metric the run lacks is refused and changes nothing;
// export and import keep the trail.
func testCorrections(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	at := time.Date(2026, 5, 2, 10, 0, 0, 0, time.UTC)
	setClock(t, l, at)
	code, err := l.CreateRun(ctx, store.RunRecord{Outcomes: []store.Outcome{
		{Metric: "coverage", Value: 0.5, Unit: "1", Entered: "50%"}, {Metric: "coverage", Value: 0.6, Unit: "1", Entered: "0.6"},
		{Metric: "domain_size", Value: 12, Unit: "um", Entered: "12um"}}})
	must(t, err)
	before := Fingerprint(t, l)
	err = l.ReplaceOutcomes(ctx, code, []store.Outcome{{Metric: "coverage", Value: 0.93, Unit: "1", Entered: "93%"}, {Metric: "nuclei_density", Value: 100, Unit: "1/mm2"}}, "ana")
	if !errorsIs(err, store.ErrInvalid) || !strings.Contains(err.Error(), "no nuclei_density to replace") {
		t.Errorf("replace of a metric the run lacks: got %v, want ErrInvalid naming it", err)
	}
	if Fingerprint(t, l) != before {
		t.Errorf("a refused replace changed the log")
	}
	must(t, l.ReplaceOutcomes(ctx, code, []store.Outcome{{Metric: "coverage", Value: 0.93, Unit: "1", Entered: "93%"}}, "ana"))
	rec, err := l.Record(ctx, code)
	must(t, err)
	var cov []float64
	for _, o := range rec.Outcomes {
		if o.Metric == "coverage" {
			cov = append(cov, o.Value)
		}
	}
	want := []store.Correction{
		{Metric: "coverage", Unit: "1", OldValue: 0.5, OldEntered: "50%", NewValue: 0.93, NewEntered: "93%", Who: "ana", At: at},
		{Metric: "coverage", Unit: "1", OldValue: 0.6, OldEntered: "0.6", NewValue: 0.93, NewEntered: "93%", Who: "ana", At: at},
	}
	if len(cov) != 1 || cov[0] != 0.93 || len(rec.Outcomes) != 2 || fmt.Sprint(rec.Corrections) != fmt.Sprint(want) {
		t.Errorf("after replace: got coverage %v, %d outcomes, corrections %+v; want [0.93], 2 and %+v", cov, len(rec.Outcomes), rec.Corrections, want)
	}
	var buf bytes.Buffer
	if _, err := store.WriteJSON(ctx, &buf, l, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	b, err := store.ReadJSON(&buf)
	must(t, err)
	dst := open(t)
	if _, err := dst.Import(ctx, b, nil); err != nil {
		t.Fatal(err)
	}
	got, err := dst.Record(ctx, code)
	must(t, err)
	if fmt.Sprint(got.Corrections) != fmt.Sprint(want) {
		t.Errorf("imported corrections: got %+v, want %+v", got.Corrections, want)
	}
}
