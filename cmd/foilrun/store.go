package main

import (
	"context"
	"errors"
	"fmt"
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

// runLog opens the run log on first use and registers its Close.
func (f *factory) runLog(ctx context.Context) (store.RunLog, error) {
	if f.log != nil {
		return f.log, nil
	}
	path, err := f.dbPath()
	if err != nil {
		return nil, err
	}
	l, err := openLog(ctx, path)
	if err != nil {
		return nil, err
	}
	f.log = l
	f.closers = append(f.closers, func() error {
		f.log = nil
		return l.Close()
	})
	return l, nil
}

// openLog opens the run log at target: a PostgreSQL database for a
// postgres:// or postgresql:// URL, else a SQLite file (its folder made
// when missing). Connection errors get a hint; none shows a password.
func openLog(ctx context.Context, target string) (store.RunLog, error) {
	if postgres.IsURL(target) {
		l, err := postgres.Open(ctx, target)
		switch {
		case errors.Is(err, postgres.ErrUnreachable):
			return nil, withHint(err, "check the host, port or socket folder in the URL, that the server runs and that this machine may reach it")
		case errors.Is(err, postgres.ErrAuth):
			return nil, withHint(err, "check the user name and password in the URL (or in ~/.pgpass); the lab's database administrator can reset them")
		case errors.Is(err, postgres.ErrNoDatabase):
			return nil, withHint(err, "create the database first (createdb NAME) or correct its name in the URL")
		case errors.Is(err, store.ErrSchemaTooNew):
			return nil, withHint(err, "a newer foilrun wrote this database; update foilrun on this machine")
		case err != nil:
			return nil, err
		}
		return l, nil
	}
	if err := os.MkdirAll(filepath.Dir(target), 0o755); err != nil {
		return nil, fmt.Errorf("run log: %w", err)
	}
	l, err := sqlite.Open(ctx, target)
	if errors.Is(err, store.ErrSchemaTooNew) {
		return nil, withHint(err, "a newer foilrun wrote this file; update foilrun on this machine")
	}
	return l, err
}

// shown is a database location as messages show it (passwords hidden).
func shown(target string) string {
	if postgres.IsURL(target) {
		return postgres.Redact(target)
	}
	return target
}
