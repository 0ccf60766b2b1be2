package sqlite

import (
	"context"
	"database/sql"
	"errors"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
	"github.com/foilrun/foilrun/store/storetest"
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

// TestSuite runs the back-end-agnostic suite on fresh SQLite files.
func TestSuite(t *testing.T) {
	storetest.Run(t, func(t *testing.T) store.RunLog {
		db, _ := openTemp(t)
		return db
	})
}

func TestBackupWhileWriting(t *testing.T) {
	db, path := openTemp(t)
	ctx := context.Background()
	recs := make([]store.RunRecord, 500)
	for i := range recs {
		recs[i] = storetest.GenRecord(i, "")
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
			_, err = db.CreateRun(ctx, storetest.GenRecord(1000+i, ""), nil)
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
