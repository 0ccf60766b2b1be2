package postgres

import (
	"context"
	"database/sql"
	"os"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
	"github.com/foilrun/foilrun/store/storetest"
)

// The 100,000-run benchmarks of storetest on the server at
// FOILRUN_TEST_POSTGRES, beside store/sqlite's (go test -bench .
// -benchtime 1x for the import and the copy). The query benchmarks' log
// is built once per process in a schema of its own, dropped by TestMain.

var (
	benchOnce   sync.Once
	benchDB     *DB
	benchErr    error
	benchSchema string
)

func benchLog(b *testing.B) *DB {
	base := serverURL(b)
	benchOnce.Do(func() {
		benchSchema = "bench_" + time.Now().Format("150405")
		var admin *sql.DB
		if admin, benchErr = sql.Open("pgx", base); benchErr != nil {
			return
		}
		defer admin.Close()
		if _, benchErr = admin.Exec("CREATE SCHEMA " + benchSchema); benchErr != nil {
			return
		}
		if benchDB, benchErr = Open(context.Background(), withParam(base, "search_path", benchSchema)); benchErr != nil {
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

// removeBenchLog closes the query benchmarks' log and drops its schema.
func removeBenchLog() {
	if benchDB == nil {
		return
	}
	benchDB.Close()
	if admin, err := sql.Open("pgx", os.Getenv(serverEnv)); err == nil {
		admin.Exec("DROP SCHEMA " + benchSchema + " CASCADE")
		admin.Close()
	}
}

// BenchmarkImport100k imports 100,000 runs into a fresh schema per
// iteration and reports the table and index size per run.
func BenchmarkImport100k(b *testing.B) {
	storetest.BenchImport(b, func(b *testing.B) store.RunLog {
		db, _ := openFresh(b)
		return db
	}, func(b *testing.B, l store.RunLog) {
		var size int64
		err := l.(*DB).SQL().QueryRow(`SELECT SUM(pg_total_relation_size(c.oid)) FROM pg_class c
			JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = current_schema() AND c.relkind = 'r'`).Scan(&size)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(size)/storetest.BenchRuns, "bytes/run")
	})
}

func BenchmarkBest2(b *testing.B)          { storetest.BenchBest2(b, benchLog(b)) }
func BenchmarkBest2Samples(b *testing.B)   { storetest.BenchBest2Samples(b, benchLog(b)) }
func BenchmarkListWhere2(b *testing.B)     { storetest.BenchListWhere2(b, benchLog(b)) }
func BenchmarkRank(b *testing.B)           { storetest.BenchRank(b, benchLog(b)) }
func BenchmarkRankSamples(b *testing.B)    { storetest.BenchRankSamples(b, benchLog(b)) }
func BenchmarkExportJSON100k(b *testing.B) { storetest.BenchExportJSON(b, benchLog(b)) }

// BenchmarkCopy100k copies a 100,000-run SQLite log to PostgreSQL and
// back to a new SQLite file (`db copy` both ways), reports each leg's
// seconds and fails unless the three exports are identical.
func BenchmarkCopy100k(b *testing.B) {
	ctx := context.Background()
	dir := b.TempDir()
	src, err := sqlite.Open(ctx, filepath.Join(dir, "src.db"))
	if err != nil {
		b.Fatal(err)
	}
	defer src.Close()
	src.SetClock(storetest.BenchNow)
	if _, err := src.Import(ctx, storetest.BenchBundle(), nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		pg, _ := openFresh(b)
		back, err := sqlite.Open(ctx, filepath.Join(b.TempDir(), "back.db"))
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		t0 := time.Now()
		if _, err := src.CopyTo(ctx, pg, nil); err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		if _, err := pg.CopyTo(ctx, back, nil); err != nil {
			b.Fatal(err)
		}
		t2 := time.Now()
		b.StopTimer()
		b.ReportMetric(t1.Sub(t0).Seconds(), "s-to-postgres")
		b.ReportMetric(t2.Sub(t1).Seconds(), "s-to-sqlite")
		if a, c := storetest.ExportJSON(b, src), storetest.ExportJSON(b, back); a != c || a != storetest.ExportJSON(b, pg) {
			b.Fatal("exports differ after SQLite → PostgreSQL → SQLite")
		}
		back.Close()
		b.StartTimer()
	}
}
