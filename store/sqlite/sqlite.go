// Package sqlite is the embedded SQLite back end of the run log: a single
// file opened through database/sql and github.com/mattn/go-sqlite3 in WAL
// mode with foreign keys on, a 10 s busy timeout and BEGIN IMMEDIATE
// transactions (so two processes that log at once wait for each other
// instead of failing with "database is locked"). The queries are those of
// store/sqldb; this package supplies the dialect: the migrations in
// migrations/, VACUUM INTO for backups and PRAGMA integrity_check and
// foreign_key_check for checks. OpenReadOnly opens a file with mode=ro
// for commands that only read: no migration, no journal-mode change, no
// write of any kind.
//
// Entry points: Open, OpenReadOnly.
package sqlite

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"strings"

	"github.com/mattn/go-sqlite3" // registers driver "sqlite3"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// BusyTimeoutMS is how long a writer waits for another's transaction.
const BusyTimeoutMS = 10000

// DB is a run log in a SQLite file.
type DB struct {
	*sqldb.DB
	Path string
}

var _ store.RunLog = (*DB)(nil)

// dsn returns the data source name with the settings every connection of
// the pool gets (github.com/mattn/go-sqlite3 ignores a misspelled key
// silently: _foreign_key=on leaves foreign_keys off, so Open checks the
// PRAGMAs afterwards). A read-only connection is opened with mode=ro,
// which SQLite enforces whatever the file's permissions (root included),
// and sets no journal mode, which would be a write.
// _mutex=no opens each connection in SQLite's multi-thread mode, without
// the connection mutex that every sqlite3_column_* call would take
// (twice per value read: a 100,000-run rank reads 1.7 million): a
// connection is safe there as long as one goroutine uses it at a time,
// which database/sql guarantees; sqlite3_interrupt, which cancels from
// another goroutine, is safe from any thread.
func dsn(path string, readOnly bool) string {
	if readOnly {
		return fmt.Sprintf("file:%s?mode=ro&_busy_timeout=%d&_foreign_keys=on&_mutex=no", path, BusyTimeoutMS)
	}
	return fmt.Sprintf("file:%s?_journal_mode=WAL&_busy_timeout=%d&_foreign_keys=on&_txlock=immediate&_mutex=no", path, BusyTimeoutMS)
}

// Open opens (creating if needed) the run log in the SQLite file at path
// for writing, migrating a schema behind the latest.
func Open(ctx context.Context, path string) (*DB, error) {
	return openWith(ctx, path, sqldb.Options{})
}

// OpenReadOnly opens the run log in the existing SQLite file at path for
// reading only (mode=ro): nothing is written to the file, so a file the
// user may not write serves reads, and every write method fails with
// store.ErrReadOnly. A missing file is an error wrapping fs.ErrNotExist;
// a schema behind the latest is store.ErrSchemaBehind.
func OpenReadOnly(ctx context.Context, path string) (*DB, error) {
	return openWith(ctx, path, sqldb.Options{ReadOnly: true})
}

func openWith(ctx context.Context, path string, o sqldb.Options) (*DB, error) {
	db, err := open(ctx, path, o.ReadOnly)
	if err != nil {
		return nil, err
	}
	s, err := sqldb.Open(ctx, db, dialect{}, o)
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("open run log %q: %w", path, err)
	}
	return &DB{DB: s, Path: path}, nil
}

// open opens the file and checks the connection settings took effect.
func open(ctx context.Context, path string, readOnly bool) (*sql.DB, error) {
	if path == "" {
		return nil, fmt.Errorf("open run log: empty path")
	}
	if strings.ContainsAny(path, "?#") {
		return nil, fmt.Errorf("open run log %q: the path must not contain ? or #", path)
	}
	if readOnly {
		fi, err := os.Stat(path)
		if err != nil {
			return nil, fmt.Errorf("open run log: %w", err)
		}
		if !fi.Mode().IsRegular() {
			return nil, fmt.Errorf("open run log %q: not a regular file", path)
		}
	}
	db, err := sql.Open("sqlite3", dsn(path, readOnly))
	if err != nil {
		return nil, fmt.Errorf("open run log %q: %w", path, err)
	}
	if err := checkPragmas(ctx, db, readOnly); err != nil {
		db.Close()
		return nil, fmt.Errorf("open run log %q: %w", path, err)
	}
	return db, nil
}

func checkPragmas(ctx context.Context, db *sql.DB, readOnly bool) error {
	var mode string
	var fk, busy int
	if err := db.QueryRowContext(ctx, "PRAGMA journal_mode").Scan(&mode); err != nil {
		return err
	}
	if err := db.QueryRowContext(ctx, "PRAGMA foreign_keys").Scan(&fk); err != nil {
		return err
	}
	if err := db.QueryRowContext(ctx, "PRAGMA busy_timeout").Scan(&busy); err != nil {
		return err
	}
	switch {
	case !readOnly && !strings.EqualFold(mode, "wal"):
		return fmt.Errorf("journal_mode is %q, want wal (is the file on a network share?)", mode)
	case fk != 1:
		return fmt.Errorf("foreign_keys is %d, want 1", fk)
	case busy != BusyTimeoutMS:
		return fmt.Errorf("busy_timeout is %d ms, want %d", busy, BusyTimeoutMS)
	}
	return nil
}

type dialect struct{}

func (dialect) Name() string           { return "sqlite" }
func (dialect) Migrations() fs.FS      { f, _ := fs.Sub(migrationFiles, "migrations"); return f }
func (dialect) Rebind(q string) string { return q }
func (dialect) MaxArgs() int           { return 32766 }

// HasTable looks the table up in sqlite_master.
func (dialect) HasTable(ctx context.Context, q sqldb.Querier, name string) (bool, error) {
	var n int
	err := q.QueryRowContext(ctx, `SELECT COUNT(*) FROM sqlite_master WHERE type = 'table' AND name = ?`, name).Scan(&n)
	return n > 0, err
}

// Refused reports SQLITE_READONLY ("attempt to write a readonly
// database"): the file, its folder or its -wal/-shm files are not
// writable.
func (dialect) Refused(err error) bool {
	var se sqlite3.Error
	return errors.As(err, &se) && se.Code == sqlite3.ErrReadonly
}

// mmapPragma lets SQLite read the file through a memory map of up to
// 1 GiB instead of copying each page into its own cache
// (https://sqlite.org/mmap.html): a scan of the 100,000-run summary that
// best and rank read went from about 29 to 21 ms (min of 5, the three
// columns of runs best summed in SQL on the benchmark log, timed through
// Python's sqlite3 module). It is set on each read transaction's
// connection, a statement of microseconds, as the driver's DSN has no key
// for it. Writes still go
// through the journal, so a killed process leaves the file as before;
// the price, as SQLite documents, is that an I/O error while reading
// the mapped file stops the process instead of returning an error.
const mmapPragma = "PRAGMA mmap_size = 1073741824"

// Read takes a connection of its own, lets it read the file through a
// memory map (mmapPragma) and opens a deferred transaction on
// it: in WAL mode its reads see one snapshot and never block writers.
// (db.BeginTx would start BEGIN IMMEDIATE, the pool's setting, and hold
// the write lock.)
func (dialect) Read(ctx context.Context, db *sql.DB) (sqldb.Querier, func() error, error) {
	conn, err := db.Conn(ctx)
	if err != nil {
		return nil, nil, err
	}
	if _, err := conn.ExecContext(ctx, mmapPragma); err != nil {
		conn.Close()
		return nil, nil, err
	}
	if _, err := conn.ExecContext(ctx, "BEGIN DEFERRED"); err != nil {
		conn.Close()
		return nil, nil, err
	}
	end := func() error {
		_, err := conn.ExecContext(context.WithoutCancel(ctx), "ROLLBACK")
		return errors.Join(err, conn.Close())
	}
	return conn, end, nil
}

// bulkRuns is the import size from which Bulk rebuilds the parameter
// index instead of updating it row by row.
const bulkRuns = 5000

// Bulk, for an import of many runs, enlarges the connection's page cache
// and, when the import is at least as large as the log already is, drops
// the (name, value) index of run_params and builds it again at the end,
// all inside the import's transaction (SQLite's DDL is transactional, so
// a killed import leaves the old index). Inserting 1.5 million rows into
// that index one by one took about 10 s here; building it once takes
// about 1 s.
func (dialect) Bulk(ctx context.Context, tx *sql.Tx, runs int) (func(context.Context) error, error) {
	nothing := func(context.Context) error { return nil }
	if runs < bulkRuns {
		return nothing, nil
	}
	if _, err := tx.ExecContext(ctx, "PRAGMA cache_size = -262144"); err != nil { // 256 MiB, for this connection
		return nil, err
	}
	var have int
	if err := tx.QueryRowContext(ctx, "SELECT COUNT(*) FROM runs").Scan(&have); err != nil {
		return nil, err
	}
	if have > runs {
		return nothing, nil
	}
	if _, err := tx.ExecContext(ctx, "DROP INDEX run_params_name_value"); err != nil {
		return nil, err
	}
	return func(ctx context.Context) error {
		_, err := tx.ExecContext(ctx, "CREATE INDEX run_params_name_value ON run_params (name, value)")
		return err
	}, nil
}

// Backup writes the database with VACUUM INTO, which reads one consistent
// snapshot while others write, then checks the copy.
func (dialect) Backup(ctx context.Context, db *sql.DB, path string) error {
	if _, err := os.Stat(path); err == nil {
		return fmt.Errorf("backup %q: the file exists; give a new file name", path)
	}
	if strings.ContainsAny(path, "?#") {
		return fmt.Errorf("backup %q: the path must not contain ? or #", path)
	}
	if _, err := db.ExecContext(ctx, "VACUUM INTO ?", path); err != nil {
		return fmt.Errorf("backup %q: %w", path, err)
	}
	cp, err := sql.Open("sqlite3", "file:"+path+"?mode=ro")
	if err != nil {
		return fmt.Errorf("backup %q: check the copy: %w", path, err)
	}
	defer cp.Close()
	probs, err := dialect{}.Check(ctx, cp)
	if err != nil {
		return fmt.Errorf("backup %q: check the copy: %w", path, err)
	}
	if len(probs) > 0 {
		return fmt.Errorf("backup %q: the copy fails its check: %s", path, strings.Join(probs, "; "))
	}
	return nil
}

// Check runs PRAGMA integrity_check and PRAGMA foreign_key_check.
func (dialect) Check(ctx context.Context, db *sql.DB) ([]string, error) {
	probs := []string{}
	rows, err := db.QueryContext(ctx, "PRAGMA integrity_check")
	if err != nil {
		return nil, err
	}
	for rows.Next() {
		var s string
		if err := rows.Scan(&s); err != nil {
			rows.Close()
			return nil, err
		}
		if s != "ok" {
			probs = append(probs, "integrity: "+s)
		}
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, err
	}
	rows, err = db.QueryContext(ctx, "PRAGMA foreign_key_check")
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	for rows.Next() {
		var table, parent string
		var rowid sql.NullInt64
		var fkid int
		if err := rows.Scan(&table, &rowid, &parent, &fkid); err != nil {
			return nil, err
		}
		probs = append(probs, fmt.Sprintf("foreign key: %s row %d refers to a missing %s row", table, rowid.Int64, parent))
	}
	return probs, rows.Err()
}
