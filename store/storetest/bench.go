package storetest

import (
	"context"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// The 100,000-run benchmarks every back end runs (go test -bench .
// -benchtime 1x for the import). BenchRuns runs, 15 parameters and 2
// outcomes each.

// BenchRuns is the size of the benchmark log.
const BenchRuns = 100000

// BenchBundle is the benchmark log: BenchRuns GenRecords and their
// snapshot.
func BenchBundle() store.Bundle {
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	return store.Bundle{Snapshots: []store.Snapshot{sn}, Runs: Records(BenchRuns, sn.SHA256)}
}

// BenchNow is the clock of the benchmark logs: the end of the benchmark
// log, whose BenchRuns hourly runs from T0 reach further than a real
// clock's 5 years of slack for future times.
func BenchNow() time.Time { return T0.Add(BenchRuns * time.Hour) }

// BenchImport imports the benchmark log into a fresh log (from fresh, not
// timed) per iteration; after, when not nil, is called untimed with the
// filled log (for a size metric).
func BenchImport(b *testing.B, fresh func(b *testing.B) store.RunLog, after func(b *testing.B, l store.RunLog)) {
	bundle := BenchBundle()
	ctx := context.Background()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		l := fresh(b)
		Backend(b, l).SetClock(BenchNow)
		b.StartTimer()
		if _, err := l.Import(ctx, bundle, nil); err != nil {
			b.Fatal(err)
		}
		b.StopTimer()
		if after != nil {
			after(b, l)
		}
		b.StartTimer()
	}
}

// BenchBest2 is `runs best --by growth_temperature_c,ch4_flow_sccm
// --metric coverage --bins 6 --min 0.9` over the benchmark log, as the
// command does it: RunLog.Columns with the parameters' logged twins (which
// the benchmark log has none of) and store.BestColumns.
func BenchBest2(b *testing.B, l store.RunLog) {
	params := []string{"growth_temperature_c", "ch4_flow_sccm"}
	benchColumns(b, l, params, func(c store.Columns) {
		t := store.BestColumns("coverage", params, c.Metric, c.Params, 6, store.Goal{Min: 0.9, Max: store.None()})
		if t.Runs != BenchRuns || len(t.Bins) != 36 {
			b.Fatalf("best counted %d runs in %d bins, want %d in 36", t.Runs, len(t.Bins), BenchRuns)
		}
	})
}

// benchColumns times b.N rounds of Columns of coverage and params (with
// their logged twins) and use of what it read.
func benchColumns(b *testing.B, l store.RunLog, params []string, use func(store.Columns)) {
	ctx := context.Background()
	cq := store.ColumnQuery{Metric: "coverage", Params: params, Twins: twinsOf(params)}
	b.ResetTimer()
	defer reportCPU(b, cpuTime())
	for i := 0; i < b.N; i++ {
		c, err := l.Columns(ctx, cq)
		if err != nil {
			b.Fatal(err)
		}
		use(c)
	}
}

// twinsOf names the logged twin of each parameter, as
// cmd/foilrun/internal/lab.Twins does.
func twinsOf(params []string) []string {
	out := make([]string, len(params))
	for i, p := range params {
		out[i] = p + "_logged"
	}
	return out
}

// BenchBest2Samples is BenchBest2 the way it was done before RunLog.Columns:
// every run's values read with Samples and binned by store.Best.
func BenchBest2Samples(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	params := []string{"growth_temperature_c", "ch4_flow_sccm"}
	b.ResetTimer()
	defer reportCPU(b, cpuTime())
	for i := 0; i < b.N; i++ {
		s, err := l.Samples(ctx, store.Filter{}, "coverage", params)
		if err != nil {
			b.Fatal(err)
		}
		t := store.Best(s, "coverage", params, 6, store.Goal{Min: 0.9, Max: store.None()})
		if t.Runs != BenchRuns {
			b.Fatalf("best counted %d runs", t.Runs)
		}
	}
}

// BenchListWhere2 is `runs list --where "growth_temperature_c >= 1050
// and coverage > 0.9"` over the benchmark log.
func BenchListWhere2(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	b.ResetTimer()
	n := 0
	for i := 0; i < b.N; i++ {
		runs, err := l.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1050 and coverage > 0.9"}})
		if err != nil {
			b.Fatal(err)
		}
		n = len(runs)
	}
	b.ReportMetric(float64(n), "runs")
}

// BenchRank is `runs rank --metric coverage` (every parameter but the
// logged twins, read in their place where a run has them) as the command
// does it: RunLog.Columns and store.RankColumns.
func BenchRank(b *testing.B, l store.RunLog) {
	params := benchParams(b, l)
	benchColumns(b, l, params, func(c store.Columns) {
		store.RankColumns("coverage", params, c.Metric, c.Params, store.NoGoal(), false)
	})
}

// BenchRankSamples is BenchRank the way it was done before
// RunLog.Columns: Samples of every parameter and store.Rank.
func BenchRankSamples(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	params := benchParams(b, l)
	b.ResetTimer()
	defer reportCPU(b, cpuTime())
	for i := 0; i < b.N; i++ {
		s, err := l.Samples(ctx, store.Filter{}, "coverage", params)
		if err != nil {
			b.Fatal(err)
		}
		store.Rank(s, "coverage", params, store.NoGoal(), false)
	}
}

// benchParams returns the parameter names of the log but the logged
// twins.
func benchParams(b *testing.B, l store.RunLog) []string {
	names, err := l.Names(context.Background())
	if err != nil {
		b.Fatal(err)
	}
	var params []string
	for _, n := range names {
		if n.Kind == store.NameParam && !strings.HasSuffix(n.Name, "_logged") {
			params = append(params, n.Name)
		}
	}
	return params
}

// BenchExportJSON writes the whole log as JSON.
func BenchExportJSON(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := store.WriteJSON(ctx, discard{}, l, store.Filter{}); err != nil {
			b.Fatal(err)
		}
	}
}

// cpuTime returns the CPU time the process has used (user and system):
// on a machine shared with other work it varies less than wall time.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// reportCPU reports the CPU time per operation since start (from cpuTime).
func reportCPU(b *testing.B, start time.Duration) {
	b.ReportMetric(float64(cpuTime()-start)/float64(b.N), "cpu-ns/op")
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }
