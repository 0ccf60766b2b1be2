// Package fitlog is the benchmark log of logged runs that fit reads: a
// demo lab with n finished runs of the demo's 300 recipes, each with a
// coverage and a nuclei density. The lab's benchmarks and .ci/bench (through
// benchdata) time fit on it.
package fitlog

import (
	"context"
	"fmt"
	"os"
	"time"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Bundle is n finished runs over the demo's 300 recipes (10 temperatures
// × 5 CH4 flows × 6 times) on the demo's furnace A (its snapshot stored),
// each with a coverage and a nuclei density, as a lab logs many runs of
// few recipes. The measurements are the demo's true model's predictions
// with a repeating ±2 % scatter, so a fit of them converges as one of a
// real lab's would.
func Bundle(paths demolab.Paths, n int) (store.Bundle, error) {
	furnace, err := os.ReadFile(paths.FurnaceA)
	if err != nil {
		return store.Bundle{}, err
	}
	fsnap := store.NewFileSnapshot(store.SnapshotFurnace, "tube-a", paths.FurnaceA, furnace)
	f, err := recipe.ParseFurnace(paths.FurnaceA, furnace)
	if err != nil {
		return store.Bundle{}, err
	}
	bundle := store.Bundle{Snapshots: []store.Snapshot{fsnap}}
	truth := map[string][2]float64{} // by recipe hash: coverage, nuclei density (1/mm²)
	start := time.Date(2024, 1, 1, 9, 0, 0, 0, time.UTC)
	for i := range n {
		text := demolab.Recipe(960+10*float64(i%10), []float64{2, 5, 10, 20, 35}[i/10%5], []float64{1, 2, 3, 5, 8, 12}[i/50%6])
		snap := store.NewSnapshot("lowpressure", paths.Recipe, []byte(text))
		if _, ok := truth[snap.SHA256]; !ok {
			r, err := recipe.ParseRecipe(paths.Recipe, snap.Content)
			if err != nil {
				return store.Bundle{}, err
			}
			res, err := kinetics.Predict(recipe.Derive(r, f), demolab.Truth(), kinetics.Options{})
			if err != nil {
				return store.Bundle{}, err
			}
			bundle.Snapshots = append(bundle.Snapshots, snap)
			truth[snap.SHA256] = [2]float64{res.Coverage, res.NucleiDensity * 1e-6}
		}
		// A scatter of ±2 % that repeats every 7 runs, as measurements scatter.
		noise := 1 + 0.02*float64(i%7-3)/3
		want := truth[snap.SHA256]
		t0 := start.Add(time.Duration(i) * time.Hour)
		bundle.Runs = append(bundle.Runs, store.RunRecord{
			Run: store.Run{Code: store.FormatCode("", t0, int64(i+1)), Status: store.Done, RecipeName: "lowpressure", RecipeHash: snap.SHA256,
				FurnaceHash: fsnap.SHA256, Furnace: "tube-a", Started: t0, Ended: t0.Add(time.Hour)},
			Outcomes: []store.Outcome{
				{Metric: "coverage", Value: min(want[0]*noise, 0.999), Unit: "1", Measured: t0.Add(2 * time.Hour)},
				{Metric: "nuclei_density", Value: want[1] * noise, Unit: "1/mm2", Measured: t0.Add(2 * time.Hour)},
			},
		})
	}
	return bundle, nil
}

// Write imports Bundle(paths, n) into l.
func Write(ctx context.Context, l store.RunLog, paths demolab.Paths, n int) error {
	bundle, err := Bundle(paths, n)
	if err != nil {
		return fmt.Errorf("make the fit benchmark log: %w", err)
	}
	if _, err := l.Import(ctx, bundle, nil); err != nil {
		return fmt.Errorf("import the fit benchmark log: %w", err)
	}
	return nil
}
