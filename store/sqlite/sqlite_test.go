package sqlite

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
)

func TestPragmas(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	var mode string
	var fk int
	db.SQL().QueryRowContext(ctx, "PRAGMA journal_mode").Scan(&mode)
	db.SQL().QueryRowContext(ctx, "PRAGMA foreign_keys").Scan(&fk)
	if mode != "wal" || fk != 1 {
		t.Errorf("journal_mode %q foreign_keys %d, want wal 1", mode, fk)
	}
}

// TestMigrations opens an empty file, and files left at every earlier
// version with data in them, and checks each reaches the latest version
// with its data intact and the names registry (version 3) filled.
func TestMigrations(t *testing.T) {
	ctx := context.Background()
	latest, err := sqldb.Latest(dialect{})
	if err != nil || latest != 3 {
		t.Fatalf("Latest = %d, %v; want 3", latest, err)
	}
	for v := 0; v < latest; v++ {
		t.Run("from"+string(rune('0'+v)), func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "runs.db")
			raw, err := open(ctx, path)
			if err != nil {
				t.Fatal(err)
			}
			if v > 0 {
				if err := sqldb.Migrate(ctx, raw, dialect{}, v); err != nil {
					t.Fatal(err)
				}
				// data written at version v, with the columns that version has
				mustExec(t, raw, `INSERT INTO snapshots VALUES ('h', 'demo', 'a.yaml', x'00ff', '2026-01-01T00:00:00.000000Z')`)
				mustExec(t, raw, `INSERT INTO runs (id, code, status, recipe_sha256, recipe_name, furnace, operator, lot, created_at)
					VALUES (1, 'G26-0007', 'done', 'h', 'demo', 'tube-1', 'op', 'L1', '2026-01-01T00:00:00.000000Z')`)
				mustExec(t, raw, `INSERT INTO counters VALUES ('run-2026', 7)`)
				mustExec(t, raw, `INSERT INTO run_params VALUES (1, 'growth_temperature_c', 1000)`)
				mustExec(t, raw, `INSERT INTO outcomes (run_id, metric, value, unit, entered, method) VALUES (1, 'coverage', 0.9, '1', '90%', '')`)
			}
			raw.Close()
			db, err := Open(ctx, path)
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			got, err := db.SchemaVersion(ctx)
			if err != nil || got != latest {
				t.Fatalf("SchemaVersion = %d, %v; want %d", got, err, latest)
			}
			if v == 0 {
				return
			}
			rec, err := db.Record(ctx, "G26-0007")
			if err != nil {
				t.Fatal(err)
			}
			if rec.Params["growth_temperature_c"] != 1000 || len(rec.Outcomes) != 1 || rec.Outcomes[0].Value != 0.9 {
				t.Errorf("after migration from %d: got %+v", v, rec)
			}
			runs, err := db.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1000 and coverage > 0.5"}})
			if err != nil || len(runs) != 1 {
				t.Errorf("where over migrated data: got %d runs, %v; want 1", len(runs), err)
			}
			db.Now = func() time.Time { return time.Date(2026, 5, 1, 0, 0, 0, 0, time.UTC) }
			code, err := db.CreateRun(ctx, store.RunRecord{Run: store.Run{RecipeName: "x"}}, nil)
			if err != nil || code != "G26-0008" {
				t.Errorf("next code after migration = %q, %v; want G26-0008 (counter kept)", code, err)
			}
			if probs, err := db.Check(ctx); err != nil || len(probs) > 0 {
				t.Errorf("Check = %v, %v", probs, err)
			}
		})
	}
}

func TestSchemaTooNew(t *testing.T) {
	ctx := context.Background()
	db, path := openTemp(t)
	mustExec(t, db.SQL(), `INSERT INTO schema_version VALUES (99, '2030-01-01T00:00:00.000000Z')`)
	db.Close()
	_, err := Open(ctx, path)
	if !errors.Is(err, store.ErrSchemaTooNew) || !strings.Contains(err.Error(), "version 99, this foilrun knows up to 3") {
		t.Errorf("Open of a newer schema: %v, want ErrSchemaTooNew naming 99 and 3", err)
	}
}

func TestSnapshotByteIdentical(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", testRecipe)
	code, err := db.CreateRun(ctx, store.RunRecord{}, &sn)
	if err != nil {
		t.Fatal(err)
	}
	rec, err := db.Record(ctx, code)
	if err != nil {
		t.Fatal(err)
	}
	got, err := db.Snapshot(ctx, rec.RecipeHash)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got.Content, testRecipe) || got.SHA256 != store.HashOf(testRecipe) {
		t.Errorf("snapshot round trip: got %q, want %q", got.Content, testRecipe)
	}
	// the same recipe again shares the snapshot
	if _, err := db.CreateRun(ctx, store.RunRecord{}, &sn); err != nil {
		t.Fatal(err)
	}
	var n int
	db.SQL().QueryRow("SELECT COUNT(*) FROM snapshots").Scan(&n)
	if n != 1 {
		t.Errorf("snapshots after two runs of one recipe: %d, want 1", n)
	}
}

// TestRunLifecycle: start, note, finish, outcomes, attachment, show.
func TestRunLifecycle(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	db.Now = func() time.Time { return time.Date(2026, 3, 1, 8, 0, 0, 0, time.UTC) }
	c1, err := db.CreateRun(ctx, store.RunRecord{Run: store.Run{Furnace: "tube-1", Started: t0}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	c2, _ := db.CreateRun(ctx, store.RunRecord{}, nil)
	if c1 != "G26-0001" || c2 != "G26-0002" {
		t.Errorf("codes %s %s, want G26-0001 G26-0002", c1, c2)
	}
	must(t, db.AddNote(ctx, c1, store.Note{Text: "foil looked oxidised"}))
	fin := store.Finish{Status: store.Done, Ended: t0.Add(time.Hour), Actuals: []store.Actual{{Step: 1, Label: "1 grow", Quantity: "temperature", Unit: "K", Planned: 1273.15, Mean: 1272, Min: 1270, Max: 1275, Samples: 60}},
		Deviations: []store.Deviation{{Step: 1, Label: "1 grow", Quantity: "duration", Unit: "s", Planned: 900, Actual: 1100, Tolerance: 90, Message: "long"}}}
	must(t, db.FinishRun(ctx, c1, fin))
	if err := db.FinishRun(ctx, c1, fin); !errors.Is(err, store.ErrConflict) {
		t.Errorf("second finish: %v, want ErrConflict", err)
	}
	must(t, db.AddOutcomes(ctx, c1, []store.Outcome{{Metric: "coverage", Value: 0.95, Unit: "1"}}))
	must(t, db.AddAttachment(ctx, c1, store.Attachment{Path: "m.png", SHA256: "ab", Kind: "micrograph"}))
	rec, err := db.Record(ctx, c1)
	if err != nil {
		t.Fatal(err)
	}
	if rec.Status != store.Done || !rec.Ended.Equal(t0.Add(time.Hour)) || len(rec.Notes) != 1 || len(rec.Actuals) != 1 ||
		len(rec.Deviations) != 1 || len(rec.Outcomes) != 1 || len(rec.Attachments) != 1 || rec.Actuals[0].Planned != 1273.15 {
		t.Errorf("record: %+v", rec)
	}
}

// TestBadInput: each bad call fails with a clear error and leaves the log
// exactly as it was.
func TestBadInput(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", testRecipe)
	code, err := db.CreateRun(ctx, genRecord(1, sn.SHA256), &sn)
	if err != nil {
		t.Fatal(err)
	}
	before := fingerprint(t, db)
	tests := []struct {
		name string
		call func() error
		is   error
		msg  string
	}{
		{"unknown code note", func() error { return db.AddNote(ctx, "G99-0001", store.Note{Text: "x"}) }, store.ErrNotFound, `run "G99-0001": not found`},
		{"unknown code finish", func() error { return db.FinishRun(ctx, "nope", store.Finish{Status: store.Done}) }, store.ErrNotFound, `run "nope"`},
		{"unknown code show", func() error { _, err := db.Record(ctx, "G26-9999"); return err }, store.ErrNotFound, "not found"},
		{"wrong unit metric", func() error {
			return db.AddOutcomes(ctx, code, []store.Outcome{{Metric: "coverage", Value: 0.5, Unit: "1"}, {Metric: "domain_size", Value: 3, Unit: "ohm/sq"}})
		}, store.ErrInvalid, `domain_size is in um, not "ohm/sq"`},
		{"free metric unit change", func() error {
			if err := db.AddOutcomes(ctx, code, []store.Outcome{{Metric: "peak_shift", Value: 2, Unit: "cm-1"}, {Metric: "peak_shift", Value: 2, Unit: "nm"}}); err != nil {
				return err
			}
			return nil
		}, store.ErrInvalid, `metric "peak_shift" is logged in "cm-1", not "nm"`},
		{"metric named like a parameter", func() error {
			return db.AddOutcomes(ctx, code, []store.Outcome{{Metric: "growth_time_min", Value: 2, Unit: "1"}})
		}, store.ErrInvalid, "is logged as a param"},
		{"where syntax", func() error { _, err := db.List(ctx, store.Filter{Where: []string{"coverage >> 1"}}); return err }, store.ErrInvalid, "col 11"},
		{"injection", func() error {
			_, err := db.List(ctx, store.Filter{Where: []string{`x'; DROP TABLE runs; --`}})
			return err
		}, store.ErrInvalid, "string starting with ' is not closed"},
		{"injection in name position", func() error {
			_, err := db.Samples(ctx, store.Filter{Where: []string{`status = "done" or 1=1; DROP TABLE runs`}}, "coverage", nil)
			return err
		}, store.ErrInvalid, "col 23: unexpected character ';'"},
		{"duplicate code import", func() error {
			_, err := db.Import(ctx, store.Bundle{Runs: []store.RunRecord{genRecord(2, ""), {Run: store.Run{Code: code, Status: store.Done}}}}, nil)
			return err
		}, store.ErrConflict, `run code "` + code + `" is already in the log`},
		{"missing snapshot import", func() error {
			_, err := db.Import(ctx, store.Bundle{Runs: []store.RunRecord{genRecord(3, "deadbeef")}}, nil)
			return err
		}, store.ErrInvalid, "neither given nor in the log"},
		{"tampered snapshot", func() error {
			bad := sn
			bad.Content = append([]byte(nil), sn.Content...)
			bad.Content[0] ^= 1
			bad.SHA256 = store.HashOf([]byte("other"))
			_, err := db.CreateRun(ctx, store.RunRecord{}, &bad)
			return err
		}, store.ErrInvalid, "content hashes to"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.call()
			if !errors.Is(err, tt.is) || !strings.Contains(err.Error(), tt.msg) {
				t.Errorf("got %v, want %v containing %q", err, tt.is, tt.msg)
			}
			if after := fingerprint(t, db); after != before {
				t.Errorf("the log changed")
			}
		})
	}
	var n int
	if err := db.SQL().QueryRow("SELECT COUNT(*) FROM runs").Scan(&n); err != nil || n != 1 {
		t.Errorf("runs table after injection attempts: %d, %v; want 1 run", n, err)
	}
}

func TestListBestRank(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	var recs []store.RunRecord
	for i := 0; i < 200; i++ {
		recs = append(recs, genRecord(i, ""))
	}
	if _, err := db.Import(ctx, store.Bundle{Runs: recs}, nil); err != nil {
		t.Fatal(err)
	}
	// count by hand in Go over the same records
	want := 0
	for _, r := range recs {
		if r.Params["growth_temperature_c"] >= 1000 && r.Outcomes[0].Value > 0.6 || r.Furnace == "tube-2" {
			want++
		}
	}
	got, err := db.List(ctx, store.Filter{Where: []string{`growth_temperature_c >= 1000 and coverage > 0.6 or furnace = "tube-2"`}})
	if err != nil || len(got) != want {
		t.Fatalf("List: %d runs, %v; want %d", len(got), err, want)
	}
	samples, err := db.Samples(ctx, store.Filter{}, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"})
	if err != nil || len(samples) != 200 {
		t.Fatalf("Samples: %d, %v", len(samples), err)
	}
	for i, s := range samples {
		if s.Params[0] != recs[i].Params["growth_temperature_c"] || s.Metric != recs[i].Outcomes[0].Value {
			t.Fatalf("sample %d = %+v, want the record's values", i, s)
		}
	}
	tb := store.Best(samples, "coverage", []string{"growth_temperature_c"}, 4, store.Goal{Min: 0.7, Max: store.None()})
	total := 0
	for _, b := range tb.Bins {
		total += b.Count
	}
	if total != 200 || len(tb.Bins) != 4 {
		t.Errorf("Best: %d bins holding %d runs, want 4 holding 200", len(tb.Bins), total)
	}
	rk := store.Rank(samples, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"}, store.NoGoal(), false)
	if rk.Rows[0].Param != "growth_temperature_c" || !(rk.Rows[0].Rho > 0.8) {
		t.Errorf("Rank: first %s rho %g, want growth_temperature_c (coverage is built from it) with rho > 0.8", rk.Rows[0].Param, rk.Rows[0].Rho)
	}
}

func TestExportImportJSON(t *testing.T) {
	src, _ := openTemp(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", testRecipe)
	for i := 0; i < 30; i++ {
		rec := genRecord(i, "")
		rec.Notes = []store.Note{{At: t0, Text: "note " + rec.Lot}}
		rec.Actuals = []store.Actual{{Step: 2, Label: "2 grow", Quantity: "temperature", Unit: "K", Planned: store.None(), Mean: 1273, Min: 1270, Max: 1276, Samples: 10}}
		rec.Attachments = []store.Attachment{{Path: "a.png", SHA256: "00", Kind: "micrograph", Added: t0}}
		var snap *store.Snapshot
		if i%2 == 0 {
			snap = &sn
		}
		if _, err := src.CreateRun(ctx, rec, snap); err != nil {
			t.Fatal(err)
		}
	}
	var a bytes.Buffer
	if _, err := store.WriteJSON(ctx, &a, src, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	b, err := store.ReadJSON(bytes.NewReader(a.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	dst, _ := openTemp(t)
	if n, err := dst.Import(ctx, b, nil); err != nil || n != 30 {
		t.Fatalf("Import: %d, %v", n, err)
	}
	var c bytes.Buffer
	if _, err := store.WriteJSON(ctx, &c, dst, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	if a.String() != c.String() {
		t.Errorf("export of the imported log differs from the original export")
	}
	got, _ := dst.Snapshot(ctx, sn.SHA256)
	if !bytes.Equal(got.Content, testRecipe) {
		t.Errorf("snapshot after JSON round trip: %q, want %q", got.Content, testRecipe)
	}
	// CSV: params and metrics survive
	var d bytes.Buffer
	if _, err := store.WriteCSV(ctx, &d, src, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	cb, err := store.ReadCSV(bytes.NewReader(d.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	for i := range cb.Runs {
		cb.Runs[i].RecipeHash = "" // CSV carries no snapshots
	}
	dst2, _ := openTemp(t)
	if _, err := dst2.Import(ctx, cb, nil); err != nil {
		t.Fatal(err)
	}
	var e bytes.Buffer
	store.WriteCSV(ctx, &e, dst2, store.Filter{})
	if want := strings.ReplaceAll(d.String(), sn.SHA256, ""); e.String() != want {
		t.Errorf("CSV round trip differs:\n%s\nwant\n%s", e.String(), want)
	}
}

func TestBackupWhileWriting(t *testing.T) {
	db, path := openTemp(t)
	ctx := context.Background()
	recs := make([]store.RunRecord, 500)
	for i := range recs {
		recs[i] = genRecord(i, "")
	}
	if _, err := db.Import(ctx, store.Bundle{Runs: recs}, nil); err != nil {
		t.Fatal(err)
	}
	stop := make(chan struct{})
	done := make(chan error)
	go func() {
		var err error
		for i := 0; err == nil; i++ {
			select {
			case <-stop:
				done <- nil
				return
			default:
			}
			_, err = db.CreateRun(ctx, genRecord(1000+i, ""), nil)
		}
		done <- err
	}()
	bk := filepath.Join(filepath.Dir(path), "copy.db")
	err := db.Backup(ctx, bk)
	close(stop)
	if werr := <-done; werr != nil {
		t.Fatalf("writer during backup: %v", werr)
	}
	if err != nil {
		t.Fatal(err)
	}
	cp, err := Open(ctx, bk)
	if err != nil {
		t.Fatal(err)
	}
	defer cp.Close()
	if n := countRuns(t, cp); n < 500 {
		t.Errorf("backup holds %d runs, want at least the 500 logged before", n)
	}
	if probs, err := cp.Check(ctx); err != nil || len(probs) != 0 {
		t.Errorf("backup check: %v %v", probs, err)
	}
	if err := db.Backup(ctx, bk); err == nil || !strings.Contains(err.Error(), "exists") {
		t.Errorf("backup over an existing file: %v, want an error", err)
	}
}

func mustExec(t *testing.T, db *sql.DB, q string) {
	t.Helper()
	if _, err := db.Exec(q); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}
