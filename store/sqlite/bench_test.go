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

// The 100,000-run benchmarks (go test -bench . -benchtime 1x for the
// import). The log for the query benchmarks is built once per process and
// only the measured operation runs b.N times; plain `go test` runs none
// of this.

const benchRuns = 100000

func benchRecords() []store.RunRecord {
	sn := store.NewSnapshot("demo", "demo.yaml", storetest.TestRecipe)
	recs := make([]store.RunRecord, benchRuns)
	for i := range recs {
		recs[i] = storetest.GenRecord(i, sn.SHA256)
	}
	return recs
}

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
		sn := store.NewSnapshot("demo", "demo.yaml", storetest.TestRecipe)
		_, benchErr = benchDB.Import(context.Background(), store.Bundle{Snapshots: []store.Snapshot{sn}, Runs: benchRecords()}, nil)
	})
	if benchErr != nil {
		b.Fatal(benchErr)
	}
	return benchDB
}

// BenchmarkImport100k imports 100,000 runs (15 parameters and 2 outcomes
// each) into a fresh file per iteration and reports the file size per run.
func BenchmarkImport100k(b *testing.B) {
	recs := benchRecords()
	sn := store.NewSnapshot("demo", "demo.yaml", storetest.TestRecipe)
	ctx := context.Background()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		path := filepath.Join(b.TempDir(), "runs.db")
		db, err := Open(ctx, path)
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		if _, err := db.Import(ctx, store.Bundle{Snapshots: []store.Snapshot{sn}, Runs: recs}, nil); err != nil {
			b.Fatal(err)
		}
		b.StopTimer()
		db.SQL().Exec("PRAGMA wal_checkpoint(TRUNCATE)")
		db.Close()
		st, err := os.Stat(path)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(st.Size())/benchRuns, "bytes/run")
		b.StartTimer()
	}
}

// BenchmarkBest2 is `runs best --by growth_temperature_c,ch4_flow_sccm
// --metric coverage --bins 6 --min 0.9` over 100,000 runs.
func BenchmarkBest2(b *testing.B) {
	db := benchLog(b)
	ctx := context.Background()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		s, err := db.Samples(ctx, store.Filter{}, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"})
		if err != nil {
			b.Fatal(err)
		}
		t := store.Best(s, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"}, 6, store.Goal{Min: 0.9, Max: store.None()})
		if t.Runs != benchRuns {
			b.Fatalf("best counted %d runs", t.Runs)
		}
	}
}

// BenchmarkListWhere2 is `runs list --where "growth_temperature_c >= 1050
// and coverage > 0.9"` over 100,000 runs.
func BenchmarkListWhere2(b *testing.B) {
	db := benchLog(b)
	ctx := context.Background()
	b.ResetTimer()
	n := 0
	for i := 0; i < b.N; i++ {
		runs, err := db.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1050 and coverage > 0.9"}})
		if err != nil {
			b.Fatal(err)
		}
		n = len(runs)
	}
	b.ReportMetric(float64(n), "runs")
}

// BenchmarkRank is `runs rank --metric coverage` (every parameter) over
// 100,000 runs.
func BenchmarkRank(b *testing.B) {
	db := benchLog(b)
	ctx := context.Background()
	names, _ := db.Names(ctx)
	var params []string
	for _, n := range names {
		if n.Kind == store.NameParam {
			params = append(params, n.Name)
		}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		s, err := db.Samples(ctx, store.Filter{}, "coverage", params)
		if err != nil {
			b.Fatal(err)
		}
		store.Rank(s, "coverage", params, store.NoGoal(), false)
	}
}

// BenchmarkExportJSON100k writes the whole 100,000-run log as JSON.
func BenchmarkExportJSON100k(b *testing.B) {
	db := benchLog(b)
	ctx := context.Background()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := store.WriteJSON(ctx, discard{}, db, store.Filter{}); err != nil {
			b.Fatal(err)
		}
	}
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }
