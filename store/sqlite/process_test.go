package sqlite

import (
	"context"
	"os"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

func openAt(ctx context.Context, path string) (store.RunLog, error) { return Open(ctx, path) }

func TestMain(m *testing.M) {
	storetest.Main(openAt)
	code := m.Run()
	removeBenchLog()
	os.Exit(code)
}

// TestConcurrentProcesses: 4 processes each log 250 runs at once; the log
// ends with exactly 1000 runs with 1000 distinct codes and no process saw
// "database is locked".
func TestConcurrentProcesses(t *testing.T) {
	db, path := openTemp(t)
	db.Close()
	storetest.Loggers(t, openAt, path, 4, 250)
}

// TestKilledImport: a process killed (SIGKILL) in the middle of a
// 10,000-run import leaves a log that passes its checks and holds none of
// the import (or, had it finished, all of it).
func TestKilledImport(t *testing.T) {
	storetest.KilledImport(t, openAt, func(t *testing.T) string {
		db, path := openTemp(t)
		db.Close()
		return path
	}, 10000)
}
