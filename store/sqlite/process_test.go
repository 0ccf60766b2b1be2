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

// TestConcurrentProcesses: 4 processes each log 100 runs at once; the log
// ends with exactly 400 runs with 400 distinct codes and no process saw
// "database is locked" (a deferred BEGIN gives that within the first
// runs, tried: 100 each find it as the 250 this test had did).
func TestConcurrentProcesses(t *testing.T) {
	t.Parallel()
	db, path := openTemp(t)
	db.Close()
	storetest.Loggers(t, openAt, path, 4, 100)
}

// TestKilledImport: a process killed (SIGKILL) in the middle of a
// 2,000-run import leaves a log that passes its checks and holds none of
// the import (or, had it finished, all of it).
// 2,000 runs are enough: half-way (1,000 runs, ten 100-run INSERTs) is
// well inside the one transaction, and an import that commits part of
// its runs early is caught at any size (it leaves 1,001 runs here).
func TestKilledImport(t *testing.T) {
	t.Parallel()
	storetest.KilledImport(t, openAt, func(t *testing.T) string {
		db, path := openTemp(t)
		db.Close()
		return path
	}, 2000)
}
