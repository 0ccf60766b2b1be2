package sqldb

import (
	"context"
	"database/sql"
	"io/fs"
)

// Querier is what reads need: a *sql.DB, *sql.Tx or *sql.Conn.
type Querier interface {
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
}

// Dialect is everything that differs between SQL back ends.
type Dialect interface {
	// Name names the back end in messages ("sqlite").
	Name() string
	// Migrations holds the schema as files NNNN_name.sql, numbered from
	// 0001 without gaps; each file takes the schema from version N−1 to N.
	Migrations() fs.FS
	// Rebind rewrites a query written with "?" placeholders into the
	// back end's own (identity for SQLite, $1, $2, … for PostgreSQL).
	Rebind(query string) string
	// Read starts a read that sees one consistent state of the database
	// without blocking writers; end releases it.
	Read(ctx context.Context, db *sql.DB) (q Querier, end func() error, err error)
	// Backup writes a consistent copy of the database to a new file.
	Backup(ctx context.Context, db *sql.DB, path string) error
	// Check runs the back end's integrity checks and returns the problems.
	Check(ctx context.Context, db *sql.DB) ([]string, error)
	// Bulk prepares the transaction tx for writing many runs at once (for
	// example by dropping an index to rebuild it once at the end); end
	// finishes that inside the same transaction, after the runs and
	// their summary are written. It may do nothing.
	Bulk(ctx context.Context, tx *sql.Tx, runs int) (end func(context.Context) error, err error)
	// MaxArgs is the most bound arguments one statement may take.
	MaxArgs() int
	// HasTable reports whether the table exists (in the current schema).
	HasTable(ctx context.Context, q Querier, name string) (bool, error)
	// Refused reports whether err is the database refusing a write for
	// lack of rights: a read-only file, a role without the privilege, a
	// read-only transaction or server.
	Refused(err error) bool
}

// NumberReader is what a Dialect may add to read rows of numbers straight
// from its driver's connection, without the boxing of every value into a
// driver.Value (one allocation each) that database/sql and most drivers
// do. Reads of the run summary take it when the read's Querier is a
// *sql.Conn.
type NumberReader interface {
	// EachNumberRow runs the query (already rebound) with args on dc,
	// the driver connection sql.Conn.Raw gives, and calls each with every
	// row's ncol values; the row is reused. It returns driver.ErrSkip,
	// having called each for no row, when dc is not its driver's or a
	// column is not a number.
	EachNumberRow(ctx context.Context, dc any, query string, args []any, ncol int, each func(row []Number) error) error
}

// Number is one value of a row of numbers: NULL, a float or an integer.
type Number struct {
	Kind  NumberKind
	Float float64 // when Kind is KindFloat
	Int   int64   // when Kind is KindInt
}

// NumberKind says which of a Number's fields holds its value.
type NumberKind uint8

// The kinds of a Number.
const (
	KindNull NumberKind = iota
	KindFloat
	KindInt
)
