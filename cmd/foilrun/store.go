package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// dbEnv names the environment variable that selects the run-log database.
const dbEnv = "FOILRUN_DB"

// openLogs holds the run log each factory opened, so a command opens it
// once. (A field in factory would do; this keeps root.go untouched.)
var (
	openLogsMu sync.Mutex
	openLogs   = map[*factory]store.RunLog{}
)

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
	openLogsMu.Lock()
	defer openLogsMu.Unlock()
	if l, ok := openLogs[f]; ok {
		return l, nil
	}
	path, err := f.dbPath()
	if err != nil {
		return nil, err
	}
	if strings.HasPrefix(path, "postgres://") || strings.HasPrefix(path, "postgresql://") {
		return nil, withHint(usagef("run log %q: the PostgreSQL back end is not built yet", redact(path)), "use a SQLite file path for now")
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, fmt.Errorf("run log: %w", err)
	}
	l, err := sqlite.Open(ctx, path)
	if err != nil {
		return nil, err
	}
	openLogs[f] = l
	f.closers = append(f.closers, func() error {
		openLogsMu.Lock()
		delete(openLogs, f)
		openLogsMu.Unlock()
		return l.Close()
	})
	return l, nil
}

// redact hides a password in a connection URL.
func redact(u string) string {
	at := strings.LastIndex(u, "@")
	scheme := strings.Index(u, "://")
	if at < 0 || scheme < 0 {
		return u
	}
	if c := strings.Index(u[scheme+3:at], ":"); c >= 0 {
		return u[:scheme+3+c+1] + "***" + u[at:]
	}
	return u
}
