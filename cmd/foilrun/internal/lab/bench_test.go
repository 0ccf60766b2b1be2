package lab

import (
	"context"
	"path/filepath"
	"testing"
	"time"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// benchLog is a demo lab with n finished runs over the demo's 300 recipes
// (10 temperatures × 5 CH4 flows × 6 times), each with a coverage and a
// nuclei density, as a lab logs many runs of few recipes.
func benchLog(b *testing.B, n int) (store.RunLog, demolab.Paths) {
	b.Helper()
	ctx := context.Background()
	paths, err := demolab.Lay(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	l, err := sqlite.Open(ctx, filepath.Join(paths.Dir, "bench.db"))
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { l.Close() })
	var bundle store.Bundle
	seen := map[string]bool{}
	start := time.Date(2024, 1, 1, 9, 0, 0, 0, time.UTC)
	for i := range n {
		text := demolab.Recipe(960+10*float64(i%10), []float64{2, 5, 10, 20, 35}[i/10%5], []float64{1, 2, 3, 5, 8, 12}[i/50%6])
		snap := store.NewSnapshot("lowpressure", paths.Recipe, []byte(text))
		if !seen[snap.SHA256] {
			bundle.Snapshots = append(bundle.Snapshots, snap)
			seen[snap.SHA256] = true
		}
		t0 := start.Add(time.Duration(i) * time.Hour)
		bundle.Runs = append(bundle.Runs, store.RunRecord{
			Run: store.Run{Code: store.FormatCode("", t0, int64(i+1)), Status: store.Done, RecipeName: "lowpressure", RecipeHash: snap.SHA256,
				Furnace: "tube-a", Started: t0, Ended: t0.Add(time.Hour)},
			Outcomes: []store.Outcome{
				{Metric: "coverage", Value: 0.5, Unit: "1", Measured: t0.Add(2 * time.Hour)},
				{Metric: "nuclei_density", Value: 120, Unit: "1/mm2", Measured: t0.Add(2 * time.Hour)},
			},
		})
	}
	if _, err := l.Import(ctx, bundle, nil); err != nil {
		b.Fatal(err)
	}
	return l, paths
}

// Collect of 5,000 logged runs of 300 recipes, both metrics, on the
// logged conditions where there are any: what fit reads before fitting.
func BenchmarkCollect5000(b *testing.B) {
	l, paths := benchLog(b, 5000)
	ctx := context.Background()
	for b.Loop() {
		rb, err := NewRebuilder(l, paths.FurnaceA)
		if err != nil {
			b.Fatal(err)
		}
		col, err := Collect(ctx, rb, store.Filter{}, Metrics{Coverage: true, Density: true}, demolab.Truth(), Logged)
		if err != nil {
			b.Fatal(err)
		}
		if len(col.Observations) != 5000 {
			b.Fatalf("got %d observations, want 5000", len(col.Observations))
		}
	}
}
