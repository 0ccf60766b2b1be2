package sqlite

import (
	"context"
	"database/sql"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

func TestPragmas(t *testing.T) {
	t.Parallel()
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

// TestMigrations: from an empty file and from files left at every
// earlier version (the shared check in storetest).
func TestMigrations(t *testing.T) {
	t.Parallel()
	storetest.Migrations(t, dialect{}, func(t *testing.T) (*sql.DB, func() (store.RunLog, error)) {
		path := filepath.Join(t.TempDir(), "runs.db")
		raw, err := open(context.Background(), path, false)
		if err != nil {
			t.Fatal(err)
		}
		return raw, func() (store.RunLog, error) { return Open(context.Background(), path) }
	})
}

func TestSchemaTooNew(t *testing.T) {
	t.Parallel()
	db, path := openTemp(t)
	storetest.SchemaTooNew(t, db, func() (store.RunLog, error) { return Open(context.Background(), path) })
}

// TestSuite runs the back-end-agnostic suite on fresh SQLite files.
func TestSuite(t *testing.T) {
	t.Parallel()
	storetest.Run(t, func(t *testing.T) store.RunLog {
		db, _ := openTemp(t)
		return db
	})
}

func TestBackupWhileWriting(t *testing.T) {
	t.Parallel()
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
