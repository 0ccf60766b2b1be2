// Package postgres is the shared-server back end of the run log: a
// PostgreSQL database reached by a connection URL (postgres://… or
// postgresql://…) through database/sql and github.com/jackc/pgx/v5/stdlib.
// The queries are those of store/sqldb, the same as on SQLite; this package
// supplies the dialect: "?" placeholders rewritten to $1, $2, …, the
// migrations in migrations/ (the same tables and versions as SQLite's, with
// identity columns, bytea and double precision, text compared byte-wise),
// repeatable-read read-only transactions for consistent reads, integrity
// checks, and a backup that writes a SQLite file.
//
// Concurrency: run codes come from a counter row upserted in the same
// transaction that inserts the run, so PostgreSQL's row lock on that row
// orders loggers on every machine; migrations take an advisory lock per
// schema, so processes that open a new database at once migrate it once.
//
// Access: Open runs DDL only when the schema is behind; OpenReadOnly
// needs nothing but SELECT on the run-log tables (README, "PostgreSQL
// roles", lists the owner, writer and reader roles and their GRANTs).
//
// Entry points: Open, OpenReadOnly, Redact.
package postgres

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"net"
	"net/url"
	"strings"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/stdlib" // also registers driver "pgx"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// DB is a run log on a PostgreSQL server.
type DB struct {
	*sqldb.DB
	// URL is the connection URL with any password hidden.
	URL string
}

var _ store.RunLog = (*DB)(nil)

// Errors of Open that callers can branch on (with errors.Is); both come
// wrapped with the server's own message.
var (
	// ErrUnreachable: no server answered at the URL's host and port or socket.
	ErrUnreachable = errors.New("cannot reach the PostgreSQL server")
	// ErrAuth: the server refused the user name or password.
	ErrAuth = errors.New("the PostgreSQL server refused the credentials")
	// ErrNoDatabase: the server has no database of that name.
	ErrNoDatabase = errors.New("the PostgreSQL server has no such database")
)

// IsURL reports whether s names a PostgreSQL database (postgres:// or
// postgresql://) rather than a SQLite file.
func IsURL(s string) bool {
	return strings.HasPrefix(s, "postgres://") || strings.HasPrefix(s, "postgresql://")
}

// Open connects to the database at the URL for writing, migrates a schema
// behind the latest (an up-to-date one is only read, so a role with
// INSERT and UPDATE but no CREATE can log), or fails with
// store.ErrSchemaTooNew, changing nothing, and returns the run log on it.
// Errors never show the password.
func Open(ctx context.Context, dbURL string) (*DB, error) {
	return open(ctx, dbURL, sqldb.Options{})
}

// OpenReadOnly connects for reading only: every connection runs with
// default_transaction_read_only on, the schema is never migrated (a
// schema behind is store.ErrSchemaBehind), and only SELECT on the
// run-log tables is needed. Write methods fail with store.ErrReadOnly.
func OpenReadOnly(ctx context.Context, dbURL string) (*DB, error) {
	return open(ctx, dbURL, sqldb.Options{ReadOnly: true})
}

func open(ctx context.Context, dbURL string, o sqldb.Options) (*DB, error) {
	red := Redact(dbURL)
	cfg, err := pgx.ParseConfig(dbURL)
	if err != nil {
		return nil, fmt.Errorf("open run log %s: %s", red, hide(err, dbURL))
	}
	if o.ReadOnly {
		cfg.RuntimeParams["default_transaction_read_only"] = "on"
	}
	db := stdlib.OpenDB(*cfg)
	db.SetMaxIdleConns(4)
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("open run log %s: %w", red, classify(err, dbURL))
	}
	s, err := migrate(ctx, db, o)
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("open run log %s: %w", red, classify(err, dbURL))
	}
	return &DB{DB: s, URL: red}, nil
}

// migrate opens the log; when the schema is behind and the log is opened
// for writing it runs the migrations while holding an advisory lock on
// one connection, so that processes opening the same new schema at once
// take turns (CREATE TABLE IF NOT EXISTS alone races on PostgreSQL).
func migrate(ctx context.Context, db *sql.DB, o sqldb.Options) (*sqldb.DB, error) {
	var schema sql.NullString
	if err := db.QueryRowContext(ctx, `SELECT current_schema()`).Scan(&schema); err != nil {
		return nil, err
	}
	if !schema.Valid {
		return nil, fmt.Errorf("no schema to read or create tables in (check search_path and that the schema exists)")
	}
	cur, latest, err := sqldb.Versions(ctx, db, dialect{})
	if err != nil {
		return nil, err
	}
	if o.ReadOnly || cur >= latest {
		return sqldb.Open(ctx, db, dialect{}, o)
	}
	conn, err := db.Conn(ctx)
	if err != nil {
		return nil, err
	}
	defer conn.Close()
	const key = `hashtext('foilrun migrate ' || current_schema())`
	if _, err := conn.ExecContext(ctx, `SELECT pg_advisory_lock(`+key+`)`); err != nil {
		return nil, fmt.Errorf("migrate: lock: %w", err)
	}
	defer conn.ExecContext(context.WithoutCancel(ctx), `SELECT pg_advisory_unlock(`+key+`)`)
	return sqldb.Open(ctx, db, dialect{}, o)
}

// classify wraps a connection error with ErrUnreachable, ErrAuth or
// ErrNoDatabase when it is one, with the password hidden.
func classify(err error, dbURL string) error {
	msg := hide(err, dbURL)
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch pe.Code {
		case "28P01", "28000": // invalid_password, invalid_authorization_specification
			return fmt.Errorf("%w: %s", ErrAuth, msg)
		case "3D000": // invalid_catalog_name
			return fmt.Errorf("%w: %s", ErrNoDatabase, msg)
		}
	}
	var ne net.Error
	var ce *pgconn.ConnectError
	if errors.As(err, &ne) || (errors.As(err, &ce) && pe == nil) {
		return fmt.Errorf("%w: %s", ErrUnreachable, msg)
	}
	if errors.Is(err, store.ErrSchemaTooNew) || errors.Is(err, store.ErrSchemaBehind) || errors.Is(err, store.ErrReadOnly) {
		return err
	}
	return errors.New(msg)
}

// hide returns the error's text with the URL's password replaced.
func hide(err error, dbURL string) string {
	msg := err.Error()
	if pw := password(dbURL); pw != "" {
		msg = strings.ReplaceAll(msg, pw, "***")
	}
	return msg
}

func password(dbURL string) string {
	u, err := url.Parse(dbURL)
	if err != nil {
		return ""
	}
	if pw, ok := u.User.Password(); ok && pw != "" {
		return pw
	}
	return u.Query().Get("password")
}

// Redact returns the URL with its password (in the user part or a
// password= parameter) replaced by ***; text that is not a URL is
// returned with everything between "://" and "@" after the first ":"
// hidden.
func Redact(dbURL string) string {
	u, err := url.Parse(dbURL)
	if err != nil {
		at, sch := strings.LastIndex(dbURL, "@"), strings.Index(dbURL, "://")
		if at > sch && sch >= 0 {
			if c := strings.Index(dbURL[sch+3:at], ":"); c >= 0 {
				return dbURL[:sch+3+c+1] + "***" + dbURL[at:]
			}
		}
		return dbURL
	}
	if _, ok := u.User.Password(); ok {
		u.User = url.UserPassword(u.User.Username(), "***")
	}
	q := u.Query()
	if q.Has("password") {
		q.Set("password", "***")
		u.RawQuery = q.Encode()
	}
	return strings.Replace(u.String(), "%2A%2A%2A", "***", -1)
}

type dialect struct{}

func (dialect) Name() string      { return "postgres" }
func (dialect) Migrations() fs.FS { f, _ := fs.Sub(migrationFiles, "migrations"); return f }
func (dialect) MaxArgs() int      { return 65535 }

// HasTable looks the table up on the search path (to_regclass).
func (dialect) HasTable(ctx context.Context, q sqldb.Querier, name string) (bool, error) {
	var ok bool
	err := q.QueryRowContext(ctx, `SELECT to_regclass($1) IS NOT NULL`, name).Scan(&ok)
	return ok, err
}

// Refused reports insufficient_privilege (42501) and
// read_only_sql_transaction (25006): a role without the privilege, a
// read-only transaction, role or standby server.
func (dialect) Refused(err error) bool {
	var pe *pgconn.PgError
	return errors.As(err, &pe) && (pe.Code == "42501" || pe.Code == "25006")
}

// Rebind rewrites "?" placeholders to $1, $2, … outside quoted text and
// identifiers.
func (dialect) Rebind(q string) string {
	if !strings.Contains(q, "?") {
		return q
	}
	var b strings.Builder
	b.Grow(len(q) + 16)
	n := 0
	var quote byte
	for i := 0; i < len(q); i++ {
		c := q[i]
		switch {
		case quote != 0:
			if c == quote {
				quote = 0
			}
		case c == '\'' || c == '"':
			quote = c
		case c == '?':
			n++
			fmt.Fprintf(&b, "$%d", n)
			continue
		}
		b.WriteByte(c)
	}
	return b.String()
}

// Read opens a repeatable-read, read-only transaction: every query in it
// sees the snapshot taken at its first query, and it blocks no writer. It
// is begun by hand on a connection of its own, not with BeginTx, so that
// the reads of the run summary can reach the driver's connection
// (sql.Conn.Raw; see EachNumberRow), which a *sql.Tx does not give. A
// connection whose transaction cannot be ended is dropped, not pooled.
func (dialect) Read(ctx context.Context, db *sql.DB) (sqldb.Querier, func() error, error) {
	c, err := db.Conn(ctx)
	if err != nil {
		return nil, nil, err
	}
	if _, err := c.ExecContext(ctx, "BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY"); err != nil {
		_ = c.Raw(func(any) error { return driver.ErrBadConn })
		return nil, nil, errors.Join(err, c.Close())
	}
	end := func() error {
		_, err := c.ExecContext(context.WithoutCancel(ctx), "ROLLBACK")
		if err != nil {
			_ = c.Raw(func(any) error { return driver.ErrBadConn })
		}
		return errors.Join(err, c.Close())
	}
	return c, end, nil
}

// bulkRuns is the import size from which Bulk refreshes the planner's
// statistics at the end.
const bulkRuns = 5000

// Bulk keeps every index in place (dropping one inside the import would
// lock readers out of the table until it commits) and, for an import of
// many runs, runs ANALYZE on the big tables at the end, inside the
// import's transaction: without fresh statistics the planner takes the
// new log for an empty one and `runs best` over 100,000 runs took over a
// second instead of a few hundred milliseconds. The run summary is among
// them (the writer fills it before this end): without its statistics the
// planner sorted the 100,000 summary rows on disk (4 MB of work_mem)
// rather than reading them in key order.
func (dialect) Bulk(ctx context.Context, tx *sql.Tx, runs int) (func(context.Context) error, error) {
	return func(ctx context.Context) error {
		if runs < bulkRuns {
			return nil
		}
		_, err := tx.ExecContext(ctx, `ANALYZE runs, run_params, outcomes, names, run_summary, run_summary_extra`)
		return err
	}, nil
}

// Backup is done by DB.Backup (a SQLite file); the dialect has no file of
// its own to copy.
func (dialect) Backup(ctx context.Context, db *sql.DB, path string) error {
	return fmt.Errorf("backup %q: use postgres.DB.Backup", path)
}

// Check looks for what the server's constraints cannot catch: recipe
// snapshots whose content no longer hashes to their key and invalid
// indexes left by an interrupted build. (Foreign keys and unique codes the
// server enforces itself; sqldb checks the codes and their counters on
// every back end.)
func (dialect) Check(ctx context.Context, db *sql.DB) ([]string, error) {
	probs := []string{}
	add := func(q string, format func(rows *sql.Rows) (string, error)) error {
		rows, err := db.QueryContext(ctx, q)
		if err != nil {
			return err
		}
		defer rows.Close()
		for rows.Next() {
			p, err := format(rows)
			if err != nil {
				return err
			}
			probs = append(probs, p)
		}
		return rows.Err()
	}
	err := add(`SELECT sha256, encode(sha256(content), 'hex') FROM snapshots WHERE encode(sha256(content), 'hex') <> sha256`, func(rows *sql.Rows) (string, error) {
		var key, got string
		err := rows.Scan(&key, &got)
		return fmt.Sprintf("snapshot %.12s: content hashes to %.12s", key, got), err
	})
	if err != nil {
		return nil, err
	}
	err = add(`SELECT c.relname FROM pg_index i JOIN pg_class c ON c.oid = i.indexrelid
		JOIN pg_namespace n ON n.oid = c.relnamespace
		WHERE n.nspname = current_schema() AND NOT i.indisvalid`, func(rows *sql.Rows) (string, error) {
		var name string
		err := rows.Scan(&name)
		return fmt.Sprintf("index %s is invalid (rebuild it with REINDEX)", name), err
	})
	return probs, err
}
