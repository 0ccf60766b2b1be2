package sqlite

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

// TestReadOnlyFile: a log file made read-only (chmod 0444) serves every
// read through OpenReadOnly, and the open writes nothing to it: its bytes
// and modification time are unchanged afterwards, and every write through
// the handle fails with store.ErrReadOnly. Tests run as root in CI, where
// file permissions stop nothing, so this holds only because OpenReadOnly
// opens with mode=ro.
func TestReadOnlyFile(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "runs.db")
	w, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	codes := storetest.Populate(t, w)
	w.Close() // a clean close checkpoints the WAL into the file
	if err := os.Chmod(path, 0o444); err != nil {
		t.Fatal(err)
	}
	bytesBefore, stBefore := readStat(t, path)
	r, err := OpenReadOnly(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	w2, err := Open(ctx, path) // the same file for writing, to compare reads with (root may; nothing is written)
	if err != nil {
		t.Fatal(err)
	}
	storetest.ReadOnly(t, w2, r, codes)
	if err := r.Close(); err != nil {
		t.Fatal(err)
	}
	if err := w2.Close(); err != nil {
		t.Fatal(err)
	}
	bytesAfter, stAfter := readStat(t, path)
	if !bytes.Equal(bytesBefore, bytesAfter) || !stAfter.ModTime().Equal(stBefore.ModTime()) {
		t.Errorf("read-only use changed the file: %d bytes, modified %v; before %d bytes, modified %v",
			len(bytesAfter), stAfter.ModTime(), len(bytesBefore), stBefore.ModTime())
	}
}

func readStat(t *testing.T, path string) ([]byte, fs.FileInfo) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	return b, st
}

// TestReadOnlyOpenErrors: a missing file is fs.ErrNotExist (no file is
// created), a file at an older schema is store.ErrSchemaBehind and is not
// migrated, and SQLite's own refusal of a write (SQLITE_READONLY) is what
// Refused recognises, so a writer gets the hint naming the permission.
func TestReadOnlyOpenErrors(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	dir := t.TempDir()
	missing := filepath.Join(dir, "no-such.db")
	if _, err := OpenReadOnly(ctx, missing); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("read-only open of a missing file: got %v, want fs.ErrNotExist", err)
	}
	if _, err := os.Stat(missing); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("a read-only open created %s", missing)
	}
	path := filepath.Join(dir, "old.db")
	raw, err := open(ctx, path, false)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := raw.ExecContext(ctx, `CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL);
		INSERT INTO schema_version VALUES (1, '2026-01-01T00:00:00.000000Z')`); err != nil {
		t.Fatal(err)
	}
	raw.Close()
	if _, err := OpenReadOnly(ctx, path); !errors.Is(err, store.ErrSchemaBehind) || !strings.Contains(err.Error(), fmt.Sprintf("version 1, this foilrun needs %d", storetest.SchemaVersion)) {
		t.Errorf("read-only open of an old schema: got %v, want ErrSchemaBehind naming 1 and %d", err, storetest.SchemaVersion)
	}
	ro, err := sql.Open("sqlite3", dsn(path, true))
	if err != nil {
		t.Fatal(err)
	}
	defer ro.Close()
	var v int
	if err := ro.QueryRowContext(ctx, `SELECT MAX(version) FROM schema_version`).Scan(&v); err != nil || v != 1 {
		t.Errorf("schema version after a read-only open: got %d, %v; want 1 (not migrated)", v, err)
	}
	_, err = ro.ExecContext(ctx, `INSERT INTO schema_version VALUES (2, 'x')`)
	if err == nil || !(dialect{}).Refused(err) {
		t.Errorf("write on a mode=ro connection: got %v, want SQLITE_READONLY that Refused recognises", err)
	}
}
