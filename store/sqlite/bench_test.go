package sqlite

import (
	"context"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

// The 100,000-run benchmarks of storetest on SQLite files (go test -bench
// . -benchtime 1x for the import). The log for the query benchmarks is
// built once per process in a temporary folder removed by TestMain; only
// the measured operation runs b.N times. Plain `go test` runs none of it.

var (
	benchOnce sync.Once
	benchDB   *DB
	benchErr  error
	benchDir  string
)

func benchLog(b *testing.B) *DB {
	benchOnce.Do(func() {
		benchDir, benchErr = os.MkdirTemp("", "foilrun-bench")
		if benchErr != nil {
			return
		}
		benchDB, benchErr = Open(context.Background(), filepath.Join(benchDir, "runs.db"))
		if benchErr != nil {
			return
		}
		benchDB.SetClock(storetest.BenchNow)
		_, benchErr = benchDB.Import(context.Background(), storetest.BenchBundle(), nil)
	})
	if benchErr != nil {
		b.Fatal(benchErr)
	}
	return benchDB
}

// removeBenchLog closes and removes the query benchmarks' log.
func removeBenchLog() {
	if benchDB != nil {
		benchDB.Close()
	}
	if benchDir != "" {
		os.RemoveAll(benchDir)
	}
}

// BenchmarkImport100k imports 100,000 runs into a fresh file per
// iteration and reports the file size per run.
func BenchmarkImport100k(b *testing.B) {
	storetest.BenchImport(b, func(b *testing.B) store.RunLog {
		db, err := Open(context.Background(), filepath.Join(b.TempDir(), "runs.db"))
		if err != nil {
			b.Fatal(err)
		}
		b.Cleanup(func() { db.Close() })
		return db
	}, func(b *testing.B, l store.RunLog) {
		db := l.(*DB)
		db.SQL().Exec("PRAGMA wal_checkpoint(TRUNCATE)")
		st, err := os.Stat(db.Path)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(st.Size())/storetest.BenchRuns, "bytes/run")
	})
}

func BenchmarkBest2(b *testing.B)          { storetest.BenchBest2(b, benchLog(b)) }
func BenchmarkBest2Samples(b *testing.B)   { storetest.BenchBest2Samples(b, benchLog(b)) }
func BenchmarkListWhere2(b *testing.B)     { storetest.BenchListWhere2(b, benchLog(b)) }
func BenchmarkRank(b *testing.B)           { storetest.BenchRank(b, benchLog(b)) }
func BenchmarkRankSamples(b *testing.B)    { storetest.BenchRankSamples(b, benchLog(b)) }
func BenchmarkExportJSON100k(b *testing.B) { storetest.BenchExportJSON(b, benchLog(b)) }
