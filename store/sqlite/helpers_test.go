package sqlite

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/foilrun/foilrun/store/storetest"
)

func openTemp(t testing.TB) (*DB, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "runs.db")
	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db, path
}

func countRuns(t testing.TB, db *DB) int {
	t.Helper()
	return storetest.Count(t, db, "runs")
}
