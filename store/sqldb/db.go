package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"time"

	"github.com/foilrun/foilrun/store"
)

// DB is the run log on a SQL database.
type DB struct {
	db *sql.DB
	d  Dialect
	// Now is the clock for created and note times; time.Now by default.
	Now      func() time.Time
	readOnly bool
	from     int // schema version found at open
}

var _ store.RunLog = (*DB)(nil)

// Options say how a run log is opened. The zero value opens for writing.
type Options struct {
	// ReadOnly opens the log for reading only: the schema is read, never
	// changed (a schema behind the latest is store.ErrSchemaBehind), and
	// every write method fails with store.ErrReadOnly before it touches
	// the database. A read-only open needs only SELECT on PostgreSQL.
	ReadOnly bool
}

// Open returns the run log on db. Opened for writing, it migrates a
// schema behind the latest (and runs no DDL on one that is up to date, so
// a role that may write rows but not create tables can log); opened
// read-only, it only reads the schema version. It takes ownership of db:
// Close closes it.
func Open(ctx context.Context, db *sql.DB, d Dialect, o Options) (*DB, error) {
	cur, latest, err := Versions(ctx, db, d)
	if err != nil {
		return nil, err
	}
	s := &DB{db: db, d: d, Now: time.Now, readOnly: o.ReadOnly, from: cur}
	switch {
	case cur > latest:
		return nil, fmt.Errorf("database schema version %d, this foilrun knows up to %d: %w", cur, latest, store.ErrSchemaTooNew)
	case cur == latest:
		return s, nil
	case o.ReadOnly && cur == 0:
		return nil, fmt.Errorf("the database holds no run log yet (schema version 0, this foilrun needs %d): %w", latest, store.ErrSchemaBehind)
	case o.ReadOnly:
		return nil, fmt.Errorf("database schema version %d, this foilrun needs %d: %w", cur, latest, store.ErrSchemaBehind)
	}
	if err := Migrate(ctx, db, d, 0); err != nil {
		return nil, s.refused("migrate the schema", err)
	}
	return s, nil
}

// Versions returns the database's schema version (0 for a database
// without a run log) and the latest the dialect's migrations reach, with
// SELECTs only.
func Versions(ctx context.Context, db *sql.DB, d Dialect) (cur, latest int, err error) {
	if latest, err = Latest(d); err != nil {
		return 0, 0, err
	}
	ok, err := d.HasTable(ctx, db, "schema_version")
	if err != nil {
		return 0, 0, fmt.Errorf("read schema version: %w", err)
	}
	if !ok {
		return 0, latest, nil
	}
	if cur, err = currentVersion(ctx, db, d); err != nil {
		return 0, 0, fmt.Errorf("read schema version: %w", err)
	}
	return cur, latest, nil
}

// ReadOnly reports whether the log was opened for reading only.
func (s *DB) ReadOnly() bool { return s.readOnly }

// MigratedFrom returns the schema version the database had when it was
// opened (SchemaVersion afterwards tells where a migration took it).
func (s *DB) MigratedFrom() int { return s.from }

// refused turns a write the database refused for lack of rights into a
// store.PermissionError naming what is needed; other errors pass through.
func (s *DB) refused(op string, err error) error {
	if err == nil || !s.d.Refused(err) {
		return err
	}
	need := "write access to the run log"
	switch {
	case s.d.Name() == "sqlite":
		need = "write permission on the database file and on its folder (SQLite writes -wal and -shm files beside it)"
	case op == "migrate the schema":
		need = "the CREATE privilege on the schema (and ownership of its tables): run foilrun db migrate as the owner role"
	default:
		need = "INSERT and UPDATE on the run-log tables and USAGE on their sequences (the writer role), on a server that accepts writes"
	}
	return &store.PermissionError{Op: op, Need: need, Err: err}
}

// SQL returns the underlying database, for back-end specific tests.
func (s *DB) SQL() *sql.DB { return s.db }

// sqlLog is a run log built on DB: every back end embeds *DB, and with it
// this unexported method, so CopyTo can find the DB behind a store.RunLog
// without anyone outside the package asserting on it.
type sqlLog interface{ sqlDB() *DB }

func (s *DB) sqlDB() *DB { return s }

// CopyTo copies the whole log into dst, a run log on any back end built on
// DB; see Copy and store.Copier.
func (s *DB) CopyTo(ctx context.Context, dst store.RunLog, progress func(done, total int)) (store.Digest, error) {
	d, ok := dst.(sqlLog)
	if !ok {
		return store.Digest{}, fmt.Errorf("copy: the target %T is not a SQL run log: %w", dst, store.ErrInvalid)
	}
	return Copy(ctx, d.sqlDB(), s, progress)
}

// SetClock replaces the clock for created and note times (nil: time.Now).
func (s *DB) SetClock(now func() time.Time) {
	if now == nil {
		now = time.Now
	}
	s.Now = now
}

// Close closes the database.
func (s *DB) Close() error { return s.db.Close() }

// SchemaVersion returns the schema version.
func (s *DB) SchemaVersion(ctx context.Context) (int, error) {
	return currentVersion(ctx, s.db, s.d)
}

// Backup writes a consistent copy of the log to a new file.
func (s *DB) Backup(ctx context.Context, path string) error {
	return s.d.Backup(ctx, s.db, path)
}

// Check runs the back end's integrity checks, then checks the run codes
// and their counters (see checkCodes) and that every derived table agrees
// with the runs (see checkDerived; db check --repair rebuilds them).
func (s *DB) Check(ctx context.Context) ([]string, error) {
	probs, err := s.d.Check(ctx, s.db)
	if err != nil {
		return nil, err
	}
	codes, err := checkCodes(ctx, s.db)
	if err != nil {
		return nil, err
	}
	probs = append(probs, codes...)
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return nil, err
	}
	defer end()
	derived, err := checkDerived(ctx, q)
	return append(probs, derived...), err
}

// writable returns store.ErrReadOnly for a log opened read-only.
func (s *DB) writable(op string) error {
	if s.readOnly {
		return fmt.Errorf("%s: the run log was opened for reading only: %w", op, store.ErrReadOnly)
	}
	return nil
}

func (s *DB) now() time.Time { return s.Now().UTC() }

// timeLayout is fixed width so that stored times sort as text.
const timeLayout = "2006-01-02T15:04:05.000000Z"

func formatTime(t time.Time) string { return t.UTC().Format(timeLayout) }

// nullTime stores the zero time as NULL.
func nullTime(t time.Time) any {
	if t.IsZero() {
		return nil
	}
	return formatTime(t)
}

func parseTime(ns sql.NullString) (time.Time, error) {
	if !ns.Valid || ns.String == "" {
		return time.Time{}, nil
	}
	t, err := time.Parse(timeLayout, ns.String)
	if err != nil {
		return time.Time{}, fmt.Errorf("stored time %q: %w", ns.String, err)
	}
	return t, nil
}

// nullFloat stores NaN as NULL.
func nullFloat(v float64) any {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return v
}

func floatOr(nf sql.NullFloat64) float64 {
	if !nf.Valid {
		return math.NaN()
	}
	return nf.Float64
}

func nullString(s string) any {
	if s == "" {
		return nil
	}
	return s
}
