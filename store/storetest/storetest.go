// Package storetest is the back-end-agnostic test suite of the run log:
// every back end (store/sqlite, store/postgres) calls Run from its tests
// with a function that opens a fresh, empty log, so the same checks run
// unchanged against each. It also holds the synthetic records the
// benchmarks use and the helpers for tests with several processes
// (Main, Loggers, KilledImport).
//
// The expected values are computed in Go from the same records the test
// writes (counts, filters and means by hand), never taken from the back
// end under test.
//
// Entry points: Run, GenRecord, Fingerprint, Main, Loggers, KilledImport.
package storetest

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// Opener opens a fresh, empty run log for one test; the back end closes
// and removes it in t.Cleanup.
type Opener func(t *testing.T) store.RunLog

// Run runs the shared suite, each test on its own fresh log and in
// parallel with the others (they share nothing but the back end's server).
func Run(t *testing.T, open Opener) {
	tests := []struct {
		name string
		fn   func(*testing.T, Opener)
	}{
		{"SnapshotByteIdentical", testSnapshot},
		{"FileSnapshots", testFileSnapshots},
		{"CodeYear", testCodeYear},
		{"Corrections", testCorrections},
		{"RunLifecycle", testLifecycle},
		{"Codes", testCodes},
		{"CodeCounters", testCodeCounters},
		{"Renumber", testRenumber},
		{"ImportValidated", testImportValidated},
		{"BadInput", testBadInput},
		{"ListBestRank", testListBestRank},
		{"ListLong", testListLong},
		{"Page", testPage},
		{"SamplesMean", testSamplesMean},
		{"SummaryRepair", testSummaryRepair},
		{"SummaryRefused", testSummaryRefused},
		{"SummaryAgrees", testSummaryAgrees},
		{"TextOrder", testTextOrder},
		{"ExportImportJSON", testExportImportJSON},
		{"ExportImportCSV", testExportImportCSV},
		{"ConcurrentWriters", testConcurrentWriters},
		{"Check", testCheck},
		{"CopyTo", testCopy},
		{"Override", testOverride},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			tt.fn(t, open)
		})
	}
}

// Attachment hashes of the lifecycle test: SHA-256 of "cd", "ab" and "ef"
// (crypto/sha256), so they have the 64 hex digits every write checks.
var hashCD, hashAB, hashEF = store.HashOf([]byte("cd")), store.HashOf([]byte("ab")), store.HashOf([]byte("ef"))

func setClock(t *testing.T, l store.RunLog, at time.Time) {
	Backend(t, l).SetClock(func() time.Time { return at })
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

func testSnapshot(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	code, err := l.CreateRun(ctx, store.RunRecord{}, &sn)
	must(t, err)
	rec, err := l.Record(ctx, code)
	must(t, err)
	got, err := l.Snapshot(ctx, rec.RecipeHash)
	must(t, err)
	// the hash is SHA-256 of the bytes (FIPS 180-4), computed by crypto/sha256
	if !bytes.Equal(got.Content, TestRecipe) || got.SHA256 != store.HashOf(TestRecipe) {
		t.Errorf("snapshot round trip: got %q, want %q", got.Content, TestRecipe)
	}
	if _, err := l.CreateRun(ctx, store.RunRecord{}, &sn); err != nil {
		t.Fatal(err)
	}
	if n := Count(t, l, "snapshots"); n != 1 {
		t.Errorf("snapshots after two runs of one recipe: got %d, want 1", n)
	}
	if _, err := l.Snapshot(ctx, "ffff"); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("unknown snapshot: got %v, want ErrNotFound", err)
	}
}

// testLifecycle: start, note, finish with the furnace log attached,
// outcomes, attachment, show; a finish that fails leaves nothing behind.
func testLifecycle(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	setClock(t, l, time.Date(2026, 3, 1, 8, 0, 0, 0, time.UTC))
	c1, err := l.CreateRun(ctx, store.RunRecord{Run: store.Run{Furnace: "tube-1", Started: T0}}, nil)
	must(t, err)
	c2, err := l.CreateRun(ctx, store.RunRecord{}, nil)
	must(t, err)
	if c1 != "G26-0001" || c2 != "G26-0002" {
		t.Errorf("codes: got %s %s, want G26-0001 G26-0002", c1, c2)
	}
	must(t, l.AddNote(ctx, c1, store.Note{Text: "foil looked oxidised"}))
	fin := store.Finish{Status: store.Done, Ended: T0.Add(time.Hour), Note: "cooled",
		Actuals:     []store.Actual{{Step: 1, Label: "1 grow", Quantity: "temperature", Unit: "K", Planned: 1273.15, Mean: 1272, Min: 1270, Max: 1275, Samples: 60}},
		Deviations:  []store.Deviation{{Step: 1, Label: "1 grow", Quantity: "duration", Unit: "s", Planned: 900, Actual: 1100, Tolerance: 90, Message: "long"}},
		Attachments: []store.Attachment{{Path: "tube-1.csv", SHA256: hashCD, Kind: "furnace-log"}}}
	must(t, l.FinishRun(ctx, c1, fin))
	if err := l.FinishRun(ctx, c1, fin); !errors.Is(err, store.ErrConflict) {
		t.Errorf("second finish: got %v, want ErrConflict", err)
	}
	if n := Count(t, l, "attachments"); n != 1 {
		t.Errorf("attachments after a finish and a refused second one: got %d, want 1", n)
	}
	// The attachment is written in the finish's transaction: a bad one
	// (no path) undoes the status, note and actuals written before it.
	before := Fingerprint(t, l)
	bad := fin
	bad.Attachments = []store.Attachment{{Path: "", SHA256: hashEF, Kind: "furnace-log"}}
	if err := l.FinishRun(ctx, c2, bad); !errors.Is(err, store.ErrInvalid) || !strings.Contains(err.Error(), "no path") {
		t.Errorf("finish with an attachment without a path: got %v, want ErrInvalid naming the missing path", err)
	}
	if Fingerprint(t, l) != before {
		t.Errorf("a refused finish changed the log")
	}
	must(t, l.AddOutcomes(ctx, c1, []store.Outcome{{Metric: "coverage", Value: 0.95, Unit: "1"}}))
	must(t, l.AddAttachment(ctx, c1, store.Attachment{Path: "m.png", SHA256: hashAB, Kind: "micrograph"}))
	rec, err := l.Record(ctx, c1)
	must(t, err)
	if rec.Status != store.Done || !rec.Ended.Equal(T0.Add(time.Hour)) || len(rec.Notes) != 2 || len(rec.Actuals) != 1 ||
		len(rec.Deviations) != 1 || len(rec.Outcomes) != 1 || len(rec.Attachments) != 2 || rec.Actuals[0].Planned != 1273.15 ||
		rec.Notes[0].Text != "foil looked oxidised" || rec.Notes[1].Text != "cooled" || rec.Furnace != "tube-1" || !rec.Started.Equal(T0) {
		t.Errorf("record: got %+v", rec)
	}
	kinds := map[string]string{}
	for _, a := range rec.Attachments {
		kinds[a.Kind] = a.Path + " " + a.SHA256
	}
	if kinds["furnace-log"] != "tube-1.csv "+hashCD || kinds["micrograph"] != "m.png "+hashAB {
		t.Errorf("attachments: got %+v, want the furnace log from the finish and the micrograph", rec.Attachments)
	}
	runs, err := l.List(ctx, store.Filter{})
	must(t, err)
	if len(runs) != 2 || runs[0].Code != c1 || runs[1].Status != store.Running {
		t.Errorf("List: got %+v, want %s done then %s running", runs, c1, c2)
	}
}

// testCodes: codes restart each year, imported codes move the counter on,
// codes of another shape are kept.
func testCodes(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	setClock(t, l, time.Date(2026, 12, 31, 23, 0, 0, 0, time.UTC))
	c, err := l.CreateRun(ctx, store.RunRecord{}, nil)
	must(t, err)
	imp := []store.RunRecord{{Run: store.Run{Code: "G27-0041", Status: store.Done}}, {Run: store.Run{Code: "LAB-7", Status: store.Done}}}
	_, err = l.Import(ctx, store.Bundle{Runs: imp}, nil)
	must(t, err)
	setClock(t, l, time.Date(2027, 1, 1, 1, 0, 0, 0, time.UTC))
	c2, err := l.CreateRun(ctx, store.RunRecord{}, nil)
	must(t, err)
	if c != "G26-0001" || c2 != "G27-0042" {
		t.Errorf("codes: got %s, %s; want G26-0001 and G27-0042 (after the imported G27-0041)", c, c2)
	}
	if _, err := l.Record(ctx, "LAB-7"); err != nil {
		t.Errorf("imported code of another shape: %v", err)
	}
}

// testCodeCounters: an imported code whose number would overflow the
// counter is refused; a counter planted with SQL outside the range (the
// largest bigint, what such an import used to leave) or behind the codes
// logged, and a code planted with SQL, are reported by Check, and the
// next run still gets the next free code, after which Check is clean.
func testCodeCounters(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	setClock(t, l, time.Date(2026, 6, 1, 8, 0, 0, 0, time.UTC))
	for i := 0; i < 3; i++ {
		_, err := l.CreateRun(ctx, store.RunRecord{}, nil)
		must(t, err)
	}
	before := Fingerprint(t, l)
	huge := store.RunRecord{Run: store.Run{Code: "G26-9223372036854775807", Status: store.Done}}
	if _, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{huge}}, nil); !errors.Is(err, store.ErrInvalid) ||
		!strings.Contains(err.Error(), `sequence number "9223372036854775807" has 19 digits, want 4 to 6`) {
		t.Errorf("import of G26-9223372036854775807: got %v, want ErrInvalid naming the 19 digits", err)
	}
	if Fingerprint(t, l) != before {
		t.Errorf("a refused import changed the log")
	}
	raw := Backend(t, l).SQL()
	exec := func(q string) {
		t.Helper()
		if _, err := raw.ExecContext(ctx, q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
	tests := []struct {
		name, plant, report, next string
	}{
		{"largest bigint", `UPDATE counters SET value = 9223372036854775807 WHERE name = 'run-2026'`,
			`counter run-2026 holds "9223372036854775807", not a whole number from 0 to 999999`, "G26-0004"},
		{"negative", `UPDATE counters SET value = -3 WHERE name = 'run-2026'`,
			`counter run-2026 holds "-3", not a whole number from 0 to 999999`, "G26-0005"},
		{"behind the codes", `UPDATE counters SET value = 1 WHERE name = 'run-2026'`,
			"counter run-2026 is at 1 but a run with number 5 is logged", "G26-0006"},
		{"row deleted", `DELETE FROM counters WHERE name = 'run-2026'`, "", "G26-0007"},
		{"bad code planted", `UPDATE runs SET code = 'G26-1234567' WHERE code = 'G26-0001'`,
			`run code "G26-1234567": sequence number "1234567" has 7 digits`, "G26-0008"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			exec(tt.plant)
			probs, err := l.Check(ctx)
			must(t, err)
			if got := strings.Join(probs, "; "); tt.report != "" && !strings.Contains(got, tt.report) {
				t.Errorf("Check: got %q, want it to report %q", got, tt.report)
			}
			code, err := l.CreateRun(ctx, store.RunRecord{}, nil)
			if err != nil || code != tt.next {
				t.Errorf("run add after the planted change: got %q, %v; want %s", code, err, tt.next)
			}
			if tt.name == "bad code planted" {
				exec(`UPDATE runs SET code = 'G26-0001' WHERE code = 'G26-1234567'`)
			}
			if probs, err := l.Check(ctx); err != nil || len(probs) != 0 {
				t.Errorf("Check after run add: got %v, %v; want no problems", probs, err)
			}
		})
	}
}

// testImportValidated: each bad export under testdata/store/import-bad
// is refused by Import (or by ReadJSON before it) with its golden message,
// and the log is left exactly as it was; the good one imports.
func testImportValidated(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	setClock(t, l, time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC))
	_, err := l.CreateRun(ctx, GenRecord(1, ""), nil)
	must(t, err)
	dirs, err := filepath.Glob("../../testdata/store/import-bad/*")
	if err != nil || len(dirs) < 10 {
		t.Fatalf("import-bad cases: got %d, %v; want at least 10", len(dirs), err)
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			before := Fingerprint(t, l)
			in, err := os.ReadFile(filepath.Join(dir, "input.json"))
			must(t, err)
			want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
			must(t, err)
			b, err := store.ReadJSON(bytes.NewReader(in))
			if err == nil {
				_, err = l.Import(ctx, b, nil)
			}
			got := "ok"
			if err != nil {
				got = err.Error()
			}
			if got != strings.TrimSpace(string(want)) {
				t.Errorf("got  %s\nwant %s", got, want)
			}
			if got != "ok" && Fingerprint(t, l) != before {
				t.Errorf("a refused import changed the log")
			}
		})
	}
}

// testCopy: CopyTo carries every row into an empty log of the same back
// end, agrees with the target's own Digest, and refuses a target that
// holds runs (ErrConflict) or is not on SQL (ErrInvalid).
func testCopy(t *testing.T, open Opener) {
	ctx := context.Background()
	src := open(t)
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	_, err := src.CreateRun(ctx, FullRecord(0, sn.SHA256), &sn)
	must(t, err)
	importRecords(t, src, []store.RunRecord{FullRecord(1, sn.SHA256), FullRecord(2, "")})
	// A counter ahead of the codes logged (a state the integrity check
	// accepts): the copy carries it over, so that the target does not
	// hand out a code the source's counter has passed.
	if _, err := Backend(t, src).SQL().ExecContext(ctx, `UPDATE counters SET value = value + 5`); err != nil {
		t.Fatal(err)
	}
	dst := open(t)
	dg, err := src.CopyTo(ctx, dst, nil)
	must(t, err)
	if a, b := counterRows(t, src), counterRows(t, dst); a != b || a == "" {
		t.Errorf("counters after the copy: got %s, want %s (the source's)", b, a)
	}
	after, err := dst.Digest(ctx)
	must(t, err)
	if dg.Runs() != 3 || dg.Counts["attachments"] != 3 || after.Diff(dg) != "" {
		t.Errorf("copy: got digest %v, target reads back %v (%s); want 3 runs with their 3 attachments on both sides", dg, after, after.Diff(dg))
	}
	if a, b := ExportJSON(t, src), ExportJSON(t, dst); a != b {
		t.Errorf("export of the copy differs from the source's")
	}
	before := Fingerprint(t, dst)
	if _, err := src.CopyTo(ctx, dst, nil); !errors.Is(err, store.ErrConflict) || !strings.Contains(err.Error(), "only into an empty log") {
		t.Errorf("copy into a log with runs: got %v, want ErrConflict", err)
	}
	if Fingerprint(t, dst) != before {
		t.Errorf("a refused copy changed the target")
	}
	notSQL := struct{ store.RunLog }{open(t)}
	if _, err := src.CopyTo(ctx, notSQL, nil); !errors.Is(err, store.ErrInvalid) || !strings.Contains(err.Error(), "not a SQL run log") {
		t.Errorf("copy into a log not on SQL: got %v, want ErrInvalid", err)
	}
}

func importRecords(t *testing.T, l store.RunLog, recs []store.RunRecord) {
	t.Helper()
	n, err := l.Import(context.Background(), store.Bundle{Runs: recs}, nil)
	if err != nil || n != len(recs) {
		t.Fatalf("Import: got %d, %v; want %d", n, err, len(recs))
	}
}

func testListBestRank(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	recs := Records(200, "")
	importRecords(t, l, recs)
	// count by hand in Go over the same records
	want := 0
	for _, r := range recs {
		if r.Params["growth_temperature_c"] >= 1000 && r.Outcomes[0].Value > 0.6 || r.Furnace == "tube-2" {
			want++
		}
	}
	got, err := l.List(ctx, store.Filter{Where: []string{`growth_temperature_c >= 1000 and coverage > 0.6 or furnace = "tube-2"`}})
	if err != nil || len(got) != want {
		t.Fatalf("List: got %d runs, %v; want %d", len(got), err, want)
	}
	lim, err := l.List(ctx, store.Filter{Where: []string{`not (status != "done")`}, Limit: 7})
	if err != nil || len(lim) != 7 || lim[6].Code != "" && lim[0].Code > lim[6].Code {
		t.Errorf("List with limit 7: got %d runs, %v; want 7 oldest first", len(lim), err)
	}
	samples, err := l.Samples(ctx, store.Filter{}, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm", "no_such_param"})
	if err != nil || len(samples) != 200 {
		t.Fatalf("Samples: got %d, %v; want 200", len(samples), err)
	}
	for i, s := range samples {
		if s.Params[0] != recs[i].Params["growth_temperature_c"] || s.Params[1] != recs[i].Params["ch4_flow_sccm"] ||
			s.Metric != recs[i].Outcomes[0].Value || s.Params[2] == s.Params[2] {
			t.Fatalf("sample %d: got %+v, want the record's values and NaN for the missing parameter", i, s)
		}
	}
	tb := store.Best(samples, "coverage", []string{"growth_temperature_c"}, 4, store.Goal{Min: 0.7, Max: store.None()})
	total, meet := 0, 0
	for _, b := range tb.Bins {
		total += b.Count
		meet += b.Meeting
	}
	wantMeet := 0
	for _, r := range recs {
		if r.Outcomes[0].Value >= 0.7 {
			wantMeet++
		}
	}
	if total != 200 || len(tb.Bins) != 4 || meet != wantMeet {
		t.Errorf("Best: got %d bins holding %d runs, %d meeting; want 4 holding 200, %d meeting", len(tb.Bins), total, meet, wantMeet)
	}
	rk := store.Rank(samples[:], "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"}, store.NoGoal(), false)
	if rk.Rows[0].Param != "growth_temperature_c" || !(rk.Rows[0].Rho > 0.8) {
		t.Errorf("Rank: got first %s rho %g, want growth_temperature_c (coverage is built from it) with rho > 0.8", rk.Rows[0].Param, rk.Rows[0].Rho)
	}
	names, err := l.Names(ctx)
	must(t, err)
	if len(names) != 17 || !sort.SliceIsSorted(names, func(i, j int) bool { return names[i].Name < names[j].Name }) {
		t.Errorf("Names: got %d names, want 15 parameters and 2 metrics in byte order", len(names))
	}
}

// testTextOrder: text compares and sorts byte-wise on every back end
// (upper case before lower case, '-' before digits before letters), as Go
// compares strings.
func testTextOrder(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	furnaces := []string{"tube-b", "Tube-a", "tube_c", "tube-2", "tube-10", "tübe"}
	var recs []store.RunRecord
	for i, f := range furnaces {
		r := GenRecord(i, "")
		r.Furnace = f
		recs = append(recs, r)
	}
	importRecords(t, l, recs)
	want := 0
	for _, f := range furnaces {
		if f < "tube-b" {
			want++
		}
	}
	got, err := l.List(ctx, store.Filter{Where: []string{`furnace < "tube-b"`}})
	if err != nil || len(got) != want {
		t.Errorf(`furnace < "tube-b": got %d runs, %v; want %d (byte order)`, len(got), err, want)
	}
	day := T0.Add(3 * time.Hour).Format("2006-01-02T15")
	got, err = l.List(ctx, store.Filter{Where: []string{`started >= "` + day + `"`}})
	if err != nil || len(got) != 3 {
		t.Errorf("started >= %q: got %d runs, %v; want 3", day, len(got), err)
	}
}

func testExportImportJSON(t *testing.T, open Opener) {
	src := open(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	for i := 0; i < 30; i++ {
		var snap *store.Snapshot
		if i%2 == 0 {
			snap = &sn
		}
		if _, err := src.CreateRun(ctx, FullRecord(i, ""), snap); err != nil {
			t.Fatal(err)
		}
	}
	var a bytes.Buffer
	_, err := store.WriteJSON(ctx, &a, src, store.Filter{})
	must(t, err)
	b, err := store.ReadJSON(bytes.NewReader(a.Bytes()))
	must(t, err)
	dst := open(t)
	if n, err := dst.Import(ctx, b, nil); err != nil || n != 30 {
		t.Fatalf("Import: got %d, %v; want 30", n, err)
	}
	var c bytes.Buffer
	_, err = store.WriteJSON(ctx, &c, dst, store.Filter{})
	must(t, err)
	if a.String() != c.String() {
		t.Errorf("export of the imported log differs from the original export")
	}
	got, err := dst.Snapshot(ctx, sn.SHA256)
	if err != nil || !bytes.Equal(got.Content, TestRecipe) {
		t.Errorf("snapshot after JSON round trip: got %q, %v; want %q", got.Content, err, TestRecipe)
	}
	rec, err := dst.Record(ctx, b.Runs[3].Code)
	must(t, err)
	if q := []string{rec.Actuals[0].Quantity, rec.Actuals[1].Quantity, rec.Actuals[2].Quantity}; q[0] != "flow:CH4" || q[1] != "flow_total" || q[2] != "temperature" {
		t.Errorf("actuals order: got %v, want byte order flow:CH4, flow_total, temperature", q)
	}
}

func testExportImportCSV(t *testing.T, open Opener) {
	src := open(t)
	ctx := context.Background()
	importRecords(t, src, Records(30, ""))
	var d bytes.Buffer
	_, err := store.WriteCSV(ctx, &d, src, store.Filter{})
	must(t, err)
	cb, err := store.ReadCSV(bytes.NewReader(d.Bytes()))
	must(t, err)
	dst := open(t)
	importRecords(t, dst, cb.Runs)
	var e bytes.Buffer
	_, err = store.WriteCSV(ctx, &e, dst, store.Filter{})
	must(t, err)
	if e.String() != d.String() {
		t.Errorf("CSV round trip differs:\n%s\nwant\n%s", e.String(), d.String())
	}
}

// testConcurrentWriters: 4 goroutines log 50 runs each through one log at
// once; 200 runs with 200 distinct codes.
func testConcurrentWriters(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	var wg sync.WaitGroup
	errs := make([]error, 4)
	for g := range errs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; i < 50 && errs[g] == nil; i++ {
				_, errs[g] = l.CreateRun(ctx, GenRecord(g*50+i, ""), nil)
			}
		}()
	}
	wg.Wait()
	for g, err := range errs {
		if err != nil {
			t.Errorf("writer %d: %v", g, err)
		}
	}
	runs, err := l.List(ctx, store.Filter{})
	must(t, err)
	codes := map[string]bool{}
	for _, r := range runs {
		codes[r.Code] = true
	}
	if len(runs) != 200 || len(codes) != 200 {
		t.Errorf("got %d runs with %d distinct codes, want 200 and 200", len(runs), len(codes))
	}
}

func testCheck(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	importRecords(t, l, Records(20, ""))
	probs, err := l.Check(ctx)
	if err != nil || len(probs) != 0 {
		t.Errorf("Check of a good log: got %v, %v; want no problems", probs, err)
	}
	if v, err := l.SchemaVersion(ctx); err != nil || v != SchemaVersion {
		t.Errorf("SchemaVersion: got %d, %v; want %d", v, err, SchemaVersion)
	}
}

func errorsIs(err, target error) bool { return errors.Is(err, target) }

func contains(err error, s string) bool { return err != nil && strings.Contains(err.Error(), s) }

// testOverride: an override is stored with its run, read back whole,
// selected by override = true / false, and an empty reason is refused.
func testOverride(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	var want, wantNot []string
	for i := 0; i < 7; i++ {
		code, err := l.CreateRun(ctx, FullRecord(i, ""), nil)
		must(t, err)
		if i%3 == 0 {
			want = append(want, code)
		} else {
			wantNot = append(wantNot, code)
		}
	}
	rec, err := l.Record(ctx, want[1])
	must(t, err)
	if w := TestOverride(rec.Operator); rec.Override == nil || rec.Override.Reason != w.Reason || rec.Override.Operator != w.Operator ||
		!rec.Override.At.Equal(w.At) || fmt.Sprint(rec.Override.Findings) != fmt.Sprint(w.Findings) {
		t.Errorf("override of %s: got %+v, want %+v", want[1], rec.Override, w)
	}
	for _, tt := range []struct {
		where string
		want  []string
	}{{"override = true", want}, {"override = false", wantNot}, {"not override = true", wantNot}} {
		runs, err := l.List(ctx, store.Filter{Where: []string{tt.where}})
		must(t, err)
		var got []string
		for _, r := range runs {
			got = append(got, r.Code)
		}
		if fmt.Sprint(got) != fmt.Sprint(tt.want) {
			t.Errorf("List(%q): got %v, want %v", tt.where, got, tt.want)
		}
	}
	bad := GenRecord(1, "")
	bad.Override = TestOverride("op")
	bad.Override.Reason = ""
	if _, err := l.CreateRun(ctx, bad, nil); !errors.Is(err, store.ErrInvalid) || !strings.Contains(err.Error(), "reason") {
		t.Errorf("CreateRun with an empty override reason: got %v, want ErrInvalid naming the reason", err)
	}
}
