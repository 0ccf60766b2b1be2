package demolab

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"time"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// SeedLog replaces the demo's run log at paths.DB (an embedded SQLite
// file) with one holding n invented finished runs (see Seed).
func SeedLog(ctx context.Context, paths Paths, n int) error {
	for _, suffix := range []string{"", "-wal", "-shm"} {
		_ = os.Remove(paths.DB + suffix)
	}
	log, err := sqlite.Open(ctx, paths.DB)
	if err != nil {
		return err
	}
	if err := Seed(ctx, log, paths, n); err != nil {
		log.Close()
		return fmt.Errorf("seed the demo run log: %w", err)
	}
	return log.Close()
}

// Seed logs n invented finished runs whose outcomes come from the kinetics
// model with the lab's "true" parameters (Truth) plus measurement noise
// (fixed seed), over a spread of growth temperature, CH4 flow and time, on
// furnace A. The runs go in with one Import: all or none.
func Seed(ctx context.Context, log store.RunLog, paths Paths, n int) error {
	if n > MaxSeedRuns {
		return fmt.Errorf("%d runs: the demo seeds at most %d (one every %s over %s)", n, MaxSeedRuns, minSeedStep, seedSpan)
	}
	step := seedStep(n)
	furnace, err := recipe.LoadFurnace(paths.FurnaceA)
	if err != nil {
		return err
	}
	truth := Truth()
	rng := rand.New(rand.NewPCG(2026, 12))
	operators := []string{"operator A", "operator B", "operator C"}
	start := time.Date(2026, 9, 1, 9, 0, 0, 0, time.UTC)
	fsnap := store.NewFileSnapshot(store.SnapshotFurnace, furnace.Name, paths.FurnaceA, furnace.Content)
	bundle := store.Bundle{Snapshots: []store.Snapshot{fsnap}}
	seen := map[string]bool{}
	for i := range n {
		T := 960 + 10*float64(rng.IntN(10))             // 960…1050 °C
		ch4 := []float64{2, 5, 10, 20, 35}[rng.IntN(5)] // sccm
		minutes := []float64{1, 2, 3, 5, 8, 12}[rng.IntN(6)]
		text := Recipe(T, ch4, minutes)
		r, err := recipe.ParseRecipe("lowpressure.yaml", []byte(text))
		if err != nil {
			return err
		}
		plan := recipe.Derive(r, furnace)
		res, err := kinetics.Predict(plan, truth, kinetics.Options{})
		if err != nil {
			return err
		}
		snap := store.NewSnapshot(r.Name, paths.Recipe, []byte(text))
		if !seen[snap.SHA256] {
			bundle.Snapshots = append(bundle.Snapshots, snap)
			seen[snap.SHA256] = true
		}
		t0 := start.Add(time.Duration(i) * step)
		rec := store.RunRecord{
			Run: store.Run{Code: store.FormatCode("", t0, int64(i+1)), Status: store.Done, RecipeName: r.Name, RecipeHash: snap.SHA256,
				Furnace: furnace.Name, FurnaceHash: fsnap.SHA256, Operator: operators[i%3], Lot: "demo-lot-" + strconv.Itoa(1+i/20),
				Started: t0, Ended: t0.Add(time.Duration(plan.Total) * time.Second)},
			Params: plan.Parameters(),
		}
		if rec.Outcomes, err = noisyOutcomes(res, rng, t0.Add(30*time.Hour)); err != nil {
			return err
		}
		bundle.Runs = append(bundle.Runs, rec)
	}
	_, err = log.Import(ctx, bundle, nil)
	return err
}

// The seeded runs start every 26 hours, closer together when that would
// take them beyond seedSpan (the run log refuses times more than five
// years ahead of the clock), but never closer than minSeedStep (each run
// takes under two hours on the one furnace).
const (
	seedSpan    = 3 * 365 * 24 * time.Hour
	minSeedStep = 3 * time.Hour
	// MaxSeedRuns is the most runs Seed lays out.
	MaxSeedRuns = int(seedSpan / minSeedStep)
)

// seedStep is the time between the starts of n seeded runs.
func seedStep(n int) time.Duration {
	step := 26 * time.Hour
	if n > 0 && time.Duration(n)*step > seedSpan {
		step = (seedSpan / time.Duration(n)).Truncate(time.Minute)
	}
	return step
}

// noisyOutcomes are a prediction as a lab would measure it: coverage on
// the complementary log-log scale with noise σ 0.15, nuclei density and
// domain size log-normal with σ 10 % (invented noise levels). Domain size
// is left out of a closed film (θ ≥ 0.999), where domains cannot be told
// apart.
func noisyOutcomes(res kinetics.Result, rng *rand.Rand, at time.Time) ([]store.Outcome, error) {
	theta := math.Min(math.Max(res.Coverage, 1e-6), 1-1e-9)
	cov := 1 - math.Exp(-math.Exp(math.Log(-math.Log(1-theta))+0.15*rng.NormFloat64()))
	dens, err := recipe.In(res.NucleiDensity, "1/mm2")
	if err != nil {
		return nil, err
	}
	dens *= math.Exp(0.1 * rng.NormFloat64())
	size, err := recipe.In(res.DomainSize, "um")
	if err != nil {
		return nil, err
	}
	size *= math.Exp(0.1 * rng.NormFloat64())
	const method = "demo: model plus noise"
	out := []store.Outcome{
		{Metric: "coverage", Value: math.Round(cov*1e4) / 1e4, Unit: "1", Method: method, Measured: at},
		{Metric: "nuclei_density", Value: dens, Unit: "1/mm2", Method: method, Measured: at},
	}
	if res.Coverage < 0.999 {
		out = append(out, store.Outcome{Metric: "domain_size", Value: size, Unit: "um", Method: method, Measured: at})
	}
	return out, nil
}
