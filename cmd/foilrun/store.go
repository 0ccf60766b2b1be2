package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
	"github.com/foilrun/foilrun/store/sqlite"
)

// dbEnv names the environment variable that selects the run-log database.
const dbEnv = "FOILRUN_DB"

// dbPath returns the database location: --db, then $FOILRUN_DB, then
// $XDG_DATA_HOME/foilrun/runs.db, then ~/.local/share/foilrun/runs.db.
func (f *factory) dbPath() (string, error) {
	if f.dbFlag != "" {
		return f.dbFlag, nil
	}
	if p := os.Getenv(dbEnv); p != "" {
		return p, nil
	}
	dir := os.Getenv("XDG_DATA_HOME")
	if dir == "" {
		home, err := os.UserHomeDir()
		if err != nil {
			return "", withHint(fmt.Errorf("find the run-log database: %w", err), "give one with --db FILE or "+dbEnv)
		}
		dir = filepath.Join(home, ".local", "share")
	}
	return filepath.Join(dir, "foilrun", "runs.db"), nil
}

// runLog opens the run log for reading on first use and registers its
// Close: commands that only read (runs list/best/rank/export, run show,
// fit, db check, db backup) never migrate or write, so they work on a
// read-only file (opened with mode=ro) and with a PostgreSQL role that
// has only SELECT.
func (f *factory) runLog(ctx context.Context) (store.RunLog, error) {
	return f.openRunLog(ctx, readAccess)
}

// writeLog opens an existing run log for writing (migrating a schema
// behind the latest) on first use: run note/finish, outcome add/measure,
// db migrate. A log file that does not exist is an error, so a mistyped
// --db never starts an empty log. A log already opened for reading is
// closed and opened again for writing.
func (f *factory) writeLog(ctx context.Context) (store.RunLog, error) {
	return f.openRunLog(ctx, writeAccess)
}

// createLog is writeLog for the commands that may start a log: run start,
// run add and runs import. A SQLite file that does not exist yet is made
// (with its folder), and standard error says so.
func (f *factory) createLog(ctx context.Context) (store.RunLog, error) {
	return f.openRunLog(ctx, createAccess)
}

// logAccess is how a command opens the run log.
type logAccess int

const (
	readAccess   logAccess = iota // read only; the log must exist
	writeAccess                   // read and write; the log must exist
	createAccess                  // read and write; a missing SQLite file is made
)

func (f *factory) openRunLog(ctx context.Context, access logAccess) (store.RunLog, error) {
	write := access != readAccess
	if f.log != nil {
		if ro, ok := f.log.(interface{ ReadOnly() bool }); !write || !ok || !ro.ReadOnly() {
			return f.log, nil
		}
		if err := f.log.Close(); err != nil {
			return nil, err
		}
		f.log = nil
	}
	path, err := f.dbPath()
	if err != nil {
		return nil, err
	}
	l, err := openLog(ctx, path, access, f.io.Err)
	if err != nil {
		return nil, err
	}
	f.log = l
	f.closers = append(f.closers, func() error {
		if f.log != l {
			return nil // closed already, replaced by a log opened for writing
		}
		f.log = nil
		return l.Close()
	})
	return l, nil
}

// openLog opens the run log at target with the access asked for: a
// PostgreSQL database for a postgres:// or postgresql:// URL, else a
// SQLite file, which must exist unless access is createAccess (then it is
// made, with its folder, and status says so). Connection errors get a
// hint; none shows a password.
func openLog(ctx context.Context, target string, access logAccess, status io.Writer) (store.RunLog, error) {
	created := false
	if !postgres.IsURL(target) && access != readAccess {
		if _, err := os.Stat(target); errors.Is(err, fs.ErrNotExist) {
			if access != createAccess {
				return nil, withHint(fmt.Errorf("no run log at %s: %w", target, err), "check --db or "+dbEnv+"; run add, run start and runs import start a new log")
			}
			created = true
		}
	}
	l, err := openTarget(ctx, target, access != readAccess)
	if err == nil && created {
		fmt.Fprintf(status, "started a new run log at %s\n", target)
	}
	switch {
	case errors.Is(err, postgres.ErrUnreachable):
		return nil, withHint(err, "check the host, port or socket folder in the URL, that the server runs and that this machine may reach it")
	case errors.Is(err, postgres.ErrAuth):
		return nil, withHint(err, "check the user name and password in the URL (or in ~/.pgpass); the lab's database administrator can reset them")
	case errors.Is(err, postgres.ErrNoDatabase):
		return nil, withHint(err, "create the database first (createdb NAME) or correct its name in the URL")
	case errors.Is(err, store.ErrSchemaTooNew):
		return nil, withHint(err, "a newer foilrun wrote this database; update foilrun on this machine")
	case errors.Is(err, store.ErrSchemaBehind):
		return nil, withHint(err, "run foilrun db migrate once (as a user or role that may create tables); logging a run migrates too")
	case errors.Is(err, fs.ErrNotExist):
		return nil, withHint(fmt.Errorf("no run log at %s: %w", target, err), "log a run first (foilrun run add or run start), or give the log's file with --db or "+dbEnv)
	}
	return l, err
}

func openTarget(ctx context.Context, target string, write bool) (store.RunLog, error) {
	switch {
	case postgres.IsURL(target) && write:
		return postgres.Open(ctx, target)
	case postgres.IsURL(target):
		return postgres.OpenReadOnly(ctx, target)
	case !write:
		return sqlite.OpenReadOnly(ctx, target)
	}
	if err := os.MkdirAll(filepath.Dir(target), 0o755); err != nil {
		return nil, fmt.Errorf("run log: %w", err)
	}
	return sqlite.Open(ctx, target)
}

// shown is a database location as messages show it (passwords hidden).
func shown(target string) string {
	if postgres.IsURL(target) {
		return postgres.Redact(target)
	}
	return target
}
