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
	Now func() time.Time
}

var _ store.RunLog = (*DB)(nil)

// Open migrates db to the latest schema and returns the run log on it. It
// takes ownership of db: Close closes it.
func Open(ctx context.Context, db *sql.DB, d Dialect) (*DB, error) {
	if err := Migrate(ctx, db, d, 0); err != nil {
		return nil, err
	}
	return &DB{db: db, d: d, Now: time.Now}, nil
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
// and their counters (see checkCodes).
func (s *DB) Check(ctx context.Context) ([]string, error) {
	probs, err := s.d.Check(ctx, s.db)
	if err != nil {
		return nil, err
	}
	codes, err := checkCodes(ctx, s.db)
	return append(probs, codes...), err
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
