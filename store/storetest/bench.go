package storetest

import (
	"context"
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
// command does it: RunLog.Bins with the parameters' logged twins (which
// the benchmark log has none of).
func BenchBest2(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	bq := store.BinQuery{Metric: "coverage", Params: []string{"growth_temperature_c", "ch4_flow_sccm"},
		Twins: []string{"growth_temperature_c_logged", "ch4_flow_sccm_logged"}, Bins: 6, Goal: store.Goal{Min: 0.9, Max: store.None()}}
	b.ResetTimer()
	defer reportCPU(b, cpuTime())
	for i := 0; i < b.N; i++ {
		t, err := l.Bins(ctx, bq)
		if err != nil {
			b.Fatal(err)
		}
		if t.Runs != BenchRuns || len(t.Bins) != 36 {
			b.Fatalf("best counted %d runs in %d bins, want %d in 36", t.Runs, len(t.Bins), BenchRuns)
		}
	}
}

// BenchBest2Samples is BenchBest2 the way it was done before RunLog.Bins:
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

// BenchRank is `runs rank --metric coverage` (every parameter).
func BenchRank(b *testing.B, l store.RunLog) {
	ctx := context.Background()
	names, err := l.Names(ctx)
	if err != nil {
		b.Fatal(err)
	}
	var params []string
	for _, n := range names {
		if n.Kind == store.NameParam {
			params = append(params, n.Name)
		}
	}
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
