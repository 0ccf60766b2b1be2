package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"io/fs"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/foilrun/foilrun/store"
)

// migration is one numbered schema file.
type migration struct {
	version int
	name    string
	sql     string
}

func migrations(d Dialect) ([]migration, error) {
	entries, err := fs.ReadDir(d.Migrations(), ".")
	if err != nil {
		return nil, fmt.Errorf("%s migrations: %w", d.Name(), err)
	}
	var ms []migration
	for _, e := range entries {
		n := e.Name()
		if !strings.HasSuffix(n, ".sql") {
			continue
		}
		num, _, ok := strings.Cut(n, "_")
		v, err := strconv.Atoi(num)
		if !ok || err != nil || v < 1 {
			return nil, fmt.Errorf("%s migration %q: want a name such as 0001_runs.sql", d.Name(), n)
		}
		b, err := fs.ReadFile(d.Migrations(), n)
		if err != nil {
			return nil, err
		}
		ms = append(ms, migration{v, n, string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].version < ms[j].version })
	for i, m := range ms {
		if m.version != i+1 {
			return nil, fmt.Errorf("%s migration %q: version %d, want %d (no gaps, no repeats)", d.Name(), m.name, m.version, i+1)
		}
	}
	return ms, nil
}

// Latest returns the schema version the dialect's migrations reach.
func Latest(d Dialect) (int, error) {
	ms, err := migrations(d)
	return len(ms), err
}

const versionTable = `CREATE TABLE IF NOT EXISTS schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL)`

func currentVersion(ctx context.Context, q Querier, d Dialect) (int, error) {
	var v int
	err := q.QueryRowContext(ctx, d.Rebind(`SELECT COALESCE(MAX(version), 0) FROM schema_version`)).Scan(&v)
	return v, err
}

// Migrate brings the schema up to version to (0: the latest), one
// transaction per migration so that concurrent openers wait for each
// other and a killed process leaves a whole version behind. A database at
// a newer version than the migrations know is store.ErrSchemaTooNew.
func Migrate(ctx context.Context, db *sql.DB, d Dialect, to int) error {
	ms, err := migrations(d)
	if err != nil {
		return err
	}
	if to <= 0 || to > len(ms) {
		to = len(ms)
	}
	if _, err := db.ExecContext(ctx, versionTable); err != nil {
		return fmt.Errorf("migrate: %w", err)
	}
	cur, err := currentVersion(ctx, db, d)
	if err != nil {
		return fmt.Errorf("migrate: read schema version: %w", err)
	}
	if cur > len(ms) {
		return fmt.Errorf("database schema version %d, this foilrun knows up to %d: %w", cur, len(ms), store.ErrSchemaTooNew)
	}
	for i, m := range ms[cur:to] {
		var after func(context.Context, execer, Dialect) error
		if cur+i+1 == to && cur < SummaryVersion && to >= SummaryVersion {
			after = rebuildSummary
		}
		if err := apply(ctx, db, d, m, after); err != nil {
			return err
		}
	}
	return nil
}

// SummaryVersion is the migration that creates the run summary. A run of
// migrations that passes it fills the summary in the transaction of its
// last migration, from the runs as they are then, so a killed process
// leaves either the old version or the new one with its summary filled.
const SummaryVersion = 7

// apply runs one migration and then after (when not nil) in one
// transaction.
func apply(ctx context.Context, db *sql.DB, d Dialect, m migration, after func(context.Context, execer, Dialect) error) error {
	tx, err := db.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("migrate to %d: %w", m.version, err)
	}
	defer tx.Rollback()
	cur, err := currentVersion(ctx, tx, d)
	if err != nil {
		return fmt.Errorf("migrate to %d: %w", m.version, err)
	}
	if cur >= m.version {
		return nil // another process got there first
	}
	if _, err := tx.ExecContext(ctx, m.sql); err != nil {
		return fmt.Errorf("migrate to %d (%s): %w", m.version, m.name, err)
	}
	if after != nil {
		if err := after(ctx, tx, d); err != nil {
			return fmt.Errorf("migrate to %d: %w", m.version, err)
		}
	}
	if _, err := tx.ExecContext(ctx, d.Rebind(`INSERT INTO schema_version (version, applied_at) VALUES (?, ?)`), m.version, formatTime(time.Now())); err != nil {
		return fmt.Errorf("migrate to %d: %w", m.version, err)
	}
	return tx.Commit()
}
